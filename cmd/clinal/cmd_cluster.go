package main

import (
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"time"

	"github.com/clinal/clinal/matrixio"
	"github.com/clinal/clinal/randsvd"
)

// runCluster: clinal cluster plan|submit|run|step|status|resume ...
//
// A cluster run spreads the passes of clinal pca over a Slurm allocation:
// the store is split into S marker shards of whole chunks, each pass is one
// srun step of S tasks writing the partials Z_s^T Z_s X / M to the run
// directory, and the driver (the batch script) sums them in shard order,
// runs the solver's Rayleigh-Ritz step, checkpoints and launches the next
// pass. The outputs are those of clinal pca.
func runCluster(ctx context.Context, e *env, args []string) error {
	subs := map[string]func(context.Context, *env, []string) error{
		"plan": runClusterPlan, "submit": runClusterSubmit, "run": runClusterRun, "step": runClusterStep,
		"status": runClusterStatus, "resume": runClusterResume,
	}
	if len(args) == 0 || subs[args[0]] == nil {
		got := ""
		if len(args) > 0 {
			got = fmt.Sprintf(" %q", args[0])
		}
		return usage("cluster: unknown or missing subcommand%s: want plan, submit, run, step, status or resume "+
			"(clinal cluster plan STORE -k K -o PREFIX --shards S --run-dir RUNDIR; clinal cluster submit RUNDIR)", got)
	}
	return subs[args[0]](ctx, e, args[1:])
}

// oneRunDir checks for a single RUNDIR argument and makes it absolute
// (steps and the driver may run in another working directory).
func oneRunDir(cmd string, pos []string) (runDir, error) {
	if len(pos) != 1 {
		return "", usage("cluster %s: want one RUNDIR argument, got %d", cmd, len(pos))
	}
	abs, err := filepath.Abs(pos[0])
	if err != nil {
		return "", usage("cluster %s: %v", cmd, err)
	}
	return runDir(abs), nil
}

// clusterPlanOptions are the flags of clinal cluster plan.
type clusterPlanOptions struct {
	pca         pcaOptions
	shards      int
	runDir      string
	cpusPerTask int
}

// runClusterPlan: clinal cluster plan STORE -k K -o PREFIX --shards S
// --run-dir RUNDIR [--cpus-per-task C] [pca flags]. It runs QC once,
// writes the run directory and prints the memory and time of one task.
func runClusterPlan(ctx context.Context, e *env, args []string) error {
	o := clusterPlanOptions{pca: pcaOptions{k: 10}}
	fs := flag.NewFlagSet("cluster plan", flag.ContinueOnError)
	pcaFlags(fs, &o.pca)
	if fs.Lookup("min-maf") == nil {
		addFilterFlags(fs, &o.pca.qc)
	}
	fs.IntVar(&o.shards, "shards", 0, "marker shards = tasks of each srun step (whole chunks each)")
	fs.StringVar(&o.runDir, "run-dir", "", "run directory on a filesystem all nodes see (created)")
	fs.IntVar(&o.cpusPerTask, "cpus-per-task", 1, "CPUs (threads) of each task")
	pos, err := parseArgs(fs, args)
	if err != nil {
		return err
	}
	o.pca.fs = fs
	if o.pca.autoK {
		if o.pca.maxAutoK < 1 || o.pca.tw == "off" || !(o.pca.twAlpha > 0 && o.pca.twAlpha < 1) {
			return usage("cluster plan: -k auto needs --k-max >= 1, --tw not off and 0 < --tw-alpha < 1")
		}
		o.pca.k = o.pca.maxAutoK
	}
	switch o.pca.tw {
	case "", "auto", "exact", "approx", "off":
	default:
		return usage("cluster plan: --tw %q: want auto, exact, approx or off", o.pca.tw)
	}
	switch {
	case len(pos) != 1:
		return usage("cluster plan: want one STORE argument, got %d (clinal cluster plan STORE -k K -o PREFIX --shards S --run-dir RUNDIR)", len(pos))
	case o.pca.out == "":
		return usage("cluster plan: -o PREFIX is required")
	case o.runDir == "":
		return usage("cluster plan: --run-dir RUNDIR is required")
	case o.shards < 1:
		return usage("cluster plan: --shards %d: want at least 1", o.shards)
	case o.pca.k < 1:
		return usage("cluster plan: -k %d: want at least 1", o.pca.k)
	case o.cpusPerTask < 1:
		return usage("cluster plan: --cpus-per-task %d: want at least 1", o.cpusPerTask)
	case o.pca.threads < 1:
		return usage("cluster plan: --threads %d: want at least 1", o.pca.threads)
	}
	switch randsvd.Scaling(o.pca.scaling) {
	case randsvd.ScalePatterson, randsvd.ScaleCenter, randsvd.ScaleZ:
	default:
		return usage("cluster plan: --scaling %q: want patterson, center or zscore", o.pca.scaling)
	}
	m, err := planRun(ctx, pos[0], &o)
	if err != nil {
		return err
	}
	return printPlan(ctx, e, m, runDir(o.runDir))
}

