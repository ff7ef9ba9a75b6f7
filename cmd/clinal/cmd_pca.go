package main

import (
	"context"
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"runtime/debug"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"syscall"
	"time"

	htmlreport "github.com/clinal/clinal/cmd/clinal/report"
	"github.com/clinal/clinal/matrixio"
	"github.com/clinal/clinal/qc"
	"github.com/clinal/clinal/randsvd"
	"github.com/schollz/progressbar/v3"
)

// pcaOptions are the flags of clinal pca.
type pcaOptions struct {
	out          string
	k            int
	oversample   int
	seed         uint64
	tol          float64
	varTol       float64
	maxPasses    int
	threads      int
	memory       byteSize
	scaling      string
	twoIDs       bool
	idHeaders    string
	pcPrefix     string
	labels       string
	qc           qc.Options
	qcPrefix     string
	noLoadings   bool
	noResume     bool
	tw           string
	fs           *flag.FlagSet // the parsed flags (to tell which were set), nil from demo
	twAlpha      float64
	autoK        bool
	maxAutoK     int
	outlierSD    float64
	outlierIters int
	outlierPCs   int
	flagColumn   bool
	exact        bool
}

func pcaFlags(fs *flag.FlagSet, o *pcaOptions) {
	fs.StringVar(&o.out, "o", "", "output prefix (PREFIX.covariates.tsv, ...)")
	fs.Func("k", "number of PCs, or auto: the Tracy-Widom significant ones (--tw-alpha) up to --k-max (default 10)", func(v string) error {
		if v == "auto" {
			o.autoK = true
			return nil
		}
		n, err := strconv.Atoi(v)
		if err != nil {
			return fmt.Errorf("want a number or auto")
		}
		o.k, o.autoK = n, false
		return nil
	})
	fs.IntVar(&o.maxAutoK, "k-max", 20, "with -k auto: most PCs computed and tested")
	fs.Float64Var(&o.twAlpha, "tw-alpha", 0.05, "with -k auto: significance level of the Tracy-Widom test")
	fs.IntVar(&o.oversample, "oversample", 0, "extra block vectors (default max(10, k/2))")
	fs.Uint64Var(&o.seed, "seed", 1, "random seed (same seed and inputs give the same numbers)")
	fs.Float64Var(&o.tol, "tol", 1e-6, "stop when ||K u - lambda u|| <= tol * lambda for every PC")
	fs.Float64Var(&o.varTol, "var-tol", 2e-3, "PCs below the Marchenko-Pastur edge (noise) may stop once the captured variance changes by less than this per pass")
	fs.IntVar(&o.maxPasses, "max-passes", 30, "most passes over the store")
	fs.IntVar(&o.threads, "threads", runtime.NumCPU(), "compute threads (results do not depend on it)")
	fs.Var(&o.memory, "memory", "memory promise, e.g. 4GiB (0: no limit)")
	fs.StringVar(&o.scaling, "scaling", "patterson", "marker standardization: patterson, center or zscore")
	fs.BoolVar(&o.twoIDs, "two-id-columns", false, "write the sample ID in two leading columns")
	fs.StringVar(&o.idHeaders, "id-headers", "", "comma-separated header names of the ID column(s)")
	fs.StringVar(&o.pcPrefix, "pc-prefix", "PC", "name prefix of the PC columns")
	fs.StringVar(&o.labels, "labels", "", "TSV sample_id -> group, for the report's plots")
	fs.StringVar(&o.qcPrefix, "qc", "", "reuse the kept lists of a finished clinal qc run (PREFIX)")
	fs.BoolVar(&o.noLoadings, "no-loadings", false, "skip the loadings file (saves half a pass)")
	fs.BoolVar(&o.exact, "exact-passes", false, "every pass in float64 (slower); by default the iterations use float32 tables and exact passes finish them, with the same float64 results")
	fs.BoolVar(&o.noResume, "no-resume", false, "ignore a checkpoint left by an interrupted run with the same inputs")
	fs.Float64Var(&o.outlierSD, "outlier-sd", randsvd.DefaultOutlierSD, "remove samples beyond this many SDs on any of the top --outlier-pcs PCs and recompute (0: off)")
	fs.IntVar(&o.outlierIters, "outlier-rounds", randsvd.DefaultOutlierRounds, "most rounds of outlier removal")
	fs.IntVar(&o.outlierPCs, "outlier-pcs", randsvd.DefaultOutlierPCs, "PCs checked for outliers")
	fs.BoolVar(&o.flagColumn, "flag-column", false, "add a last covariates column 'outlier' (yes: placed by projection after removal)")
	fs.StringVar(&o.tw, "tw", "auto", "Tracy-Widom test: auto, exact (trace(K^2) in N/32 extra passes), approx (n' = M) or off")
	addFilterFlags(fs, &o.qc)
}

