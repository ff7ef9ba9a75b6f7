package randsvd

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"sort"

	"golang.org/x/sync/errgroup"
	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
)

// Applier is a symmetric positive semi-definite N x N operator applied to
// blocks of l vectors stored row-major (len N*l). Operator implements it;
// tests use dense matrices; the cluster driver sums shard partials.
type Applier interface {
	Dim() int
	Apply(ctx context.Context, x, y []float64, l int) error
}

// FastApplier is an Applier with a second, faster and less precise
// application: ApplyFast computes K X to about 1e-7 relative (Operator's
// float32 tables, fast.go). Solve iterates with it and finishes with exact
// passes, so its results are those of Apply's precision.
type FastApplier interface {
	Applier
	ApplyFast(ctx context.Context, x, y []float64, l int) error
}

// fastFloor bounds the relative error of a fast application of K to a unit
// vector, as a fraction of the largest eigenvalue: ten float32 unit
// roundoffs (TestOperatorMatchesDense measures about 2e-7). While passes
// are fast, pair j counts as converged at a relative residual of
// max(Tol, fastFloor * theta_1 / theta_j); the exact passes that follow
// hold every pair to Tol.
const fastFloor = 10 * 0x1p-24

// SolveOptions configure Solve.
type SolveOptions struct {
	K          int     // eigenpairs wanted
	Oversample int     // extra block columns (default max(10, K/2))
	Tol        float64 // residual tolerance relative to the eigenvalue (default 1e-6)
	MaxPasses  int     // applications of the operator (default 30)
	Seed       uint64
	// BulkEdge, when > 0, is the upper edge of the noise bulk of the
	// spectrum (Marchenko-Pastur, see MPUpperEdge). Pairs whose Ritz value
	// is below it carry no structure and their eigenvectors are not
	// individually identifiable, so the run may stop once every pair above
	// the edge has converged and the captured variance (the sum of the
	// wanted Ritz values) changed by less than VarTol in the last pass.
	// Pairs stopped that way are reported as not converged.
	BulkEdge float64
	VarTol   float64 // default 2e-3
	// Pass, when set, is called after each pass with the pass number and
	// the largest relative residual of the wanted pairs so far (NaN before
	// the first Rayleigh-Ritz step).
	Pass func(pass int, maxRel float64)
	// Checkpoint, when set, is called after each pass with the solver state,
	// so a run can resume from the last completed pass (see Resume).
	Checkpoint func(*State) error
	// Resume, when set, continues from a checkpointed state.
	Resume *State
	// Exact disables fast passes even when the operator has them.
	Exact bool
	// Threads is the most goroutines the Rayleigh-Ritz block products
	// between passes use (default 1); the results do not depend on it.
	Threads int
	// stash, when set and the applier can capture (Operator), keeps Z C of
	// each closing or refinement pass's input C for Loadings (stash.go).
	stash *stash
	// closeAt, when set (tests), decides instead of predictLast whether
	// the pass numbered pass is a closing one.
	closeAt func(pass int) bool
}

// Result holds the top-K eigenpairs of K.
type Result struct {
	Eigenvalues []float64   // descending
	Vectors     *mat.Dense  // N x K, unit columns (sample scores)
	Residuals   []float64   // ||K u - lambda u||_2 per pair
	Converged   []bool      // residual <= Tol * lambda
	Passes      int         // applications of the operator
	FastPasses  int         // of which fast (FastApplier); exact ones are closing passes, a refinement or those after it
	History     [][]float64 // relative residuals of the wanted pairs after each RR step
	TraceSqEst  float64     // Hutchinson estimate of trace(K^2) from the first pass
	BlockSize   int         // l = K + oversampling: the basis
	KrylovBlock int         // b: the vectors each pass of the iteration applies K to (blockWidth; fewer where a small cohort leaves fewer samples)
	StopReason  string      // "converged", "bulk-variance-stable" or "max-passes"
	// When the last pass was a closing or refinement pass: Vectors = Basis
	// Rotation, Basis (N x w, row-major) its input and Rotation w x K
	// (signs included): w = closingWidth after a closing pass, K after a
	// refinement, or the basis width (l, or b right after the start pass)
	// after an exact pass on the other columns (State.RefineIn). Nil
	// otherwise.
	Basis    []float64
	Rotation *mat.Dense
}

// State is the solver's state after a completed pass: enough to continue
// bit-identically. U and AU are N x L row-major: L is the basis width l,
// after the first pass the width b of its block (blockWidth), or after a
// closing pass that ended the run its width (closingWidth).
type State struct {
	Pass       int
	L          int
	N          int
	U, AU      []float64
	Theta      []float64
	TraceSqEst float64
	History    [][]float64
	// PrevCaptured is the captured variance (sum of the wanted Ritz
	// values) of the pass before Pass, NaN when there is none; the
	// bulk-variance stopping test compares against it.
	PrevCaptured float64
	// Fast says AU came from fast passes (FastApplier), some of its
	// columns perhaps from a closing pass that did not end the run, and
	// the next pass is fast too (or a closing one); FastPasses counts the
	// fast passes.
	Fast       bool
	FastPasses int
	// After a closing pass that ended the run, or a refinement pass: the
	// basis RefineIn (N x w) whose exact images entered its Rayleigh-Ritz
	// and the rotation Rot (w x w, row-major), with the first w columns of
	// U = RefineIn Rot. w is closingWidth after a closing pass (C = [U_K
	// R_c]; then L = w; less in a cohort of fewer than l + b samples, where
	// R_c shrinks to the samples the basis leaves), K after the refinement of the
	// wanted pairs (columns K.. of AU are then still fast images), or L (l,
	// or b right after the start pass) after the exact pass on those other
	// columns, which runs whenever the tests ask for more passes after a
	// refinement. Marker loadings are computed from them (Loadings), so a
	// resumed run gives the same ones. Nil after other passes.
	RefineIn, Rot []float64
}

