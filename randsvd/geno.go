package randsvd

import (
	"encoding/binary"
	"math/bits"
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
// of Liberty & Zucker 2009 (the Mailman algorithm). The second product is
// the same gather on the transposed block (fast.go, secondTiles): for each
// group of four block markers the 256 byte values of their rows W_j / sd_j
// are tabulated (a missing call taking mu_j W_j / sd_j, which gives back
// its share of the constant -sum_j mu_j W_j / sd_j every sample gets), the
// block's codes are transposed to one byte per sample and marker group,
// and each sample adds one table row per byte.
//
// Samples are cut into fixed segments of segSamples (independent of the
// thread count); first-product partials are summed over segments in order,
// and a sample's second-product sum runs over the block's marker groups in
// order within each marker part (secondParts, which depends on the sample
// count and the block width alone), the parts then added in part order, so
// the result never depends on scheduling.

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

// buildTable fills tab (256 rows of lp) with sum_s val_s(code_s(v)) for
// every byte value v, val_s(1) = x_{4g+s}, val_s(2) = 2 x_{4g+s},
// val_s(0) = 0 and val_s(3) (a missing call) = m_{4g+s}, or 0 if m is nil;
// rows of indices beyond n count as zero. The first product's tables are
// over samples (x the rows of X, m nil); the second product's over block
// markers (x the rows wpp = W_j / sd_j, m the rows mwpp = mu_j W_j / sd_j,
// which give back to a sample missing at marker j the -mu_j W_j / sd_j
// every sample gets). x2 is scratch of lp values.
func buildTable(tab, x, m, x2 []float64, g, n, lp int) { buildTab(tab, x, m, x2, g, n, lp, addRows) }

// buildTab is buildTable for float64 or float32 rows, with add the row
// kernel of that precision (dst[r] = src[r] + v). The scratch row comes
// from the caller: a slice handed to a function value escapes, and a local
// one would be allocated at every call.
func buildTab[F float32 | float64](tab, x, m, x2 []F, g, n, lp int, add func(dst, src, v []F, rows, lp int)) {
	x2 = x2[:lp]
	clear(tab[:4*lp])
	i0 := 4 * g
	if i0 < n {
		x0 := x[i0*lp : i0*lp+lp]
		copy(tab[lp:2*lp], x0)
		t2 := tab[2*lp : 3*lp]
		for k, v := range x0 {
			t2[k] = 2 * v
		}
		if m != nil {
			copy(tab[3*lp:4*lp], m[i0*lp:i0*lp+lp])
		}
	}
	span := 4
	for s := 1; s < 4; s++ {
		i := i0 + s
		// Code 0 at position s copies the lower table; code 1 adds x_i,
		// code 2 adds 2 x_i, code 3 adds m_i (or copies).
		if i < n {
			xi := x[i*lp : i*lp+lp]
			for k, v := range xi {
				x2[k] = 2 * v
			}
			add(tab[span*lp:2*span*lp], tab[:span*lp], xi, span, lp)
			add(tab[2*span*lp:3*span*lp], tab[:span*lp], x2, span, lp)
			if m != nil {
				add(tab[3*span*lp:4*span*lp], tab[:span*lp], m[i*lp:i*lp+lp], span, lp)
			} else {
				copy(tab[3*span*lp:4*span*lp], tab[:span*lp])
			}
		} else {
			copy(tab[span*lp:2*span*lp], tab[:span*lp])
			copy(tab[2*span*lp:3*span*lp], tab[:span*lp])
			copy(tab[3*span*lp:4*span*lp], tab[:span*lp])
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

// rowSet is the row offsets a gather reads (one per row of its output) with
// their range, found once per block (or once per transposed layout), so
// the vector kernels' bounds check (checkKernel) costs nothing per tile:
// a scan of the offsets at every kernel call took about 2% of a pass.
type rowSet struct {
	offs   []int32
	lo, hi int32
}

// newRowSet returns offs with its range.
func newRowSet(offs []int32) rowSet {
	r := rowSet{offs: offs}
	if len(offs) > 0 {
		r.lo, r.hi = offs[0], offs[0]
		for _, o := range offs {
			r.lo, r.hi = min(r.lo, o), max(r.hi, o)
		}
	}
	return r
}

// prefix is the first n rows, with the whole set's range (which bounds
// theirs: the check stays a guard, only not a tight one).
func (r rowSet) prefix(n int) rowSet {
	r.offs = r.offs[:n]
	return r
}

// rowOffsets returns the byte offset of each selected marker's row.
func rowOffsets(sels []sel, rb int, buf []int32) []int32 {
	buf = buf[:0]
	for _, s := range sels {
		buf = append(buf, int32(int(s.off)*rb))
	}
	return buf
}

// findMissing lists, in increasing order, the samples with a missing call
// (code 3) in a packed row, eight bytes at a time: a set bit of
// x & x>>1 & 0x55... marks a missing code.
func findMissing(row []byte, n int, dst []int32) []int32 {
	return appendMissing(dst[:0], row, n)
}

// appendMissing is findMissing appending to dst. Each word's first
// missing call is written whether or not there is one and the length then
// advances by one or zero without a branch; only a word with two or more
// (rare at the missing rates QC lets through) takes a loop. A loop per
// set bit mispredicted on about a quarter of the words at 1% missing
// calls, and this is about twice as fast there.
func appendMissing(dst []int32, row []byte, n int) []int32 {
	start := len(dst)
	const lo = 0x5555555555555555
	// With AVX-512 the whole 64-byte groups go to a vector scan that skips
	// the words without a missing call (missingVector); the rest here.
	buf, k, w0 := missingVector(dst[:cap(dst)], len(dst), row)
	nw := len(row) / 8
	for w := w0; w < nw; w++ {
		x := binary.LittleEndian.Uint64(row[8*w : 8*w+8])
		m := x & (x >> 1) & lo
		if len(buf)-k < 33 {
			// Room for a whole word's 32 codes.
			nb := make([]int32, 2*len(buf)+64)
			copy(nb, buf[:k])
			buf = nb
		}
		base := int32(32 * w)
		buf[k] = base + int32(bits.TrailingZeros64(m)>>1)
		if m&(m-1) != 0 {
			j := k + 1
			for m &= m - 1; m != 0; m &= m - 1 {
				buf[j] = base + int32(bits.TrailingZeros64(m)>>1)
				j++
			}
			k = j
			continue
		}
		k += int((m | -m) >> 63) // one if m != 0
	}
	if nw*8 < len(row) {
		var b8 [8]byte
		copy(b8[:], row[nw*8:])
		x := binary.LittleEndian.Uint64(b8[:])
		for m := x & (x >> 1) & lo; m != 0; m &= m - 1 {
			buf = append(buf[:k], int32(32*nw+bits.TrailingZeros64(m)/2))
			k++
			buf = buf[:cap(buf)]
		}
	}
	dst = buf[:k]
	// Codes past the last sample (the padding of the last byte) are not
	// samples; the list is ascending, so they are at its end.
	for len(dst) > start && int(dst[len(dst)-1]) >= n {
		dst = dst[:len(dst)-1]
	}
	return dst
}

// genoFirst computes W = Z_b X for the kept markers of a 2-bit chunk into
// ws.w (row q for sels[q]). The parallel parts are the jobs firstJob and
// reduceJob, which read the block from ws.raw and ws.sels (no closure, so
// no allocation per block).
func (op *Operator) genoFirst(ws *workspace, raw []byte, sels []sel) {
	lp, nb := ws.lp, len(sels)
	ws.raw, ws.sels = raw, sels
	ws.rows = newRowSet(rowOffsets(sels, op.st.RowBytes(), ws.rows.offs))
	nseg := len(op.segs) - 1
	ws.part = grow(ws.part, nseg*nb*lp)
	ws.segRows = ws.segRows[:0]
	for sg := range nseg {
		ws.segRows = append(ws.segRows, int32(sg*nb))
	}
	ws.w = grow(ws.w, nb*lp)
	if ws.second {
		ws.wpp = grow(ws.wpp, nb*lp)
		ws.mwpp = grow(ws.mwpp, nb*lp)
		if ws.fast {
			ws.wpp32 = grow32(ws.wpp32, nb*lp)
			ws.mwpp32 = grow32(ws.mwpp32, nb*lp)
		}
	}
	ws.scratch = grow(ws.scratch, op.threads*lp)
	ws.scratch32 = grow32(ws.scratch32, op.threads*lp)
	for len(ws.miss) < op.threads {
		ws.miss = append(ws.miss, nil)
	}
	op.forEach(ws, nseg, (*Operator).firstJob)
	op.forEach(ws, (nb+reduceRange-1)/reduceRange, (*Operator).reduceJob)
}

// reduceRange is the number of consecutive markers of a reduce job.
const reduceRange = 64

// firstJob: the first product's tiles of sample segment sg into its
// partial rows.
func (op *Operator) firstJob(ws *workspace, sg, t int) {
	nb, lp := len(ws.sels), ws.lp
	part := ws.part[sg*nb*lp : (sg+1)*nb*lp]
	clear(part)
	op.firstTiles(ws, part, ws.raw, ws.rows, sg, t)
}

// reduceJob: for the markers of range r, their W rows summed over the
// segments in order, with the standardization and the missing calls
// applied.
func (op *Operator) reduceJob(ws *workspace, r, t int) {
	for q := r * reduceRange; q < min((r+1)*reduceRange, len(ws.sels)); q++ {
		op.reduceMarker(ws, q, t)
	}
}

// reduceMarker: marker q's W row from its partials and missing calls,
// and in a pass with the second product its rows of wpp (W_q / sd_q) and
// mwpp (mu_q W_q / sd_q), in float32 too in a fast pass, which the second
// product's tables take.
func (op *Operator) reduceMarker(ws *workspace, q, t int) {
	lp := ws.lp
	s := ws.sels[q]
	// The samples missing at this marker (none to look for if the counts
	// say so). Missing calls of dropped samples may be listed or not:
	// their rows of X are zero.
	miss := ws.miss[t][:0]
	if op.complete[s.ord/64]&(1<<(s.ord%64)) == 0 {
		rb := op.st.RowBytes()
		miss = appendMissing(miss, ws.raw[int(s.off)*rb:(int(s.off)+1)*rb], op.n)
		ws.miss[t] = miss
	}
	// The segments' partials summed in segment order (the partial of
	// segment sg is row sg x b of part, counting from marker q's).
	w := ws.w[q*lp : q*lp+lp]
	sumRows(w, ws.part[q*lp:], ws.segRows, lp)
	mu, inv := op.center[s.ord], op.scale[s.ord]
	if len(miss) == 0 {
		// T - S_j: the sum of X over the samples called at marker j.
		for k := range w {
			w[k] = (w[k] - mu*ws.tot[k]) * inv
		}
	} else {
		// S_j, the sum of X over the missing samples.
		sm := ws.scratch[t*lp : t*lp+lp]
		sumRows(sm, ws.x, miss, lp)
		called := ws.tot
		for k := range w {
			w[k] = (w[k] - mu*(called[k]-sm[k])) * inv
		}
	}
	if !ws.second {
		return
	}
	d := ws.wpp[q*lp : q*lp+lp]
	md := ws.mwpp[q*lp : q*lp+lp]
	for k := range d {
		d[k] = w[k] * inv
		md[k] = mu * d[k]
	}
	if ws.fast {
		d32 := ws.wpp32[q*lp : q*lp+lp]
		md32 := ws.mwpp32[q*lp : q*lp+lp]
		for k := range d32 {
			d32[k] = float32(d[k])
			md32[k] = float32(md[k])
		}
	}
}

// genoChunk applies one chunk of 2-bit calls: Y += Z_b^T Z_b X.
func (op *Operator) genoChunk(ws *workspace, raw []byte, sels []sel) {
	lp, nb := ws.lp, len(sels)
	op.genoFirst(ws, raw, sels)
	if ws.capture != nil {
		ws.capture.write(ws.w, nb, lp)
	}
	// The constant part of Y, summed in marker order.
	for q := range nb {
		for k, v := range ws.mwpp[q*lp : q*lp+lp] {
			ws.btot[k] -= v
		}
	}
	op.forEach(ws, (len(ws.jobs2)-1)*ws.parts2, (*Operator).secondJob)
	if ws.parts2 > 1 {
		op.forEach(ws, len(op.segs)-1, (*Operator).partsJob)
	}
}

// secondRange is the most samples whose rows of Y one secondTiles call
// updates, for rows of lp columns: the largest power of two from 1,024 to
// maxSecondRange whose float64 rows, at most 32 columns of them (a
// kernel's column chunk), take at most secondRangeBytes. Those rows stay
// in cache while the tile tables are rebuilt for each such range: 16,384
// samples at up to 8 columns, 8,192 at 12 to 20 (1.25 MiB at 20), 4,096
// from 24.
func secondRange(lp int) int {
	r := 1024
	for 2*r <= maxSecondRange && 2*r*min(lp, 32)*8 <= secondRangeBytes {
		r *= 2
	}
	return r
}

const (
	// secondRangeBytes bounds the rows of Y of a range (secondRange): with
	// the tile's tables (320 KiB) they fit the 2 MiB L2 cache of the
	// machines of benchmarks/kernels. With ranges half as large (640 KiB)
	// and no marker parts at 5,000 samples, each table was built twice
	// (each range rebuilds every table of the tile), and a fast pass took
	// about 2% longer there (benchmarks/kernels).
	secondRangeBytes = 1280 << 10
	maxSecondRange   = 16384
)

// secondParts is the number of parts into which the second product splits
// a block's marker tiles for n samples and rows of lp columns: the largest
// power of two up to 8 with parts x n at most 2 secondRange(lp) (one part
// from 8,193 samples at 20 columns), so that small and middle-sized
// cohorts give the threads separate markers rather than separate samples,
// each of which would rebuild every group table of the block (256 rows
// per group, against one row per sample: at 1,000 samples and 2 threads
// the rebuilt tables made the pass 7% slower than the scatter it
// replaced; at 5,000 samples two parts instead of two sample jobs made a
// fast pass about 2% faster). Each part sums its tiles into rows of its own,
// added to Y in part order (partsJob). It depends on n and lp alone, so
// the numbers do not depend on the thread count.
func secondParts(n, lp int) int {
	p := 1
	for p < 8 && 2*p*n <= 2*secondRange(lp) {
		p *= 2
	}
	return p
}

// secondJob: unit u of the second product, sample job u / parts2 (a run
// of whole segments, ws.jobs2) and marker part u % parts2: the part's
// tiles for the job's samples, at most secondRange samples at a time,
// into Y (part 0) or the part's own rows (cleared first). Each sample's
// row takes the same additions in the same order however samples are
// split into jobs, so jobs can follow the thread count without changing a
// number.
func (op *Operator) secondJob(ws *workspace, u, t int) {
	j, part := u/ws.parts2, u%ws.parts2
	a, b := op.segs[ws.jobs2[j]], op.segs[ws.jobs2[j+1]]
	ngroups := (len(ws.sels) + 3) / 4
	ng := ws.secondTile()
	tiles := (ngroups + ng - 1) / ng
	g0 := min(ngroups, part*tiles/ws.parts2*ng)
	g1 := min(ngroups, (part+1)*tiles/ws.parts2*ng)
	dst := ws.y
	if part > 0 {
		dst = ws.ypart[part-1]
		clear(dst[a*ws.lp : b*ws.lp])
	}
	if g0 == g1 {
		return
	}
	r := secondRange(ws.lp)
	for c := a; c < b; c += r {
		op.secondTiles(ws, dst, ws.raw, ws.rows.offs, c, min(b, c+r), g0, g1, t)
	}
}

// partsJob adds the rows of marker parts 1, 2, ... to Y, in that order,
// for the samples of segment sg.
func (op *Operator) partsJob(ws *workspace, sg, _ int) {
	lp := ws.lp
	y := ws.y[op.segs[sg]*lp : op.segs[sg+1]*lp]
	for _, yp := range ws.ypart {
		for k, v := range yp[op.segs[sg]*lp : op.segs[sg+1]*lp] {
			y[k] += v
		}
	}
}

// gatherTileGeneric: for each row q, dst[q] += tab_t[raw[offs[q]+g+t*stride]]
// for t = 0..ng-1 in that order, tab_t = tab[t*256*lp:]. Element by
// element this is the vector kernel's order of additions.
func gatherTileGeneric(dst, tab []float64, raw []byte, offs []int32, g, ng, stride, lp int) {
	tb := 256 * lp
	for q, o := range offs {
		d := dst[q*lp : q*lp+lp]
		for t := range ng {
			v := raw[int(o)+g+t*stride]
			s := tab[t*tb+int(v)*lp : t*tb+int(v)*lp+lp]
			for k := range d {
				d[k] += s[k]
			}
		}
	}
}

// tileGroups is the number of sample groups (packed bytes) whose tables a
// kernel call walks at once: as many as keep their 256-row tables, for one
// column chunk of at most 32 values, within about 256 KiB (the L2 cache of
// the machines of design.md), at most 16.
func tileGroups(lp int) int {
	w := min(lp, 32)
	return max(1, min(16, (256<<10)/(256*w*8)))
}

// sumRowsGeneric sets dst[:lp] to the sum of the rows x[i] for i in idx, in
// list order from zero (the vector kernel's order).
func sumRowsGeneric(dst, x []float64, idx []int32, lp int) {
	d := dst[:lp]
	clear(d)
	for _, i := range idx {
		r := x[int(i)*lp : int(i)*lp+lp]
		for k := range d {
			d[k] += r[k]
		}
	}
}
