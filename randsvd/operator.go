// Package randsvd is the numerical core of clinal: the standardized
// genotype operator over a store, the randomized block Krylov eigensolver
// with Rayleigh-Ritz and residual-based stopping, Tracy-Widom significance
// and projection of new samples.
//
// # Conventions
//
// Z is the M x N standardized matrix of the kept markers (rows) and samples
// (columns): z = (g - 2p) / sqrt(2p(1-p)) for hard calls (Patterson, Price &
// Reich 2006, PLoS Genet 2:e190), with p the ALT allele frequency over the
// kept samples' non-missing calls and missing calls set to 0 (mean
// imputation). The operator is K = Z^T Z / M, N x N, whose eigenvalues have
// mean about 1 for unstructured data. Its eigenvectors are the sample scores.
//
// # Precision policy
//
// Hard-call chunks are never expanded to floating-point blocks: each 2-bit
// code selects one of the marker's four standardized values, and both
// products of a pass, W = Z_b X and Y += Z_b^T W, are sums of table rows
// (geno.go). An exact pass (Apply) does all of it in float64: the only
// rounding is float64 rounding of sums, so results agree with a dense
// float64 computation to about 1e-13 relative. A fast pass (ApplyFast,
// fast.go) keeps the group tables and second-product weights in float32
// and every long accumulation in float64 (a float32 sum covers at most 64
// samples or markers before it joins a float64 row): K X to
// about 2e-7 relative. Solve uses fast passes only to find the subspace
// and ends with an exact pass and Rayleigh-Ritz, so eigenvalues,
// residuals, scores and loadings are float64 results. Float (dosage)
// chunks are decoded from float32, their stored precision, and multiplied
// in float64 with fused multiply-adds (dense.go).
//
// # Determinism
//
// The first product is split over markers (each W row is summed over
// samples by one goroutine in sample order) and the second over samples
// (each Y row is summed over markers by one goroutine in marker order), so
// every floating-point sum has an order that does not depend on the thread
// count: results are bit-identical for any number of threads.
package randsvd

import (
	"context"
	"errors"
	"fmt"
	"math"
	"sync"
	"sync/atomic"

	"github.com/clinal/clinal/matrixio"
)

// Scaling selects the standardization of each marker.
type Scaling string

const (
	// ScalePatterson is z = (g - 2p)/sqrt(2p(1-p)) (Patterson et al. 2006);
	// for float stores p = mean/2 (dosages).
	ScalePatterson Scaling = "patterson"
	// ScaleCenter is z = g - 2p (centring only).
	ScaleCenter Scaling = "center"
	// ScaleZ is z = (x - mean)/sd with the empirical standard deviation,
	// for dense numeric data that are not allele dosages.
	ScaleZ Scaling = "zscore"
)

// OperatorOptions configure an Operator.
type OperatorOptions struct {
	SampleKept []bool            // nil keeps all
	MarkerKept []bool            // nil keeps all
	Counts     []matrixio.Counts // per-marker counts over the kept samples; nil uses the store's
	// ForeignCounts says Counts standardize only and need not describe the
	// kept samples (projection standardizes by the fit's counts): every row
	// is then scanned for missing calls, even where Counts has none.
	ForeignCounts bool
	Scaling       Scaling // default ScalePatterson
	Threads       int     // compute goroutines (default 1)
	Buffers       int     // chunk buffers in flight (default streamBuffers)
	Chunks        []int   // restrict the pass to these chunks (a shard); nil for all
	Progress      func(done, total int)
	// Prefetch has the next pass's first chunks decoded (Store.Prefetch)
	// when a pass ends, for a caller that applies the operator again
	// after some serial work (the solver of RunPCA). Off, a pass leaves
	// no decoding behind.
	Prefetch bool
}

