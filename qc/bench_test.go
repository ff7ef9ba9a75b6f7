package qc

import (
	"context"
	"fmt"
	"math/rand/v2"
	"path/filepath"
	"testing"
	"time"

	"github.com/clinal/clinal/matrixio"
	"github.com/clinal/clinal/matrixio/synth"
	"github.com/clinal/clinal/randsvd"
)

// benchCohort writes the benchmark cohort of the issue: 5,000 samples x
// 50,000 markers of the demo scenario (synth defaults: six populations, 1%
// missing, 1% poor samples) on 22 chromosomes, in LD blocks of 5 markers,
// markers 1-9 kb apart.
func benchCohort(b *testing.B) *matrixio.Store {
	b.Helper()
	cfg := synth.DefaultConfig()
	cfg.Samples, cfg.Markers, cfg.Chromosomes, cfg.LDBlock = 5000, 50000, 22, 5
	c, err := synth.New(cfg)
	if err != nil {
		b.Fatal(err)
	}
	path := filepath.Join(b.TempDir(), "bench.clinal")
	if err := c.WriteStore(context.Background(), path, 2); err != nil {
		b.Fatal(err)
	}
	st, err := matrixio.Open(path)
	if err != nil {
		b.Fatal(err)
	}
	b.Cleanup(func() { st.Close() })
	return st
}

// BenchmarkQC times clinal qc with the default filters on the 5,000 x
// 50,000 cohort (poor samples are removed, so the one pass also recounts)
// and, as a yardstick, one PCA pass (one multiplication by K with l = 20
// vectors) on the same store; it reports the QC time in PCA passes (the
// goal of issue 4: at most 2).
func BenchmarkQC(b *testing.B) {
	st := benchCohort(b)
	for _, threads := range []int{1, 2} {
		b.Run(fmt.Sprintf("threads=%d", threads), func(b *testing.B) {
			op, err := randsvd.NewOperator(st, randsvd.OperatorOptions{Threads: threads})
			if err != nil {
				b.Fatal(err)
			}
			const l = 20
			x := make([]float64, op.Dim()*l)
			r := rand.New(rand.NewPCG(1, 2))
			for i := range x {
				x[i] = r.NormFloat64()
			}
			y := make([]float64, len(x))
			t0 := time.Now()
			const reps = 3
			for range reps {
				if err := op.Apply(context.Background(), x, y, l); err != nil {
					b.Fatal(err)
				}
			}
			pca := time.Since(t0).Seconds() / reps
			opt := DefaultOptions()
			opt.Threads = threads
			var sel *Selection
			b.ResetTimer()
			for b.Loop() {
				sel, err = Run(context.Background(), st, opt)
				if err != nil {
					b.Fatal(err)
				}
			}
			sec := b.Elapsed().Seconds() / float64(b.N)
			b.ReportMetric(sec/pca, "pca-passes")
			b.ReportMetric(pca, "pca-pass-s")
			b.ReportMetric(float64(sel.Report.LD.PairsTested), "ld-pairs")
			b.ReportMetric(float64(sel.NumKeptMarkers()), "markers-kept")
		})
	}
}