// Solve computes the top-K eigenpairs of a by a restarted block Krylov
// method: randomized start (Halko, Martinsson & Tropp 2011, SIAM Rev
// 53:217), then at each pass the current Ritz vectors U (at most l) are
// extended by one Krylov block (the residual block R = KU - U Theta of the
// top b pairs, orthonormalized against U; b = blockWidth(K, l)) and
// Rayleigh-Ritz on span[U, R] keeps the best l pairs. One pass of the
// iteration is one application of K to b vectors; the space grows like a block Krylov space
// (Musco & Musco 2015, NeurIPS) with a thick restart that keeps memory at a
// fixed number of N x l blocks. The stop is residual based: every wanted
// pair has ||K u - lambda u|| <= Tol * lambda, or MaxPasses. The first pass
// applies K to a Gaussian block of b vectors, which also gives the
// Hutchinson (1989) estimate of trace(K^2) = E||K w||^2. Fast passes end
// with a closing pass when the tests are expected to pass after one more
// (predictLast), or it is the last allowed: an exact pass on the K wanted
// Ritz vectors and the next Krylov block together, the run ending on its
// Rayleigh-Ritz if the tests pass. When the fast passes meet the tests
// unforeseen, a refinement ends them instead: an exact pass on the K
// wanted Ritz vectors and Rayleigh-Ritz on them. When the tests still ask
// for more passes after it, an exact pass on the other columns and
// Rayleigh-Ritz on all of them come before exact extension passes.
func Solve(ctx context.Context, a Applier, opt SolveOptions) (*Result, error) {
	n := a.Dim()
	if opt.K < 1 {
		return nil, fmt.Errorf("solve: k = %d, want >= 1", opt.K)
	}
	if opt.Oversample <= 0 {
		opt.Oversample = max(10, opt.K/2)
	}
	l := min(opt.K+opt.Oversample, n)
	if opt.K > n {
		return nil, fmt.Errorf("solve: k = %d exceeds the %d samples", opt.K, n)
	}
	if opt.Tol <= 0 {
		opt.Tol = 1e-6
	}
	if opt.MaxPasses <= 0 {
		opt.MaxPasses = 30
	}
	if opt.VarTol <= 0 {
		opt.VarTol = 2e-3
	}
	if opt.MaxPasses < 2 {
		opt.MaxPasses = 2
	}
	th := max(1, opt.Threads)
	b := blockWidth(opt.K, l)
	fa, fast := a.(FastApplier)
	fast = fast && !opt.Exact
	apply := func(fast bool) func(context.Context, []float64, []float64, int) error {
		if fast {
			return fa.ApplyFast
		}
		return a.Apply
	}
	var st *State
	// done makes s the state and reports the completed pass: the Pass
	// callback, then the checkpoint.
	done := func(s *State) error {
		st = s
		if opt.Pass != nil {
			opt.Pass(s.Pass, maxOf(s.History[len(s.History)-1]))
		}
		if opt.Checkpoint != nil {
			return opt.Checkpoint(s)
		}
		return nil
	}
	// refined is the state after an exact pass that refines the basis:
	// the refinement of the wanted pairs, or the exact pass on the other
	// columns. in is the basis whose exact images entered the
	// Rayleigh-Ritz and rot its rotation: the first columns of u are in rot.
	refined := func(u, au *mat.Dense, theta []float64, captured float64, in []float64, rot *mat.Dense) *State {
		return &State{Pass: st.Pass + 1, L: len(theta), N: n, U: u.RawMatrix().Data, AU: au.RawMatrix().Data,
			Theta: theta, TraceSqEst: st.TraceSqEst, History: append(st.History, relResiduals(u, au, theta, opt.K)),
			PrevCaptured: captured, FastPasses: st.FastPasses, RefineIn: in, Rot: rot.RawMatrix().Data}
	}
	if opt.Resume != nil {
		st = opt.Resume
		// The basis is l wide, or b until the first extension pass (after
		// the start pass, and a refinement or exact tail right after it),
		// or a closing pass's width after one that ended the run (at most
		// l, less in a cohort of fewer than l + b samples).
		if st.N != n || st.L < opt.K || st.L > l || len(st.U) != n*st.L || len(st.AU) != n*st.L || len(st.Theta) != st.L {
			return nil, errors.New("solve: checkpoint does not match this problem (samples or block size differ)")
		}
		if w := st.refineWidth(); st.RefineIn != nil && w != opt.K && w != st.L {
			return nil, errors.New("solve: checkpoint does not match this problem (refinement width differs)")
		}
	} else {
		// Pass 1: Gaussian start, a block of b vectors like every later
		// pass (the basis grows to l with the next one).
		rng := rand.New(rand.NewPCG(opt.Seed, 0x636c696e616c)) // "clinal"
		omega := make([]float64, n*b)
		for i := range omega {
			omega[i] = rng.NormFloat64()
		}
		y := make([]float64, n*b)
		if err := apply(fast)(ctx, omega, y, b); err != nil {
			return nil, err
		}
		var ss float64
		for _, v := range y {
			ss += v * v
		}
		// Q0 = Omega R^-1 and K Q0 = Y R^-1 (Omega is well conditioned).
		q := mat.NewDense(n, b, omega)
		aq := mat.NewDense(n, b, y)
		if err := orthonormalizeWith(q, aq, nil); err != nil {
			return nil, fmt.Errorf("solve: start block: %w", err)
		}
		u, au, theta, _ := rayleighRitz([]*mat.Dense{q}, []*mat.Dense{aq}, b, th)
		first := &State{Pass: 1, L: b, N: n, U: u.RawMatrix().Data, AU: au.RawMatrix().Data, Theta: theta, TraceSqEst: ss / float64(b), PrevCaptured: math.NaN(),
			Fast: fast, History: [][]float64{relResiduals(u, au, theta, opt.K)}}
		if fast {
			first.FastPasses = 1
		}
		if err := done(first); err != nil {
			return nil, err
		}
	}
	u := mat.NewDense(n, st.L, st.U)
	au := mat.NewDense(n, st.L, st.AU)
	theta := st.Theta
	reason := "max-passes"
	prevVar := st.PrevCaptured
	// applyExact applies K exactly to in (n x w), writing Z in to the
	// stash when there is one (for Loadings); it says whether it did.
	applyExact := func(in, y []float64, w int) (bool, error) {
		if c, ok := a.(capturer); ok && opt.stash != nil {
			return true, c.applyCapture(ctx, in, y, w, opt.stash)
		}
		return false, a.Apply(ctx, in, y, w)
	}
	// test runs the stopping tests on a state after pass: the stop reason
	// ("" to go on), the wanted pairs' relative residuals and the captured
	// variance.
	test := func(u, au *mat.Dense, theta []float64, fast bool, pass int, prevVar float64) (string, []float64, float64) {
		rel := relResiduals(u, au, theta, opt.K)
		// The residual each pair must reach: Tol, or while passes are fast
		// the float32 floor relative to its Ritz value (see fastFloor).
		conv := func(j int) bool {
			t := opt.Tol
			if fast && theta[j] > 0 {
				t = math.Max(t, fastFloor*theta[0]/theta[j])
			}
			return rel[j] <= t
		}
		stop := ""
		allConv := true
		for j := 0; j < opt.K; j++ {
			allConv = allConv && conv(j)
		}
		captured := sum(theta[:opt.K])
		switch {
		case allConv:
			stop = "converged"
		case opt.BulkEdge > 0 && !math.IsNaN(prevVar) && math.Abs(captured-prevVar) <= opt.VarTol*captured:
			ok := true
			for j := 0; j < opt.K; j++ {
				if theta[j] > opt.BulkEdge && !conv(j) {
					ok = false
				}
			}
			if ok {
				stop = "bulk-variance-stable"
			}
		}
		// A fast pass just before MaxPasses is a closing pass (below), so
		// the cap is reached on an exact one; a fast state at the cap
		// (resumed with a lower MaxPasses) still gets its refinement.
		if stop == "" && pass >= opt.MaxPasses {
			stop = "max-passes"
		}
		return stop, rel, captured
	}
	// residuals is the residual block K u_j - theta_j u_j of the top width
	// pairs, orthonormalized against U (the Krylov block of the next pass).
	residuals := func(width int) (*mat.Dense, error) {
		r := mat.NewDense(n, width, nil)
		for i := 0; i < n; i++ {
			ur, ar, rr := u.RawRowView(i), au.RawRowView(i), r.RawRowView(i)
			for j := range rr {
				rr[j] = ar[j] - theta[j]*ur[j]
			}
		}
		refill := rand.New(rand.NewPCG(opt.Seed, uint64(st.Pass)+1))
		if err := orthonormalizeWith(r, nil, &orthOpts{against: u, refill: refill}); err != nil {
			return nil, fmt.Errorf("solve: pass %d: %w", st.Pass+1, err)
		}
		return r, nil
	}
	// extended is the state after a pass that extended the basis to u,
	// au, theta (fast says the iteration goes on fast; fastPass that the
	// pass itself was one).
	extended := func(u, au *mat.Dense, theta []float64, captured float64, fast, fastPass bool) *State {
		next := &State{Pass: st.Pass + 1, L: len(theta), N: n, U: u.RawMatrix().Data, AU: au.RawMatrix().Data,
			Theta: theta, TraceSqEst: st.TraceSqEst, History: append(st.History, relResiduals(u, au, theta, opt.K)),
			PrevCaptured: captured, Fast: fast, FastPasses: st.FastPasses}
		if fastPass {
			next.FastPasses++
		}
		return next
	}
	for {
		stop, rel, captured := test(u, au, theta, st.Fast, st.Pass, prevVar)
		if w := st.refineWidth(); stop == "" && st.L >= n && (st.Fast || w == 0 || w == st.L) {
			// The basis spans every sample (a cohort of fewer than l + b):
			// Rayleigh-Ritz on it is exact, and there is nothing to extend
			// it with. A fast state still gets its refinement; after a
			// refinement of the wanted pairs only, the exact pass on the
			// other columns comes first (below).
			stop = "converged"
		}
		if stop != "" && st.Fast {
			// Refinement: one exact pass on the K wanted Ritz vectors and
			// Rayleigh-Ritz on them give float64 Ritz values, vectors and
			// residuals for those pairs; the stopping tests, which read
			// only them, then run again, strictly. The other columns keep
			// their fast images until a later pass needs them (an exact
			// pass on them, below): refining the wanted pairs only costs
			// an exact pass of width K, not l.
			if err := ctx.Err(); err != nil {
				return nil, err
			}
			w := opt.K
			in := make([]float64, n*w)
			ud := u.RawMatrix()
			for i := 0; i < n; i++ {
				copy(in[i*w:(i+1)*w], ud.Data[i*ud.Stride:i*ud.Stride+w])
			}
			y := make([]float64, n*w)
			capture, err := applyExact(in, y, w)
			if err != nil {
				return nil, err
			}
			ur, aur, thr, rot := rayleighRitz([]*mat.Dense{mat.NewDense(n, w, in)}, []*mat.Dense{mat.NewDense(n, w, y)}, w, th)
			u, au, theta = withHead(u, ur), withHead(au, aur), append(thr, theta[w:]...)
			if capture {
				opt.stash.pass = st.Pass + 1
			}
			prevVar = captured
			if err := done(refined(u, au, theta, captured, in, rot)); err != nil {
				return nil, err
			}
			continue
		}
		if stop != "" {
			reason = stop
			break
		}
		if w, c := st.refineWidth(), st.L; w > 0 && w < c {
			// More passes after a refinement of the wanted pairs: the
			// other columns' images are still fast ones. An exact pass on
			// them and Rayleigh-Ritz on all c columns make the state what
			// a refinement of all c gives; the tests then run again.
			if err := ctx.Err(); err != nil {
				return nil, err
			}
			ud := u.RawMatrix()
			tail := make([]float64, n*(c-w))
			for i := 0; i < n; i++ {
				copy(tail[i*(c-w):(i+1)*(c-w)], ud.Data[i*ud.Stride+w:i*ud.Stride+c])
			}
			yt := make([]float64, n*(c-w))
			if err := a.Apply(ctx, tail, yt, c-w); err != nil {
				return nil, err
			}
			// Rayleigh-Ritz on [U_w U_tail] with images [KU_w, K U_tail]:
			// views of U and KU, no copy.
			in := u.RawMatrix().Data
			var rot *mat.Dense
			u, au, theta, rot = rayleighRitz([]*mat.Dense{u.Slice(0, n, 0, w).(*mat.Dense), u.Slice(0, n, w, c).(*mat.Dense)},
				[]*mat.Dense{au.Slice(0, n, 0, w).(*mat.Dense), mat.NewDense(n, c-w, yt)}, c, th)
			prevVar = captured
			if err := done(refined(u, au, theta, captured, in, rot)); err != nil {
				return nil, err
			}
			continue
		}
		if st.RefineIn != nil {
			// More passes after the refinement: its basis is no longer
			// needed here (a copy, as a checkpoint writer may hold st), and
			// the memory plan has no block for it.
			c := *st
			c.RefineIn, c.Rot = nil, nil
			st = &c
		}
		prevVar = captured
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		closing := st.Fast && st.Pass+1 >= opt.MaxPasses
		if st.Fast && !closing {
			if opt.closeAt != nil {
				closing = opt.closeAt(st.Pass + 1)
			} else {
				closing = predictLast(st, theta, rel, captured, opt)
			}
		}
		if closing {
			// Closing pass: the next pass is expected to be the last (or is
			// the last allowed), so it is exact and takes the wanted Ritz
			// vectors along with the next Krylov block, C = [U_K R_c]
			// (R_c the residuals of the top c = w-K pairs, w =
			// closingWidth, as wide as the samples the basis leaves allow):
			// one pass instead of a fast one and then a refinement, whose
			// fixed costs (reading, decoding, the per-byte table work) are
			// most of a narrow pass. The tests read [U R_c] first, then
			// span C's exact pairs (below); the run ends on span C if both
			// pass, else it goes on from [U R_c] with fast passes.
			c := min(closingWidth(opt.K, l, b)-opt.K, n-st.L)
			w := opt.K + c
			rc, err := residuals(c)
			if err != nil {
				return nil, err
			}
			in := make([]float64, n*w)
			for i := 0; i < n; i++ {
				copy(in[i*w:i*w+opt.K], u.RawRowView(i)[:opt.K])
				copy(in[i*w+opt.K:(i+1)*w], rc.RawRowView(i))
			}
			y := make([]float64, n*w)
			capture, err := applyExact(in, y, w)
			if err != nil {
				return nil, err
			}
			if rel, ok := a.(workspaceReleaser); ok {
				// Most likely the last pass: its buffers go before the
				// Rayleigh-Ritz blocks are made (the memory plan counts
				// them once); a later pass makes them again.
				rel.releaseWorkspace()
			}
			cy := mat.NewDense(n, w, y)
			// Rayleigh-Ritz on [U R_c], U's first K images now exact (views,
			// no copy): the basis the iteration goes on with, and what the
			// stopping tests read first, as after a fast pass. Testing span C
			// instead would favour stopping: its smaller captured variance
			// can sit closer to the last pass's.
			full := func() (*mat.Dense, *mat.Dense, []float64) {
				bs := []*mat.Dense{u.Slice(0, n, 0, opt.K).(*mat.Dense)}
				ks := []*mat.Dense{cy.Slice(0, n, 0, opt.K).(*mat.Dense)}
				if st.L > opt.K { // U's columns past K (none when b = K right after the start pass)
					bs = append(bs, u.Slice(0, n, opt.K, st.L).(*mat.Dense))
					ks = append(ks, au.Slice(0, n, opt.K, st.L).(*mat.Dense))
				}
				bs, ks = append(bs, rc), append(ks, cy.Slice(0, n, opt.K, w).(*mat.Dense))
				uf, auf, thf, _ := rayleighRitz(bs, ks, l, th)
				return uf, auf, thf
			}
			uf, auf, thf := full()
			if stopF, _, capF := test(uf, auf, thf, true, st.Pass+1, captured); stopF != "" {
				// Then the exact pairs of span C, strictly, against that
				// captured variance, as a refinement's are against its
				// pass's: the run ends on them if they pass (a resume from
				// this state then stops at once, on the same test). [U R_c]'s
				// blocks go first (the memory plan counts one pair of new
				// N x l blocks), and are made again, the same, if the run
				// goes on.
				uf, auf = nil, nil
				uc, auc, thc, rot := rayleighRitz([]*mat.Dense{mat.NewDense(n, w, in)}, []*mat.Dense{cy}, w, th)
				if stopC, _, _ := test(uc, auc, thc, false, st.Pass+1, capF); stopC != "" {
					if capture {
						opt.stash.pass = st.Pass + 1
					}
					prevVar = capF
					u, au, theta = uc, auc, thc
					if err := done(refined(u, au, theta, capF, in, rot)); err != nil {
						return nil, err
					}
					continue
				}
				uc, auc = nil, nil
				uf, auf, thf = full()
			}
			// Go on from [U R_c] (a fast state: the tests that passed on it,
			// if any, now end the fast passes with a refinement).
			in = nil
			u, au, theta = uf, auf, thf
			prevVar = captured
			if err := done(extended(u, au, theta, captured, true, false)); err != nil {
				return nil, err
			}
			continue
		}
		// Residual block of the top b pairs (as many as the samples the
		// basis leaves allow), orthonormalized against U.
		b := min(b, n-st.L)
		r, err := residuals(b)
		if err != nil {
			return nil, err
		}
		ar := make([]float64, n*b)
		if err := apply(st.Fast)(ctx, r.RawMatrix().Data, ar, b); err != nil {
			return nil, err
		}
		arm := mat.NewDense(n, b, ar)
		u, au, theta, _ = rayleighRitz([]*mat.Dense{u, r}, []*mat.Dense{au, arm}, l, th)
		if err := done(extended(u, au, theta, captured, st.Fast, st.Fast)); err != nil {
			return nil, err
		}
	}
	res, signs := finish(u, au, theta, st, opt)
	res.StopReason, res.BlockSize, res.KrylovBlock = reason, l, b
	if w := st.refineWidth(); w >= opt.K {
		// Fold the sign convention into the rotation: Vectors = Basis Rotation.
		res.Basis = st.RefineIn
		res.Rotation = mat.NewDense(w, opt.K, nil)
		for i := 0; i < w; i++ {
			for j := 0; j < opt.K; j++ {
				res.Rotation.Set(i, j, signs[j]*st.Rot[i*w+j])
			}
		}
	}
	if s := opt.stash; s != nil && (s.pass != st.Pass || res.Basis == nil) {
		s.discard() // it holds an earlier pass (or none)
	}
	return res, nil
}

