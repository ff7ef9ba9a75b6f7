package randsvd

import (
	"context"
	"fmt"
	"math"

	"github.com/clinal/clinal/matrixio"
	"gonum.org/v1/gonum/mat"
)

// PCAOptions configure RunPCA.
type PCAOptions struct {
	K          int
	Oversample int
	Tol        float64
	VarTol     float64 // bulk stop: relative change of the captured variance (default 2e-3)
	MaxPasses  int
	Seed       uint64
	Threads    int
	Memory     int64 // bytes; 0 means no promise
	Scaling    Scaling
	SampleKept []bool            // nil keeps all
	MarkerKept []bool            // nil keeps all
	Counts     []matrixio.Counts // over kept samples; nil uses the store's
	// Progress reports chunks done within a pass.
	Progress func(pass, done, total int)
	// Pass reports the end of each pass.
	Pass       func(pass int, maxRel float64)
	Checkpoint func(*State) error
	Resume     *State
	// TW selects the Tracy-Widom test: "exact" computes trace(K^2) exactly
	// (Dim()/32 extra passes), "approx" takes the effective number of
	// markers as M (right for LD-pruned markers, anti-conservative with
	// LD left in), "off" skips it, "" or "auto" is exact up to TWExactMax
	// samples and approx beyond.
	TW         string
	TWExactMax int // default 4000
	// ExactPasses disables fast passes (Solve, FastApplier): every pass
	// float64, about 1.5x the time.
	ExactPasses bool
	// LoadingsStash, when not empty, is a directory where the closing or
	// refinement pass keeps its marker-side products Z C (M * w * 8 bytes of disk, in
	// a file without a name where the system allows it, else one unlinked
	// at once), so Loadings needs no half pass of its own (stash.go).
	// Empty: Loadings makes its half pass.
	LoadingsStash string
}

// PCAResult is the outcome of RunPCA.
type PCAResult struct {
	Samples     []int // store indices of the kept samples, in store order
	Eigenvalues []float64
	Residuals   []float64
	Converged   []bool
	Scores      *mat.Dense // kept samples x K, unit-norm columns
	Trace       float64    // exact trace(K) = sum of all N eigenvalues
	TraceSqEst  float64    // Hutchinson estimate of trace(K^2)
	Markers     int        // M: markers in the operator
	Passes      int
	FastPasses  int // passes with float32 tables (the others: closing passes, a refinement, exact passes)
	StopReason  string
	BlockSize   int // l, the solver's basis
	KrylovBlock int // b, the vectors each pass of the iteration applies K to
	History     [][]float64
	Dropped     DroppedMarkers
	MPEdge      float64 // (trace/N) (1 + sqrt(N/M))^2
	Plan        MemoryPlan
	TW          []TWResult // per PC; nil when the test was off
	TWMethod    string     // how n' was obtained: "exact trace(K^2)", "assumed M" or "off"
	TraceSq     float64    // exact trace(K^2) when TWMethod is exact, else NaN
	// When the run ended on a closing or refinement pass (Result.Basis): Scores =
	// Basis Rotation. Loadings then computes Z Basis (from the stash or a
	// half pass) and rotates it, so resumed and cluster runs give the same
	// loadings as an uninterrupted local one.
	Basis    []float64
	Rotation *mat.Dense
	stash    *stash // Z Basis kept by the last pass, for Loadings (nil: none)
}

// Close releases the loadings stash, if any (Loadings releases it too).
func (r *PCAResult) Close() error {
	s := r.stash
	r.stash = nil
	return s.Close()
}

// MemoryPlan is how a run fits its memory promise.
type MemoryPlan struct {
	BlockSize    int   `json:"block_size"`
	Buffers      int   `json:"chunk_buffers"`
	SolverBytes  int64 `json:"solver_bytes"`
	ChunkBytes   int64 `json:"chunk_buffer_bytes"`
	TableBytes   int64 `json:"table_bytes"`
	KernelBytes  int64 `json:"kernel_bytes"`
	TotalBytes   int64 `json:"total_bytes"`
	LimitBytes   int64 `json:"limit_bytes"`
	MinimumBytes int64 `json:"minimum_bytes"`
}

