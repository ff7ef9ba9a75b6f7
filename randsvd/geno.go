package randsvd

import (
	"encoding/binary"
)

// The 2-bit kernels work on groups of four samples, one packed byte of a
// marker's row. With val(c) = c for calls 0, 1, 2 and val(missing) = 0, a
// marker's standardized row is z = (val(g) - mu) / sd off the missing
// calls, so
//
//	W_j = Z_j X = (G_j X - mu_j (T - S_j)) / sd_j
//
// where G_j X = sum_i val(g_ij) X_i, T the column sums of X and S_j the sum
// of X over the samples missing at marker j. For one group of four samples
// all 256 byte values of G X are tabulated once per chunk (256 rows of l),
// and then every marker costs one table row added per byte, four samples at
// a time, with no branch on the genotype: the table lookup over packed bytes
// of Liberty & Zucker 2009 (the Mailman algorithm). The second product runs
// the same idea backwards: for a group, W''_j = W_j / sd_j is added into the
// bucket of marker j's byte, and each of the four samples then takes the
// buckets whose code for it is 1 once and those whose code is 2 twice.
//
// Samples are cut into fixed segments of segSamples (independent of the
// thread count); first-product partials are summed over segments in order,
// so the result never depends on scheduling.

const (
	segSamples  = 512 // samples per segment for small cohorts
	maxSegments = 64  // at most this many segments (bounds the partials)
)

// segments returns the boundaries of the fixed sample segments for n
// samples: about 512 samples each, at most 64 of them, each a multiple of
// 16 samples (four packed bytes) but the last. They depend on n alone.
func segments(n int) []int {
	nseg := min(maxSegments, max(1, (n+segSamples-1)/segSamples))
	size := ((n+nseg-1)/nseg + 15) &^ 15
	var b []int
	for a := 0; a < n; a += size {
		b = append(b, a)
	}
	return append(b, n)
}

// marginalIdx[s][c-1] lists the 64 byte values whose code at position s is c
// (c = 1, 2).
var marginalIdx = func() (m [4][2][64]uint8) {
	var k [4][2]int
	for v := 0; v < 256; v++ {
		for s := 0; s < 4; s++ {
			c := (v >> (2 * s)) & 3
			if c == 1 || c == 2 {
				m[s][c-1][k[s][c-1]] = uint8(v)
				k[s][c-1]++
			}
		}
	}
	return m
}()

// buildTable fills tab (256 rows of lp) with sum_s val(code_s(v)) x_{4g+s}
// for every byte value v; rows of samples beyond n count as zero.
func buildTable(tab, x []float64, g, n, lp int) {
	var stack [128]float64
	x2 := stack[:0]
	if lp <= len(stack) {
		x2 = stack[:lp]
	} else {
		x2 = make([]float64, lp)
	}
	clear(tab[:4*lp])
	i0 := 4 * g
	if i0 < n {
		x0 := x[i0*lp : i0*lp+lp]
		copy(tab[lp:2*lp], x0)
		t2 := tab[2*lp : 3*lp]
		for k, v := range x0 {
			t2[k] = 2 * v
		}
	}
	span := 4
	for s := 1; s < 4; s++ {
		i := i0 + s
		// Entries with code 0 (and missing, code 3) at position s copy the
		// lower table; code 1 adds x_i, code 2 adds 2 x_i.
		copy(tab[3*span*lp:4*span*lp], tab[:span*lp])
		if i < n {
			xi := x[i*lp : i*lp+lp]
			for k, v := range xi {
				x2[k] = 2 * v
			}
			addRows(tab[span*lp:2*span*lp], tab[:span*lp], xi, span, lp)
			addRows(tab[2*span*lp:3*span*lp], tab[:span*lp], x2, span, lp)
		} else {
			copy(tab[span*lp:2*span*lp], tab[:span*lp])
			copy(tab[2*span*lp:3*span*lp], tab[:span*lp])
		}
		span *= 4
	}
}

// addRowsGeneric sets dst[r] = src[r] + v for r < rows.
func addRowsGeneric(dst, src, v []float64, rows, lp int) {
	v = v[:lp]
	for r := 0; r < rows; r++ {
		d := dst[r*lp : r*lp+lp]
		s := src[r*lp : r*lp+lp]
		for k := range d {
			d[k] = s[k] + v[k]
		}
	}
}

// rowOffsets returns the byte offset of each selected marker's row.
func rowOffsets(sels []sel, rb int, buf []int32) []int32 {
	buf = buf[:0]
	for _, s := range sels {
		buf = append(buf, int32(int(s.off)*rb))
	}
	return buf
}