// SolverScheme names how Solve iterates (blocks of blockWidth vectors,
// closing passes, a refinement of the K wanted pairs), for callers that
// key checkpoints: a
// state saved by another scheme resumes into numbers no uninterrupted run
// of this one gives.
const SolverScheme = "krylov-b/2"

// blockWidth is the width b of every block of the iteration: the Gaussian
// start, then the residuals of the top b Ritz pairs (the refinement and the
// exact pass on the other columns apply K to K and L-K vectors); b =
// max(K, l/2) rounded up to a multiple of 4 (the kernels pad rows to one,
// so those columns cost nothing), at most l. The basis grows to l and stays l wide (thick
// restart), so the pairs past b still gain from every block, but a pass
// applies K to b vectors, not l: a fast pass at 5,000 samples took 0.145 s
// at width 12 against 0.175 s at 20 (benchmarks/kernels passbench). With
// blocks of l, the passes to a stop and the captured variance were about
// the same on the benchmark and simulated cohorts; the HapMap fixture took
// one to three more passes in 7 of 15 runs (DEVELOPERS.md, "The Krylov
// block").
func blockWidth(k, l int) int {
	return min(l, (max(k, (l+1)/2)+3)&^3)
}

// closingWidth is the width w of a closing pass's input [U_K R_c] (Solve):
// K + b, at most l (the passes' buffers and the memory plan are sized for
// l). 20 for -k 10: the ten wanted vectors and the residuals of the top
// ten pairs.
func closingWidth(k, l, b int) int {
	return min(k+b, l)
}