// Operator applies K = Z^T Z / M for the kept samples and markers of a
// store, streaming the chunks once per application. It keeps its pass
// buffers between applications and is not safe for concurrent use.
type Operator struct {
	st      *matrixio.Store
	n       int     // store samples
	kept    []int   // kept sample -> store index
	markers []int32 // kept markers (store indices), ascending
	center  []float64
	scale   []float64
	// complete has bit ord set when kept marker ord has no missing call
	// among the kept samples (from the counts): its row is not scanned
	// for them.
	complete []uint64
	chunks   []int
	// chunkLo[c] is the first kept-marker ordinal of chunk c (len chunks
	// of the store + 1): the kept markers of chunk c are
	// markers[chunkLo[c]:chunkLo[c+1]]. Selections are rebuilt from it per
	// chunk, so the operator keeps 20 bytes a marker.
	chunkLo  []int32
	threads  int
	buffers  int
	prefetch bool // OperatorOptions.Prefetch
	trace    float64
	mTotal   int // markers of the whole selection (the M in 1/M)
	float    bool
	progress func(done, total int)
	dropped  DroppedMarkers
	isKept   []bool
	ws       *workspace // buffers of the last pass, reused
	segs     []int      // fixed sample segments (see segments)
}

type sel struct {
	off int32 // within chunk
	ord int32 // kept-marker ordinal
}

// DroppedMarkers counts markers the operator excluded even though they were
// selected, because they carry no variation among the kept samples.
type DroppedMarkers struct {
	Monomorphic int `json:"monomorphic"`
	NoCalls     int `json:"no_calls"`
}

// NewOperator prepares the operator: standardization constants from the
// counts and the chunk plan. Markers without variance among the kept
// samples are excluded and counted (Dropped).
func NewOperator(st *matrixio.Store, opt OperatorOptions) (*Operator, error) {
	n, m := st.NumSamples(), st.NumMarkers()
	if opt.SampleKept != nil && len(opt.SampleKept) != n {
		return nil, fmt.Errorf("operator: sample mask of %d for %d samples", len(opt.SampleKept), n)
	}
	if opt.MarkerKept != nil && len(opt.MarkerKept) != m {
		return nil, fmt.Errorf("operator: marker mask of %d for %d markers", len(opt.MarkerKept), m)
	}
	if m > math.MaxInt32 {
		return nil, matrixio.BadInput("operator: %d markers; at most %d are supported", m, math.MaxInt32)
	}
	counts := opt.Counts
	if counts == nil {
		counts = st.Counts()
	}
	if len(counts) != m {
		return nil, fmt.Errorf("operator: %d counts for %d markers", len(counts), m)
	}
	if opt.Scaling == "" {
		opt.Scaling = ScalePatterson
	}
	if opt.Threads < 1 {
		opt.Threads = 1
	}
	if opt.Buffers < 1 {
		// The block of the narrowest rows (lp 4) has the fewest markers,
		// so this asks for the fewest chunks ahead (PlanMemory knows l).
		opt.Buffers = streamBuffers(opt.Threads, blockMarkers(st, n, 4), st.ChunkMarkers(), st.ChunkBufferBytes())
	}
	op := &Operator{st: st, n: n, threads: opt.Threads, buffers: opt.Buffers, prefetch: opt.Prefetch,
		float: st.Codec() == matrixio.CodecFloat32, progress: opt.Progress}
	op.segs = segments(n)
	op.isKept = make([]bool, n)
	for i := 0; i < n; i++ {
		if opt.SampleKept == nil || opt.SampleKept[i] {
			op.kept = append(op.kept, i)
			op.isKept[i] = true
		}
	}
	if len(op.kept) < n && opt.Counts == nil {
		return nil, fmt.Errorf("operator: samples were dropped but no counts over the kept samples were given")
	}
	if len(op.kept) < 2 {
		return nil, matrixio.BadInput("operator: %d samples kept; PCA needs at least 2", len(op.kept))
	}
	var inChunk map[int]bool
	if opt.Chunks != nil {
		inChunk = map[int]bool{}
		for _, c := range opt.Chunks {
			inChunk[c] = true
		}
	}
	// Size the per-marker tables once (no append slack: they are most of
	// the operator's memory on large stores).
	nsel := m
	if opt.MarkerKept != nil {
		nsel = 0
		for _, k := range opt.MarkerKept {
			if k {
				nsel++
			}
		}
	}
	op.markers = make([]int32, 0, nsel)
	op.chunkLo = make([]int32, st.NumChunks()+1)
	op.center = make([]float64, 0, nsel)
	op.scale = make([]float64, 0, nsel)
	op.complete = make([]uint64, (nsel+63)/64)
	for j := 0; j < m; j++ {
		if opt.MarkerKept != nil && !opt.MarkerKept[j] {
			continue
		}
		c := counts[j]
		called := float64(c.Called())
		if called == 0 {
			op.dropped.NoCalls++
			continue
		}
		var mu, sd float64
		if op.float {
			mu = c.Sum / called
			switch opt.Scaling {
			case ScaleZ:
				sd = math.Sqrt(math.Max(c.SumSq/called-mu*mu, 0))
			case ScalePatterson:
				p := mu / 2
				sd = math.Sqrt(2 * p * (1 - p))
			default:
				sd = 1
				if c.SumSq/called-mu*mu <= 0 {
					sd = 0
				}
			}
		} else {
			p := (float64(c.Het) + 2*float64(c.HomAlt)) / (2 * called)
			mu = 2 * p
			sd = math.Sqrt(2 * p * (1 - p))
			if opt.Scaling == ScaleCenter && sd > 0 {
				sd = 1
			}
		}
		if !(sd > 1e-12) || math.IsNaN(sd) {
			op.dropped.Monomorphic++
			continue
		}
		op.mTotal++
		if inChunk != nil && !inChunk[st.ChunkOf(j)] {
			continue
		}
		if c.Missing == 0 && !opt.ForeignCounts {
			ord := len(op.markers)
			op.complete[ord/64] |= 1 << (ord % 64)
		}
		op.markers = append(op.markers, int32(j))
		op.center = append(op.center, mu)
		op.scale = append(op.scale, 1/sd)
		if !op.float {
			var t [4]float64
			for g := 0; g < 3; g++ {
				t[g] = (float64(g) - mu) / sd
			}
			// Exact trace contribution from counts: sum_c n_c t_c^2.
			op.trace += float64(c.HomRef)*t[0]*t[0] + float64(c.Het)*t[1]*t[1] + float64(c.HomAlt)*t[2]*t[2]
		}
		ch := st.ChunkOf(j)
		if len(op.chunks) == 0 || op.chunks[len(op.chunks)-1] != ch {
			op.chunks = append(op.chunks, ch)
		}
		op.chunkLo[ch+1] = int32(len(op.markers))
	}
	// Chunks without kept markers start where the previous one ended.
	for c := 1; c < len(op.chunkLo); c++ {
		op.chunkLo[c] = max(op.chunkLo[c], op.chunkLo[c-1])
	}
	if op.mTotal == 0 {
		return nil, matrixio.BadInput("operator: no polymorphic markers left after filters")
	}
	if op.float {
		op.trace = math.NaN() // computed during the first pass
	}
	return op, nil
}