// phaseTimes records wall and CPU seconds per phase.
type phaseTimes struct {
	order []string
	wall  map[string]float64
	cpu   map[string]float64
	t0    time.Time
	c0    float64
	cur   string
}

func newPhases() *phaseTimes {
	return &phaseTimes{wall: map[string]float64{}, cpu: map[string]float64{}}
}

func (p *phaseTimes) start(name string) {
	p.stop()
	p.cur, p.t0, p.c0 = name, time.Now(), cpuSeconds()
	p.order = append(p.order, name)
}

func (p *phaseTimes) stop() {
	if p.cur == "" {
		return
	}
	p.wall[p.cur] += time.Since(p.t0).Seconds()
	p.cpu[p.cur] += cpuSeconds() - p.c0
	p.cur = ""
}

func cpuSeconds() float64 {
	var ru syscall.Rusage
	if syscall.Getrusage(syscall.RUSAGE_SELF, &ru) != nil {
		return math.NaN()
	}
	return float64(ru.Utime.Sec+ru.Stime.Sec) + float64(ru.Utime.Usec+ru.Stime.Usec)/1e6
}

// peakRSS returns the process's peak resident set: VmHWM from
// /proc/self/status where there is one (getrusage's ru_maxrss also counts
// the image the process was exec'ed from, e.g. a large parent), else
// ru_maxrss.
func peakRSS() int64 {
	if b, err := os.ReadFile("/proc/self/status"); err == nil {
		for _, line := range strings.Split(string(b), "\n") {
			if f := strings.Fields(line); len(f) >= 2 && f[0] == "VmHWM:" {
				if kb, err := strconv.ParseInt(f[1], 10, 64); err == nil {
					return kb * 1024
				}
			}
		}
	}
	var ru syscall.Rusage
	if syscall.Getrusage(syscall.RUSAGE_SELF, &ru) != nil {
		return 0
	}
	return ru.Maxrss * 1024 // Linux reports KiB
}

func runPCA(ctx context.Context, e *env, args []string) error {
	o := pcaOptions{k: 10}
	fs := flag.NewFlagSet("pca", flag.ContinueOnError)
	pcaFlags(fs, &o)
	pos, err := parseArgs(fs, args)
	if err != nil {
		return err
	}
	o.fs = fs
	if len(pos) != 1 {
		return usage("pca: want one STORE argument, got %d (clinal pca STORE -k K -o PREFIX)", len(pos))
	}
	if o.out == "" {
		return usage("pca: -o PREFIX is required")
	}
	if err := matrixio.CheckOutputPrefix(o.out); err != nil {
		return fmt.Errorf("pca: -o: %w", err)
	}
	if o.autoK {
		if o.maxAutoK < 1 || o.tw == "off" || !(o.twAlpha > 0 && o.twAlpha < 1) {
			return usage("pca: -k auto needs --k-max >= 1, --tw not off and 0 < --tw-alpha < 1")
		}
		o.k = o.maxAutoK
	}
	if o.k < 1 {
		return usage("pca: -k %d: want at least 1", o.k)
	}
	if o.threads < 1 {
		return usage("pca: --threads %d: want at least 1", o.threads)
	}
	_, err = doPCA(ctx, e, pos[0], &o)
	return err
}

// pcaOutcome is what doPCA returns to callers such as demo.
type pcaOutcome struct {
	files []string
}