// predictLast says whether the stopping tests are expected to pass after
// one more pass from the fast state st (pairs theta with relative
// residuals rel, captured variance captured; st.PrevCaptured the pass
// before's):
// then that pass is a closing one. Both tests are extrapolated one pass:
//   - the change in captured variance: adding the residual directions
//     raises each Ritz value by about rho_j^2 / (theta_j - alpha), rho_j =
//     rel_j theta_j (a Rayleigh-Ritz step, first order), so the next change
//     is kappa S with S = sum_j theta_j rel_j^2 over the wanted pairs and
//     kappa fitted on the last change (kappa = change / S of the pass
//     before, kept within [1, 4]; 4 after the start pass, whose captured
//     variance is that of a random block);
//   - each residual: geometric, rel_j times its last ratio (at most 1),
//     with a factor 2 to spare, against Tol (the closing pass is exact).
//
// The bounds (kappa in [1, 4], the factor 2) come from a numpy model of
// the solver in exact arithmetic (benchmarks/pca/closing.py: the
// benchmark cohort, four simulated ones and the HapMap fixture, k = 1,
// 2, 5, 10, 20, 3 seeds each, 84 runs to a stop): kappa fell within
// [1, 3.7], and the predictor foresaw the last pass in 59 runs and never
// wrongly, for 0.95x the passes' cost in all. A wrong guess costs the
// difference between an exact pass of width w and a fast one of b, and
// still extends the basis.
func predictLast(st *State, theta, rel []float64, captured float64, opt SolveOptions) bool {
	prevVar := st.PrevCaptured
	if st.Pass < 2 || len(st.History) < 2 || math.IsNaN(prevVar) || captured <= 0 {
		return false
	}
	k := opt.K
	prev := st.History[len(st.History)-2]
	spread := func(r []float64) float64 {
		var s float64
		for j := 0; j < k; j++ {
			s += math.Max(theta[j], 0) * r[j] * r[j]
		}
		return s
	}
	kappa := 4.0
	if sp := spread(prev); st.Pass >= 3 && sp > 0 {
		kappa = min(4, max(1, (captured-prevVar)/sp))
	}
	allConv, bulkConv := true, true
	for j := 0; j < k; j++ {
		ratio := 1.0
		if prev[j] > 0 {
			ratio = min(1, rel[j]/prev[j])
		}
		c := 2*rel[j]*ratio <= opt.Tol
		allConv = allConv && c
		if theta[j] > opt.BulkEdge && !c {
			bulkConv = false
		}
	}
	if allConv {
		return true
	}
	return opt.BulkEdge > 0 && bulkConv && kappa*spread(rel) <= opt.VarTol*captured
}