// Dim returns the number of kept samples (the order of K).
func (op *Operator) Dim() int { return len(op.kept) }

// Markers returns M, the number of markers of the whole selection.
func (op *Operator) Markers() int { return op.mTotal }

// KeptSamples returns the store indices of the kept samples.
func (op *Operator) KeptSamples() []int { return op.kept }

// KeptMarkers returns the store indices of the markers this operator
// streams (all of the selection, or those of its shard).
func (op *Operator) KeptMarkers() []int {
	out := make([]int, len(op.markers))
	for i, j := range op.markers {
		out[i] = int(j)
	}
	return out
}

// NumKeptMarkers returns len(KeptMarkers()) without the copy.
func (op *Operator) NumKeptMarkers() int { return len(op.markers) }

// KeptMarker returns the store index of kept marker ord (KeptMarkers
// without the copy).
func (op *Operator) KeptMarker(ord int) int { return int(op.markers[ord]) }

// sels returns the selections of chunk c (offset within the chunk and
// kept-marker ordinal of each kept marker), built into buf.
func (op *Operator) sels(c int, buf []sel) []sel {
	first, _ := op.st.ChunkSpan(c)
	buf = buf[:0]
	for ord := op.chunkLo[c]; ord < op.chunkLo[c+1]; ord++ {
		buf = append(buf, sel{off: op.markers[ord] - int32(first), ord: ord})
	}
	return buf
}

// Standardization returns the centre and the inverse scale of each kept
// marker, in KeptMarkers order.
func (op *Operator) Standardization() (center, invScale []float64) { return op.center, op.scale }

// Dropped returns the markers excluded for lack of variation.
func (op *Operator) Dropped() DroppedMarkers { return op.dropped }

// Trace returns trace(K) = ||Z||_F^2 / M: exact, from the counts for hard
// calls; for float stores it is known after the first Apply (NaN before).
func (op *Operator) Trace() float64 { return op.trace / float64(op.mTotal) }