// planRun does the work of clinal cluster plan and returns the manifest.
func planRun(ctx context.Context, storePath string, o *clusterPlanOptions) (*clusterManifest, error) {
	abs := func(p string) (string, error) {
		if p == "" {
			return "", nil
		}
		return filepath.Abs(p)
	}
	var err error
	for _, p := range []*string{&storePath, &o.pca.out, &o.runDir, &o.pca.labels, &o.pca.qcPrefix,
		&o.pca.qc.KeepSamples, &o.pca.qc.DropSamples, &o.pca.qc.ExcludeRegions} {
		if *p, err = abs(*p); err != nil {
			return nil, usage("cluster plan: %v", err)
		}
	}
	d := runDir(o.runDir)
	if _, err := os.Stat(d.path(manifestName)); err == nil {
		return nil, usage("cluster plan: %s already holds a planned run; use clinal cluster resume, or plan into a new directory", o.runDir)
	}
	st, err := matrixio.Open(storePath)
	if err != nil {
		return nil, err
	}
	defer st.Close()
	sel, err := selectionFor(ctx, o.pca.fs, st, &o.pca)
	if err != nil {
		return nil, err
	}
	full, err := randsvd.NewOperator(st, randsvd.OperatorOptions{SampleKept: sel.SampleKept, MarkerKept: sel.MarkerKept,
		Counts: sel.Counts, Scaling: randsvd.Scaling(o.pca.scaling)})
	if err != nil {
		return nil, err
	}
	if o.pca.k > full.Dim() {
		return nil, usage("cluster plan: -k %d exceeds the %d samples kept", o.pca.k, full.Dim())
	}
	mem, err := randsvd.PlanMemory(st, o.pca.k, o.pca.oversample, o.cpusPerTask, int64(o.pca.memory))
	if err != nil {
		return nil, err
	}
	shards := st.Shards(o.shards)
	m := &clusterManifest{Format: clusterFormat, Version: version, Created: time.Now().UTC().Format(time.RFC3339),
		Store: storePath, StoreBytes: st.Size(), Fingerprint: st.Fingerprint(), Prefix: o.pca.out,
		Key: checkpointKey(st, sel, &o.pca), SamplesUsed: full.Dim(), MarkersUsed: full.Markers(),
		Float: st.Codec() == matrixio.CodecFloat32, BlockSize: mem.BlockSize, CPUsPerTask: o.cpusPerTask,
		MemoryPerTask: mem.TotalBytes, DriverMemory: mem.SolverBytes, ChunkBuffers: mem.Buffers, PCA: clusterPCAFrom(&o.pca)}
	for _, sh := range shards {
		m.Shards = append(m.Shards, clusterShard{FirstChunk: sh.FirstChunk, EndChunk: sh.EndChunk,
			FirstMarker: sh.FirstMarker, EndMarker: sh.EndMarker})
	}
	for _, j := range full.KeptMarkers() {
		c := st.ChunkOf(j)
		for i := range m.Shards {
			if c >= m.Shards[i].FirstChunk && c < m.Shards[i].EndChunk {
				m.Shards[i].MarkersUsed++
			}
		}
	}
	if err := os.MkdirAll(o.runDir, 0o777); err != nil {
		return nil, fmt.Errorf("cluster plan: %w", err)
	}
	if sel.Report != nil {
		if err := matrixio.WriteJSON(d.path(qcReportName), sel.Report); err != nil {
			return nil, err
		}
	}
	dropped := sel.NumKeptSamples() < st.NumSamples()
	if m.SelectionSHA256, err = writeSelection(d.path(selectionName), sel, st, dropped); err != nil {
		return nil, err
	}
	// The manifest is written last: its presence means the plan is complete.
	if err := matrixio.WriteJSON(d.path(manifestName), m); err != nil {
		return nil, err
	}
	return m, nil
}

