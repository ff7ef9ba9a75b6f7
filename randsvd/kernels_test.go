package randsvd

import (
	"fmt"
	"math/rand/v2"
	"slices"
	"testing"
)

// TestKernelsMatchGeneric runs the vector kernels against the portable
// ones on random shapes (odd marker counts, several padded widths, random
// row offsets) and requires bit-identical results: both add the same
// numbers in the same order (the reference is the plain Go loop).
func TestKernelsMatchGeneric(t *testing.T) {
	r := rand.New(rand.NewPCG(9, 9))
	for trial := 0; trial < 40; trial++ {
		lp := 4 * (1 + r.IntN(20)) // up to 80: several column chunks of the vector kernels
		if trial < 4 {
			// Rows of 12 (the blocks of pca -k 10's passes) for sure, and
			// of 44 (chunks of 32 and 12), both strides.
			lp = []int{12, 12, 44, 44}[trial]
		}
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
		slices.Sort(offs) // ascending, as rowOffsets builds them (repeats allowed)
		ng := 1 + r.IntN(min(12, rowBytes))
		g := r.IntN(rowBytes - ng + 1)
		// A marker's packed row (stride 1, the first product) or a
		// transposed block (the second product: group rows stride bytes
		// apart, samples at transposedOffset, not ascending).
		stride := 1
		if trial%2 == 1 {
			stride = (nq + 31) &^ 31
			g = 0
			ng = 1 + r.IntN(4)
			raw = make([]byte, ng*stride)
			for i := range raw {
				raw[i] = byte(r.Uint32())
			}
			for q := range offs {
				offs[q] = transposedOffset(q)
			}
		}
		tab := make([]float64, ng*256*lp)
		for i := range tab {
			tab[i] = r.NormFloat64()
		}
		src := make([]float64, nq*lp)
		for i := range src {
			src[i] = r.NormFloat64()
		}
		type kern struct {
			name       string
			fast, slow func(a []float64)
			outLen     int
		}
		ks := []kern{
			{"gatherTile", func(a []float64) { gatherTile(a, tab, raw, newRowSet(offs), g, ng, stride, lp) }, func(a []float64) { gatherTileGeneric(a, tab, raw, offs, g, ng, stride, lp) }, nq * lp},
			{"gatherTile/AVX2", func(a []float64) {
				defer func(z bool) { useAVX512 = z }(useAVX512)
				useAVX512 = false
				gatherTile(a, tab, raw, newRowSet(offs), g, ng, stride, lp)
			}, func(a []float64) { gatherTileGeneric(a, tab, raw, offs, g, ng, stride, lp) }, nq * lp},
		}
		// Index lists as the missing-call kernels see them: ascending
		// (repeats allowed).
		idx := make([]int32, r.IntN(40))
		for i := range idx {
			idx[i] = int32(r.IntN(nq))
		}
		slices.Sort(idx)
		// Dense float rows: weights contiguous (first product) or strided
		// (second product).
		wstride := 1 + r.IntN(5)
		cnt := 1 + r.IntN(nq)
		wts := make([]float64, (cnt-1)*wstride+1)
		for i := range wts {
			wts[i] = r.NormFloat64()
		}
		ks = append(ks,
			kern{"fmaRows", func(a []float64) { fmaRows(a, src, wts, cnt, wstride, lp) }, func(a []float64) { fmaRowsGeneric(a, src, wts, cnt, wstride, lp) }, lp},
		)
		ks = append(ks,
			kern{"sumRows", func(a []float64) { sumRows(a, src, idx, lp) }, func(a []float64) { sumRowsGeneric(a, src, idx, lp) }, lp},
		)
		// The float32 kernels of fast passes, on rows of lp32 (multiples
		// of 4: vectors of 8 and a tail of 4).
		lp32 := 4 * (1 + r.IntN(20))
		if trial < 4 {
			lp32 = lp
		}
		tab32 := make([]float32, ng*256*lp32)
		for i := range tab32 {
			tab32[i] = float32(r.NormFloat64())
		}
		src32 := make([]float32, nq*lp32)
		for i := range src32 {
			src32[i] = float32(r.NormFloat64())
		}
		// The AVX-512 kernels where the machine has them, and the AVX2 ones
		// they replace there.
		ks = append(ks,
			kern{"gather32Tile", func(a []float64) { gather32Tile(a, tab32, raw, newRowSet(offs), g, ng, stride, lp32) }, func(a []float64) { gather32TileGeneric(a, tab32, raw, offs, g, ng, stride, lp32) }, nq * lp32},
			kern{"gather32Tile/AVX2", func(a []float64) {
				defer func(z bool) { useAVX512 = z }(useAVX512)
				useAVX512 = false
				gather32Tile(a, tab32, raw, newRowSet(offs), g, ng, stride, lp32)
			}, func(a []float64) { gather32TileGeneric(a, tab32, raw, offs, g, ng, stride, lp32) }, nq * lp32},
		)
		// addRows32 writes float32 rows.
		b1 := make([]float32, ng*256*lp32)
		for i := range b1 {
			b1[i] = float32(r.NormFloat64())
		}
		b2 := append([]float32(nil), b1...)
		rows := min(nq, 64)
		addRows32(b1, src32, tab32[lp32:], rows, lp32)
		addRows32Generic(b2, src32, tab32[lp32:], rows, lp32)
		for i := range b1 {
			if b1[i] != b2[i] {
				t.Fatalf("addRows32 trial %d (lp %d, n %d): element %d = %v, generic %v", trial, lp32, nq, i, b1[i], b2[i])
			}
		}
		for _, k := range ks {
			a := make([]float64, k.outLen)
			for i := range a {
				a[i] = r.NormFloat64()
			}
			b := append([]float64(nil), a...)
			k.fast(a)
			k.slow(b)
			for i := range a {
				if a[i] != b[i] {
					t.Fatalf("%s trial %d (lp %d, n %d): element %d = %v, generic %v", k.name, trial, lp, nq, i, a[i], b[i])
				}
			}
		}
	}
	t.Logf("vector kernels in use: AVX2 %v, AVX-512 %v", useAVX2, useAVX512)
}