// Chunks returns the chunks one application streams.
func (op *Operator) Chunks() int { return len(op.chunks) }

// workspace holds per-pass buffers, reused across chunks. Rows of l values
// are stored with a padded stride lp (a multiple of 4) so kernels can work
// in whole vectors.
type workspace struct {
	l, lp     int
	fast      bool      // float32 tables (a fast pass, fast.go)
	x32       []float32 // fast: rows of x in float32, stride lp
	wpp32     []float32 // fast: W'' in float32
	mwpp32    []float32 // fast: mu_j W''_j in float32
	tabs32    [][]float32
	x         []float64 // store-sample rows of X (zero for dropped samples), stride lp
	y         []float64 // store-sample rows of Y, stride lp
	tot       []float64 // column sums of x
	btot      []float64 // constant part of Y: -sum_j mu_j W''_j
	w         []float64 // b x lp: W = Z_b X
	wpp       []float64 // b x lp: W''_j = W_j / sd_j
	mwpp      []float64 // b x lp: mu_j W''_j
	scratch   []float64 // threads x lp
	scratch32 []float32 // threads x lp
	part      []float64 // segments x b x lp partial first products
	segRows   []int32   // the row of each segment's partial of a marker, from the first's (sg x b)
	second    bool      // the pass computes the second product (reduceMarker sets its rows W'')
	miss      [][]int32 // per thread: the samples missing at the marker being reduced
	z         []float64 // float stores: b x N standardized block
	ss        []float64 // float stores: the chunk's per-marker sums of squares (reused)
	trace     []float64 // float stores: per-marker sum of squares
	tabs      [][]float64
	tbuf      [][]byte    // per thread: a tile of the block transposed (transposeTile)
	tspare    [][]byte    // the tiles of the last width, for secondBuffers
	toffs     rowSet      // each sample's offset in a transposed row (transposedOffset)
	tstride   int         // bytes per transposed row (one group of markers)
	jobs2     []int       // second-product sample jobs: segment boundaries (secondJob)
	parts2    int         // second-product marker parts (secondParts)
	ypart     [][]float64 // rows of Y for marker parts 1, 2, ... (n x lp each)
	block     []byte      // kept rows of consecutive chunks, gathered into one block
	bsels     []sel       // their selections (off = row within block)
	csels     []sel       // selections of the chunk being processed
	raw       []byte      // the block being processed (read by the jobs)
	sels      []sel       // its selections
	pool      chan int    // the pass's helper goroutines (nil: run in the caller)
	run       jobRun      // the job they are running
	rows      rowSet      // row offsets of the block being processed, with their range
	err       error       // first error of a MarkerProducts callback
	capture   *stash      // set during applyCapture: W rows go there too
}

// blockTarget is the number of markers the 2-bit kernels want per block:
// the per-block cost of the first product's group tables is 256 row
// operations per group of four samples, so blocks of 2,048 markers keep it
// small (1,024 and 4,096 were both slower, measured with BenchmarkPass).
// The block buffer is also kept within max(64 MiB, two X blocks).
func (op *Operator) blockTarget(lp int) int { return blockTarget(op.n, lp, op.st.RowBytes()) }

// aheadBytes bounds the chunk buffers streamBuffers adds for decoding
// ahead.
const aheadBytes = 64 << 20

// streamBuffers is the number of chunk buffers a pass keeps in flight by
// default: one per thread and one more, then up to two more (within
// aheadBytes of buffers of chunkBytes) while a block of target markers
// and two chunks take more than that. While the kernels work on a block,
// the decoders then get most of the next one ready. With one buffer per
// thread and one more they ran a chunk ahead, and the kernels waited on a
// decode after every block: at 5,000 samples (three chunks a block) a
// 1-thread fast pass took 22% longer, a 2-thread one 1-5%
// (benchmarks/kernels). A whole block ahead would cost a block of buffers
// (23% more peak memory at 32,000 samples); two cost two, and two more
// decoder goroutines (Stream runs one per buffer but one).
func streamBuffers(threads, target, chunkMarkers int, chunkBytes int64) int {
	b := max(2, threads+1)
	perBlock := (target + chunkMarkers - 1) / max(1, chunkMarkers)
	extra := min(2, max(0, perBlock+2-b), int(aheadBytes/max(1, chunkBytes)))
	return b + extra
}

