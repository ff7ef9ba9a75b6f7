package randsvd

// Fast passes. The 2-bit kernels are bound by the bytes of table rows they
// move per packed byte (l float64 values, 8 bytes each), not by
// arithmetic. A fast pass keeps the group tables, the bucket sums and the
// second product's weights in float32, which halves that traffic (about
// twice the kernel throughput on the machines of design.md), while every
// quantity that accumulates over many terms stays float64: a marker's
// first product is summed in float32 over one tile of at most 16 groups
// (64 samples) and then added to float64 partials; the buckets of the
// second product sum in float32 over one block of markers and are
// expanded into float64 sample rows. A fast pass is K X to about 1e-7
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

// buildTable32 is buildTable in float32: tab (256 rows of lp) gets
// sum_s val(code_s(v)) x_{4g+s} for every byte value v, summed in float32
// in the same order by addRows32 (x2: scratch of lp values).
func buildTable32(tab, x, x2 []float32, g, n, lp int) { buildTab(tab, x, x2, g, n, lp, addRows32) }

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

// gather32TileGeneric: for each marker q, acc = sum over t = 0..ng-1 in
// order, from zero, in float32, of tab_t[byte g+t of its row]; then
// dst[q][k] += float64(acc[k]). The vector kernel's order.
func gather32TileGeneric(dst []float64, tab []float32, raw []byte, offs []int32, g, ng, lp int) {
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
		b := raw[int(o)+g : int(o)+g+ng]
		for t, v := range b {
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

// scatter32TileGeneric is scatterTileGeneric on float32 rows.
func scatter32TileGeneric(buck, src []float32, raw []byte, offs []int32, g, ng, lp int) {
	scatterTileGeneric(buck, src, raw, offs, g, ng, lp)
}

// marginal32Generic is marginalGeneric over float32 buckets: the sum
// (E1 + O1) + 2 (E2 + O2) is formed in float32 and added to the float64
// row y.
func marginal32Generic(y []float64, buck []float32, l1, l2 *[64]uint8, lp int) {
	for k := 0; k < lp; k++ {
		var e1, o1, e2, o2 float32
		for t := 0; t < 64; t += 2 {
			e1 += buck[int(l1[t])*lp+k]
			o1 += buck[int(l1[t+1])*lp+k]
			e2 += buck[int(l2[t])*lp+k]
			o2 += buck[int(l2[t+1])*lp+k]
		}
		a := e2 + o2
		y[k] += float64((e1 + o1) + (a + a))
	}
}

// firstTiles runs the first product's tiles of one sample segment into
// part (float64 rows of lp, one per marker): float64 tables, or float32
// ones in a fast pass.
func (op *Operator) firstTiles(ws *workspace, part []float64, raw []byte, offs []int32, sg, t int) {
	lp, n, segs := ws.lp, op.n, op.segs
	start, end := segs[sg]/4, (segs[sg+1]+3)/4
	if ws.fast {
		tab := ws.tabs32[t]
		ng := tileGroups32(lp)
		for g := start; g < end; g += ng {
			nt := min(ng, end-g)
			for u := 0; u < nt; u++ {
				buildTable32(tab[u*256*lp:(u+1)*256*lp], ws.x32, ws.scratch32[t*lp:(t+1)*lp], g+u, n, lp)
			}
			gather32Tile(part, tab, raw, offs, g, nt, lp)
		}
		return
	}
	tab := ws.tabs[t]
	ng := tileGroups(lp)
	for g := start; g < end; g += ng {
		nt := min(ng, end-g)
		for u := 0; u < nt; u++ {
			buildTable(tab[u*256*lp:(u+1)*256*lp], ws.x, ws.scratch[t*lp:(t+1)*lp], g+u, n, lp)
		}
		gatherTile(part, tab, raw, offs, g, nt, lp)
	}
}

// secondTiles runs the second product's tiles of one sample segment,
// adding the bucket marginals of each sample to ws.y.
func (op *Operator) secondTiles(ws *workspace, raw []byte, offs []int32, sg, t int) {
	lp, n, segs := ws.lp, op.n, op.segs
	start, end := segs[sg]/4, (segs[sg+1]+3)/4
	if ws.fast {
		buck := ws.tabs32[t]
		ng := tileGroups32(lp)
		for g := start; g < end; g += ng {
			nt := min(ng, end-g)
			clear(buck[:nt*256*lp])
			scatter32Tile(buck, ws.wpp32, raw, offs, g, nt, lp)
			for u := 0; u < nt; u++ {
				bu := buck[u*256*lp : (u+1)*256*lp]
				for s := 0; s < 4 && 4*(g+u)+s < n; s++ {
					i := 4*(g+u) + s
					marginal32(ws.y[i*lp:i*lp+lp], bu, &marginalIdx[s][0], &marginalIdx[s][1], lp)
				}
			}
		}
		return
	}
	buck := ws.tabs[t]
	ng := tileGroups(lp)
	for g := start; g < end; g += ng {
		nt := min(ng, end-g)
		clear(buck[:nt*256*lp])
		scatterTile(buck, ws.wpp, raw, offs, g, nt, lp)
		for u := 0; u < nt; u++ {
			bu := buck[u*256*lp : (u+1)*256*lp]
			for s := 0; s < 4 && 4*(g+u)+s < n; s++ {
				i := 4*(g+u) + s
				marginal(ws.y[i*lp:i*lp+lp], bu, &marginalIdx[s][0], &marginalIdx[s][1], lp)
			}
		}
	}
}