func doPCA(ctx context.Context, e *env, storePath string, o *pcaOptions) (*pcaOutcome, error) {
	t0 := time.Now()
	ph := newPhases()
	if o.memory > 0 {
		// The promise covers the Go heap too: make the collector keep to it.
		debug.SetMemoryLimit(int64(o.memory) * 9 / 10)
	} else {
		// The long-lived data (tables, solver blocks) dominate the heap and
		// hold almost no pointers (the marker table is one string and flat
		// arrays), so collections are cheap: a tight collector target keeps
		// the peak near the live size. Not too tight: at 10% a run went
		// through about 35 collections (a score while the heap first
		// grows, two or three between passes), which took 4% of the wall
		// time at 5,000 x 50,000 and 14% at 32,000 x 2,500 against 25%,
		// for 3 and 8 MiB more peak memory (49 -> 53 and 95 -> 103 MiB,
		// plans of 89 and 140 MiB; medians of 6 and 3 alternating runs).
		debug.SetGCPercent(25)
	}
	ph.start("open")
	st, err := matrixio.Open(storePath)
	if err != nil {
		return nil, err
	}
	defer st.Close()
	if o.memory > 0 {
		// Refuse an impossible promise before any pass (QC included).
		if _, err := randsvd.PlanMemory(st, o.k, o.oversample, o.threads, int64(o.memory)); err != nil {
			return nil, err
		}
	}
	ph.start("qc")
	o.qc.Threads = o.threads
	sel, err := qcSelection(ctx, o.fs, st, o.qc, o.qcPrefix)
	if err != nil {
		return nil, err
	}
	ph.start("solve")
	if o.memory == 0 {
		// No promise asked: still keep the heap near the plan, so peak
		// memory follows the model (and does not drift with garbage).
		if plan, err := randsvd.PlanMemory(st, o.k, o.oversample, o.threads, 0); err == nil {
			debug.SetMemoryLimit(plan.TotalBytes * 5 / 4)
		}
	}
	var bar *progressbar.ProgressBar
	popt := randsvd.PCAOptions{K: o.k, Oversample: o.oversample, Tol: o.tol, VarTol: o.varTol, MaxPasses: o.maxPasses,
		Seed: o.seed, Threads: o.threads, Memory: int64(o.memory), Scaling: randsvd.Scaling(o.scaling),
		SampleKept: sel.SampleKept, MarkerKept: sel.MarkerKept, Counts: sel.Counts, TW: o.tw, ExactPasses: o.exact}
	if !o.noLoadings {
		// The closing (or refinement) pass keeps Z C beside the outputs, so the
		// loadings cost no half pass (randsvd.PCAOptions.LoadingsStash).
		popt.LoadingsStash = filepath.Dir(o.out)
	}
	switch popt.Scaling {
	case randsvd.ScalePatterson, randsvd.ScaleCenter, randsvd.ScaleZ:
	default:
		return nil, usage("pca: --scaling %q: want patterson, center or zscore", o.scaling)
	}
	if e.tty {
		popt.Progress = func(pass, done, total int) {
			if bar == nil || done == 1 {
				if bar != nil {
					bar.Finish()
				}
				bar = progressbar.NewOptions(total, progressbar.OptionSetWriter(e.stderr),
					progressbar.OptionSetDescription(fmt.Sprintf("pass %d", pass)),
					progressbar.OptionClearOnFinish(), progressbar.OptionThrottle(100*time.Millisecond))
			}
			bar.Set(done)
		}
	}
	// Checkpoint after every pass; a rerun of the same command (same store,
	// selection and solver parameters) resumes from the last completed pass.
	ckpt := o.out + ".checkpoint"
	key := checkpointKey(st, sel, o)
	if !o.noResume {
		state, err := randsvd.ReadCheckpoint(ckpt, key)
		switch {
		case errors.Is(err, randsvd.ErrCheckpointMismatch):
			fmt.Fprintf(e.stderr, "pca: ignoring %s: it belongs to other inputs or parameters\n", ckpt)
		case err != nil:
			fmt.Fprintf(e.stderr, "pca: ignoring %s: %v\n", ckpt, err)
		case state != nil:
			fmt.Fprintf(e.stderr, "pca: resuming from pass %d of an interrupted run (%s)\n", state.Pass, ckpt)
			popt.Resume = state
		}
	}
	// Each checkpoint is written while the next pass runs (Solve does not
	// change a state after the callback); every return waits for the last.
	var cw checkpointWriter
	defer cw.wait()
	popt.Checkpoint = func(s *randsvd.State) error { return cw.write(ckpt, key, s) }
	var res *randsvd.PCAResult
	var op *randsvd.Operator
	var outl outlierResult
	if o.outlierSD > 0 {
		res, op, outl.removed, outl.projected, err = randsvd.RemoveOutliers(ctx, st, popt,
			randsvd.OutlierOptions{SD: o.outlierSD, Rounds: o.outlierIters, PCs: o.outlierPCs})
	} else {
		res, op, err = randsvd.RunPCA(ctx, st, popt)
	}
	if bar != nil {
		bar.Finish()
	}
	if err != nil {
		return nil, err
	}
	defer res.Close()
	// The last checkpoint is complete before anything reads or trims the
	// result (Truncate shortens the history the writer may still hold).
	if err := cw.wait(); err != nil {
		return nil, err
	}
	if len(outl.removed) > 0 {
		fmt.Fprintf(e.stderr, "pca: removed %d outlier samples (beyond %g SD on the top %d PCs); their scores come from projection\n",
			len(outl.removed), o.outlierSD, o.outlierPCs)
	}
	if o.autoK {
		k := max(1, randsvd.SignificantCount(res.TW, o.twAlpha))
		fmt.Fprintf(e.stderr, "pca: -k auto: %d of %d PCs significant at alpha %g (Tracy-Widom, n' %s)\n", k, o.k, o.twAlpha, res.TWMethod)
		res.Truncate(k)
		o.k = k
	}
	out, err := writePCAOutputsWith(ctx, e, st, op, res, sel, o, ph, t0, &outl)
	if err == nil {
		os.Remove(ckpt)
	}
	return out, err
}

