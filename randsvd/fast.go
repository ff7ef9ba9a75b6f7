package randsvd

import "encoding/binary"

// Fast passes. The 2-bit kernels are bound by the bytes of table rows they
// move per packed byte (l float64 values, 8 bytes each), not by
// arithmetic. A fast pass keeps the group tables and the second product's
// weights in float32, which halves that traffic (about twice the kernel
// throughput on the machines of design.md), while every quantity that
// accumulates over many terms stays float64: a marker's first product is
// summed in float32 over one tile of at most 16 groups (64 samples) and
// then added to float64 partials; a sample's second product likewise over
// one tile of 16 marker groups (64 markers) before it joins its float64
// row of Y. A fast pass is K X to about 1e-7
// relative, so the solver uses fast passes only to find the subspace and
// finishes with an exact float64 pass (Solve, FastApplier): the reported
// eigenvalues, residuals, scores and loadings are those of float64
// arithmetic.

// tileGroups32 is tileGroups for the float32 tables: 16 groups of rows of
// at most 32 float32 (384 KiB), measured best in BenchmarkTiles.
func tileGroups32(lp int) int {
	w := min(lp, 32)
	return max(1, min(16, (384<<10)/(256*w*4)))
}

// buildTable32 is buildTable in float32, summed in the same order by
// addRows32 (x2: scratch of lp values).
func buildTable32(tab, x, m, x2 []float32, g, n, lp int) {
	buildTab(tab, x, m, x2, g, n, lp, addRows32)
}

// addRows32Generic sets dst[r] = src[r] + v for r < rows.
func addRows32Generic(dst, src, v []float32, rows, lp int) {
	v = v[:lp]
	for r := 0; r < rows; r++ {
		d := dst[r*lp : r*lp+lp]
		s := src[r*lp : r*lp+lp]
		for k := range d {
			d[k] = s[k] + v[k]
		}
	}
}

// gather32TileGeneric: for each row q, acc = sum over t = 0..ng-1 in
// order, from zero, in float32, of tab_t[raw[offs[q]+g+t*stride]]; then
// dst[q][k] += float64(acc[k]). The vector kernel's order.
func gather32TileGeneric(dst []float64, tab []float32, raw []byte, offs []int32, g, ng, stride, lp int) {
	tb := 256 * lp
	var stack [128]float32
	acc := stack[:0]
	if lp <= len(stack) {
		acc = stack[:lp]
	} else {
		acc = make([]float32, lp)
	}
	for q, o := range offs {
		clear(acc)
		for t := range ng {
			v := raw[int(o)+g+t*stride]
			s := tab[t*tb+int(v)*lp : t*tb+int(v)*lp+lp]
			for k := range acc {
				acc[k] += s[k]
			}
		}
		d := dst[q*lp : q*lp+lp]
		for k, a := range acc {
			d[k] += float64(a)
		}
	}
}

// firstTiles runs the first product's tiles of one sample segment into
// part (float64 rows of lp, one per marker): float64 tables, or float32
// ones in a fast pass.
func (op *Operator) firstTiles(ws *workspace, part []float64, raw []byte, rows rowSet, sg, t int) {
	lp, n, segs := ws.lp, op.n, op.segs
	start, end := segs[sg]/4, (segs[sg+1]+3)/4
	if ws.fast {
		tab := ws.tabs32[t]
		ng := tileGroups32(lp)
		for g := start; g < end; g += ng {
			nt := min(ng, end-g)
			for u := 0; u < nt; u++ {
				buildTable32(tab[u*256*lp:(u+1)*256*lp], ws.x32, nil, ws.scratch32[t*lp:(t+1)*lp], g+u, n, lp)
			}
			gather32Tile(part, tab, raw, rows, g, nt, 1, lp)
		}
		return
	}
	tab := ws.tabs[t]
	ng := tileGroups(lp)
	for g := start; g < end; g += ng {
		nt := min(ng, end-g)
		for u := 0; u < nt; u++ {
			buildTable(tab[u*256*lp:(u+1)*256*lp], ws.x, nil, ws.scratch[t*lp:(t+1)*lp], g+u, n, lp)
		}
		gatherTile(part, tab, raw, rows, g, nt, 1, lp)
	}
}

// secondTiles runs the second product for samples [a, b) (a a multiple
// of 16) and the block's marker groups [g0, g1) (whole tiles), adding to
// the rows of dst, as a gather: the first product's kernel on the
// transposed block. For each tile of groups of four block markers, the
// group tables of the rows wpp = W_j / sd_j are built (256 rows per group,
// like the first product's tables of X; missing calls take the rows mwpp,
// see buildTable), the tile's codes are transposed to one byte per sample
// and group (transposeTile), and every sample adds the table rows of its
// bytes to its row of dst. A gather reads table rows and writes each
// sample's row once per tile; the scatter it replaced (bucket rows updated
// in place per marker byte, then each sample's marginals over the buckets)
// stalled on repeated updates of the same bucket, which rare variants make
// common.
func (op *Operator) secondTiles(ws *workspace, dst []float64, raw []byte, offs []int32, a, b, g0, g1, t int) {
	lp, nb := ws.lp, len(ws.sels)
	pa, pb := a/4, (b+3)/4
	tb := ws.tbuf[t]
	ng := ws.secondTile()
	toffs := ws.toffs.prefix(b - a)
	dst = dst[a*lp : b*lp]
	for g := g0; g < g1; g += ng {
		nt := min(ng, g1-g)
		transposeTile(tb, raw, offs, nb, g, nt, ws.tstride, pa, pb)
		if ws.fast {
			tab := ws.tabs32[t]
			for u := 0; u < nt; u++ {
				buildTable32(tab[u*256*lp:(u+1)*256*lp], ws.wpp32, ws.mwpp32, ws.scratch32[t*lp:(t+1)*lp], g+u, nb, lp)
			}
			gather32Tile(dst, tab, tb, toffs, 0, nt, ws.tstride, lp)
			continue
		}
		tab := ws.tabs[t]
		for u := 0; u < nt; u++ {
			buildTable(tab[u*256*lp:(u+1)*256*lp], ws.wpp, ws.mwpp, ws.scratch[t*lp:(t+1)*lp], g+u, nb, lp)
		}
		gatherTile(dst, tab, tb, toffs, 0, nt, ws.tstride, lp)
	}
}