// solverBlocks is the number of N x l float64 blocks alive at once: the
// solver's U, KU, R, KR (b <= l wide) and the new U, KU, plus the
// operator's X and Y in store-sample space (as wide as the pass). The
// refinement (old and new U, KU, and its K-wide input, image and
// Rayleigh-Ritz vectors) and the exact pass on the other columns stay
// within as many, and so does a closing pass: U, KU, its residual block,
// its input and image and the operator's X and Y (at most l wide,
// closingWidth) during the pass, then (the operator's buffers released)
// U, KU, input, image and one new U and KU at a time (Rayleigh-Ritz on
// [U R_c], dropped before the one on span C) with its temporary.
const solverBlocks = 8

// runtimeOverhead is memory reserved for the Go runtime, code and small
// allocations.
const runtimeOverhead = 48 << 20

// PlanMemory chooses the number of chunk buffers so the run fits limit
// bytes (0: no limit, streamBuffers) and refuses with the minimum it
// needs when even the N x l blocks and two buffers do not fit.
func PlanMemory(st *matrixio.Store, k, oversample, threads int, limit int64) (MemoryPlan, error) {
	n := st.NumSamples()
	if oversample <= 0 {
		oversample = max(10, k/2)
	}
	l := min(k+oversample, n)
	p := MemoryPlan{BlockSize: l, LimitBytes: limit}
	p.SolverBytes = int64(solverBlocks) * int64(n) * int64(l) * 8
	p.ChunkBytes = st.ChunkBufferBytes() + int64(st.ChunkMarkers())*int64(5*l)*8
	if st.Codec() == matrixio.CodecFloat32 {
		p.ChunkBytes += int64(st.ChunkMarkers()) * int64(n) * 8 // standardized block
	}
	// Marker and sample tables: the store's, the selection's and the
	// operator's (about 250 bytes per marker measured, with margin).
	p.TableBytes = int64(st.NumMarkers())*300 + int64(n)*96
	// Kernel buffers: the gathered block of packed rows, the per-segment
	// partial products and the group tables of each thread.
	lp := int64((l + 3) &^ 3)
	rb := int64(st.RowBytes())
	target := int64(blockTarget(n, int(lp), int(rb)))
	blockM := max(target, int64(st.ChunkMarkers()))
	nseg := int64(len(segments(n)) - 1)
	tabs, parts := widthBuffers(n, lp)
	// (X in float32, and the block's W'' and mu W'' rows in float32.)
	p.KernelBytes = nseg*blockM*lp*8 + int64(max(1, threads))*tabs + int64(n)*lp*4 + 2*blockM*lp*4
	// The second product's rows for marker parts past the first (small
	// and middle-sized cohorts only, secondParts).
	if st.Codec() == matrixio.CodecGeno2 {
		p.KernelBytes += int64(parts-1) * int64(n) * lp * 8
	}
	// The loadings stash's two row buffers and its encoding buffer during
	// the closing or refinement pass (stash.go).
	p.KernelBytes += 3 * blockM * lp * 8
	if st.Codec() == matrixio.CodecGeno2 && int64(st.ChunkMarkers()) < target {
		p.KernelBytes += target * rb
	}
	fixed := p.SolverBytes + p.TableBytes + p.KernelBytes + runtimeOverhead
	p.MinimumBytes = fixed + 2*p.ChunkBytes
	p.Buffers = streamBuffers(threads, blockMarkers(st, n, int(lp)), st.ChunkMarkers(), p.ChunkBytes)
	if limit > 0 {
		if p.MinimumBytes > limit {
			return p, matrixio.BadInput("--memory %s is too small: %d samples x block of %d vectors and two chunk buffers need at least %s",
				FormatBytes(limit), n, l, FormatBytes(p.MinimumBytes))
		}
		for p.Buffers > 2 && fixed+int64(p.Buffers)*p.ChunkBytes > limit {
			p.Buffers--
		}
	}
	p.TotalBytes = fixed + int64(p.Buffers)*p.ChunkBytes
	return p, nil
}