// workspaceReleaser is an Applier that can drop its pass buffers between
// passes (Operator): after a closing pass, which is most likely the last.
type workspaceReleaser interface{ releaseWorkspace() }

// refineWidth is the width w of st.RefineIn (N x w; Rot is w x w): K
// after the refinement of the wanted pairs, or L after the exact pass on
// the other columns. 0 when st is not such a pass's state.
func (st *State) refineWidth() int {
	if st.RefineIn == nil || st.N == 0 || len(st.RefineIn)%st.N != 0 {
		return 0
	}
	w := len(st.RefineIn) / st.N
	if len(st.Rot) != w*w {
		return 0
	}
	return w
}

// withHead returns a copy of m (n x l) whose first columns are h's.
func withHead(m, h *mat.Dense) *mat.Dense {
	out := mat.DenseCopyOf(m)
	r, c := h.Dims()
	out.Slice(0, r, 0, c).(*mat.Dense).Copy(h)
	return out
}

func sum(v []float64) float64 {
	var s float64
	for _, x := range v {
		s += x
	}
	return s
}

// finish makes the result of the top K pairs, each vector signed so its
// entry of largest magnitude is positive, and returns the signs.
func finish(u, au *mat.Dense, theta []float64, st *State, opt SolveOptions) (*Result, []float64) {
	n, k := u.RawMatrix().Rows, opt.K
	res := &Result{Eigenvalues: make([]float64, k), Vectors: mat.NewDense(n, k, nil),
		Residuals: make([]float64, k), Converged: make([]bool, k), Passes: st.Pass, FastPasses: st.FastPasses,
		History: st.History, TraceSqEst: st.TraceSqEst, BlockSize: st.L}
	signs := make([]float64, k)
	for j := 0; j < k; j++ {
		res.Eigenvalues[j] = theta[j]
		var rs float64
		imax, vmax := 0, -1.0
		for i := 0; i < n; i++ {
			d := au.At(i, j) - theta[j]*u.At(i, j)
			rs += d * d
			if a := math.Abs(u.At(i, j)); a > vmax {
				imax, vmax = i, a
			}
		}
		res.Residuals[j] = math.Sqrt(rs)
		res.Converged[j] = res.Residuals[j] <= opt.Tol*math.Abs(theta[j])
		// Sign convention: the entry of largest magnitude is positive.
		sign := 1.0
		if u.At(imax, j) < 0 {
			sign = -1
		}
		signs[j] = sign
		for i := 0; i < n; i++ {
			res.Vectors.Set(i, j, sign*u.At(i, j))
		}
	}
	return res, signs
}