// checkpointWriter writes solver checkpoints in the background, one at a
// time: a new state waits for the previous write, and the first error is
// returned by the next write or by wait.
type checkpointWriter struct {
	done chan error
	err  error
}

func (c *checkpointWriter) write(path, key string, s *randsvd.State) error {
	if err := c.wait(); err != nil {
		return err
	}
	c.done = make(chan error, 1)
	go func() {
		if err := randsvd.WriteCheckpoint(path, key, s); err != nil {
			c.done <- fmt.Errorf("checkpoint after pass %d: %w", s.Pass, err)
			return
		}
		c.done <- nil
	}()
	return nil
}

// wait blocks until no write is in flight.
func (c *checkpointWriter) wait() error {
	if c.done != nil {
		if err := <-c.done; err != nil && c.err == nil {
			c.err = err
		}
		c.done = nil
	}
	return c.err
}

// checkpointKey identifies what a checkpoint's solver state depends on: the
// store's content, the selection and the parameters that shape the
// iteration, tol and var-tol included (they decide which passes are
// closing ones); not max-passes, which decides only when to stop (its last
// pass is a closing one, after which a run has ended).
func checkpointKey(st *matrixio.Store, sel *qc.Selection, o *pcaOptions) string {
	h := sha256.New()
	// The solver's scheme too: a checkpoint of another scheme (blocks of l
	// vectors, before checkpoint version 4) would resume into numbers no
	// uninterrupted run gives, so it is ignored.
	fmt.Fprintf(h, "%s|k=%d|over=%d|seed=%d|scaling=%s|exact=%v|solver=%s|tol=%g|vartol=%g|", st.Fingerprint(), o.k, o.oversample, o.seed, o.scaling, o.exact, randsvd.SolverScheme, o.tol, o.varTol)
	for _, m := range [][]bool{sel.SampleKept, sel.MarkerKept} {
		b := make([]byte, len(m))
		for i, v := range m {
			if v {
				b[i] = 1
			}
		}
		h.Write(b)
	}
	// The counts as fixed-width binary (one Fprintf per marker was most of
	// the key's 10 ms at 50,000 markers).
	b := make([]byte, 0, 32*len(sel.Counts))
	for _, c := range sel.Counts {
		for _, v := range [4]int64{int64(c.HomRef), int64(c.Het), int64(c.HomAlt), int64(c.Missing)} {
			b = binary.LittleEndian.AppendUint64(b, uint64(v))
		}
	}
	h.Write(b)
	return hex.EncodeToString(h.Sum(nil))
}

// writePCAOutputs writes every output of a finished PCA (loadings,
// covariates, spectrum, report) atomically and prints the summary line. The
// cluster driver calls it too, so both paths give the same files.
func writePCAOutputs(ctx context.Context, e *env, st *matrixio.Store, op *randsvd.Operator, res *randsvd.PCAResult,
	sel *qc.Selection, o *pcaOptions, ph *phaseTimes, t0 time.Time) (*pcaOutcome, error) {
	return writePCAOutputsWith(ctx, e, st, op, res, sel, o, ph, t0, nil)
}