// FormatBytes renders a byte count with a binary unit.
func FormatBytes(b int64) string {
	f := float64(b)
	for _, u := range []string{"B", "KiB", "MiB", "GiB", "TiB"} {
		if f < 1024 || u == "TiB" {
			if u == "B" {
				return fmt.Sprintf("%d B", b)
			}
			return fmt.Sprintf("%.1f %s", f, u)
		}
		f /= 1024
	}
	return ""
}

// MPUpperEdgeScaled is the Marchenko-Pastur upper edge (1 + sqrt(N/M))^2
// (see design: null spectrum) scaled by the mean eigenvalue trace/N, which
// is 1 for exactly standardized data.
func MPUpperEdgeScaled(trace float64, n, m int) float64 {
	g := math.Sqrt(float64(n) / float64(m))
	return trace / float64(n) * (1 + g) * (1 + g)
}

// RunPCA computes the top-K principal components of the standardized store
// for the kept samples and markers, within the memory plan.
func RunPCA(ctx context.Context, st *matrixio.Store, opt PCAOptions) (*PCAResult, *Operator, error) {
	if opt.K < 1 {
		return nil, nil, matrixio.BadInput("-k %d: want at least 1 PC", opt.K)
	}
	plan, err := PlanMemory(st, opt.K, opt.Oversample, opt.Threads, opt.Memory)
	if err != nil {
		return nil, nil, err
	}
	pass := 0
	var prog func(done, total int)
	if opt.Progress != nil {
		prog = func(done, total int) { opt.Progress(pass+1, done, total) }
	}
	op, err := NewOperator(st, OperatorOptions{SampleKept: opt.SampleKept, MarkerKept: opt.MarkerKept,
		Counts: opt.Counts, Scaling: opt.Scaling, Threads: opt.Threads, Buffers: plan.Buffers, Progress: prog, Prefetch: true})
	if err != nil {
		return nil, nil, err
	}
	if opt.K > op.Dim() {
		return nil, nil, matrixio.BadInput("-k %d exceeds the %d samples kept", opt.K, op.Dim())
	}
	trace := op.Trace()
	edge := 0.0
	if !math.IsNaN(trace) {
		edge = MPUpperEdgeScaled(trace, op.Dim(), op.Markers())
	}
	var sh *stash
	if opt.LoadingsStash != "" && !opt.ExactPasses && !op.float {
		// Only a run of fast passes ends on a closing or refinement pass. Without a
		// stash Loadings makes its own half pass: a directory that cannot
		// take one costs time, not the run.
		sh, _ = newStash(op, opt.LoadingsStash)
	}
	res, err := Solve(ctx, op, SolveOptions{K: opt.K, Oversample: opt.Oversample, Tol: opt.Tol,
		MaxPasses: opt.MaxPasses, Seed: opt.Seed, BulkEdge: edge, VarTol: opt.VarTol, Checkpoint: opt.Checkpoint, Resume: opt.Resume,
		Threads: opt.Threads,
		// A float store's fast pass is an exact one: no refinement needed.
		Exact: opt.ExactPasses || op.float, stash: sh, Pass: func(p int, rel float64) {
			pass = p
			if opt.Pass != nil {
				opt.Pass(p, rel)
			}
		}})
	if err != nil {
		sh.Close()
		return nil, nil, err
	}
	out := &PCAResult{Samples: op.KeptSamples(), Eigenvalues: res.Eigenvalues, Residuals: res.Residuals,
		Converged: res.Converged, Scores: res.Vectors, Trace: op.Trace(), TraceSqEst: res.TraceSqEst,
		Markers: op.Markers(), Passes: res.Passes, FastPasses: res.FastPasses, StopReason: res.StopReason, BlockSize: res.BlockSize, KrylovBlock: res.KrylovBlock,
		History: res.History, Dropped: op.Dropped(), Plan: plan, Basis: res.Basis, Rotation: res.Rotation, stash: sh}
	out.MPEdge = MPUpperEdgeScaled(out.Trace, op.Dim(), op.Markers())
	if err := tracyWidom(ctx, op, opt, out); err != nil {
		out.Close()
		return nil, nil, err
	}
	if res.Rotation != nil && sh.usable(op, res.Rotation.RawMatrix().Rows) {
		// The loadings need no pass: the pass buffers (block, partial
		// products, tables: megabytes) can go before the outputs are made.
		op.ws = nil
	}
	return out, op, nil
}