func relResiduals(u, au *mat.Dense, theta []float64, k int) []float64 {
	n, _ := u.Dims()
	out := make([]float64, k)
	for j := 0; j < k; j++ {
		var rs float64
		for i := 0; i < n; i++ {
			d := au.At(i, j) - theta[j]*u.At(i, j)
			rs += d * d
		}
		out[j] = math.Sqrt(rs) / math.Max(math.Abs(theta[j]), 1e-300)
	}
	return out
}

func allBelow(v []float64, tol float64) bool {
	for _, x := range v {
		if !(x <= tol) {
			return false
		}
	}
	return true
}

func maxOf(v []float64) float64 {
	m := 0.0
	for _, x := range v {
		m = math.Max(m, x)
	}
	return m
}

// rayleighRitz takes an orthonormal basis split in blocks B = [B1 B2 ...]
// with their images KB, forms H = B^T K B (symmetrized), and returns the
// top l Ritz vectors U = B V, their images KU = KB V, Ritz values and V.
// The block products B_i^T KB_j, and then U and KU by two fixed halves of
// the rows, are computed on up to threads goroutines. The split does not
// depend on threads, so neither do the numbers; and gonum computes each
// element of a product alone, so the halves give the unsplit product's
// numbers (TestRayleighRitzHalves).
func rayleighRitz(b, kb []*mat.Dense, l, threads int) (u, ku *mat.Dense, theta []float64, v *mat.Dense) {
	n, _ := b[0].Dims()
	widths := make([]int, len(b))
	tot := 0
	for i, m := range b {
		_, c := m.Dims()
		widths[i] = c
		tot += c
	}
	h := mat.NewSymDense(tot, nil)
	full := mat.NewDense(tot, tot, nil)
	blks := make([]mat.Dense, len(b)*len(kb))
	var prods []func()
	for i := range b {
		for j := range kb {
			prods = append(prods, func() { blks[i*len(kb)+j].Mul(b[i].T(), kb[j]) })
		}
	}
	parallel(threads, prods...)
	ro := 0
	for i := range b {
		co := 0
		for j := range kb {
			blk := &blks[i*len(kb)+j]
			for r := 0; r < widths[i]; r++ {
				for c := 0; c < widths[j]; c++ {
					full.Set(ro+r, co+c, blk.At(r, c))
				}
			}
			co += widths[j]
		}
		ro += widths[i]
	}
	for r := 0; r < tot; r++ {
		for c := r; c < tot; c++ {
			h.SetSym(r, c, 0.5*(full.At(r, c)+full.At(c, r)))
		}
	}
	var es mat.EigenSym
	if !es.Factorize(h, true) {
		panic("randsvd: symmetric eigendecomposition failed") // only on NaN input
	}
	vals := es.Values(nil)
	var vecs mat.Dense
	es.VectorsTo(&vecs)
	order := make([]int, tot)
	for i := range order {
		order[i] = i
	}
	sort.SliceStable(order, func(x, y int) bool { return vals[order[x]] > vals[order[y]] })
	l = min(l, tot)
	v = mat.NewDense(tot, l, nil)
	theta = make([]float64, l)
	for j := 0; j < l; j++ {
		theta[j] = vals[order[j]]
		for r := 0; r < tot; r++ {
			v.Set(r, j, vecs.At(r, order[j]))
		}
	}
	u = mat.NewDense(n, l, nil)
	ku = mat.NewDense(n, l, nil)
	// U = sum_i B_i V_i and KU = sum_i KB_i V_i, in block order, over two
	// halves of the rows (each element is the same sum either way), with
	// one temporary of half the rows each: as much memory as one N x l
	// temporary, as in serial.
	half := func(r0, r1 int) func() {
		return func() {
			if r0 == r1 {
				return
			}
			var t mat.Dense
			for _, p := range [2]struct {
				dst *mat.Dense
				src []*mat.Dense
			}{{u, b}, {ku, kb}} {
				d := p.dst.Slice(r0, r1, 0, l).(*mat.Dense)
				ro := 0
				for i := range p.src {
					vi := v.Slice(ro, ro+widths[i], 0, l)
					t.Mul(p.src[i].Slice(r0, r1, 0, widths[i]), vi)
					addTo(d, &t)
					ro += widths[i]
				}
			}
		}
	}
	parallel(threads, half(0, n/2), half(n/2, n))
	return u, ku, theta, v
}