// secondTile is the number of marker groups in a tile of the second
// product: as many as the first product's tables of that precision.
func (ws *workspace) secondTile() int {
	if ws.fast {
		return tileGroups32(ws.lp)
	}
	return tileGroups(ws.lp)
}

// The transposed block. For samples [a, b) and the groups of a tile, the
// codes of group u (block markers 4u..4u+3) are one byte per sample, the
// marker 4u+s in bits 2s, in a row of the buffer (ws.tstride bytes apart
// from the next group's). Within each run of 32 samples, the byte of the
// run's sample 4p+j is at position 8j+p: that is what shifting and masking
// four 64-bit words of packed codes (32 samples of each of the four
// markers) gives, eight bytes at a time (transposeTile), and the gather
// reads a sample's bytes of successive groups tstride apart at the
// offset transposedOffset.

// transposedOffset is the position in a transposed row of the sample q
// samples after the first.
func transposedOffset(q int) int32 { return int32(q&^31 + 8*(q&3) + (q&31)>>2) }

// transposeTile writes the transposed rows of the nt groups of block
// markers starting at group g, for the samples of packed bytes [pa, pb),
// into tb (rows stride bytes apart); markers past nb count as code 0.
func transposeTile(tb, raw []byte, offs []int32, nb, g, nt, stride, pa, pb int) {
	np := pb - pa
	nfull := np / 8
	for u := 0; u < nt; u++ {
		q0 := 4 * (g + u)
		var rows [4][]byte
		for s := range 4 {
			if q0+s < nb {
				o := int(offs[q0+s])
				rows[s] = raw[o+pa : o+pb]
			} else {
				rows[s] = zeroRow[:np]
			}
		}
		r0, r1, r2, r3 := rows[0][:np], rows[1][:np], rows[2][:np], rows[3][:np]
		out := tb[u*stride : u*stride+32*((np+7)/8)]
		for k := transposeRuns(out, r0, r1, r2, r3, nfull); k < nfull; k++ {
			transpose32(out[32*k:32*k+32],
				binary.LittleEndian.Uint64(r0[8*k:8*k+8]), binary.LittleEndian.Uint64(r1[8*k:8*k+8]),
				binary.LittleEndian.Uint64(r2[8*k:8*k+8]), binary.LittleEndian.Uint64(r3[8*k:8*k+8]))
		}
		if np > 8*nfull {
			// The last, partial run of 32 samples, padded with code 0.
			var w [4][8]byte
			for s, r := range [4][]byte{r0, r1, r2, r3} {
				copy(w[s][:], r[8*nfull:])
			}
			transpose32(out[32*nfull:32*nfull+32],
				binary.LittleEndian.Uint64(w[0][:]), binary.LittleEndian.Uint64(w[1][:]),
				binary.LittleEndian.Uint64(w[2][:]), binary.LittleEndian.Uint64(w[3][:]))
		}
	}
}

// transpose32 writes to d the transposed bytes of a run of 32 samples of
// four markers, whose packed codes are w0..w3: byte 8j+p holds the codes
// of sample 4p+j, marker s in bits 2s. Pairs of markers are interleaved
// first (bits 2s..2s+1 of each nibble), then the nibbles of the pairs.
func transpose32(d []byte, w0, w1, w2, w3 uint64) {
	const (
		m33 = 0x3333333333333333
		mcc = 0xcccccccccccccccc
		m0f = 0x0f0f0f0f0f0f0f0f
		mf0 = 0xf0f0f0f0f0f0f0f0
	)
	// Per byte of p01: codes 0 and 2 of markers 0 and 1 (w0 c0, w1 c0,
	// w0 c2, w1 c2); of q01: codes 1 and 3. Likewise p23, q23.
	p01 := w0&m33 | (w1&m33)<<2
	q01 := (w0>>2)&m33 | w1&mcc
	p23 := w2&m33 | (w3&m33)<<2
	q23 := (w2>>2)&m33 | w3&mcc
	d = d[:32]
	binary.LittleEndian.PutUint64(d[0:], p01&m0f|(p23&m0f)<<4)
	binary.LittleEndian.PutUint64(d[8:], q01&m0f|(q23&m0f)<<4)
	binary.LittleEndian.PutUint64(d[16:], (p01>>4)&m0f|p23&mf0)
	binary.LittleEndian.PutUint64(d[24:], (q01>>4)&m0f|q23&mf0)
}

// zeroRow stands in for the rows of markers past the block's end in
// transposeTile (at most maxSecondRange/4 bytes are read).
var zeroRow [maxSecondRange / 4]byte