// writePCAOutputsWith is writePCAOutputs with the result of outlier
// removal (nil: none was run or none found).
func writePCAOutputsWith(ctx context.Context, e *env, st *matrixio.Store, op *randsvd.Operator, res *randsvd.PCAResult,
	sel *qc.Selection, o *pcaOptions, ph *phaseTimes, t0 time.Time, outl *outlierResult) (*pcaOutcome, error) {
	if outl == nil {
		outl = &outlierResult{}
	}
	out := &pcaOutcome{}
	// Covariate rows in store order: the samples of the fit, and the
	// outliers placed on the same axes by projection.
	row := map[int]int{}
	for r, i := range res.Samples {
		row[i] = r
	}
	var ids, flags []string
	var scoreRows [][]float64
	for i, id := range st.Samples() {
		if r, ok := row[i]; ok {
			ids, scoreRows, flags = append(ids, id), append(scoreRows, res.Scores.RawRowView(r)), append(flags, "no")
		} else if p, ok := outl.projected[i]; ok {
			ids, scoreRows, flags = append(ids, id), append(scoreRows, p), append(flags, "yes")
		}
	}
	// The report's plots need the results only: they are drawn while the
	// loadings are written (both are serial work), the page at the end.
	rin, err := htmlInput(o, st, res, ids, scoreRows, sel)
	if err != nil {
		return nil, err
	}
	type drawn struct {
		f   *htmlreport.PCAFigures
		err error
	}
	figs := make(chan drawn, 1)
	go func() {
		f, err := htmlreport.RenderPCAFigures(rin)
		figs <- drawn{f, err}
	}()
	var d drawn
	received := false
	defer func() {
		if !received {
			<-figs // an early return still waits for the drawing
		}
	}()
	ph.start("loadings")
	if !o.noLoadings {
		if err := writeLoadings(ctx, o.out+".loadings.tsv.gz", st, op, res, sel, o.threads); err != nil {
			return nil, err
		}
		out.files = append(out.files, o.out+".loadings.tsv.gz")
	}
	ph.start("write")
	copt := matrixio.CovariateOptions{TwoIDColumns: o.twoIDs, Prefix: o.pcPrefix}
	if o.idHeaders != "" {
		copt.IDHeaders = strings.Split(o.idHeaders, ",")
	}
	if o.flagColumn {
		copt.FlagHeader, copt.Flags = "outlier", flags
	}
	if err := matrixio.WriteCovariates(o.out+".covariates.tsv", ids, o.k, func(i, j int) float64 { return scoreRows[i][j] }, copt); err != nil {
		return nil, err
	}
	if o.outlierSD > 0 {
		if err := writeOutliers(o.out+".outliers.tsv", st, outl); err != nil {
			return nil, err
		}
		out.files = append(out.files, o.out+".outliers.tsv")
	}
	rows := spectrumRows(res)
	if err := matrixio.WriteSpectrum(o.out+".spectrum.tsv", rows); err != nil {
		return nil, err
	}
	d, received = <-figs, true
	ph.stop()
	if d.err != nil {
		return nil, fmt.Errorf("report %s: %w", o.out+".report.html", d.err)
	}
	for _, n := range ph.order {
		rin.Timing = append(rin.Timing, htmlreport.Phase{Name: n, Wall: ph.wall[n], CPU: ph.cpu[n]})
	}
	rin.PeakRSS = peakRSS()
	html, err := htmlreport.WritePCAReportFigures(o.out+".report.html", rin, d.f)
	if err != nil {
		return nil, err
	}
	out.files = append(out.files, html...)
	rep := buildReport(st, o, res, sel, ph, time.Since(t0))
	rep.Outliers = outlierJSON(st, outl)
	if err := matrixio.WriteJSON(o.out+".report.json", rep); err != nil {
		return nil, err
	}
	out.files = append(out.files, o.out+".covariates.tsv", o.out+".spectrum.tsv", o.out+".report.json")
	nconv := 0
	for _, c := range res.Converged {
		if c {
			nconv++
		}
	}
	fmt.Fprintf(e.stdout, "pca: %d samples x %d markers, k=%d: %d passes (%s), %d/%d PCs converged to tol %g; PC1 explains %.2f%% of variance; outputs %s.*\n",
		len(res.Samples), res.Markers, o.k, res.Passes, res.StopReason, nconv, o.k, o.tol, 100*res.Eigenvalues[0]/res.Trace, o.out)
	return out, nil
}

