package qc

import (
	"context"
	"sort"

	"golang.org/x/sync/errgroup"

	"github.com/clinal/clinal/matrixio"
)

// pass is the one pass over the store that recomputes marker counts over
// the kept samples (when samples were removed) and prunes by LD.
//
// The markers are cut into units of whole chromosomes (consecutive runs of
// one chromosome name; small chromosomes are grouped so a unit holds about
// M/(4*threads) markers). Up to threads units run at once, each streaming
// its own chunks in order, so every chunk is read once, except a chunk that
// straddles two units, read by both. A chromosome is handled by a single
// goroutine and the LD decisions depend only on its own markers, so the
// result does not depend on the number of threads.
type pass struct {
	st       *matrixio.Store
	sel      *Selection
	f        *filters
	keptIdx  []int
	recount  bool
	threads  int
	ld       bool
	win      Window
	r2       float64
	step     int
	ldMemory int64
	layout   int // layoutAuto, or a forced one (tests)

	// Sample axis of the genotype rows: all samples with removed ones
	// masked out (masked), or the kept samples only; mask marks the kept
	// samples on it, words is its length in 64-bit words.
	masked bool
	mask   []uint64
	words  int

	maxWin     int // most markers held in one LD window
	candidates int
	pairs      int64
	truncated  int64
}

// Sample axis layouts of genotype rows.
const (
	layoutAuto = iota
	layoutMasked
	layoutCompact
)

type unit struct{ a, b int } // markers [a, b)

type unitResult struct {
	candidates       int
	pairs, truncated int64
}

func (p *pass) run(ctx context.Context) error {
	st, sel := p.st, p.sel
	M := st.NumMarkers()
	nk := len(p.keptIdx)

	// Runs of one chromosome name.
	type run struct{ a, b int }
	var runs []run
	for j := 0; j < M; {
		k := j + 1
		for k < M && st.Marker(k).Chrom == st.Marker(j).Chrom {
			k++
		}
		runs = append(runs, run{j, k})
		j = k
	}
	N := st.NumSamples()
	switch p.layout {
	case layoutMasked:
		p.masked = !p.f.float
	case layoutCompact:
		p.masked = false
	default:
		p.masked = !p.f.float && 2*nk >= N
	}
	width := nk
	if p.masked {
		width = N
	}
	p.words = (width + 63) / 64
	p.mask = make([]uint64, p.words)
	if p.masked {
		for _, i := range p.keptIdx {
			p.mask[i>>6] |= 1 << (i & 63)
		}
	} else {
		for k := 0; k < nk; k++ {
			p.mask[k>>6] |= 1 << (k & 63)
		}
	}
	if p.ld {
		rb := rowBytesFor(p.words, nk, p.f.float)
		p.maxWin = int(max(2, p.ldMemory/int64(rb)))
		// Each chromosome's candidates must form one block.
		first := map[string]int{}
		for _, r := range runs {
			has := -1
			for j := r.a; j < r.b; j++ {
				if w := sel.MarkerWhy[j]; w != OtherChromosome && w != InExcludedRegion {
					has = j
					break
				}
			}
			if has < 0 {
				continue
			}
			c := st.Marker(r.a).Chrom
			if j0, ok := first[c]; ok {
				return matrixio.BadInput("%s: chromosome %q appears in two separate blocks (markers %d and %d): LD pruning needs each chromosome's markers together and sorted by position; import sorted input or set --ld-r2 0",
					st.Path(), c, j0+1, has+1)
			}
			first[c] = has
		}
	}
	target := max(1, (M+4*p.threads-1)/(4*p.threads))
	var units []unit
	for i := 0; i < len(runs); {
		u := unit{runs[i].a, runs[i].b}
		i++
		for i < len(runs) && u.b-u.a < target {
			u.b = runs[i].b
			i++
		}
		units = append(units, u)
	}
	res := make([]unitResult, len(units))
	g, gctx := errgroup.WithContext(ctx)
	g.SetLimit(p.threads)
	for i, u := range units {
		g.Go(func() error { return p.runUnit(gctx, u, &res[i]) })
	}
	if err := g.Wait(); err != nil {
		return err
	}
	for _, r := range res {
		p.candidates += r.candidates
		p.pairs += r.pairs
		p.truncated += r.truncated
	}
	return nil
}