// blockMarkers is the number of markers a pass works on at once: a block
// (blockTarget) for 2-bit stores, a chunk for float stores, which are
// applied chunk by chunk.
func blockMarkers(st *matrixio.Store, n, lp int) int {
	if st.Codec() == matrixio.CodecFloat32 {
		return st.ChunkMarkers()
	}
	return blockTarget(n, lp, st.RowBytes())
}

// blockTarget is Operator.blockTarget for n samples, padded block width lp
// and packed rows of rb bytes (PlanMemory budgets with it too).
func blockTarget(n, lp, rb int) int {
	limit := max(64<<20, 2*n*lp*8)
	return max(1, min(2048, limit/rb))
}

// gatherBlock feeds a chunk's kept rows to process in blocks of about
// blockTarget markers: a chunk that is big enough alone goes straight
// through; smaller ones are copied together first (the copy costs one read
// of the packed rows, much less than the kernels).
func (op *Operator) gatherBlock(ws *workspace, c *matrixio.Chunk, process func(*workspace, []byte, []sel)) {
	ws.csels = op.sels(c.Index, ws.csels)
	sels := ws.csels
	target := op.blockTarget(ws.lp)
	if len(ws.bsels) == 0 && len(sels) >= target {
		process(ws, c.Raw, sels)
		return
	}
	rb := op.st.RowBytes()
	for _, s := range sels {
		k := len(ws.bsels)
		if cap(ws.block) < target*rb {
			ws.block = make([]byte, 0, target*rb)
		}
		ws.block = append(ws.block[:k*rb], c.Raw[int(s.off)*rb:(int(s.off)+1)*rb]...)
		ws.bsels = append(ws.bsels, sel{off: int32(k), ord: s.ord})
		if len(ws.bsels) == target {
			op.flushBlock(ws, process)
		}
	}
}

// flushBlock processes the gathered rows, if any.
func (op *Operator) flushBlock(ws *workspace, process func(*workspace, []byte, []sel)) {
	if len(ws.bsels) == 0 {
		return
	}
	process(ws, ws.block, ws.bsels)
	ws.bsels = ws.bsels[:0]
	ws.block = ws.block[:0]
}

// newWorkspace returns the pass buffers for blocks of l vectors, reusing
// the previous pass's when the shape matches (so passes do not allocate).
func (op *Operator) newWorkspace(x []float64, l int, second, fast bool) *workspace {
	fast = fast && !op.float
	lp := (l + 3) &^ 3 // whole float64 vectors (and half float32 ones)
	ws := op.ws
	if ws == nil {
		ws = &workspace{}
		op.ws = ws
	}
	if !fast {
		// An exact pass (a closing pass, a refinement) needs no float32
		// rows or tables: they go, so the pass's float64 ones take their
		// memory; a later fast pass makes them again.
		ws.x32, ws.tabs32 = nil, nil
	}
	if ws.l != l {
		// One row layout for exact and fast passes: rows of dropped samples
		// and padding columns stay zero. The solver applies K to a few
		// widths (l, its Krylov block, K): the workspace keeps its buffers
		// across widths, growing what a wider one needs (the per-block
		// ones grow where they are used), and lays out the rows anew.
		ws.l, ws.lp = l, lp
		ws.x = grow(ws.x, op.n*lp)
		clear(ws.x)
		ws.tot, ws.btot = grow(ws.tot, lp), grow(ws.btot, lp)
		if ws.x32 != nil {
			ws.x32 = grow32(ws.x32, op.n*lp)
			clear(ws.x32)
			for t := range ws.tabs32 {
				ws.tabs32[t] = grow32(ws.tabs32[t], tileGroups32(lp)*256*lp)
			}
		}
		for t := range ws.tabs {
			ws.tabs[t] = grow(ws.tabs[t], tileGroups(lp)*256*lp)
		}
		ws.block, ws.bsels, ws.csels = ws.block[:0], ws.bsels[:0], ws.csels[:0]
		// The second product's buffers depend on the width: secondBuffers
		// sets them up again, from the old tiles.
		ws.tspare, ws.tbuf = ws.tbuf, nil
	}
	ws.fast, ws.second = fast, second
	if fast && ws.x32 == nil {
		ws.x32 = make([]float32, op.n*lp)
		ws.tabs32 = make([][]float32, op.threads)
		for t := range ws.tabs32 {
			ws.tabs32[t] = make([]float32, tileGroups32(lp)*256*lp)
		}
	}
	if second && ws.tbuf == nil && !op.float {
		op.secondBuffers(ws)
	}
	if !fast && ws.tabs == nil {
		ws.tabs = make([][]float64, op.threads)
		for t := range ws.tabs {
			ws.tabs[t] = make([]float64, tileGroups(lp)*256*lp)
		}
	}
	clear(ws.tot)
	clear(ws.btot)
	ws.trace = ws.trace[:0]
	if second {
		ws.y = grow(ws.y, op.n*lp)
		clear(ws.y)
	}
	for r, i := range op.kept {
		copy(ws.x[i*lp:i*lp+l], x[r*l:(r+1)*l])
		for k, v := range x[r*l : (r+1)*l] {
			ws.tot[k] += v
		}
		if fast {
			for k, v := range x[r*l : (r+1)*l] {
				ws.x32[i*lp+k] = float32(v)
			}
		}
	}
	return ws
}