// printPlan prints the shards, the memory of one task (randsvd.PlanMemory,
// the cost model of --memory) and its time per pass, extrapolated from
// one chunk timed here.
func printPlan(ctx context.Context, e *env, m *clusterManifest, d runDir) error {
	w, err := openShardWorker(d, min(m.CPUsPerTask, runtime.NumCPU()))
	if err != nil {
		return err
	}
	defer w.close()
	perChunk, measured := timeOneChunk(ctx, w)
	most := 0
	for _, sh := range m.Shards {
		most = max(most, sh.EndChunk-sh.FirstChunk)
	}
	fmt.Fprintf(e.stdout, "cluster plan: %d samples x %d markers used, k=%d (block %d), %d shards of at most %d chunks, %d CPU(s) per task\n",
		m.SamplesUsed, m.MarkersUsed, m.PCA.K, m.BlockSize, len(m.Shards), most, m.CPUsPerTask)
	fmt.Fprintf(e.stdout, "per task: memory %s from the --memory cost model, plus %s headroom for the driver's blocks (asks %d MiB per CPU)",
		randsvd.FormatBytes(m.MemoryPerTask), randsvd.FormatBytes(m.DriverMemory), memPerCPUMiB(m))
	if measured {
		fmt.Fprintf(e.stdout, ", about %.2f s per pass (one chunk took %.1f ms here with %d thread(s))", perChunk.Seconds()*float64(most), 1e3*perChunk.Seconds(), w.threads)
	}
	fmt.Fprintf(e.stdout, "; at most %d passes\n", m.PCA.MaxPasses)
	fmt.Fprintf(e.stdout, "run directory %s; outputs %s.*; next: clinal cluster submit %s\n", string(d), m.Prefix, shellQuote(string(d)))
	return nil
}

// timeOneChunk applies the operator of the first chunk that holds used
// markers to a random block and returns the wall time of a warm
// application.
func timeOneChunk(ctx context.Context, w *shardWorker) (time.Duration, bool) {
	m := w.m
	for _, sh := range m.Shards {
		if sh.MarkersUsed == 0 {
			continue
		}
		for c := sh.FirstChunk; c < sh.EndChunk; c++ {
			op, err := randsvd.NewOperator(w.st, randsvd.OperatorOptions{SampleKept: w.sel.SampleKept, MarkerKept: w.sel.MarkerKept,
				Counts: w.sel.Counts, Scaling: randsvd.Scaling(m.PCA.Scaling), Threads: w.threads, Chunks: []int{c}})
			if err != nil || op.NumKeptMarkers() == 0 {
				continue
			}
			// At width l, the widest of a solve's passes (the iteration's
			// blocks are b <= l, the refinement K): a conservative time.
			n, l := op.Dim(), m.BlockSize
			r := rand.New(rand.NewPCG(1, 2))
			x := make([]float64, n*l)
			for i := range x {
				x[i] = r.NormFloat64()
			}
			y := make([]float64, n*l)
			// The second of two applications: the first pays for cold
			// caches and one-time set-up that a pass amortizes.
			var best time.Duration
			for rep := 0; rep < 2; rep++ {
				t0 := time.Now()
				if op.Apply(ctx, x, y, l) != nil {
					return 0, false
				}
				best = time.Since(t0)
			}
			return best, true
		}
	}
	return 0, false
}

// driverFlags registers the flags shared by run, submit --local and resume
// --local.
func driverFlags(fs *flag.FlagSet, o *driverOptions, local *bool) {
	fs.BoolVar(local, "local", false, "run the shard steps in this process instead of srun steps (no Slurm needed)")
	fs.IntVar(&o.localJobs, "local-jobs", 1, "with --local: shards computed at once")
	fs.IntVar(&o.threads, "threads", 0, "driver threads (default SLURM_CPUS_PER_TASK, else all CPUs); with --local split over --local-jobs")
	fs.IntVar(&o.stepRetries, "step-retries", 1, "relaunch a pass's missing shards this often after a failed step")
}

