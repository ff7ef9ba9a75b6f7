package randsvd

import (
	"context"
	"math/rand/v2"
	"path/filepath"
	"strconv"
	"testing"

	"github.com/clinal/clinal/matrixio"
)

// BenchmarkPassRareVariants is BenchmarkPass's fast pass with 2 threads on
// a cohort of mostly rare variants (allele frequency 0.005 + 0.1 u^2 for u
// uniform: a median of 0.03, as after a MAF filter on sequencing data),
// where a packed byte is most often all reference calls.
func BenchmarkPassRareVariants(b *testing.B) {
	n, m, l := 5000, 20000, 20
	r := rand.New(rand.NewPCG(11, 7))
	samples := make([]string, n)
	for i := range samples {
		samples[i] = "s" + strconv.Itoa(i)
	}
	path := filepath.Join(b.TempDir(), "rare.clinal")
	w, err := matrixio.Create(path, samples, matrixio.WriterOptions{Threads: 2})
	if err != nil {
		b.Fatal(err)
	}
	g := make([]byte, n)
	for j := 0; j < m; j++ {
		u := r.Float64()
		p := 0.005 + 0.1*u*u
		for i := range g {
			v := byte(0)
			if r.Float64() < p {
				v++
			}
			if r.Float64() < p {
				v++
			}
			if r.Float64() < 0.01 {
				v = matrixio.Missing
			}
			g[i] = v
		}
		if err := w.AddGenotypes(matrixio.Marker{Chrom: "1", Pos: int64(j + 1), ID: "m" + strconv.Itoa(j), Ref: "A", Alt: "G"}, g); err != nil {
			b.Fatal(err)
		}
	}
	if err := w.Close(); err != nil {
		b.Fatal(err)
	}
	st, err := matrixio.Open(path)
	if err != nil {
		b.Fatal(err)
	}
	defer st.Close()
	x := make([]float64, n*l)
	for i := range x {
		x[i] = r.NormFloat64()
	}
	y := make([]float64, n*l)
	op, err := NewOperator(st, OperatorOptions{Threads: 2})
	if err != nil {
		b.Fatal(err)
	}
	if err := op.ApplyFast(context.Background(), x, y, l); err != nil {
		b.Fatal(err)
	}
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if err := op.ApplyFast(context.Background(), x, y, l); err != nil {
			b.Fatal(err)
		}
	}
	sec := b.Elapsed().Seconds() / float64(b.N)
	b.ReportMetric(float64(n)*float64(m)/sec/1e9, "Ggeno/s")
}