// Loadings streams the marker loadings v_k = Z u_k / sqrt(M lambda_k) (unit
// norm over markers) for the kept markers in store order, so a new sample
// with standardized vector z projects as score_k = z . v_k / sqrt(M
// lambda_k). fn receives the kept-marker ordinal and the K loadings
// (reused slice). When the run ended on a closing or refinement pass, Z u_k is
// (Z Basis) Rotation_k with Z Basis from the stash RunPCA kept
// (PCAOptions.LoadingsStash, no pass over the store) or from half a pass;
// otherwise it is half a pass over the scores. It releases the stash.
func Loadings(ctx context.Context, op *Operator, res *PCAResult, fn func(ord int, v []float64) error) error {
	defer res.Close()
	n, k := res.Scores.Dims()
	inv := make([]float64, k)
	for j := range inv {
		inv[j] = 1 / math.Sqrt(float64(op.Markers())*math.Max(res.Eigenvalues[j], 1e-300))
	}
	v := make([]float64, k)
	if rot := res.Rotation; rot != nil {
		l, c := rot.Dims()
		if c < k || len(res.Basis) != n*l {
			return fmt.Errorf("loadings: basis of %d values and rotation %d x %d for %d samples and %d PCs", len(res.Basis), l, c, n, k)
		}
		r := rot.RawMatrix()
		emit := func(ord int, w []float64) error {
			for j := range v {
				var t float64
				for c, wc := range w {
					t += wc * r.Data[c*r.Stride+j]
				}
				v[j] = t * inv[j]
			}
			return fn(ord, v)
		}
		if res.stash.usable(op, l) {
			return res.stash.each(ctx, emit)
		}
		return op.MarkerProducts(ctx, res.Basis, l, emit)
	}
	x := make([]float64, n*k)
	for i := 0; i < n; i++ {
		copy(x[i*k:(i+1)*k], res.Scores.RawRowView(i))
	}
	return op.MarkerProducts(ctx, x, k, func(ord int, w []float64) error {
		for j := range v {
			v[j] = w[j] * inv[j]
		}
		return fn(ord, v)
	})
}

// ExactTraceSq computes trace(K^2) = ||K||_F^2 exactly by applying K to the
// identity in blocks of width columns (Dim()/width passes): the input
// Patterson, Price & Reich 2006's effective number of markers needs, to
// which the Tracy-Widom statistic is too sensitive for a stochastic
// estimate (see TracyWidom).
func ExactTraceSq(ctx context.Context, a Applier, width int) (float64, error) {
	n := a.Dim()
	if width < 1 {
		width = 32
	}
	var total float64
	for c0 := 0; c0 < n; c0 += width {
		w := min(width, n-c0)
		x := make([]float64, n*w)
		for j := 0; j < w; j++ {
			x[(c0+j)*w+j] = 1
		}
		y := make([]float64, n*w)
		if err := a.Apply(ctx, x, y, w); err != nil {
			return 0, err
		}
		for _, v := range y {
			total += v * v
		}
	}
	return total, nil
}

func tracyWidom(ctx context.Context, op *Operator, opt PCAOptions, out *PCAResult) error {
	return AddTracyWidom(ctx, op, op.Dim(), op.Markers(), opt.TW, opt.TWExactMax, 32, out)
}

