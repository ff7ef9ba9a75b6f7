package randsvd

import (
	"context"
	"fmt"
	"math/rand/v2"
	"testing"
)

// BenchmarkPass measures one application of K (a pass over the store),
// exact (float64) and fast (float32 tables, fast.go), and
// reports genotypes per second and the dense-equivalent GFLOP/s (4*N*M*l
// flops per pass, design.md performance model). fast-rare is the fast pass
// with 2 threads on a cohort of mostly rare variants (allele frequency
// 0.005 + 0.1 u^2 for u uniform: median 0.03, as after a MAF filter on
// sequencing data), where most packed bytes are all reference calls.
func BenchmarkPass(b *testing.B) {
	n, m, l := 5000, 20000, 20
	st, _ := testCohort(b, n, m, 3, 0.05, 0.01, 1, 0)
	rare, _ := testCohortFreq(b, n, m, 1, 0, 0.01, 11, 0, func(r *rand.Rand) float64 {
		u := r.Float64()
		return 0.005 + 0.1*u*u
	})
	x := make([]float64, n*l)
	r := rand.New(rand.NewPCG(1, 1))
	for i := range x {
		x[i] = r.NormFloat64()
	}
	y := make([]float64, n*l)
	for _, mode := range []string{"exact", "fast", "fast-rare"} {
		for _, th := range []int{1, 2} {
			if mode == "fast-rare" && th == 1 {
				continue
			}
			b.Run(fmt.Sprintf("%s/threads=%d", mode, th), func(b *testing.B) {
				s := st
				if mode == "fast-rare" {
					s = rare
				}
				op, err := NewOperator(s, OperatorOptions{Threads: th})
				if err != nil {
					b.Fatal(err)
				}
				apply := op.Apply
				if mode != "exact" {
					apply = op.ApplyFast
				}
				// One pass first: the workspace and the missing-call lists
				// are allocated then, and allocs/op shows the steady state.
				if err := apply(context.Background(), x, y, l); err != nil {
					b.Fatal(err)
				}
				b.ReportAllocs()
				b.ResetTimer()
				for i := 0; i < b.N; i++ {
					if err := apply(context.Background(), x, y, l); err != nil {
						b.Fatal(err)
					}
				}
				sec := b.Elapsed().Seconds() / float64(b.N)
				b.ReportMetric(float64(n)*float64(m)/sec/1e9, "Ggeno/s")
				b.ReportMetric(4*float64(n)*float64(m)*float64(l)/sec/1e9, "GFLOP/s-equiv")
			})
		}
	}
}