// findMissing lists the samples with a missing call (code 3) in a packed
// row, testing eight bytes at a time.
func findMissing(row []byte, n int, dst []int32) []int32 {
	dst = dst[:0]
	const lo = 0x5555555555555555
	bi := 0
	for ; bi < len(row); bi += 8 {
		if bi+8 <= len(row) {
			x := binary.LittleEndian.Uint64(row[bi:])
			if x&(x>>1)&lo == 0 {
				continue
			}
		}
		for b := bi; b < min(bi+8, len(row)); b++ {
			by := row[b]
			if m := by & (by >> 1) & 0x55; m != 0 {
				for s := 0; s < 4; s++ {
					if m&(1<<(2*s)) != 0 && 4*b+s < n {
						dst = append(dst, int32(4*b+s))
					}
				}
			}
		}
	}
	return dst
}

// genoFirst computes W = Z_b X for the kept markers of a 2-bit chunk into
// ws.w (row q for sels[q]), and the missing lists ws.miss.
func (op *Operator) genoFirst(ws *workspace, raw []byte, sels []sel) {
	lp, n, nb := ws.lp, op.n, len(sels)
	rb := op.st.RowBytes()
	ws.offs = rowOffsets(sels, rb, ws.offs)
	offs := ws.offs
	segs := op.segs
	nseg := len(segs) - 1
	ws.part = grow(ws.part, nseg*nb*lp)
	ws.w = grow(ws.w, nb*lp)
	for len(ws.miss) < nb {
		ws.miss = append(ws.miss, nil)
	}
	op.forEach(nseg, func(sg, t int) {
		part := ws.part[sg*nb*lp : (sg+1)*nb*lp]
		clear(part)
		tab := ws.tabs[t]
		g, end := segs[sg]/4, (segs[sg+1]+3)/4
		for ; g+4 <= end; g += 4 {
			for u := 0; u < 4; u++ {
				buildTable(tab[u*256*lp:(u+1)*256*lp], ws.x, g+u, n, lp)
			}
			gatherAdd4(part, tab, raw, offs, g, lp)
		}
		for ; g < end; g++ {
			buildTable(tab, ws.x, g, n, lp)
			gatherAdd(part, tab, raw, offs, g, lp)
		}
	})
	op.forEach(nb, func(q, _ int) {
		s := sels[q]
		ws.miss[q] = findMissing(raw[int(s.off)*rb:(int(s.off)+1)*rb], n, ws.miss[q])
		w := ws.w[q*lp : q*lp+lp]
		copy(w, ws.part[q*lp:q*lp+lp])
		for sg := 1; sg < nseg; sg++ {
			p := ws.part[(sg*nb+q)*lp : (sg*nb+q)*lp+lp]
			for k := range w {
				w[k] += p[k]
			}
		}
		mu, inv := op.center[s.ord], op.scale[s.ord]
		// T - S_j: the sum of X over the samples called at marker j.
		if len(ws.miss[q]) == 0 {
			for k := range w {
				w[k] = (w[k] - mu*ws.tot[k]) * inv
			}
			return
		}
		var stack [64]float64
		called := stack[:0]
		if lp > len(stack) {
			called = make([]float64, lp)
		} else {
			called = stack[:lp]
		}
		copy(called, ws.tot)
		for _, i := range ws.miss[q] {
			xi := ws.x[int(i)*lp : int(i)*lp+lp]
			for k := range called {
				called[k] -= xi[k]
			}
		}
		for k := range w {
			w[k] = (w[k] - mu*called[k]) * inv
		}
	})
}