// AddTracyWidom adds the Tracy-Widom test of the eigenvalues to out (the
// TW, TWMethod and TraceSq fields) for n samples and m markers. mode is as
// PCAOptions.TW ("auto" is exact up to exactMax samples, default 4000);
// the exact trace(K^2) applies a, width columns at a time. RunPCA and the
// cluster driver (whose a sums shard partials) share it.
func AddTracyWidom(ctx context.Context, a Applier, n, m int, mode string, exactMax, width int, out *PCAResult) error {
	out.TraceSq = math.NaN()
	if exactMax <= 0 {
		exactMax = 4000
	}
	requested := mode
	if mode == "" || mode == "auto" {
		mode = "approx"
		if n <= exactMax {
			mode = "exact"
		}
	}
	if n < 3 {
		// The test needs at least 3 samples (2 nonzero eigenvalues).
		mode = "off"
	}
	in := TWInput{Eigenvalues: out.Eigenvalues, Trace: out.Trace, Samples: n, Markers: m}
	switch mode {
	case "off":
		out.TWMethod = "off"
		return nil
	case "exact":
		ts, err := ExactTraceSq(ctx, a, width)
		if err != nil {
			return err
		}
		out.TraceSq, in.TraceSq = ts, ts
		out.TWMethod = "exact trace(K^2)"
	case "approx":
		out.TWMethod = "assumed M"
	default:
		return matrixio.BadInput("--tw %q: want auto, exact, approx or off", requested)
	}
	if len(in.Eigenvalues) > n-1 {
		in.Eigenvalues = in.Eigenvalues[:n-1]
	}
	res, err := TracyWidom(in)
	if err != nil {
		return fmt.Errorf("tracy-widom: %w", err)
	}
	out.TW = res
	return nil
}

// Truncate keeps the first k PCs of the result.
func (r *PCAResult) Truncate(k int) {
	if k >= len(r.Eigenvalues) || k < 1 {
		return
	}
	r.Eigenvalues, r.Residuals, r.Converged = r.Eigenvalues[:k], r.Residuals[:k], r.Converged[:k]
	if r.Rotation != nil {
		l, _ := r.Rotation.Dims()
		r.Rotation = mat.DenseCopyOf(r.Rotation.Slice(0, l, 0, k))
	}
	if len(r.TW) > k {
		r.TW = r.TW[:k]
	}
	n, _ := r.Scores.Dims()
	s := mat.NewDense(n, k, nil)
	s.Copy(r.Scores.Slice(0, n, 0, k))
	r.Scores = s
	// A new outer slice: the solver's last state (which a checkpoint
	// writer may hold) shares the old one.
	hist := make([][]float64, len(r.History))
	for i, h := range r.History {
		hist[i] = h[:min(k, len(h))]
	}
	r.History = hist
}

// widthBuffers bounds, for n samples and blocks of at most lp columns,
// each thread's group tables and transposed tile (tabs) and the number of
// the second product's marker parts (parts, secondParts), over every
// width the solver applies K to (multiples of 4 up to lp: its Krylov
// block, a closing pass's remainder, K alone). Narrower passes take more
// tile groups, longer sample ranges and more parts, and the workspace
// keeps the largest buffers across widths (newWorkspace). Fast passes
// (fast.go) use float32 tables and a run that mixes both kinds of pass
// keeps both kinds of table; the transposed tile has one row per group of
// the widest tile, at most secondRange samples.
func widthBuffers(n int, lp int64) (tabs int64, parts int) {
	for w := 4; w <= int(lp); w += 4 {
		w64 := int64(w)
		t := int64(tileGroups(w))*256*w64*8 + int64(tileGroups32(w))*256*w64*4
		t += int64(max(tileGroups(w), tileGroups32(w))) * int64(min(n, secondRange(w))+31)
		tabs = max(tabs, t)
		parts = max(parts, secondParts(n, w))
	}
	return tabs, max(parts, 1)
}