func spectrumRows(res *randsvd.PCAResult) []matrixio.SpectrumRow {
	rows := make([]matrixio.SpectrumRow, len(res.Eigenvalues))
	cum := 0.0
	for j, ev := range res.Eigenvalues {
		cum += ev / res.Trace
		rows[j] = matrixio.SpectrumRow{Eigenvalue: ev, VarianceFraction: ev / res.Trace, CumulativeFraction: cum,
			Residual: res.Residuals[j], Converged: res.Converged[j], TWStatistic: math.NaN(), TWP: math.NaN()}
		if j < len(res.TW) {
			rows[j].TWStatistic, rows[j].TWP = res.TW[j].Statistic, res.TW[j].P
		}
	}
	return rows
}

func writeLoadings(ctx context.Context, path string, st *matrixio.Store, op *randsvd.Operator, res *randsvd.PCAResult, sel *qc.Selection, threads int) error {
	lw, err := matrixio.CreateLoadingsThreads(path, len(res.Eigenvalues), threads)
	if err != nil {
		return err
	}
	center, inv := op.Standardization()
	// Rows go over in batches (at most five exist, so memory stays
	// bounded): formatters turn each into text (the shortest forms of its
	// numbers, most of the work) while the operator computes the next
	// ones, and a writer hands the texts to the compressing writer in
	// batch order (each batch waits for its text in the queue).
	k := len(res.Eigenvalues)
	const batchRows = 1024
	type batch struct {
		ords []int
		vals []float64
		text []byte
		done chan struct{} // the text is ready
	}
	const batches = 5
	free := make(chan *batch, batches)
	for range batches {
		free <- &batch{ords: make([]int, 0, batchRows), vals: make([]float64, 0, batchRows*k), done: make(chan struct{}, 1)}
	}
	work, queue := make(chan *batch, batches), make(chan *batch, batches)
	var fwg sync.WaitGroup
	for range max(1, min(threads, 4)) {
		fwg.Add(1)
		go func() {
			defer fwg.Done()
			for b := range work {
				b.text = b.text[:0]
				for r, ord := range b.ords {
					b.text = matrixio.AppendLoadingsRow(b.text, st.Marker(op.KeptMarker(ord)), center[ord]/2, 1/inv[ord], b.vals[r*k:(r+1)*k])
				}
				b.done <- struct{}{}
			}
		}()
	}
	werr := make(chan error, 1)
	var failed atomic.Bool // a write failed: the rows still to come are not computed
	go func() {
		var err error
		for b := range queue {
			<-b.done
			if err == nil {
				if err = lw.WriteRows(b.text); err != nil {
					failed.Store(true)
				}
			}
			free <- b
		}
		werr <- err
	}()
	cur := <-free
	send := func() {
		queue <- cur
		work <- cur
		cur = <-free
		cur.ords, cur.vals = cur.ords[:0], cur.vals[:0]
	}
	errWrite := errors.New("loadings: the write failed")
	err = randsvd.Loadings(ctx, op, res, func(ord int, v []float64) error {
		if failed.Load() {
			return errWrite // the writer's own error is returned below
		}
		cur.ords = append(cur.ords, ord)
		cur.vals = append(cur.vals, v...)
		if len(cur.ords) == batchRows {
			send()
		}
		return nil
	})
	if err == nil && len(cur.ords) > 0 {
		send()
	}
	close(work)
	close(queue)
	fwg.Wait()
	if e := <-werr; err == nil || errors.Is(err, errWrite) {
		err = e
	}
	if err != nil {
		lw.Abort()
		return err
	}
	return lw.Close()
}