// TestBuildTable checks the 256-entry group table against its definition
// sum_s val_s(code_s(v)) with val_s = (0, x_s, 2 x_s, m_s) (the 2-bit code
// of design.md: 0, 1, 2 ALT alleles, 3 missing; m_s = 0 without m, as in
// the first product), including partial groups.
func TestBuildTable(t *testing.T) {
	r := rand.New(rand.NewPCG(2, 3))
	lp := 8
	for _, n := range []int{8, 7, 6, 5} {
		for _, withM := range []bool{false, true} {
			x := make([]float64, n*lp)
			m := make([]float64, n*lp)
			for i := range x {
				x[i] = r.NormFloat64()
				m[i] = r.NormFloat64()
			}
			tab := make([]float64, 256*lp)
			mArg := m
			if !withM {
				mArg = nil
			}
			buildTable(tab, x, mArg, make([]float64, lp), 1, n, lp)
			for v := 0; v < 256; v++ {
				for k := 0; k < lp; k++ {
					want := 0.0
					for s := 0; s < 4; s++ {
						i := 4 + s
						if i >= n {
							continue
						}
						switch (v >> (2 * s)) & 3 {
						case 1:
							want += x[i*lp+k]
						case 2:
							want += 2 * x[i*lp+k]
						case 3:
							if withM {
								want += m[i*lp+k]
							}
						}
					}
					if d := tab[v*lp+k] - want; d > 1e-12 || d < -1e-12 {
						t.Fatalf("n %d, m %v: tab[%d][%d] = %v, want %v", n, withM, v, k, tab[v*lp+k], want)
					}
				}
			}
		}
	}
}

// TestFindMissing checks the scan against a plain decode of every 2-bit
// code (code 3 is a missing call, design.md's store codes) on random rows
// of every length 1..40 bytes and longer ones (63-1,250 bytes, up to 5,000
// samples), missing-heavy and sparse, with sample counts that end inside
// the last byte. No outside source: the store's own codes.
func TestFindMissing(t *testing.T) {
	// Both scans where the vector one can run (missingVector); the scalar
	// one alone elsewhere.
	vector := useAVX512
	defer func() { useAVX512 = vector }()
	for _, v := range []bool{false, vector} {
		useAVX512 = v
		t.Run(fmt.Sprintf("vector=%v", v), testFindMissing)
	}
}

func testFindMissing(t *testing.T) {
	lengths := []int{63, 64, 65, 127, 128, 300, 520, 1250, 64 * 40, 64*40 + 17}
	for nbytes := 1; nbytes <= 40; nbytes++ {
		lengths = append(lengths, nbytes)
	}
	r := rand.New(rand.NewPCG(4, 4))
	for _, pMiss := range []float64{0.01, 0.1, 0.5, 1} {
		for _, nbytes := range lengths {
			row := make([]byte, nbytes)
			for i := range row {
				for s := 0; s < 4; s++ {
					c := byte(r.IntN(3))
					if r.Float64() < pMiss {
						c = 3
					}
					row[i] |= c << (2 * s)
				}
			}
			n := 4*nbytes - r.IntN(4)
			var want []int32
			for i := 0; i < n; i++ {
				if (row[i/4]>>(2*(i%4)))&3 == 3 {
					want = append(want, int32(i))
				}
			}
			got := findMissing(row, n, nil)
			if !slices.Equal(got, want) {
				t.Fatalf("p %.2f, %d bytes, n %d: got %v, want %v", pMiss, nbytes, n, got, want)
			}
			// Appending after a prefix, into a buffer with room to spare
			// and one without (the per-thread scratch is reused so).
			for _, spare := range []int{0, 3, 100} {
				prefix := []int32{-7, -5}
				buf := append(make([]int32, 0, len(prefix)+spare), prefix...)
				got = appendMissing(buf, row, n)
				if !slices.Equal(got[:2], prefix) || !slices.Equal(got[2:], want) {
					t.Fatalf("p %.2f, %d bytes, n %d, spare %d: got %v, want %v after %v", pMiss, nbytes, n, spare, got, want, prefix)
				}
			}
		}
	}
}