// secondBuffers sets up the second product of a 2-bit store's passes:
// its units (secondJob), marker parts (secondParts) times sample jobs,
// the segments split into runs so that there are about as many units as
// threads; each thread's transposed tile, secondRange samples at a time
// at most, as wide as the widest tile of either precision.
func (op *Operator) secondBuffers(ws *workspace) {
	lp := ws.lp
	nseg := len(op.segs) - 1
	ws.parts2 = secondParts(op.n, lp)
	nj := min(nseg, max(1, (op.threads+ws.parts2-1)/ws.parts2))
	old := ws.ypart
	ws.ypart = make([][]float64, ws.parts2-1)
	for p := range ws.ypart {
		var b []float64
		if p < len(old) {
			b = old[p]
		}
		ws.ypart[p] = grow(b, op.n*lp)
	}
	ws.jobs2 = make([]int, nj+1)
	for j := range ws.jobs2 {
		ws.jobs2[j] = j * nseg / nj
	}
	most := 0
	for j := 0; j < nj; j++ {
		most = max(most, op.segs[ws.jobs2[j+1]]-op.segs[ws.jobs2[j]])
	}
	rows := (min(most, secondRange(lp)) + 31) &^ 31
	ng := max(tileGroups(lp), tileGroups32(lp))
	ws.tbuf = make([][]byte, op.threads)
	for t := range ws.tbuf {
		if t < len(ws.tspare) && cap(ws.tspare[t]) >= ng*rows {
			ws.tbuf[t] = ws.tspare[t][:ng*rows]
		} else {
			ws.tbuf[t] = make([]byte, ng*rows)
		}
	}
	ws.tspare = nil
	ws.tstride = rows
	toffs := make([]int32, rows)
	for q := range toffs {
		toffs[q] = transposedOffset(q)
	}
	ws.toffs = newRowSet(toffs)
}

// Apply computes Y = K X for X with Dim() rows and l columns (row-major,
// len Dim()*l), in one pass over the chunks. Y must have the same shape.
func (op *Operator) Apply(ctx context.Context, x, y []float64, l int) error {
	return op.apply(ctx, x, y, l, false)
}

// ApplyFast is Apply with a fast pass (fast.go): Y = K X to about 1e-7
// relative, about twice as fast on hard-call stores; float (dosage) stores
// get an exact pass. It makes Operator a FastApplier.
func (op *Operator) ApplyFast(ctx context.Context, x, y []float64, l int) error {
	return op.apply(ctx, x, y, l, true)
}

// applyCapture is Apply that also writes W = Z X, the first half of the
// pass, to the stash s (one row of l values per kept marker, in kept
// marker order), for Loadings.
func (op *Operator) applyCapture(ctx context.Context, x, y []float64, l int, s *stash) error {
	s.reset(l)
	err := op.applyWith(ctx, x, y, l, false, s)
	s.finish()
	if err == nil && s.err == nil && s.rows != len(op.markers) {
		s.err = fmt.Errorf("loadings stash: %d rows for %d markers", s.rows, len(op.markers))
	}
	return err
}

func (op *Operator) apply(ctx context.Context, x, y []float64, l int, fast bool) error {
	return op.applyWith(ctx, x, y, l, fast, nil)
}

