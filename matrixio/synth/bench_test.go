package synth

import (
	"context"
	"fmt"
	"path/filepath"
	"testing"

	"github.com/clinal/clinal/matrixio"
)

// BenchmarkGenerate measures generation throughput (genotypes per second)
// for the default scenario at 5,000 samples, with and without LD blocks.
func BenchmarkGenerate(b *testing.B) {
	for _, ld := range []int{0, 10} {
		for _, threads := range []int{1, 2} {
			b.Run(fmt.Sprintf("ld=%d/threads=%d", ld, threads), func(b *testing.B) {
				cfg := DefaultConfig()
				cfg.Samples, cfg.Markers, cfg.LDBlock = 5000, 5000, ld
				c, err := New(cfg)
				if err != nil {
					b.Fatal(err)
				}
				b.SetBytes(int64(cfg.Samples) * int64(cfg.Markers))
				for b.Loop() {
					if err := c.Generate(context.Background(), threads, func(matrixio.Marker, []byte) error { return nil }); err != nil {
						b.Fatal(err)
					}
				}
			})
		}
	}
}

// BenchmarkWriteStore measures simulate-to-store throughput at 5,000
// samples (one byte per genotype in the MB/s figure).
func BenchmarkWriteStore(b *testing.B) {
	for _, threads := range []int{1, 2} {
		b.Run(fmt.Sprintf("threads=%d", threads), func(b *testing.B) {
			cfg := DefaultConfig()
			cfg.Samples, cfg.Markers = 5000, 5000
			c, err := New(cfg)
			if err != nil {
				b.Fatal(err)
			}
			path := filepath.Join(b.TempDir(), "bench.clinal")
			b.SetBytes(int64(cfg.Samples) * int64(cfg.Markers))
			for b.Loop() {
				if err := c.WriteStore(context.Background(), path, threads); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
