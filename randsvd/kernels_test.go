package randsvd

import (
	"math/rand/v2"
	"testing"
)

// TestKernelsMatchGeneric runs the vector kernels against the portable
// ones on random shapes (odd marker counts, several padded widths, random
// row offsets) and requires bit-identical results: both add the same
// numbers in the same order (the reference is the plain Go loop).
func TestKernelsMatchGeneric(t *testing.T) {
	r := rand.New(rand.NewPCG(9, 9))
	for trial := 0; trial < 40; trial++ {
		lp := 4 * (1 + r.IntN(8))
		nq := 1 + r.IntN(300)
		rowBytes := 8 + r.IntN(64)
		raw := make([]byte, (nq+5)*rowBytes)
		for i := range raw {
			raw[i] = byte(r.Uint32())
		}
		offs := make([]int32, nq)
		for q := range offs {
			offs[q] = int32(r.IntN(nq+5) * rowBytes)
		}
		g := r.IntN(rowBytes - 4)
		tab := make([]float64, 4*256*lp)
		for i := range tab {
			tab[i] = r.NormFloat64()
		}
		src := make([]float64, nq*lp)
		for i := range src {
			src[i] = r.NormFloat64()
		}
		type kern struct {
			name       string
			fast, slow func(a, b []float64)
			outLen     int
		}
		ks := []kern{
			{"gatherAdd", func(a, b []float64) { gatherAdd(a, tab, raw, offs, g, lp) }, func(a, b []float64) { gatherAddGeneric(a, tab, raw, offs, g, lp) }, nq * lp},
			{"gatherAdd4", func(a, b []float64) { gatherAdd4(a, tab, raw, offs, g, lp) }, func(a, b []float64) { gatherAdd4Generic(a, tab, raw, offs, g, lp) }, nq * lp},
			{"scatterAdd", func(a, b []float64) { scatterAdd(a, src, raw, offs, g, lp) }, func(a, b []float64) { scatterAddGeneric(a, src, raw, offs, g, lp) }, 256 * lp},
			{"scatterAdd4", func(a, b []float64) { scatterAdd4(a, src, raw, offs, g, lp) }, func(a, b []float64) { scatterAdd4Generic(a, src, raw, offs, g, lp) }, 4 * 256 * lp},
		}
		for _, k := range ks {
			a := make([]float64, k.outLen)
			for i := range a {
				a[i] = r.NormFloat64()
			}
			b := append([]float64(nil), a...)
			k.fast(a, nil)
			k.slow(b, nil)
			for i := range a {
				if a[i] != b[i] {
					t.Fatalf("%s trial %d (lp %d, n %d): element %d = %v, generic %v", k.name, trial, lp, nq, i, a[i], b[i])
				}
			}
		}
	}
	t.Logf("vector kernels in use: %v", useAVX2)
}

// TestBuildTable checks the 256-entry group table against its definition
// sum_s val(code_s(v)) x_s with val = (0, 1, 2, 0) (the 2-bit code of
// design.md: 0, 1, 2 ALT alleles, 3 missing), including a partial group.
func TestBuildTable(t *testing.T) {
	r := rand.New(rand.NewPCG(2, 3))
	lp := 8
	for _, n := range []int{8, 7, 6, 5} {
		x := make([]float64, n*lp)
		for i := range x {
			x[i] = r.NormFloat64()
		}
		tab := make([]float64, 256*lp)
		buildTable(tab, x, 1, n, lp)
		val := [4]float64{0, 1, 2, 0}
		for v := 0; v < 256; v++ {
			for k := 0; k < lp; k++ {
				want := 0.0
				for s := 0; s < 4; s++ {
					if i := 4 + s; i < n {
						want += val[(v>>(2*s))&3] * x[i*lp+k]
					}
				}
				if d := tab[v*lp+k] - want; d > 1e-12 || d < -1e-12 {
					t.Fatalf("n %d: tab[%d][%d] = %v, want %v", n, v, k, tab[v*lp+k], want)
				}
			}
		}
	}
}
