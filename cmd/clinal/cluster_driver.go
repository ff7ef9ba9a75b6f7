package main

import (
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"syscall"
	"time"

	"golang.org/x/sync/errgroup"

	"github.com/clinal/clinal/matrixio"
	"github.com/clinal/clinal/qc"
	"github.com/clinal/clinal/randsvd"
)

// driverOptions configure the driver of a cluster run.
type driverOptions struct {
	dir runDir
	// local runs the shard steps in this process instead of srun steps.
	local     bool
	localJobs int // shards computed at once in local mode
	threads   int // driver threads (Rayleigh-Ritz, loadings) and, split over localJobs, local steps
	// stepRetries is how often a pass's missing shards are relaunched
	// after a failed step before the driver gives up.
	stepRetries int
	exe         string // this program, for srun
	job         string // SLURM_JOB_ID, for the events
	// exitAfterPass, when > 0, makes the driver stop as if killed right
	// after checkpointing that pass (testing hook, from
	// CLINAL_CLUSTER_EXIT_AFTER_PASS).
	exitAfterPass int
	stepDelay     time.Duration // local steps: see shardWorker.delay
	// Hooks for tests: stepHook runs before each local shard computation,
	// afterLaunch after each launch of a pass's shards, afterReduce after
	// each pass is reduced (before its checkpoint).
	stepHook    func(pass, shard int) error
	afterLaunch func(pass int)
	afterReduce func(pass int) error
}

// errSimulatedKill is returned when the exit-after-pass hook fires.
var errSimulatedKill = errors.New("stopped after the pass as asked by CLINAL_CLUSTER_EXIT_AFTER_PASS (fault test)")

// clusterApplier is the randsvd.Applier of the driver: each Apply is one
// pass, computed as shard partials by steps and reduced in shard order, so
// the sum (and so every number after it) depends on S but not on which
// task ran when or on how many threads each had.
type clusterApplier struct {
	d      runDir
	m      *clusterManifest
	opt    *driverOptions
	launch func(ctx context.Context, pass int, shards []int) error
	pass   int // last pass reduced (or resumed from)
	// trace sums the shards' trace contributions of the last reduced pass.
	trace float64
	buf   []float64
	phase string // for the events: "solve" or "trace-sq"
}

func (a *clusterApplier) Dim() int { return a.m.SamplesUsed }

func (a *clusterApplier) Apply(ctx context.Context, x, y []float64, l int) error {
	return a.apply(ctx, x, y, l, false)
}

// ApplyFast is a pass whose steps use the operator's fast pass (float32
// tables): the block file says so, and the partials' digests depend on it.
func (a *clusterApplier) ApplyFast(ctx context.Context, x, y []float64, l int) error {
	return a.apply(ctx, x, y, l, true)
}