// addTo sets d += t element by element, as d.Add(d, t) does, without
// gonum's element-wise access to views (most of a Rayleigh-Ritz step's
// time before).
func addTo(d, t *mat.Dense) {
	dr, tr := d.RawMatrix(), t.RawMatrix()
	for r := 0; r < dr.Rows; r++ {
		dd := dr.Data[r*dr.Stride : r*dr.Stride+dr.Cols]
		tt := tr.Data[r*tr.Stride : r*tr.Stride+dr.Cols]
		for c, v := range tt {
			dd[c] += v
		}
	}
}

// parallel runs fns on up to threads goroutines and waits. Each fn
// writes only its own results.
func parallel(threads int, fns ...func()) {
	var g errgroup.Group
	g.SetLimit(max(1, threads))
	for _, f := range fns {
		g.Go(func() error { f(); return nil })
	}
	g.Wait()
}

type orthOpts struct {
	against *mat.Dense // orthogonalize against these orthonormal columns too
	refill  *rand.Rand // replaces columns that vanish (rank deficiency)
}

// orthonormalizeWith orthonormalizes the columns of q in place by
// Gram-Schmidt with one reorthogonalization (Giraud et al. 2005: "twice is
// enough"). Against o.against, when given, it is block classical
// Gram-Schmidt twice (BCGS2, Barlow & Smoktunowicz 2013, Numer Math
// 123:395): each round projects q off the whole basis with two products
// and then orthonormalizes q's columns among themselves by modified
// Gram-Schmidt, so the second round also removes what the first round's
// own Gram-Schmidt put back along the basis. Without a basis it is modified
// Gram-Schmidt with each projection done twice. When aq (the image K q)
// is given, the same column operations are applied to it, so it stays K q.
// A column that vanishes (below 1e-10 of its norm before) is replaced
// from o.refill and projected out column by column.
func orthonormalizeWith(q, aq *mat.Dense, o *orthOpts) error {
	_, l := q.Dims()
	norm0 := make([]float64, l)
	for j := range norm0 {
		norm0[j] = mat.Norm(q.ColView(j), 2)
	}
	var against blas64.General
	var coef blas64.General
	rounds, inner := 1, 2
	if o != nil && o.against != nil {
		against = o.against.RawMatrix()
		coef = blas64.General{Rows: against.Cols, Cols: l, Stride: l, Data: make([]float64, against.Cols*l)}
		rounds, inner = 2, 1
	}
	cols := make([][]float64, l)
	var acols [][]float64
	if aq != nil {
		acols = make([][]float64, l)
	}
	for round := 0; round < rounds; round++ {
		if against.Cols > 0 {
			// coef = A^T q; q -= A coef (no N x l temporary).
			qm := q.RawMatrix()
			blas64.Gemm(blas.Trans, blas.NoTrans, 1, against, qm, 0, coef)
			blas64.Gemm(blas.NoTrans, blas.NoTrans, -1, against, coef, 1, qm)
		}
		for j := range cols {
			cols[j] = mat.Col(cols[j], j, q)
			if aq != nil {
				acols[j] = mat.Col(acols[j], j, aq)
			}
		}
		for j := 0; j < l; j++ {
			v := cols[j]
			for attempt := 0; ; attempt++ {
				passes := inner
				if attempt > 0 {
					passes = 2 // a refilled column, against A and the others
				}
				for pass := 0; pass < passes; pass++ {
					if attempt > 0 {
						// A refilled column still has its part along A.
						for c := 0; c < against.Cols; c++ {
							p := mat.Col(nil, c, o.against)
							floats.AddScaled(v, -floats.Dot(p, v), p)
						}
					}
					for i := 0; i < j; i++ {
						c := floats.Dot(cols[i], v)
						floats.AddScaled(v, -c, cols[i])
						if acols != nil {
							floats.AddScaled(acols[j], -c, acols[i])
						}
					}
				}
				nv := math.Sqrt(floats.Dot(v, v))
				if nv > 1e-10*norm0[j] && nv > 1e-300 {
					floats.Scale(1/nv, v)
					if acols != nil {
						floats.Scale(1/nv, acols[j])
					}
					if round == 0 {
						norm0[j] = 1 // the second round starts from unit columns
					}
					break
				}
				if acols != nil {
					return errors.New("start block is rank deficient")
				}
				if o == nil || o.refill == nil || attempt > 3 {
					return errors.New("block became rank deficient")
				}
				for i := range v {
					v[i] = o.refill.NormFloat64()
				}
				norm0[j] = math.Sqrt(floats.Dot(v, v))
			}
		}
		for j := 0; j < l; j++ {
			q.SetCol(j, cols[j])
			if aq != nil {
				aq.SetCol(j, acols[j])
			}
		}
	}
	return nil
}
