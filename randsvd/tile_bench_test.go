package randsvd

import (
	"fmt"
	"math/rand/v2"
	"testing"
)

// BenchmarkTiles times the float64 gather tile kernel alone on a block of
// 2,048 markers x 1,250 packed bytes (5,000 samples) with genotype codes
// drawn at allele frequency 0.3, reporting genotypes per second.
func BenchmarkTiles(b *testing.B) {
	const nb, rb, lp = 2048, 1250, 20
	r := rand.New(rand.NewPCG(3, 3))
	raw, offs := benchBlock(r, nb, rb, 0.3)
	set := newRowSet(offs)
	rows := make([]float64, nb*lp)
	for _, ng := range []int{4, 8} {
		tab := make([]float64, ng*256*lp)
		for i := range tab {
			tab[i] = r.NormFloat64()
		}
		b.Run(fmt.Sprintf("gather/ng=%d", ng), func(b *testing.B) {
			for i := 0; i < b.N; i++ {
				for g := 0; g+ng <= rb; g += ng {
					gatherTile(rows, tab, raw, set, g, ng, 1, lp)
				}
			}
			sec := b.Elapsed().Seconds() / float64(b.N)
			b.ReportMetric(float64(nb)*float64(rb)*4/sec/1e9, "Ggeno/s")
		})
	}
}

// BenchmarkTiles32 is BenchmarkTiles for the float32 kernel of fast passes
// (rows of 20), with the AVX2 kernel and, where the machine has it, the
// AVX-512 one.
func BenchmarkTiles32(b *testing.B) {
	const nb, rb, lp = 2048, 1250, 20
	r := rand.New(rand.NewPCG(3, 3))
	raw, offs := benchBlock(r, nb, rb, 0.3)
	set := newRowSet(offs)
	rows := make([]float64, nb*lp)
	for _, ng := range []int{8, 16} {
		tab := make([]float32, ng*256*lp)
		for i := range tab {
			tab[i] = float32(r.NormFloat64())
		}
		for _, z := range []bool{false, true} {
			if z && !useAVX512 {
				continue
			}
			b.Run(fmt.Sprintf("gather32/avx512=%v/ng=%d", z, ng), func(b *testing.B) {
				defer func(z bool) { useAVX512 = z }(useAVX512)
				useAVX512 = z
				for i := 0; i < b.N; i++ {
					for g := 0; g+ng <= rb; g += ng {
						gather32Tile(rows, tab, raw, set, g, ng, 1, lp)
					}
				}
				sec := b.Elapsed().Seconds() / float64(b.N)
				b.ReportMetric(float64(nb)*float64(rb)*4/sec/1e9, "Ggeno/s")
			})
		}
	}
}

// BenchmarkSecondProduct times the second product of a fast pass on one
// block of 2,048 markers for 4,096 samples, as secondTiles runs it
// (transposeTile, the group tables of W / sd, the gather), at allele
// frequencies from common to rare: the gather's cost does not depend on
// the codes, unlike the bucket scatter it replaced, which slowed down
// about threefold at frequency 0.03 (repeated updates of the bucket of
// all-zero bytes).
func BenchmarkSecondProduct(b *testing.B) {
	const nb, ns, lp = 2048, 4096, 20
	rb := ns / 4
	for _, p := range []float64{0.3, 0.03} {
		r := rand.New(rand.NewPCG(3, 3))
		raw, offs := benchBlock(r, nb, rb, p)
		wpp := make([]float32, nb*lp)
		for i := range wpp {
			wpp[i] = float32(r.NormFloat64())
		}
		ng := tileGroups32(lp)
		tab := make([]float32, ng*256*lp)
		scratch := make([]float32, lp)
		tb := make([]byte, ng*ns)
		toffs := make([]int32, ns)
		for q := range toffs {
			toffs[q] = transposedOffset(q)
		}
		tset := newRowSet(toffs)
		y := make([]float64, ns*lp)
		b.Run(fmt.Sprintf("p=%v", p), func(b *testing.B) {
			for i := 0; i < b.N; i++ {
				for g := 0; g < nb/4; g += ng {
					nt := min(ng, nb/4-g)
					transposeTile(tb, raw, offs, nb, g, nt, ns, 0, rb)
					for u := 0; u < nt; u++ {
						buildTable32(tab[u*256*lp:(u+1)*256*lp], wpp, wpp, scratch, g+u, nb, lp)
					}
					gather32Tile(y, tab, tb, tset, 0, nt, ns, lp)
				}
			}
			sec := b.Elapsed().Seconds() / float64(b.N)
			b.ReportMetric(float64(nb)*float64(ns)/sec/1e9, "Ggeno/s")
		})
	}
}

// benchBlock returns nb packed rows of rb bytes with codes drawn at allele
// frequency p (no missing calls) and their row offsets.
func benchBlock(r *rand.Rand, nb, rb int, p float64) ([]byte, []int32) {
	raw := make([]byte, nb*rb)
	for i := range raw {
		var v byte
		for s := 0; s < 4; s++ {
			c := byte(0)
			if r.Float64() < p {
				c++
			}
			if r.Float64() < p {
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

// BenchmarkMissing times the missing-call scan (appendMissing) over the
// rows of a block of 2,048 markers x 1,250 packed bytes (5,000 samples,
// calls drawn at allele frequency 0.3, then each made missing with
// probability 0.01), as the first product's reduction scans them:
// row after row of a block larger than the L2 cache.
func BenchmarkMissing(b *testing.B) {
	const nb, rb = 2048, 1250
	r := rand.New(rand.NewPCG(3, 3))
	raw, _ := benchBlock(r, nb, rb, 0.3)
	for i := range raw {
		for s := 0; s < 4; s++ {
			if r.Float64() < 0.01 {
				raw[i] |= 3 << (2 * s)
			}
		}
	}
	dst := make([]int32, 0, 4*rb)
	for i := 0; i < b.N; i++ {
		for q := 0; q < nb; q++ {
			dst = appendMissing(dst[:0], raw[q*rb:(q+1)*rb], 4*rb)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*nb), "ns/row")
}
