package qc

import (
	"math/rand/v2"
	"testing"
)

// TestPairSums checks the population counts of LD pairs against a count
// bit by bit (the definitions in pairSumsFrom; no outside source), with
// the AVX-512 kernel where the machine has it and without, on rows of 1
// to 40 words (whole steps of eight words and tails), missing-heavy and
// sparse; that the moments counted from the planes equal those corrected
// from the missing lists; and that genoR2 gives the same bits on every
// path (its sums are exact integers).
func TestPairSums(t *testing.T) {
	r := rand.New(rand.NewPCG(8, 8))
	row := func(words int, pMiss float64) *ldRow {
		x := &ldRow{c: make([]uint64, words), b1: make([]uint64, words), b2: make([]uint64, words)}
		for k := 0; k < words; k++ {
			for b := 0; b < 64; b++ {
				if r.Float64() < pMiss {
					continue
				}
				x.c[k] |= 1 << b
				switch r.IntN(3) {
				case 1:
					x.b1[k] |= 1 << b
				case 2:
					x.b1[k] |= 1 << b
					x.b2[k] |= 1 << b
				}
			}
		}
		mask := make([]uint64, words)
		for k := range mask {
			mask[k] = ^uint64(0)
		}
		x.finish(mask)
		return x
	}
	g := func(p, q uint64, b int) int64 { return int64(p>>b&1 + q>>b&1) }
	for trial := 0; trial < 200; trial++ {
		words := 1 + r.IntN(40)
		pMiss := []float64{0, 0.01, 0.3}[trial%3]
		x, y := row(words, pMiss), row(words, pMiss)
		var want [8]int64
		for k := 0; k < words; k++ {
			for b := 0; b < 64; b++ {
				cx, cy := x.c[k]>>b&1, y.c[k]>>b&1
				gx, gy := g(x.b1[k], x.b2[k], b), g(y.b1[k], y.b2[k], b)
				// s[0]+s[1]+3 s[2] is the cross sum; check the parts.
				a, bb, c, d := x.b1[k]&y.b1[k]>>b&1, x.b1[k]&y.b2[k]>>b&1, x.b2[k]&y.b1[k]>>b&1, x.b2[k]&y.b2[k]>>b&1
				want[0] += int64(a)
				want[1] += int64(bb ^ c)
				want[2] += int64(d)
				if a+bb+c+d != uint64(gx*gy) {
					t.Fatalf("cross product identity fails at word %d bit %d", k, b)
				}
				if cx&cy == 1 {
					want[3]++
					want[4] += int64(x.b1[k] >> b & 1)
					want[5] += int64(x.b2[k] >> b & 1)
					want[6] += int64(y.b1[k] >> b & 1)
					want[7] += int64(y.b2[k] >> b & 1)
				}
			}
		}
		var r2 []float64
		for _, vp := range []bool{false, true} {
			if vp && !useVPOPCNT {
				continue
			}
			func() {
				defer func(v bool) { useVPOPCNT = v }(useVPOPCNT)
				useVPOPCNT = vp
				if got := pairSums(x, y); got != want {
					t.Fatalf("trial %d (%d words, AVX-512 %v): pairSums %v, want %v", trial, words, vp, got, want)
				}
				r2 = append(r2, genoR2(x, y))
			}()
		}
		for _, v := range r2[1:] {
			if v != r2[0] {
				t.Fatalf("trial %d: genoR2 differs between paths: %v", trial, r2)
			}
		}
		// The moments counted from the planes and those corrected from
		// the missing lists are the same integers, on any machine.
		if x.missOK && y.missOK {
			if c, m := countedMoments(x, y), correctedMoments(x, y); c != m {
				t.Fatalf("trial %d (%d words): counted moments %+v, corrected %+v", trial, words, c, m)
			}
		}
	}
	t.Logf("AVX-512 population count in use: %v", useVPOPCNT)
}