// finishDriverOptions fills what comes from the environment: Slurm's
// variables and the fault-test hooks.
func finishDriverOptions(o *driverOptions, local bool) error {
	o.local = local
	if o.threads < 1 {
		o.threads = envInt("SLURM_CPUS_PER_TASK", runtime.NumCPU())
	}
	if o.localJobs < 1 {
		return usage("cluster: --local-jobs %d: want at least 1", o.localJobs)
	}
	if o.stepRetries < 0 {
		return usage("cluster: --step-retries %d: want 0 or more", o.stepRetries)
	}
	o.job = os.Getenv("SLURM_JOB_ID")
	o.exitAfterPass = envInt("CLINAL_CLUSTER_EXIT_AFTER_PASS", 0)
	if v := os.Getenv("CLINAL_CLUSTER_STEP_DELAY"); v != "" {
		dl, err := time.ParseDuration(v)
		if err != nil {
			return usage("CLINAL_CLUSTER_STEP_DELAY=%q: %v", v, err)
		}
		o.stepDelay = dl
	}
	if !local {
		if o.job == "" {
			return usage("cluster run: not inside a Slurm allocation (no SLURM_JOB_ID): use clinal cluster submit, or --local")
		}
		exe, err := os.Executable()
		if err != nil {
			return fmt.Errorf("cluster run: %w", err)
		}
		o.exe = exe
	}
	return nil
}

func envInt(name string, def int) int {
	if v, err := strconv.Atoi(strings.TrimSpace(os.Getenv(name))); err == nil && v > 0 {
		return v
	}
	return def
}

// runClusterRun: clinal cluster run RUNDIR [--local]. The driver, run by
// the batch script inside the allocation (or here with --local).
func runClusterRun(ctx context.Context, e *env, args []string) error {
	var o driverOptions
	var local bool
	fs := flag.NewFlagSet("cluster run", flag.ContinueOnError)
	driverFlags(fs, &o, &local)
	pos, err := parseArgs(fs, args)
	if err != nil {
		return err
	}
	if o.dir, err = oneRunDir("run", pos); err != nil {
		return err
	}
	if err := finishDriverOptions(&o, local); err != nil {
		return err
	}
	_, err = runDriver(ctx, e, &o)
	return err
}

// runClusterStep: clinal cluster step RUNDIR --pass P [--shard S | --shards
// LIST]. One task of a pass's srun step: it computes the partial of its
// shard (SLURM_PROCID picks it, from LIST when given) unless a valid one is
// already there.
func runClusterStep(ctx context.Context, e *env, args []string) error {
	fs := flag.NewFlagSet("cluster step", flag.ContinueOnError)
	pass := fs.Int("pass", 0, "pass number (1, 2, ...)")
	shard := fs.Int("shard", -1, "shard to compute (default: SLURM_PROCID, or its entry in --shards)")
	list := fs.String("shards", "", "comma-separated shards; task SLURM_PROCID computes entry SLURM_PROCID")
	threads := fs.Int("threads", 0, "threads (default SLURM_CPUS_PER_TASK, else the manifest's cpus per task)")
	pos, err := parseArgs(fs, args)
	if err != nil {
		return err
	}
	d, err := oneRunDir("step", pos)
	if err != nil {
		return err
	}
	if *pass < 1 {
		return usage("cluster step: --pass %d: want 1 or more", *pass)
	}
	s := *shard
	if s < 0 {
		procid, err := strconv.Atoi(os.Getenv("SLURM_PROCID"))
		if err != nil || procid < 0 {
			return usage("cluster step: no --shard and no SLURM_PROCID (run it under srun, or give --shard)")
		}
		s = procid
		if *list != "" {
			f := strings.Split(*list, ",")
			if procid >= len(f) {
				return usage("cluster step: SLURM_PROCID %d but --shards lists %d", procid, len(f))
			}
			if s, err = strconv.Atoi(f[procid]); err != nil {
				return usage("cluster step: --shards %q: %v", *list, err)
			}
		}
	}
	t := *threads
	if t < 1 {
		t = envInt("SLURM_CPUS_PER_TASK", 0)
	}
	w, err := openShardWorker(d, t)
	if err != nil {
		return err
	}
	defer w.close()
	if v := os.Getenv("CLINAL_CLUSTER_STEP_DELAY"); v != "" {
		if w.delay, err = time.ParseDuration(v); err != nil {
			return usage("CLINAL_CLUSTER_STEP_DELAY=%q: %v", v, err)
		}
	}
	t0 := time.Now()
	computed, err := w.compute(ctx, *pass, s)
	if err != nil {
		return err
	}
	what := "reused the valid partial already there"
	if computed {
		what = fmt.Sprintf("computed in %.2f s with %d thread(s)", time.Since(t0).Seconds(), w.threads)
	}
	fmt.Fprintf(e.stdout, "cluster step: pass %d shard %d: %s\n", *pass, s, what)
	return nil
}