// TestTransposeTile checks the transposed block against the codes read one
// by one from the packed rows (the layout of fast.go: group u's byte for
// sample q at u*stride + transposedOffset(q), marker 4u+s in bits 2s,
// markers past the block's end as code 0), on odd shapes: partial runs of
// 32 samples, a block whose marker count is not a multiple of four, and a
// sample range starting inside the rows. No outside source: this is the
// project's own layout.
func TestTransposeTile(t *testing.T) {
	r := rand.New(rand.NewPCG(4, 4))
	for trial := 0; trial < 50; trial++ {
		nb := 1 + r.IntN(70)
		rb := 1 + r.IntN(300) // up to 75 runs of 32 samples: the AVX2 path takes four at a time
		raw := make([]byte, nb*rb+r.IntN(3))
		for i := range raw {
			raw[i] = byte(r.Uint32())
		}
		offs := make([]int32, nb)
		for q := range offs {
			offs[q] = int32(q * rb)
		}
		pa := r.IntN(rb)
		pb := pa + 1 + r.IntN(rb-pa)
		ns := 4 * (pb - pa)
		stride := (ns+31)&^31 + 32*r.IntN(2)
		ngroups := (nb + 3) / 4
		g := r.IntN(ngroups)
		nt := 1 + r.IntN(ngroups-g)
		tb := make([]byte, nt*stride)
		transposeTile(tb, raw, offs, nb, g, nt, stride, pa, pb)
		for u := 0; u < nt; u++ {
			for q := 0; q < ns; q++ {
				var want byte
				for s := 0; s < 4; s++ {
					m := 4*(g+u) + s
					if m >= nb {
						continue
					}
					i := 4*pa + q // sample, counted from the row's start
					c := raw[int(offs[m])+i/4] >> (2 * (i % 4)) & 3
					want |= c << (2 * s)
				}
				if got := tb[u*stride+int(transposedOffset(q))]; got != want {
					t.Fatalf("trial %d (nb %d, bytes [%d,%d)): group %d sample %d: %08b, want %08b", trial, nb, pa, pb, g+u, q, got, want)
				}
			}
		}
	}
}

// TestGatherBoundsGuard: the vector gathers refuse offsets whose bytes lie
// outside the block (checkKernel, on the range a rowSet carries), at
// either end, and accept the last byte exactly. The rule is the slices'
// own (common practice, no source): an index must be below the length.
func TestGatherBoundsGuard(t *testing.T) {
	if !useAVX2 {
		t.Skip("portable kernels: Go's own bounds checks apply")
	}
	const lp, ng, stride = 4, 2, 8
	raw := make([]byte, 64)
	tab := make([]float64, ng*256*lp)
	tab32 := make([]float32, ng*256*lp)
	cases := []struct {
		name  string
		offs  []int32
		g     int
		panic bool
	}{
		{"inside", []int32{0, 40, 7}, 0, false},
		{"last byte", []int32{3, 55}, 0, false},         // 55 + 8 = 63
		{"past the end", []int32{3, 56, 1}, 0, true},    // 56 + 8 = 64
		{"past the end via g", []int32{0, 50}, 6, true}, // 56 + 8
		{"before the start", []int32{5, -1}, 0, true},
	}
	for _, c := range cases {
		for _, k := range []struct {
			name string
			run  func()
		}{
			{"float64", func() { gatherTile(make([]float64, len(c.offs)*lp), tab, raw, newRowSet(c.offs), c.g, ng, stride, lp) }},
			{"float32", func() {
				gather32Tile(make([]float64, len(c.offs)*lp), tab32, raw, newRowSet(c.offs), c.g, ng, stride, lp)
			}},
		} {
			var got any
			func() {
				defer func() { got = recover() }()
				k.run()
			}()
			if (got != nil) != c.panic {
				t.Errorf("%s/%s: panic %v, want a panic: %v", c.name, k.name, got, c.panic)
			}
		}
	}
}