func (a *clusterApplier) apply(ctx context.Context, x, y []float64, l int, fast bool) error {
	m := a.m
	n, S := m.SamplesUsed, len(m.Shards)
	if l < 1 || l > maxBlockVector || len(x) != n*l || len(y) != n*l {
		return fmt.Errorf("cluster: shapes x %d, y %d for %d x %d", len(x), len(y), n, l)
	}
	p := a.pass + 1
	t0 := time.Now()
	if err := os.MkdirAll(a.d.passDir(p), 0o777); err != nil {
		return fmt.Errorf("cluster: %w", err)
	}
	// X is a deterministic function of the last checkpoint, so a block left
	// by an interrupted driver is the same block: keep it (and the partials
	// made from it) when its digest agrees.
	var digest string
	if _, _, _, have, err := readBlock(a.d.xPath(p), p, n); err == nil && have == blockDigest(p, n, l, x, fast) {
		digest = have
	} else {
		var err error
		if digest, err = writeBlock(a.d.xPath(p), p, n, l, x, fast); err != nil {
			return fmt.Errorf("cluster: %w", err)
		}
	}
	if len(a.buf) != n*l {
		a.buf = make([]float64, n*l)
	}
	want := func(s int) partialHeader {
		return partialHeader{Pass: p, Shard: s, Shards: S, N: n, L: l, XDigest: digest}
	}
	present := func(s int) bool {
		_, err := os.Stat(a.d.partialPath(p, s))
		return err == nil
	}
	ev := passEvent{Event: "pass", Pass: p, Job: a.opt.job, Phase: a.phase, Width: l}
	// Partials already there (a resumed pass) are checked in full; a bad
	// one is removed and recomputed.
	var todo []int
	for s := 0; s < S; s++ {
		if present(s) {
			if _, err := readPartial(a.d.partialPath(p, s), want(s), a.buf); err == nil {
				ev.Reused = append(ev.Reused, s)
				continue
			}
			os.Remove(a.d.partialPath(p, s))
		}
		todo = append(todo, s)
	}
	var lastErr error
	// failed records what a failed pass did compute (its partials stay for
	// the resumed run) and returns err.
	failed := func(err error) error {
		ev.Event, ev.Message = "pass-failed", oneLine(err.Error())
		sort.Ints(ev.Computed)
		appendEvent(a.d, ev)
		return err
	}
	var t1 time.Time
	trace := 0.0
	for {
		// Launch the missing shards; a partial's presence means it is
		// complete (written under a temporary name, then renamed), and its
		// checksum is verified when it is summed.
		for len(todo) > 0 {
			if ev.Attempts > a.opt.stepRetries {
				return failed(fmt.Errorf("cluster: pass %d: shards %s still missing after %d attempt(s): %w", p, intList(todo), ev.Attempts, lastErr))
			}
			ev.Attempts++
			lastErr = a.launch(ctx, p, todo)
			if a.opt.afterLaunch != nil {
				a.opt.afterLaunch(p)
			}
			var left []int
			for _, s := range todo {
				if present(s) {
					ev.Computed = append(ev.Computed, s)
				} else {
					left = append(left, s)
				}
			}
			todo = left
			if ctx.Err() != nil {
				return failed(ctx.Err())
			}
			if lastErr != nil && matrixio.IsBadInput(lastErr) {
				return failed(lastErr)
			}
			if lastErr == nil && len(todo) > 0 {
				lastErr = fmt.Errorf("the step ended without writing them")
			}
		}
		// Reduce in shard order: Y = P_0 + P_1 + ... + P_{S-1}.
		t1 = time.Now()
		clear(y)
		trace = 0
		var bad []int
		for s := 0; s < S; s++ {
			h, err := readPartial(a.d.partialPath(p, s), want(s), a.buf)
			if err != nil {
				bad = append(bad, s)
				lastErr = err
				os.Remove(a.d.partialPath(p, s))
				continue
			}
			for i, v := range a.buf {
				y[i] += v
			}
			trace += h.Trace
			ev.ShardSeconds = math.Max(ev.ShardSeconds, h.Seconds)
		}
		if len(bad) == 0 {
			break
		}
		todo = bad
	}
	sort.Ints(ev.Computed)
	ev.StepSeconds = t1.Sub(t0).Seconds()
	ev.ReduceSeconds = time.Since(t1).Seconds()
	a.trace = trace
	a.pass = p
	if err := appendEvent(a.d, ev); err != nil {
		return err
	}
	if a.opt.afterReduce != nil {
		return a.opt.afterReduce(p)
	}
	return nil
}

func intList(v []int) string {
	s := make([]string, len(v))
	for i, x := range v {
		s[i] = fmt.Sprint(x)
	}
	return strings.Join(s, ",")
}

// lockRun takes an exclusive lock on RUNDIR/driver.lock so two drivers
// never work on one run; the lock goes with the process, however it ends.
func lockRun(d runDir) (*os.File, error) {
	f, err := os.OpenFile(d.path(lockName), os.O_RDWR|os.O_CREATE, 0o666)
	if err != nil {
		return nil, fmt.Errorf("cluster: %w", err)
	}
	if err := syscall.Flock(int(f.Fd()), syscall.LOCK_EX|syscall.LOCK_NB); err != nil {
		f.Close()
		if errors.Is(err, syscall.EWOULDBLOCK) {
			return nil, fmt.Errorf("cluster: another driver is running on %s (lock %s held)", string(d), d.path(lockName))
		}
		return nil, fmt.Errorf("cluster: lock %s: %w", d.path(lockName), err)
	}
	return f, nil
}

// removePassDirs deletes the pass directories of passes <= upTo (their
// partials are folded into the checkpoint), or all of them when upTo < 0.
func removePassDirs(d runDir, upTo int) {
	dirs, _ := filepath.Glob(filepath.Join(globEscape(string(d)), "pass-*"))
	for _, p := range dirs {
		var k int
		if _, err := fmt.Sscanf(filepath.Base(p), "pass-%d", &k); err == nil && (upTo < 0 || k <= upTo) {
			os.RemoveAll(p)
		}
	}
}