// submitFlags registers the Slurm options of submit and resume.
func submitFlags(fs *flag.FlagSet, s *submitSettings) {
	fs.StringVar(&s.Partition, "partition", s.Partition, "Slurm partition")
	fs.StringVar(&s.Time, "time", s.Time, "Slurm time limit of the job (e.g. 2:00:00)")
	fs.StringVar(&s.Account, "account", s.Account, "Slurm account")
	fs.StringVar(&s.QOS, "qos", s.QOS, "Slurm quality of service")
}

// runClusterSubmit: clinal cluster submit RUNDIR [--partition P] [--time
// T]: writes RUNDIR/job.sbatch and submits it (prints the job id), or with
// --local runs the driver here.
func runClusterSubmit(ctx context.Context, e *env, args []string) error {
	return submitOrResume(ctx, e, "submit", args)
}

// runClusterResume: clinal cluster resume RUNDIR: submits the run again
// (same settings unless overridden); the new job continues from the last
// complete pass.
func runClusterResume(ctx context.Context, e *env, args []string) error {
	return submitOrResume(ctx, e, "resume", args)
}

func submitOrResume(ctx context.Context, e *env, cmd string, args []string) error {
	var o driverOptions
	var local bool
	fs := flag.NewFlagSet("cluster "+cmd, flag.ContinueOnError)
	driverFlags(fs, &o, &local)
	var s submitSettings
	submitFlags(fs, &s)
	pos, err := parseArgs(fs, args)
	if err != nil {
		return err
	}
	d, err := oneRunDir(cmd, pos)
	if err != nil {
		return err
	}
	m, err := readManifest(d)
	if err != nil {
		return err
	}
	if dn, err := readDone(d); err == nil {
		fmt.Fprintf(e.stderr, "cluster %s: %s is already complete (%d passes); outputs %s.*\n", cmd, string(d), dn.Passes, m.Prefix)
		return nil
	}
	ids := jobIDs(d)
	if len(ids) > 0 {
		last := ids[len(ids)-1]
		if state := jobState(ctx, last); jobActive(state) {
			return usage("cluster %s: job %s of %s is still %s; wait for it or scancel it first", cmd, last, string(d), state)
		}
	}
	if local {
		o.dir = d
		if err := finishDriverOptions(&o, true); err != nil {
			return err
		}
		_, err := runDriver(ctx, e, &o)
		return err
	}
	// submit takes the settings of its flags; resume those of the last
	// submit, overridden by the flags it is given.
	settings := s
	settings.StepRetries = o.stepRetries
	if cmd == "resume" {
		saved, err := readSubmit(d)
		if err != nil {
			return err
		}
		fs.Visit(func(f *flag.Flag) {
			switch f.Name {
			case "partition":
				saved.Partition = s.Partition
			case "time":
				saved.Time = s.Time
			case "account":
				saved.Account = s.Account
			case "qos":
				saved.QOS = s.QOS
			case "step-retries":
				saved.StepRetries = o.stepRetries
			}
		})
		settings = saved
	}
	exe, err := os.Executable()
	if err != nil {
		return fmt.Errorf("cluster %s: %w", cmd, err)
	}
	settings.Exe = exe
	if err := settings.validate(); err != nil {
		return err
	}
	id, err := submitJob(ctx, d, m, settings)
	if err != nil {
		return err
	}
	fmt.Fprintln(e.stdout, id)
	fmt.Fprintf(e.stderr, "cluster %s: job %s: %d tasks x %d CPU(s), %d MiB per CPU; follow it with clinal cluster status %s\n",
		cmd, id, len(m.Shards), m.CPUsPerTask, memPerCPUMiB(m), shellQuote(string(d)))
	return nil
}

