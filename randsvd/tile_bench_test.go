package randsvd

import (
	"fmt"
	"math/rand/v2"
	"testing"
)

// BenchmarkTiles times the gather and scatter tile kernels alone on a block
// of 2,048 markers x 1,250 packed bytes (5,000 samples) with genotype codes
// drawn at allele frequency 0.3, reporting genotypes per second.
func BenchmarkTiles(b *testing.B) {
	const nb, rb, lp = 2048, 1250, 20 + 4 - 20%4
	r := rand.New(rand.NewPCG(3, 3))
	raw, offs := benchBlock(r, nb, rb)
	rows := make([]float64, nb*lp)
	for _, ng := range []int{4, 8} {
		tab := make([]float64, ng*256*lp)
		for i := range tab {
			tab[i] = r.NormFloat64()
		}
		for _, k := range []struct {
			name string
			fn   func(g int)
		}{
			{"gather", func(g int) { gatherTile(rows, tab, raw, offs, g, ng, lp) }},
			{"scatter", func(g int) { scatterTile(tab, rows, raw, offs, g, ng, lp) }},
		} {
			b.Run(fmt.Sprintf("%s/ng=%d", k.name, ng), func(b *testing.B) {
				for i := 0; i < b.N; i++ {
					for g := 0; g+ng <= rb; g += ng {
						k.fn(g)
					}
				}
				sec := b.Elapsed().Seconds() / float64(b.N)
				b.ReportMetric(float64(nb)*float64(rb)*4/sec/1e9, "Ggeno/s")
			})
		}
	}
}

// BenchmarkTiles32 is BenchmarkTiles for the float32 kernels of fast
// passes (rows of 20: two vectors of 8 and a tail of 4).
func BenchmarkTiles32(b *testing.B) {
	const nb, rb, lp = 2048, 1250, 20
	r := rand.New(rand.NewPCG(3, 3))
	raw, offs := benchBlock(r, nb, rb)
	rows := make([]float64, nb*lp)
	rows32 := make([]float32, nb*lp)
	for _, ng := range []int{4, 8, 16} {
		tab := make([]float32, ng*256*lp)
		for i := range tab {
			tab[i] = float32(r.NormFloat64())
		}
		for _, k := range []struct {
			name string
			fn   func(g int)
		}{
			{"gather32", func(g int) { gather32Tile(rows, tab, raw, offs, g, ng, lp) }},
			{"scatter32", func(g int) { scatter32Tile(tab, rows32, raw, offs, g, ng, lp) }},
		} {
			b.Run(fmt.Sprintf("%s/ng=%d", k.name, ng), func(b *testing.B) {
				for i := 0; i < b.N; i++ {
					for g := 0; g+ng <= rb; g += ng {
						k.fn(g)
					}
				}
				sec := b.Elapsed().Seconds() / float64(b.N)
				b.ReportMetric(float64(nb)*float64(rb)*4/sec/1e9, "Ggeno/s")
			})
		}
	}
}

// benchBlock returns nb packed rows of rb bytes with codes drawn at allele
// frequency 0.3 (no missing calls) and their row offsets.
func benchBlock(r *rand.Rand, nb, rb int) ([]byte, []int32) {
	raw := make([]byte, nb*rb)
	for i := range raw {
		var v byte
		for s := 0; s < 4; s++ {
			c := byte(0)
			if r.Float64() < 0.3 {
				c++
			}
			if r.Float64() < 0.3 {
				c++
			}
			v |= c << (2 * s)
		}
		raw[i] = v
	}
	offs := make([]int32, nb)
	for q := range offs {
		offs[q] = int32(q * rb)
	}
	return raw, offs
}
