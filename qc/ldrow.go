package qc

import (
	"encoding/binary"
	"math/bits"

	"github.com/clinal/clinal/matrixio"
)

// ldRow is one marker's genotypes in the form LD pruning (and the counting
// pass) uses: three bit planes over a sample axis, "called", "ALT count >=
// 1" and "ALT count == 2", so g = b1 + b2 and g^2 = b1 + 3*b2 at called
// samples and all planes are 0 elsewhere; or, for float stores, the values
// of the kept samples (NaN missing).
//
// The sample axis is either every sample of the store, with removed
// samples masked out (when at least half the samples are kept: the planes
// are then built straight from the packed 2-bit row, 64 samples at a
// time), or the kept samples only, in order.
type ldRow struct {
	idx     int
	pos     int64
	maf     float64
	dropped bool

	n, sx, sxx int64 // called samples, sum of g and of g^2 over them
	c, b1, b2  []uint64
	// miss lists the kept samples (positions on the sample axis) without a
	// call, when there are few (missOK); pairs of such rows need only
	// four population counts per 64 samples.
	miss   []int32
	missOK bool

	f []float32
}

// rowPool recycles rows of one shape.
type rowPool struct {
	words int
	nk    int
	float bool
	free  []*ldRow
}

func (p *rowPool) get() *ldRow {
	if k := len(p.free); k > 0 {
		r := p.free[k-1]
		p.free = p.free[:k-1]
		return r
	}
	if p.float {
		return &ldRow{f: make([]float32, p.nk)}
	}
	return &ldRow{c: make([]uint64, p.words), b1: make([]uint64, p.words), b2: make([]uint64, p.words)}
}

func (p *rowPool) put(r *ldRow) { p.free = append(p.free, r) }

// rowBytesFor is the memory one row takes, for the window bound.
func rowBytesFor(words, nk int, float bool) int {
	if float {
		return 64 + 4*nk
	}
	return 96 + 24*words
}

// compactEven gathers the even bits of x (bits 0, 2, ..., 62) into the low
// 32 bits.
func compactEven(x uint64) uint64 {
	x &= 0x5555555555555555
	x = (x | x>>1) & 0x3333333333333333
	x = (x | x>>2) & 0x0f0f0f0f0f0f0f0f
	x = (x | x>>4) & 0x00ff00ff00ff00ff
	x = (x | x>>8) & 0x0000ffff0000ffff
	x = (x | x>>16) & 0x00000000ffffffff
	return x
}

// fillPacked sets the row from a packed 2-bit store row (sample i at bits
// 2*(i%4) of byte i/4; 0, 1, 2 ALT alleles, 3 missing) on the axis of all
// samples, keeping only the samples set in mask.
func (r *ldRow) fillPacked(row []byte, mask []uint64) {
	var tail [16]byte
	for k := range r.c {
		var x0, x1 uint64
		if off := 16 * k; off+16 <= len(row) {
			x0 = binary.LittleEndian.Uint64(row[off:])
			x1 = binary.LittleEndian.Uint64(row[off+8:])
		} else {
			clear(tail[:])
			copy(tail[:], row[off:])
			x0 = binary.LittleEndian.Uint64(tail[:])
			x1 = binary.LittleEndian.Uint64(tail[8:])
		}
		lo := compactEven(x0) | compactEven(x1)<<32
		hi := compactEven(x0>>1) | compactEven(x1>>1)<<32
		m := mask[k]
		miss := lo & hi
		r.c[k] = ^miss & m
		r.b1[k] = (lo ^ hi) & m
		r.b2[k] = hi &^ lo & m
	}
	r.finish(mask)
}