// genoChunk applies one chunk of 2-bit calls: Y += Z_b^T Z_b X.
func (op *Operator) genoChunk(ws *workspace, raw []byte, sels []sel) {
	lp, n, nb := ws.lp, op.n, len(sels)
	op.genoFirst(ws, raw, sels)
	ws.wpp = grow(ws.wpp, nb*lp)
	for q, s := range sels {
		mu, inv := op.center[s.ord], op.scale[s.ord]
		w := ws.w[q*lp : q*lp+lp]
		d := ws.wpp[q*lp : q*lp+lp]
		for k := range d {
			d[k] = w[k] * inv
			ws.btot[k] -= mu * d[k]
		}
	}
	offs := ws.offs // set by genoFirst for these sels
	segs := op.segs
	op.forEach(len(segs)-1, func(sg, t int) {
		buck := ws.tabs[t]
		a, b := segs[sg], segs[sg+1]
		g, end := a/4, (b+3)/4
		for g < end {
			width := 1
			if g+4 <= end {
				width = 4
				clear(buck)
				scatterAdd4(buck, ws.wpp, raw, offs, g, lp)
			} else {
				clear(buck[:256*lp])
				scatterAdd(buck, ws.wpp, raw, offs, g, lp)
			}
			for u := 0; u < width; u++ {
				bu := buck[u*256*lp : (u+1)*256*lp]
				for s := 0; s < 4 && 4*(g+u)+s < n; s++ {
					i := 4*(g+u) + s
					marginal(ws.y[i*lp:i*lp+lp], bu, &marginalIdx[s][0], &marginalIdx[s][1], lp)
				}
			}
			g += width
		}
		// Missing calls have z = 0: give back the -mu_j W''_j of btot.
		for q, s := range sels {
			mu := op.center[s.ord]
			d := ws.wpp[q*lp : q*lp+lp]
			for _, i := range ws.miss[q] {
				if int(i) < a || int(i) >= b {
					continue
				}
				y := ws.y[int(i)*lp : int(i)*lp+lp]
				for k := range y {
					y[k] += mu * d[k]
				}
			}
		}
	})
}

// gatherAddGeneric: for each marker q, dst[q] += tab[byte g of its row].
func gatherAddGeneric(dst, tab []float64, raw []byte, offs []int32, g, lp int) {
	for q, o := range offs {
		v := int(raw[int(o)+g])
		d := dst[q*lp : q*lp+lp]
		s := tab[v*lp : v*lp+lp]
		for k := range d {
			d[k] += s[k]
		}
	}
}

// scatterAddGeneric: for each marker q, buck[byte g of its row] += src[q].
func scatterAddGeneric(buck, src []float64, raw []byte, offs []int32, g, lp int) {
	for q, o := range offs {
		v := int(raw[int(o)+g])
		d := buck[v*lp : v*lp+lp]
		s := src[q*lp : q*lp+lp]
		for k := range d {
			d[k] += s[k]
		}
	}
}

// marginalGeneric adds to y the buckets whose code at this position is 1
// (l1) once and those whose code is 2 (l2) twice, as
// (E1 + O1) + 2 (E2 + O2) with even and odd list positions summed
// separately in increasing order (the vector kernel's order).
func marginalGeneric(y, buck []float64, l1, l2 *[64]uint8, lp int) {
	for k := 0; k < lp; k++ {
		var e1, o1, e2, o2 float64
		for t := 0; t < 64; t += 2 {
			e1 += buck[int(l1[t])*lp+k]
			o1 += buck[int(l1[t+1])*lp+k]
			e2 += buck[int(l2[t])*lp+k]
			o2 += buck[int(l2[t+1])*lp+k]
		}
		a := e2 + o2
		y[k] += (e1 + o1) + (a + a)
	}
}

// gatherAdd4Generic is four consecutive groups of gatherAdd with one
// update of dst per marker: dst[q] += ((t0 + t1) + t2) + t3, in that order
// (the vector kernel adds in the same order, so results are identical).
func gatherAdd4Generic(dst, tab []float64, raw []byte, offs []int32, g, lp int) {
	tb := 256 * lp
	for q, o := range offs {
		b := raw[int(o)+g : int(o)+g+4]
		t0 := tab[int(b[0])*lp : int(b[0])*lp+lp]
		t1 := tab[tb+int(b[1])*lp : tb+int(b[1])*lp+lp]
		t2 := tab[2*tb+int(b[2])*lp : 2*tb+int(b[2])*lp+lp]
		t3 := tab[3*tb+int(b[3])*lp : 3*tb+int(b[3])*lp+lp]
		d := dst[q*lp : q*lp+lp]
		for k := range d {
			d[k] += ((t0[k] + t1[k]) + t2[k]) + t3[k]
		}
	}
}

// scatterAdd4Generic is four consecutive groups of scatterAdd.
func scatterAdd4Generic(buck, src []float64, raw []byte, offs []int32, g, lp int) {
	tb := 256 * lp
	for q, o := range offs {
		b := raw[int(o)+g : int(o)+g+4]
		s := src[q*lp : q*lp+lp]
		for t := 0; t < 4; t++ {
			d := buck[t*tb+int(b[t])*lp : t*tb+int(b[t])*lp+lp]
			for k := range d {
				d[k] += s[k]
			}
		}
	}
}