// globEscape escapes the metacharacters of filepath.Match in a literal path.
func globEscape(s string) string {
	var b strings.Builder
	for _, r := range s {
		if strings.ContainsRune(`*?[\`, r) {
			b.WriteByte('\\')
		}
		b.WriteRune(r)
	}
	return b.String()
}

// clusterOutcome is what runDriver did.
type clusterOutcome struct {
	AlreadyDone bool
	ResumedFrom int // pass of the checkpoint resumed from (0: fresh start)
	Passes      int
	Result      *randsvd.PCAResult
}

// runDriver runs (or resumes) the whole computation of a run directory:
// Solve with the cluster applier, a checkpoint after every pass, then the
// outputs of clinal pca, and done.json last.
func runDriver(ctx context.Context, e *env, opt *driverOptions) (*clusterOutcome, error) {
	t0 := time.Now()
	ph := newPhases()
	d := opt.dir
	ph.start("open")
	lock, err := lockRun(d)
	if err != nil {
		return nil, err
	}
	defer lock.Close()
	if dn, err := readDone(d); err == nil {
		fmt.Fprintf(e.stderr, "cluster: %s is already complete (%d passes, %s); outputs %s\n", string(d), dn.Passes, dn.StopReason, strings.Join(dn.Outputs, ", "))
		return &clusterOutcome{AlreadyDone: true, Passes: dn.Passes}, nil
	}
	w, err := openShardWorker(d, 0)
	if err != nil {
		return nil, err
	}
	defer w.close()
	m, st, sel := w.m, w.st, w.sel
	threads := max(1, opt.threads)
	plan, err := randsvd.PlanMemory(st, m.PCA.K, m.PCA.Oversample, threads, m.PCA.Memory)
	if err != nil {
		return nil, err
	}
	op, err := randsvd.NewOperator(st, randsvd.OperatorOptions{SampleKept: sel.SampleKept, MarkerKept: sel.MarkerKept,
		Counts: sel.Counts, Scaling: randsvd.Scaling(m.PCA.Scaling), Threads: threads, Buffers: plan.Buffers})
	if err != nil {
		return nil, err
	}
	if op.Dim() != m.SamplesUsed || op.Markers() != m.MarkersUsed {
		return nil, matrixio.BadInput("%s: operator of %d samples x %d markers, the manifest planned %d x %d", d.path(manifestName), op.Dim(), op.Markers(), m.SamplesUsed, m.MarkersUsed)
	}
	a := &clusterApplier{d: d, m: m, opt: opt, phase: "solve"}
	if opt.local {
		jobs := max(1, min(opt.localJobs, len(m.Shards)))
		w.threads = max(1, threads/jobs)
		w.delay, w.hook = opt.stepDelay, opt.stepHook
		a.launch = func(ctx context.Context, pass int, shards []int) error {
			g, gctx := errgroup.WithContext(ctx)
			g.SetLimit(jobs)
			for _, s := range shards {
				g.Go(func() error {
					_, err := w.compute(gctx, pass, s)
					return err
				})
			}
			return g.Wait()
		}
	} else {
		if opt.exe == "" {
			return nil, fmt.Errorf("cluster: cannot find this program's path for srun")
		}
		a.launch = func(ctx context.Context, pass int, shards []int) error {
			return srunStep(ctx, e, opt.exe, d, m, pass, shards)
		}
	}
	sopt := randsvd.SolveOptions{K: m.PCA.K, Oversample: m.PCA.Oversample, Tol: m.PCA.Tol, MaxPasses: m.PCA.MaxPasses,
		Seed: m.PCA.Seed, VarTol: m.PCA.VarTol, Exact: m.PCA.ExactPasses || m.Float, // a float store's passes are all exact, as in RunPCA
		Threads: threads}
	// As randsvd.RunPCA: the bulk stop needs trace(K), exact from the counts
	// for hard calls and unknown before the first pass for float stores.
	if tr := op.Trace(); !math.IsNaN(tr) {
		sopt.BulkEdge = randsvd.MPUpperEdgeScaled(tr, op.Dim(), op.Markers())
	}
	out := &clusterOutcome{}
	state, err := randsvd.ReadCheckpoint(d.path(stateName), m.Key)
	if err != nil {
		return nil, fmt.Errorf("cluster: %w (the run directory's state does not fit its manifest)", err)
	}
	if state != nil {
		sopt.Resume = state
		a.pass = state.Pass
		out.ResumedFrom = state.Pass
		fmt.Fprintf(e.stderr, "cluster: resuming %s after pass %d\n", string(d), state.Pass)
	}
	removePassDirs(d, a.pass) // leftovers of passes already in the checkpoint
	if err := appendEvent(d, passEvent{Event: "start", Job: opt.job, Pass: a.pass}); err != nil {
		return nil, err
	}
	sopt.Pass = func(p int, rel float64) {
		fmt.Fprintf(e.stderr, "cluster: pass %d reduced (%d shards), max relative residual %.3g\n", p, len(m.Shards), rel)
	}
	sopt.Checkpoint = func(s *randsvd.State) error {
		if m.Float && s.Pass == 1 {
			// trace(K) of a float store is known from the first pass only.
			if err := matrixio.WriteJSON(d.path(traceName), map[string]float64{"trace": a.trace}); err != nil {
				return err
			}
		}
		if err := randsvd.WriteCheckpoint(d.path(stateName), m.Key, s); err != nil {
			return err
		}
		removePassDirs(d, s.Pass)
		if opt.exitAfterPass > 0 && s.Pass == opt.exitAfterPass {
			return errSimulatedKill
		}
		return nil
	}
	ph.start("solve")
	res, err := randsvd.Solve(ctx, a, sopt)
	if err != nil {
		appendEvent(d, passEvent{Event: "failed", Job: opt.job, Pass: a.pass, Message: oneLine(err.Error())})
		return nil, err
	}
	trace := op.Trace()
	if m.Float {
		if trace, err = readTrace(d); err != nil {
			return nil, err
		}
	}
	pr := &randsvd.PCAResult{Samples: op.KeptSamples(), Eigenvalues: res.Eigenvalues, Residuals: res.Residuals,
		Converged: res.Converged, Scores: res.Vectors, Trace: trace, TraceSqEst: res.TraceSqEst,
		Markers: op.Markers(), Passes: res.Passes, FastPasses: res.FastPasses, StopReason: res.StopReason, BlockSize: res.BlockSize, KrylovBlock: res.KrylovBlock,
		History: res.History, Dropped: op.Dropped(), Plan: plan, Basis: res.Basis, Rotation: res.Rotation}
	pr.MPEdge = randsvd.MPUpperEdgeScaled(pr.Trace, op.Dim(), op.Markers())
	ph.start("tracy-widom")
	if err := clusterTracyWidom(ctx, a, op, m, pr); err != nil {
		appendEvent(d, passEvent{Event: "failed", Job: opt.job, Pass: a.pass, Message: oneLine(err.Error())})
		return nil, err
	}
	o := m.PCA.options(m.Prefix, threads)
	if o.autoK {
		k := max(1, randsvd.SignificantCount(pr.TW, o.twAlpha))
		fmt.Fprintf(e.stderr, "cluster: -k auto: %d of %d PCs significant at alpha %g (Tracy-Widom, n' %s)\n", k, o.k, o.twAlpha, pr.TWMethod)
		pr.Truncate(k)
		o.k = k
	}
	po, err := writePCAOutputs(ctx, e, st, op, pr, sel, o, ph, t0)
	if err != nil {
		return nil, err
	}
	if err := matrixio.WriteJSON(d.path(doneName), clusterDone{Passes: res.Passes, StopReason: res.StopReason,
		Outputs: po.files, Finished: time.Now().UTC().Format(time.RFC3339)}); err != nil {
		return nil, err
	}
	removePassDirs(d, -1)
	appendEvent(d, passEvent{Event: "done", Job: opt.job, Pass: res.Passes})
	out.Passes, out.Result = res.Passes, pr
	return out, nil
}

// traceSqWidth is the block width of the exact trace(K^2) passes. Each of
// those passes is an srun step, so they go 128 columns at a time
// (randsvd.RunPCA uses 32 in one process): the sum is the same up to
// rounding.
const traceSqWidth = 128

// clusterTracyWidom adds the Tracy-Widom test to the result as
// randsvd.RunPCA does, computing trace(K^2), when exact, with sharded
// passes (resumable like the solver's: their partials stay until done).
func clusterTracyWidom(ctx context.Context, a *clusterApplier, op *randsvd.Operator, m *clusterManifest, pr *randsvd.PCAResult) error {
	a.phase = "trace-sq"
	return randsvd.AddTracyWidom(ctx, a, op.Dim(), op.Markers(), m.PCA.TW, 0, traceSqWidth, pr)
}

func readTrace(d runDir) (float64, error) {
	var v map[string]float64
	b, err := os.ReadFile(d.path(traceName))
	if err == nil {
		err = json.Unmarshal(b, &v)
	}
	if err != nil {
		return 0, fmt.Errorf("cluster: trace of the first pass: %w", err)
	}
	return v["trace"], nil
}

// selectionFor is the QC selection of a plan: a fresh qc.Run with the
// filter flags, or the saved outputs of clinal qc with --qc (fs, when
// given, tells whether filter flags were also set).
func selectionFor(ctx context.Context, fs *flag.FlagSet, st *matrixio.Store, o *pcaOptions) (*qc.Selection, error) {
	q := o.qc
	q.Threads = o.threads
	return qcSelection(ctx, fs, st, q, o.qcPrefix)
}