// need reports whether marker j's row must be decoded.
func (p *pass) need(j int) bool {
	return p.recount || (p.ld && p.sel.MarkerWhy[j] == Kept)
}

func (p *pass) runUnit(ctx context.Context, u unit, res *unitResult) error {
	st, sel := p.st, p.sel
	var chunks []int
	last := -1
	for j := u.a; j < u.b; j++ {
		if p.need(j) {
			if c := st.ChunkOf(j); c != last {
				chunks = append(chunks, c)
				last = c
			}
		}
	}
	if len(chunks) == 0 {
		return nil
	}
	N := st.NumSamples()
	nk := len(p.keptIdx)
	rb := st.RowBytes()
	var codes []byte
	var vals []float32
	switch {
	case p.f.float:
		vals = make([]float32, N)
	case !p.masked:
		codes = make([]byte, N)
	}
	pool := &rowPool{words: p.words, nk: nk, float: p.f.float}
	var w *ldWindow
	var scratch *ldRow
	flush := func() {
		if w != nil {
			w.process(true)
			for _, r := range w.rows {
				pool.put(r)
			}
			res.pairs += w.pairs
			res.truncated += w.truncated
			res.candidates += w.n
			w = nil
		}
	}
	err := st.Stream(ctx, chunks, 1, func(c *matrixio.Chunk) error {
		if err := ctx.Err(); err != nil {
			return err
		}
		lo, hi := max(c.First, u.a), min(c.First+c.N, u.b)
		for j := lo; j < hi; j++ {
			if !p.need(j) {
				continue
			}
			row := c.Row(j-c.First, rb)
			var r *ldRow
			switch {
			case p.f.float:
				matrixio.DecodeFloats(row, vals)
				if p.recount {
					sel.Counts[j] = countFloats(vals, p.keptIdx)
				}
			case p.masked:
				if scratch == nil {
					scratch = pool.get()
				}
				r = scratch
				r.fillPacked(row, p.mask)
				if p.recount {
					sel.Counts[j] = r.counts(nk)
				}
			default:
				matrixio.DecodeGenotypes(row, codes)
				if p.recount {
					sel.Counts[j] = countCodes(codes, p.keptIdx)
				}
			}
			if p.recount {
				p.f.apply(sel, j)
			}
			if !p.ld || sel.MarkerWhy[j] != Kept {
				continue
			}
			switch {
			case r != nil:
				scratch = nil // the window owns it now
			case p.f.float:
				r = pool.get()
				r.fillFloats(vals, p.keptIdx)
			default:
				r = pool.get()
				r.fillCodes(codes, p.keptIdx, p.mask)
			}
			m := st.Marker(j)
			if w == nil || m.Chrom != w.chrom {
				flush()
				w = &ldWindow{p: p, chrom: m.Chrom, pool: pool}
			}
			if err := w.add(j, m.Pos, r); err != nil {
				return err
			}
		}
		return nil
	})
	if err != nil {
		return err
	}
	flush()
	return nil
}

func countCodes(codes []byte, kept []int) matrixio.Counts {
	var n [4]uint32
	for _, i := range kept {
		n[codes[i]]++
	}
	return matrixio.Counts{HomRef: n[0], Het: n[1], HomAlt: n[2], Missing: n[3]}
}

// countFloats counts as the store writer does: dosages rounded to the
// nearest integer classify the genotype, Sum and SumSq are exact sums.
func countFloats(vals []float32, kept []int) matrixio.Counts {
	var c matrixio.Counts
	for _, i := range kept {
		c.AddFloat(vals[i])
	}
	return c
}