func (op *Operator) applyWith(ctx context.Context, x, y []float64, l int, fast bool, capture *stash) error {
	nk := len(op.kept)
	if l < 1 || len(x) != nk*l || len(y) != nk*l {
		return fmt.Errorf("operator: shapes x %d, y %d for %d x %d", len(x), len(y), nk, l)
	}
	ws := op.newWorkspace(x, l, true, fast)
	ws.capture = capture
	defer func() { ws.capture = nil }()
	defer op.startPool(ws)()
	done := 0
	err := op.st.Stream(ctx, op.chunks, op.buffers-1, func(c *matrixio.Chunk) error {
		if err := ctx.Err(); err != nil {
			return err
		}
		if op.float {
			op.floatChunk(ws, c)
		} else {
			op.gatherBlock(ws, c, op.genoChunk)
		}
		done++
		if op.progress != nil {
			op.progress(done, len(op.chunks))
		}
		return nil
	})
	if err == nil && !op.float {
		op.flushBlock(ws, op.genoChunk)
	}
	if err != nil {
		if errors.Is(err, context.Canceled) || errors.Is(err, context.DeadlineExceeded) {
			return err
		}
		return fmt.Errorf("pass over %s: %w", op.st.Path(), err)
	}
	if op.prefetch {
		// The solver passes again over the same chunks after some serial
		// work: the next pass's first chunks decode meanwhile, into the
		// buffers this one just gave back (as many as a pass keeps, so no
		// more memory).
		op.st.Prefetch(op.chunks[:min(len(op.chunks), op.buffers)])
	}
	if op.float && math.IsNaN(op.trace) {
		var t float64
		for _, v := range ws.trace {
			t += v
		}
		op.trace = t
	}
	inv := 1 / float64(op.mTotal)
	lp := ws.lp
	for r, i := range op.kept {
		yr := y[r*l : (r+1)*l]
		src := ws.y[i*lp : i*lp+l]
		for k := range yr {
			yr[k] = (src[k] + ws.btot[k]) * inv
		}
	}
	return nil
}

// MarkerProducts streams W = Z X (one row of l values per kept marker, in
// KeptMarkers order) to fn: half a pass, used for marker loadings. X has
// Dim() rows and l columns, row-major. The slice passed to fn is reused.
func (op *Operator) MarkerProducts(ctx context.Context, x []float64, l int, fn func(ord int, w []float64) error) error {
	nk := len(op.kept)
	if l < 1 || len(x) != nk*l {
		return fmt.Errorf("operator: shape x %d for %d x %d", len(x), nk, l)
	}
	ws := op.newWorkspace(x, l, false, false)
	defer op.startPool(ws)()
	ws.err = nil
	emit := func(sels []sel) error {
		for q, s := range sels {
			if err := fn(int(s.ord), ws.w[q*ws.lp:q*ws.lp+l]); err != nil {
				return err
			}
		}
		return nil
	}
	first := func(ws *workspace, raw []byte, sels []sel) {
		op.genoFirst(ws, raw, sels)
		if ws.err == nil {
			ws.err = emit(sels)
		}
	}
	err := op.st.Stream(ctx, op.chunks, op.buffers-1, func(c *matrixio.Chunk) error {
		if err := ctx.Err(); err != nil {
			return err
		}
		if op.float {
			ws.csels = op.sels(c.Index, ws.csels)
			sels := ws.csels
			op.floatFirst(ws, c, sels)
			return emit(sels)
		}
		op.gatherBlock(ws, c, first)
		return ws.err
	})
	if err != nil {
		return err
	}
	if !op.float {
		op.flushBlock(ws, first)
	}
	return ws.err
}

// A job is one parallel part of a block's work: item is a marker or a
// sample segment, worker the goroutine's index (for per-worker scratch).
// Jobs are methods that read the block from the workspace, so handing one
// out allocates nothing.
type job func(op *Operator, ws *workspace, item, worker int)

// jobRun is the job in progress: items are handed out dynamically.
type jobRun struct {
	fn   job
	n    int
	next atomic.Int64
	wg   sync.WaitGroup
}

func (r *jobRun) work(op *Operator, ws *workspace, worker int) {
	for {
		i := int(r.next.Add(1) - 1)
		if i >= r.n {
			return
		}
		r.fn(op, ws, i, worker)
	}
}