// pcaReportJSON is PREFIX.report.json.
type pcaReportJSON struct {
	Version       string             `json:"version"`
	Command       string             `json:"command"`
	Input         reportInput        `json:"input"`
	SamplesUsed   int                `json:"samples_used"`
	MarkersUsed   int                `json:"markers_used"`
	K             int                `json:"k"`
	BlockSize     int                `json:"block_size"`
	KrylovBlock   int                `json:"krylov_block"`
	Seed          uint64             `json:"seed"`
	Threads       int                `json:"threads"`
	Kernels       string             `json:"kernels"`
	Tol           float64            `json:"tol"`
	MaxPasses     int                `json:"max_passes"`
	Scaling       string             `json:"scaling"`
	Passes        int                `json:"passes"`
	FastPasses    int                `json:"fast_passes"`
	StopReason    string             `json:"stop_reason"`
	Trace         float64            `json:"trace"`
	TraceSqEst    float64            `json:"trace_sq_estimate"`
	MPEdge        float64            `json:"marchenko_pastur_edge"`
	Eigenvalues   []float64          `json:"eigenvalues"`
	VarianceFrac  []float64          `json:"variance_fractions"`
	Residuals     []float64          `json:"residuals"`
	Converged     []bool             `json:"converged"`
	ResidualTrace [][]float64        `json:"relative_residuals_per_pass"`
	QC            reportQC           `json:"qc"`
	Memory        randsvd.MemoryPlan `json:"memory_plan"`
	WallSeconds   float64            `json:"wall_seconds"`
	CPUSeconds    float64            `json:"cpu_seconds"`
	Phases        []reportPhase      `json:"phases"`
	PeakRSS       int64              `json:"peak_rss_bytes"`
	Projection    string             `json:"projection"`
	VarTol        float64            `json:"var_tol"`
	TWMethod      string             `json:"tw_effective_markers"`
	TraceSq       *float64           `json:"trace_sq_exact,omitempty"`
	TWStatistics  []*float64         `json:"tw_statistics"`
	TWP           []*float64         `json:"tw_p"`
	Outliers      []outlierRow       `json:"outliers"`
}

// outlierResult carries what outlier removal found to the writers.
type outlierResult struct {
	removed   []randsvd.Outlier
	projected map[int][]float64
}

type outlierRow struct {
	SampleID string  `json:"sample_id"`
	Round    int     `json:"round"`
	PC       int     `json:"pc"`
	SDs      float64 `json:"sds"`
}

func outlierJSON(st *matrixio.Store, o *outlierResult) []outlierRow {
	rows := []outlierRow{}
	for _, r := range o.removed {
		rows = append(rows, outlierRow{SampleID: st.Samples()[r.Sample], Round: r.Round, PC: r.PC, SDs: r.Z})
	}
	return rows
}

// writeOutliers writes PREFIX.outliers.tsv: sample_id, the round and PC
// that removed it and how many SDs out it was.
func writeOutliers(path string, st *matrixio.Store, o *outlierResult) error {
	return matrixio.WriteFileAtomic(path, func(w io.Writer) error {
		fmt.Fprintln(w, "sample_id\tround\tpc\tsds")
		for _, r := range outlierJSON(st, o) {
			fmt.Fprintf(w, "%s\t%d\t%d\t%s\n", r.SampleID, r.Round, r.PC, matrixio.FormatFloat(r.SDs))
		}
		return nil
	})
}

// jsonNum maps NaN and infinities (which JSON cannot hold) to null.
func jsonNum(v float64) *float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	return &v
}

type reportInput struct {
	Path        string `json:"path"`
	Bytes       int64  `json:"bytes"`
	Fingerprint string `json:"fingerprint_sha256"`
	Samples     int    `json:"samples"`
	Markers     int    `json:"markers"`
	Codec       string `json:"codec"`
}

type reportQC struct {
	SamplesKept     int                    `json:"samples_kept"`
	SamplesRemoved  int                    `json:"samples_removed"`
	MarkersKept     int                    `json:"markers_kept"`
	MarkersRemoved  int                    `json:"markers_removed"`
	NoVariance      randsvd.DroppedMarkers `json:"dropped_no_variance"`
	FromQCRun       string                 `json:"from_qc_run,omitempty"`
	FilterThreshold qc.Options             `json:"thresholds"`
}

type reportPhase struct {
	Name        string  `json:"name"`
	WallSeconds float64 `json:"wall_seconds"`
	CPUSeconds  float64 `json:"cpu_seconds"`
}