// ldWindow prunes one chromosome. Candidates arrive in store order (and,
// for a window in bp, sorted by position). Windows start at candidates
// s = 0, step, 2*step, ...; the window of s holds the candidates from s up
// to, not including, the first one at position >= pos(s) + bp (or s +
// markers for a window counted in markers), and at most maxWin markers.
// Within a window, for i ascending and then j > i ascending over markers
// not yet removed, a pair with r^2 > threshold removes the marker of lower
// MAF (the later one, j, on equal MAF); when i goes, the scan moves to the
// next i. A pair already compared in the previous window is not compared
// again (both still present means its r^2 was below the threshold), so
// each pair is tested once.
type ldWindow struct {
	p         *pass
	chrom     string
	rows      []*ldRow // candidates base .. base+len(rows)-1
	base      int
	n         int // candidates added
	s         int // start of the next window
	ePrev     int // end of the previous window
	pool      *rowPool
	words     int
	pairs     int64
	truncated int64
	lastPos   int64
	lastIdx   int
}

func (w *ldWindow) row(i int) *ldRow { return w.rows[i-w.base] }

// add appends candidate j, whose row r the window now owns.
func (w *ldWindow) add(j int, pos int64, r *ldRow) error {
	p := w.p
	if w.n > 0 && p.win.BP > 0 && pos < w.lastPos {
		return matrixio.BadInput("%s: marker %d (%s:%d) comes after marker %d (%s:%d): LD windows in bp need markers sorted by position within a chromosome",
			p.st.Path(), j+1, p.st.Marker(j).Chrom, pos, w.lastIdx+1, p.st.Marker(w.lastIdx).Chrom, w.lastPos)
	}
	w.lastPos, w.lastIdx = pos, j
	r.idx, r.pos, r.dropped = j, pos, false
	r.maf = Stats(p.sel.Counts[j], len(p.keptIdx), p.f.float).MAF
	w.rows = append(w.rows, r)
	w.n++
	w.process(false)
	return nil
}

// process runs every window whose end is known (all of them when final).
func (w *ldWindow) process(final bool) {
	p := w.p
	for w.s < w.n {
		s, avail := w.s, w.n-w.s
		var e int
		if p.win.Markers > 0 {
			want := p.win.Markers
			cut := false
			if want > p.maxWin {
				want, cut = p.maxWin, true
			}
			switch {
			case avail >= want:
				e = s + want
				if cut {
					w.truncated++
				}
			case final:
				e = w.n
			default:
				return
			}
		} else {
			lim := w.row(s).pos + p.win.BP
			k := s + sort.Search(avail, func(i int) bool { return w.row(s+i).pos >= lim })
			switch {
			case k < w.n:
				e = k
			case final:
				e = w.n
			case avail >= p.maxWin:
				e = s + p.maxWin
				w.truncated++
			default:
				return
			}
			if e-s > p.maxWin {
				e = s + p.maxWin
				w.truncated++
			}
		}
		w.window(s, e)
		if final && e == w.n {
			return // later windows hold no new pair
		}
		w.s += p.step
		w.release()
	}
}

// release recycles the rows before the next window's start.
func (w *ldWindow) release() {
	k := min(w.s, w.n) - w.base
	if k <= 0 {
		return
	}
	for _, r := range w.rows[:k] {
		w.pool.put(r)
	}
	n := copy(w.rows, w.rows[k:])
	clear(w.rows[n:])
	w.rows = w.rows[:n]
	w.base += k
}

// window tests the new pairs of window [s, e).
func (w *ldWindow) window(s, e int) {
	p := w.p
	jlo := max(w.ePrev, s+1)
	if jlo < e {
		for i := s; i < e-1; i++ {
			ri := w.row(i)
			if ri.dropped {
				continue
			}
			for j := max(i+1, jlo); j < e; j++ {
				rj := w.row(j)
				if rj.dropped {
					continue
				}
				w.pairs++
				if pairR2(ri, rj) > p.r2 {
					if ri.maf < rj.maf {
						w.drop(ri)
						break
					}
					w.drop(rj)
				}
			}
		}
	}
	w.ePrev = max(w.ePrev, e)
}

func (w *ldWindow) drop(r *ldRow) {
	r.dropped = true
	w.p.sel.MarkerWhy[r.idx] = LDPruned
}