// startPool starts the pass's threads-1 helper goroutines (the caller is
// worker 0); the returned function stops them. One pool serves every block
// of a pass, so the steady state allocates nothing per block.
func (op *Operator) startPool(ws *workspace) func() {
	if op.threads == 1 {
		return func() {}
	}
	ch := make(chan int, op.threads)
	ws.pool = ch
	for t := 1; t < op.threads; t++ {
		go func() {
			for w := range ch {
				ws.run.work(op, ws, w)
				ws.run.wg.Done()
			}
		}()
	}
	return func() {
		close(ch)
		ws.pool = nil
	}
}

// forEach runs fn for item in [0, n) on the pass's pool and waits. Callers
// make each item's result independent of the worker, so scheduling never
// changes a number.
func (op *Operator) forEach(ws *workspace, n int, fn job) {
	if ws.pool == nil || n == 1 {
		for i := 0; i < n; i++ {
			fn(op, ws, i, 0)
		}
		return
	}
	r := &ws.run
	r.fn, r.n = fn, n
	r.next.Store(0)
	r.wg.Add(op.threads - 1)
	for t := 1; t < op.threads; t++ {
		ws.pool <- t
	}
	r.work(op, ws, 0)
	r.wg.Wait()
}

func grow32(b []float32, n int) []float32 {
	if cap(b) < n {
		return make([]float32, n)
	}
	return b[:n]
}

func grow(b []float64, n int) []float64 {
	if cap(b) < n {
		return make([]float64, n)
	}
	return b[:n]
}

// floatChunk applies one chunk of float values with dense products
// (dense.go).
func (op *Operator) floatChunk(ws *workspace, c *matrixio.Chunk) {
	ws.csels = op.sels(c.Index, ws.csels)
	tr := op.floatFirst(ws, c, ws.csels)
	ws.trace = append(ws.trace, tr...)
	if ws.capture != nil {
		ws.capture.write(ws.w, len(ws.csels), ws.lp)
	}
	op.forEach(ws, len(op.segs)-1, (*Operator).floatSecondJob)
}

// floatSecondJob: Y_i += sum_q z_qi W_q for the kept samples of segment sg.
func (op *Operator) floatSecondJob(ws *workspace, sg, _ int) {
	lp, n, nb := ws.lp, op.n, len(ws.sels)
	for i := op.segs[sg]; i < op.segs[sg+1]; i++ {
		if op.isKept[i] {
			fmaRows(ws.y[i*lp:i*lp+lp], ws.w, ws.z[i:], nb, n, lp)
		}
	}
}

// floatFirst decodes and standardizes a float chunk into ws.z and computes
// W = Z_b X into ws.w; it returns each marker's sum of squares (in a
// buffer reused by the next chunk).
func (op *Operator) floatFirst(ws *workspace, c *matrixio.Chunk, sels []sel) []float64 {
	lp, n, nb := ws.lp, op.n, len(sels)
	ws.raw, ws.sels = c.Raw, sels
	ws.w = grow(ws.w, nb*lp)
	ws.z = grow(ws.z, nb*n)
	ws.ss = grow(ws.ss, nb)
	op.forEach(ws, nb, (*Operator).floatFirstJob)
	return ws.ss
}

// floatFirstJob standardizes marker q's values into its row of ws.z and
// sets W_q = sum_i z_qi X_i.
func (op *Operator) floatFirstJob(ws *workspace, q, _ int) {
	lp, n := ws.lp, op.n
	rb := op.st.RowBytes()
	s := ws.sels[q]
	row := ws.raw[int(s.off)*rb : (int(s.off)+1)*rb]
	z := ws.z[q*n : (q+1)*n]
	mu, inv := op.center[s.ord], op.scale[s.ord]
	var ss float64
	for i := 0; i < n; i++ {
		v := math.Float32frombits(uint32(row[4*i]) | uint32(row[4*i+1])<<8 | uint32(row[4*i+2])<<16 | uint32(row[4*i+3])<<24)
		if v != v || !op.isKept[i] {
			z[i] = 0
			continue
		}
		zi := (float64(v) - mu) * inv
		z[i] = zi
		ss += zi * zi
	}
	w := ws.w[q*lp : q*lp+lp]
	clear(w)
	fmaRows(w, ws.x, z, n, 1, lp)
	ws.ss[q] = ss
}

// releaseWorkspace drops the pass buffers (workspaceReleaser); the next
// pass, if any, makes them again.
func (op *Operator) releaseWorkspace() { op.ws = nil }