// fillCodes sets the row from decoded codes of all samples, on the axis of
// the kept samples; mask has the first len(kept) bits set.
func (r *ldRow) fillCodes(codes []byte, kept []int, mask []uint64) {
	clear(r.c)
	clear(r.b1)
	clear(r.b2)
	for k, i := range kept {
		bit := uint64(1) << (k & 63)
		switch codes[i] {
		case 0:
			r.c[k>>6] |= bit
		case 1:
			r.c[k>>6] |= bit
			r.b1[k>>6] |= bit
		case 2:
			r.c[k>>6] |= bit
			r.b1[k>>6] |= bit
			r.b2[k>>6] |= bit
		}
	}
	r.finish(mask)
}

// finish computes the sums and the missing list.
func (r *ldRow) finish(mask []uint64) {
	var n, s1, s2 int
	for k := range r.c {
		n += bits.OnesCount64(r.c[k])
		s1 += bits.OnesCount64(r.b1[k])
		s2 += bits.OnesCount64(r.b2[k])
	}
	r.n, r.sx, r.sxx = int64(n), int64(s1+s2), int64(s1+3*s2)
	limit := 4*len(r.c) + 16
	r.miss = r.miss[:0]
	r.missOK = true
	for k := range r.c {
		m := mask[k] &^ r.c[k]
		for m != 0 {
			if len(r.miss) == limit {
				r.missOK = false
				return
			}
			b := bits.TrailingZeros64(m)
			r.miss = append(r.miss, int32(k<<6|b))
			m &= m - 1
		}
	}
}

// counts returns the genotype counts of the row over nk kept samples.
func (r *ldRow) counts(nk int) matrixio.Counts {
	s2 := (r.sxx - r.sx) / 2
	s1 := r.sx - s2
	return matrixio.Counts{HomRef: uint32(r.n - s1), Het: uint32(s1 - s2), HomAlt: uint32(s2), Missing: uint32(int64(nk) - r.n)}
}

// fillFloats sets a float row from the values of all samples, keeping
// those listed in kept.
func (r *ldRow) fillFloats(vals []float32, kept []int) {
	for k, i := range kept {
		r.f[k] = vals[i]
	}
}

// geno returns the genotype (0, 1, 2) at position i of a called sample.
func (r *ldRow) geno(i int32) int64 {
	w, b := i>>6, uint64(1)<<(i&63)
	var v int64
	if r.b1[w]&b != 0 {
		v++
	}
	if r.b2[w]&b != 0 {
		v++
	}
	return v
}

// pairR2 is the r^2 of two rows of the same kind.
func pairR2(x, y *ldRow) float64 {
	if x.f != nil {
		return floatR2(x.f, y.f)
	}
	return genoR2(x, y)
}

// genoR2 is the squared Pearson correlation of two markers' genotypes
// over the samples called in both (pairwise complete), from population
// counts of the bit planes. The cross sum needs only the b planes (they
// are 0 wherever a call is missing); the single-marker sums over the
// pairwise complete samples are counted from the planes too, or, one word
// at a time (no AVX-512 population count) when both missing lists are
// short, taken as the marker's own sums corrected at the other marker's
// missing samples. It is 0 when either marker is constant over those
// samples (r undefined: such a pair never prunes). Every sum is an exact
// integer, so the paths agree to the bit.
func genoR2(x, y *ldRow) float64 {
	var m pairMoments
	if useVPOPCNT && len(x.c) >= 8 || !(x.missOK && y.missOK) {
		m = countedMoments(x, y)
	} else {
		m = correctedMoments(x, y)
	}
	cov := m.n*m.sxy - m.sx*m.sy
	vx := m.n*m.sxx - m.sx*m.sx
	vy := m.n*m.syy - m.sy*m.sy
	if vx <= 0 || vy <= 0 {
		return 0
	}
	c := float64(cov)
	return c * c / (float64(vx) * float64(vy))
}

// pairMoments are the integer sums r^2 needs over the samples called at
// both markers: their number, the sums of g_x, g_x^2, g_y, g_y^2 and of
// g_x g_y.
type pairMoments struct{ n, sx, sxx, sy, syy, sxy int64 }

