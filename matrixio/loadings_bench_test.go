package matrixio

import (
	"fmt"
	"math/rand/v2"
	"path/filepath"
	"testing"
)

// BenchmarkLoadingsWriter writes the loadings file of 50,000 markers and 10
// PCs (the benchmark cohort of benchmarks/pca): formatting and gzip, the
// serial tail of a PCA run.
func BenchmarkLoadingsWriter(b *testing.B) {
	const m, k = 50000, 10
	r := rand.New(rand.NewPCG(1, 2))
	vals := make([]float64, m*k)
	for i := range vals {
		vals[i] = r.NormFloat64() * 0.01
	}
	dir := b.TempDir()
	for _, threads := range []int{1, 2} {
		b.Run(fmt.Sprintf("threads=%d", threads), func(b *testing.B) { benchLoadings(b, dir, vals, m, k, threads) })
	}
}

func benchLoadings(b *testing.B, dir string, vals []float64, m, k, threads int) {
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		lw, err := CreateLoadingsThreads(filepath.Join(dir, "l.tsv.gz"), k, threads)
		if err != nil {
			b.Fatal(err)
		}
		for j := 0; j < m; j++ {
			mk := Marker{Chrom: "1", Pos: int64(1000 + 37*j), ID: "mrk000001", Ref: "A", Alt: "G"}
			if err := lw.Write(mk, 0.25, 0.6123, vals[j*k:(j+1)*k]); err != nil {
				b.Fatal(err)
			}
		}
		if err := lw.Close(); err != nil {
			b.Fatal(err)
		}
	}
}