func buildReport(st *matrixio.Store, o *pcaOptions, res *randsvd.PCAResult, sel *qc.Selection, ph *phaseTimes, wall time.Duration) *pcaReportJSON {
	r := &pcaReportJSON{Version: version, Command: "pca",
		Input: reportInput{Path: st.Path(), Bytes: st.Size(), Fingerprint: st.Fingerprint(),
			Samples: st.NumSamples(), Markers: st.NumMarkers(), Codec: string(st.Codec())},
		SamplesUsed: len(res.Samples), MarkersUsed: res.Markers, K: o.k, BlockSize: res.BlockSize, KrylovBlock: res.KrylovBlock,
		Seed: o.seed, Threads: o.threads, Kernels: randsvd.Kernels(), Tol: o.tol, MaxPasses: o.maxPasses, Scaling: o.scaling,
		Passes: res.Passes, FastPasses: res.FastPasses, StopReason: res.StopReason, Trace: res.Trace, TraceSqEst: res.TraceSqEst,
		MPEdge: res.MPEdge, Eigenvalues: res.Eigenvalues, Residuals: res.Residuals, Converged: res.Converged,
		ResidualTrace: res.History, Memory: res.Plan, WallSeconds: wall.Seconds(), CPUSeconds: cpuSeconds(),
		PeakRSS:    peakRSS(),
		Projection: "score_k = sum_j z_j * loading_jk / sqrt(markers_used * eigenvalue_k), z_j = (g_j - 2 freq_j) / scale_j, missing z_j = 0",
	}
	for _, ev := range res.Eigenvalues {
		r.VarianceFrac = append(r.VarianceFrac, ev/res.Trace)
	}
	r.VarTol, r.TWMethod, r.TraceSq = o.varTol, res.TWMethod, jsonNum(res.TraceSq)
	for _, t := range res.TW {
		r.TWStatistics = append(r.TWStatistics, jsonNum(t.Statistic))
		r.TWP = append(r.TWP, jsonNum(t.P))
	}
	for _, k := range sel.SampleKept {
		if k {
			r.QC.SamplesKept++
		} else {
			r.QC.SamplesRemoved++
		}
	}
	for _, k := range sel.MarkerKept {
		if k {
			r.QC.MarkersKept++
		} else {
			r.QC.MarkersRemoved++
		}
	}
	r.QC.NoVariance = res.Dropped
	r.QC.FromQCRun = o.qcPrefix
	r.QC.FilterThreshold = o.qc
	for _, n := range ph.order {
		r.Phases = append(r.Phases, reportPhase{Name: n, WallSeconds: ph.wall[n], CPUSeconds: ph.cpu[n]})
	}
	return r
}

// htmlInput gathers what PREFIX.report.html shows (but its timing) for the
// samples of the covariate file, coloured by --labels when given.
func htmlInput(o *pcaOptions, st *matrixio.Store, res *randsvd.PCAResult, ids []string, scores [][]float64,
	sel *qc.Selection) (*htmlreport.PCAInput, error) {
	var groups []string
	note := ""
	if o.labels != "" {
		g, ls, err := htmlreport.ReadLabelsStats(o.labels, ids)
		if err != nil {
			return nil, err
		}
		groups, note = g, ls.String()
	}
	twp := make([]float64, len(res.Eigenvalues))
	for j := range twp {
		twp[j] = math.NaN()
		if j < len(res.TW) {
			twp[j] = res.TW[j].P
		}
	}
	sk, mk := 0, 0
	for _, k := range sel.SampleKept {
		if k {
			sk++
		}
	}
	for _, k := range sel.MarkerKept {
		if k {
			mk++
		}
	}
	in := &htmlreport.PCAInput{Title: "clinal PCA: " + st.Path(), SampleIDs: ids, Groups: groups, LabelsNote: note,
		Scores: scores, Eigenvalues: res.Eigenvalues, Residuals: res.Residuals, Converged: res.Converged, TWP: twp,
		Trace: res.Trace, MPEdge: res.MPEdge, Passes: res.Passes, StopReason: res.StopReason,
		QC: []htmlreport.QCRow{{Name: "samples", Removed: len(sel.SampleKept) - sk, Kept: sk},
			{Name: "markers", Removed: len(sel.MarkerKept) - mk, Kept: mk}},
		Samples: len(res.Samples), Markers: res.Markers, K: o.k}
	return in, nil
}