// countedMoments counts the moments from the bit planes (pairSums).
func countedMoments(x, y *ldRow) pairMoments {
	s := pairSums(x, y)
	return pairMoments{n: s[3], sx: s[4] + s[5], sxx: s[4] + 3*s[5], sy: s[6] + s[7], syy: s[6] + 3*s[7],
		sxy: s[0] + s[1] + 3*s[2]}
}

// correctedMoments counts only the cross sum from the planes and takes the
// rest from each marker's own sums, corrected at the other marker's
// missing samples (both rows need their missing lists, missOK).
func correctedMoments(x, y *ldRow) pairMoments {
	var a, bc, d int
	for k := range x.b1 {
		x1, x2, y1, y2 := x.b1[k], x.b2[k], y.b1[k], y.b2[k]
		a += bits.OnesCount64(x1 & y1)
		bc += bits.OnesCount64(x1&y2 ^ x2&y1)
		d += bits.OnesCount64(x2 & y2)
	}
	m := pairMoments{n: x.n - int64(len(y.miss)), sx: x.sx, sxx: x.sxx, sy: y.sx, syy: y.sxx, sxy: int64(a + bc + 3*d)}
	for _, i := range y.miss {
		if x.c[i>>6]&(1<<(i&63)) == 0 {
			m.n++ // missing in both: not subtracted twice
			continue
		}
		v := x.geno(i)
		m.sx -= v
		m.sxx -= v * v
	}
	for _, i := range x.miss {
		if y.c[i>>6]&(1<<(i&63)) == 0 {
			continue
		}
		v := y.geno(i)
		m.sy -= v
		m.syy -= v * v
	}
	return m
}

// pairSumsFrom adds to s, from word k on, the population counts of a pair
// of rows: with a = x1&y1, b = x1&y2, c = x2&y1 and d = x2&y2, s[0] counts
// a, s[1] b^c and s[2] d, so that the cross sum of g_x g_y = (x1 + x2)
// (y1 + y2) is s[0] + s[1] + 3 s[2] (b&c is d, as x2 lies in x1 and y2 in
// y1, and b + c = (b^c) + 2 (b&c)); s[3] counts the samples called in
// both, s[4] and s[5] x1 and x2 there (so x's sums are s[4] + s[5] and
// s[4] + 3 s[5]), s[6] and s[7] likewise for y.
func pairSumsFrom(s *[8]int64, x, y *ldRow, k int) {
	var t [8]int
	for ; k < len(x.c); k++ {
		cx, x1, x2, cy, y1, y2 := x.c[k], x.b1[k], x.b2[k], y.c[k], y.b1[k], y.b2[k]
		t[0] += bits.OnesCount64(x1 & y1)
		t[1] += bits.OnesCount64(x1&y2 ^ x2&y1)
		t[2] += bits.OnesCount64(x2 & y2)
		t[3] += bits.OnesCount64(cx & cy)
		t[4] += bits.OnesCount64(x1 & cy)
		t[5] += bits.OnesCount64(x2 & cy)
		t[6] += bits.OnesCount64(y1 & cx)
		t[7] += bits.OnesCount64(y2 & cx)
	}
	for i, v := range t {
		s[i] += int64(v)
	}
}

// floatR2 is genoR2 for float values (NaN missing), in float64 with
// centred sums.
func floatR2(x, y []float32) float64 {
	var n, mx, my float64
	for k := range x {
		a, b := x[k], y[k]
		if a != a || b != b {
			continue
		}
		n++
		mx += float64(a)
		my += float64(b)
	}
	if n < 2 {
		return 0
	}
	mx /= n
	my /= n
	var sxx, syy, sxy float64
	for k := range x {
		a, b := x[k], y[k]
		if a != a || b != b {
			continue
		}
		dx, dy := float64(a)-mx, float64(b)-my
		sxx += dx * dx
		syy += dy * dy
		sxy += dx * dy
	}
	if sxx <= 0 || syy <= 0 {
		return 0
	}
	return sxy * sxy / (sxx * syy)
}