// clusterStatus is what clinal cluster status reports (--json prints it).
type clusterStatus struct {
	RunDir         string      `json:"run_dir"`
	Store          string      `json:"store"`
	Prefix         string      `json:"output_prefix"`
	Shards         int         `json:"shards"`
	SamplesUsed    int         `json:"samples_used"`
	MarkersUsed    int         `json:"markers_used"`
	K              int         `json:"k"`
	MaxPasses      int         `json:"max_passes"`
	PassesDone     int         `json:"passes_done"`
	MaxRel         []float64   `json:"max_relative_residual_per_pass"`
	Complete       bool        `json:"complete"`
	StopReason     string      `json:"stop_reason,omitempty"`
	PassesReduced  int         `json:"passes_reduced"` // over all drivers, redone passes included
	ShardsComputed int         `json:"shards_computed"`
	Jobs           []jobStatus `json:"jobs"`
}

type jobStatus struct {
	ID    string `json:"id"`
	State string `json:"state"` // "" when Slurm no longer knows it
}

// runClusterStatus: clinal cluster status RUNDIR [--json].
func runClusterStatus(ctx context.Context, e *env, args []string) error {
	fs := flag.NewFlagSet("cluster status", flag.ContinueOnError)
	asJSON := fs.Bool("json", false, "print the status as JSON")
	pos, err := parseArgs(fs, args)
	if err != nil {
		return err
	}
	d, err := oneRunDir("status", pos)
	if err != nil {
		return err
	}
	s, err := runStatus(ctx, d)
	if err != nil {
		return err
	}
	if *asJSON {
		b, _ := json.MarshalIndent(s, "", "  ")
		fmt.Fprintf(e.stdout, "%s\n", b)
		return nil
	}
	fmt.Fprintf(e.stdout, "run directory: %s\n", s.RunDir)
	fmt.Fprintf(e.stdout, "plan: %s, %d samples x %d markers used, k=%d, %d shards, at most %d passes; outputs %s.*\n",
		s.Store, s.SamplesUsed, s.MarkersUsed, s.K, s.Shards, s.MaxPasses, s.Prefix)
	state := "not started"
	switch {
	case s.Complete:
		state = "complete (" + s.StopReason + ")"
	case s.PassesDone > 0:
		state = "in progress or interrupted"
	}
	fmt.Fprintf(e.stdout, "passes done: %d (%s); passes reduced %d, shard partials computed %d over all jobs\n", s.PassesDone, state, s.PassesReduced, s.ShardsComputed)
	for i, r := range s.MaxRel {
		fmt.Fprintf(e.stdout, "  pass %d: max relative residual %.3g\n", i+1, r)
	}
	for _, j := range s.Jobs {
		st := j.State
		if st == "" {
			st = "unknown to Slurm now"
		}
		fmt.Fprintf(e.stdout, "job %s: %s\n", j.ID, st)
	}
	return nil
}

// runStatus gathers the status of a run directory.
func runStatus(ctx context.Context, d runDir) (*clusterStatus, error) {
	m, err := readManifest(d)
	if err != nil {
		return nil, err
	}
	s := &clusterStatus{RunDir: string(d), Store: m.Store, Prefix: m.Prefix, Shards: len(m.Shards),
		SamplesUsed: m.SamplesUsed, MarkersUsed: m.MarkersUsed, K: m.PCA.K, MaxPasses: m.PCA.MaxPasses, Jobs: []jobStatus{}}
	state, err := randsvd.ReadCheckpoint(d.path(stateName), m.Key)
	if err != nil {
		return nil, err
	}
	if state != nil {
		s.PassesDone = state.Pass
		for _, h := range state.History {
			mx := 0.0
			for _, v := range h {
				mx = max(mx, v)
			}
			s.MaxRel = append(s.MaxRel, mx)
		}
	}
	if dn, err := readDone(d); err == nil {
		s.Complete, s.StopReason, s.PassesDone = true, dn.StopReason, dn.Passes
	} else if !errors.Is(err, os.ErrNotExist) {
		return nil, err
	}
	evs, err := readEvents(d)
	if err != nil {
		return nil, err
	}
	for _, ev := range evs {
		switch ev.Event {
		case "pass":
			s.PassesReduced++
			s.ShardsComputed += len(ev.Computed)
		case "pass-failed":
			s.ShardsComputed += len(ev.Computed)
		}
	}
	for _, id := range jobIDs(d) {
		s.Jobs = append(s.Jobs, jobStatus{ID: id, State: jobState(ctx, id)})
	}
	return s, nil
}
