package main

import (
	"bufio"
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"sort"
	"strconv"
	"strings"
	"syscall"
	"time"

	htmlreport "github.com/clinal/clinal/cmd/clinal/report"
	"github.com/clinal/clinal/matrixio"
	"github.com/clinal/clinal/randsvd"
)

// benchOptions are the flags of clinal bench.
type benchOptions struct {
	out       string
	samples   []int
	markers   []int
	extra     [][2]int // sizes beyond the grid (samples, markers)
	repeat    int      // pca runs per size
	k         int
	threads   int
	seed      uint64
	importVCF bool
	keep      bool
	predict   bool
	replot    bool
	model     string
	passes    int
	exe       string // the clinal binary run as the child (default: this one)
}

// childUsage is what one child process cost: wall clock from start to
// exit, and the kernel's rusage of the child (user + system CPU, peak
// resident set).
type childUsage struct {
	Wall    float64 `json:"wall_seconds"`
	CPU     float64 `json:"cpu_seconds"`
	PeakRSS int64   `json:"peak_rss_bytes"`
}

// runChild runs exe with args, appending its output to log, and
// measures it. The error names the command and ends with the child's last
// line of output.
//
// The child is started through a fresh intermediary (exe bench
// --measure-into FILE -- exe args...) that waits for it and writes its
// rusage to FILE. On Linux a child's ru_maxrss includes the resident set
// of the process that forked it (exec folds the old address space's high
// -water mark into the new process's), so a child forked by a large
// parent (a test binary, a bench holding results) would report at least
// the parent's size. The intermediary is small and fresh, so the peak it
// reports is the child's own.
func runChild(ctx context.Context, exe string, args []string, log io.Writer) (childUsage, error) {
	tmp, err := os.CreateTemp("", "clinal-bench-usage-*.json")
	if err != nil {
		return childUsage{}, fmt.Errorf("bench: %w", err)
	}
	tmp.Close()
	defer os.Remove(tmp.Name())
	cmd := exec.CommandContext(ctx, exe, append([]string{"bench", "--measure-into", tmp.Name(), "--", exe}, args...)...)
	// Interrupt the intermediary rather than kill it, so that it stops
	// the child before it exits.
	cmd.Cancel = func() error { return cmd.Process.Signal(syscall.SIGTERM) }
	cmd.WaitDelay = 30 * time.Second
	var out bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &out
	err = cmd.Run()
	fmt.Fprintf(log, "$ clinal %s\n%s", strings.Join(args, " "), out.String())
	if err != nil {
		if ctx.Err() != nil {
			return childUsage{}, ctx.Err()
		}
		return childUsage{}, fmt.Errorf("bench: clinal %s: %v: %s", args[0], err, lastLine(out.String()))
	}
	b, err := os.ReadFile(tmp.Name())
	if err != nil {
		return childUsage{}, fmt.Errorf("bench: clinal %s: usage: %w", args[0], err)
	}
	var u childUsage
	if err := json.Unmarshal(b, &u); err != nil {
		return childUsage{}, fmt.Errorf("bench: clinal %s: usage %s: %w", args[0], tmp.Name(), err)
	}
	return u, nil
}

// doMeasure is the intermediary of runChild: it runs argv, passing its
// output through, and writes the wall time and the rusage of the child to
// path.
func doMeasure(ctx context.Context, e *env, path string, argv []string) error {
	if len(argv) == 0 {
		return usage("bench --measure-into: want -- COMMAND [ARGS]")
	}
	cmd := exec.CommandContext(ctx, argv[0], argv[1:]...)
	cmd.Stdout, cmd.Stderr = e.stdout, e.stderr
	cmd.SysProcAttr = &syscall.SysProcAttr{Pdeathsig: syscall.SIGKILL} // never outlive the intermediary
	t0 := time.Now()
	if err := cmd.Run(); err != nil {
		return fmt.Errorf("%s: %w", filepath.Base(argv[0]), err)
	}
	u := childUsage{Wall: time.Since(t0).Seconds()}
	if ru, ok := cmd.ProcessState.SysUsage().(*syscall.Rusage); ok {
		u.CPU = tv(ru.Utime) + tv(ru.Stime)
		u.PeakRSS = ru.Maxrss * 1024 // Linux: KiB
	}
	return matrixio.WriteJSON(path, u)
}

func tv(t syscall.Timeval) float64 { return float64(t.Sec) + float64(t.Usec)/1e6 }

// lastLine returns the child's last line of output, skipping the
// intermediary's own closing line.
func lastLine(s string) string {
	lines := strings.Split(strings.TrimSpace(s), "\n")
	for i := len(lines) - 1; i >= 0; i-- {
		if l := strings.TrimSpace(lines[i]); l != "" && !strings.HasPrefix(l, "clinal bench: ") {
			return l
		}
	}
	return strings.TrimSpace(s)
}

// benchRow is one line of bench.tsv.
type benchRow struct {
	Samples, Markers int
	Phase            string
	U                childUsage
	Passes           int // pca only; 0 otherwise
	Threads, K       int
}

// pcaReport is the part of PREFIX.report.json bench reads.
type pcaReport struct {
	SamplesUsed int `json:"samples_used"`
	MarkersUsed int `json:"markers_used"`
	K           int `json:"k"`
	BlockSize   int `json:"block_size"`
	Passes      int `json:"passes"`
	Memory      struct {
		SolverBytes int64 `json:"solver_bytes"`
		TableBytes  int64 `json:"table_bytes"`
		TotalBytes  int64 `json:"total_bytes"`
	} `json:"memory_plan"`
	Phases []struct {
		Name string  `json:"name"`
		Wall float64 `json:"wall_seconds"`
		CPU  float64 `json:"cpu_seconds"`
	} `json:"phases"`
}

// benchPCAFlags are the pca flags of every calibration run. --tw approx
// is what --tw auto picks above 4000 samples; the exact trace(K^2) it
// uses below costs N/32 extra passes and would bend the per-pass model.
var benchPCAFlags = []string{"--tw", "approx", "--no-resume"}

// doBench measures every size of the grid and fits the model.
func doBench(ctx context.Context, e *env, o *benchOptions) error {
	work := filepath.Join(o.out, "work")
	if err := os.MkdirAll(work, 0o755); err != nil {
		return fmt.Errorf("bench: %w", err)
	}
	logf, err := os.Create(filepath.Join(o.out, "bench.log"))
	if err != nil {
		return fmt.Errorf("bench: %w", err)
	}
	defer logf.Close()
	m := &benchModel{Comment: "clinal bench cost model; see benchmarks/scaling/README.md",
		Created: time.Now().UTC().Format(time.RFC3339), Machine: thisMachine(), K: o.k, Threads: o.threads,
		PCAFlags: benchPCAFlags}
	// Prepare every size, then run pca round-robin over the sizes, so that
	// a burst of other load on the machine hits one run of a size rather
	// than all its repeats.
	var rows []benchRow
	sizes := benchSizes(o)
	for _, sz := range sizes {
		rs, err := benchPrepare(ctx, o, work, sz[0], sz[1], logf)
		if err != nil {
			return err
		}
		rows = append(rows, rs...)
		fmt.Fprintf(e.stderr, "bench: %d samples x %d markers: %s\n", sz[0], sz[1], phaseSummary(rs))
	}
	m.Points = make([]benchPoint, len(sizes))
	for r := 0; r < o.repeat; r++ {
		for i, sz := range sizes {
			pt := &m.Points[i]
			pt.Samples, pt.Markers, pt.Threads = sz[0], sz[1], o.threads
			row, err := benchPCA(ctx, o, work, pt, logf)
			if err != nil {
				return err
			}
			rows = append(rows, row)
			if r == o.repeat-1 {
				fmt.Fprintf(e.stderr, "bench: %d samples x %d markers: pca %.2f s wall, %.2f s CPU (least of %d), %d passes, peak %s\n",
					pt.Samples, pt.Markers, pt.Wall, pt.CPU, pt.Repeats, pt.Passes, randsvd.FormatBytes(pt.PeakRSS))
			}
		}
	}
	if !o.keep {
		os.RemoveAll(work)
	}
	sortRows(rows, sizes)
	if err := writeBenchTSV(filepath.Join(o.out, "bench.tsv"), rows); err != nil {
		return err
	}
	if err := fitModel(m); err != nil {
		return err
	}
	if err := matrixio.WriteJSON(filepath.Join(o.out, "bench-model.json"), m); err != nil {
		return err
	}
	if err := writeBenchPlots(o.out, m); err != nil {
		return err
	}
	printFits(e.stdout, m)
	fmt.Fprintf(e.stdout, "bench: wrote %s/{bench.tsv,bench-model.json,bench.log} and plots %s/{memory,time}-vs-{markers,samples}.{png,svg}\n", o.out, o.out)
	fmt.Fprintf(e.stdout, "bench: forecast with this model: clinal bench --predict --model %s --samples 500000 --markers 1000000\n",
		filepath.Join(o.out, "bench-model.json"))
	return nil
}

// sortRows orders bench.tsv by size (in the order measured), then phase.
func sortRows(rows []benchRow, sizes [][2]int) {
	idx := map[[2]int]int{}
	for i, s := range sizes {
		idx[s] = i
	}
	phase := map[string]int{"simulate": 0, "import": 1, "pca": 2}
	sort.SliceStable(rows, func(i, j int) bool {
		a, b := idx[[2]int{rows[i].Samples, rows[i].Markers}], idx[[2]int{rows[j].Samples, rows[j].Markers}]
		if a != b {
			return a < b
		}
		return phase[rows[i].Phase] < phase[rows[j].Phase]
	})
}

func phaseSummary(rs []benchRow) string {
	var parts []string
	for _, r := range rs {
		if r.Phase != "pca" {
			parts = append(parts, fmt.Sprintf("%s %.2f s", r.Phase, r.U.Wall))
		}
	}
	return strings.Join(parts, ", ")
}

// benchName is the path prefix of one size's cohort and pca outputs.
func benchName(work string, n, mk int) string {
	return filepath.Join(work, fmt.Sprintf("s_%dx%d", n, mk))
}

// benchPrepare simulates one cohort, as a VCF that is then imported or
// directly as a store.
func benchPrepare(ctx context.Context, o *benchOptions, work string, n, mk int, log io.Writer) ([]benchRow, error) {
	name := benchName(work, n, mk)
	store := name + ".clinal"
	sim := []string{"simulate", "--samples", strconv.Itoa(n), "--markers", strconv.Itoa(mk),
		"--seed", strconv.FormatUint(o.seed, 10), "--threads", strconv.Itoa(o.threads)}
	var rows []benchRow
	row := func(phase string, u childUsage) {
		rows = append(rows, benchRow{Samples: n, Markers: mk, Phase: phase, U: u, Threads: o.threads, K: o.k})
	}
	if !o.importVCF {
		u, err := runChild(ctx, o.exe, append(sim, "-o", store), log)
		if err != nil {
			return nil, err
		}
		row("simulate", u)
		return rows, nil
	}
	vcf := name + ".vcf.gz"
	defer os.Remove(vcf)
	u, err := runChild(ctx, o.exe, append(sim, "-o", vcf), log)
	if err != nil {
		return nil, err
	}
	row("simulate", u)
	u, err = runChild(ctx, o.exe, []string{"import", "-o", store, "--threads", strconv.Itoa(o.threads), vcf}, log)
	if err != nil {
		return nil, err
	}
	row("import", u)
	return rows, nil
}

// benchPCA runs pca once on a prepared size and folds the run into pt:
// the least wall and CPU time (with their solve phases), the largest peak
// RSS.
func benchPCA(ctx context.Context, o *benchOptions, work string, pt *benchPoint, log io.Writer) (benchRow, error) {
	name := benchName(work, pt.Samples, pt.Markers)
	args := append([]string{"pca", name + ".clinal", "-k", strconv.Itoa(o.k), "-o", name, "--threads", strconv.Itoa(o.threads),
		"--seed", strconv.FormatUint(o.seed, 10)}, benchPCAFlags...)
	u, err := runChild(ctx, o.exe, args, log)
	if err != nil {
		return benchRow{}, err
	}
	rep, err := readPCAReport(name + ".report.json")
	if err != nil {
		return benchRow{}, err
	}
	var solveWall, solveCPU float64
	for _, p := range rep.Phases {
		if p.Name == "solve" {
			solveWall += p.Wall
			solveCPU += p.CPU
		}
	}
	if rep.Passes < 1 || rep.BlockSize < 1 || rep.Memory.SolverBytes <= 0 || rep.Memory.TotalBytes <= 0 || solveWall <= 0 {
		return benchRow{}, fmt.Errorf("bench: %s.report.json lacks passes, block_size, memory_plan or the solve phase", name)
	}
	if pt.Repeats > 0 && rep.Passes != pt.Passes {
		return benchRow{}, fmt.Errorf("bench: %s: run %d took %d passes, the first %d: the runs are not deterministic", name, pt.Repeats+1, rep.Passes, pt.Passes)
	}
	if pt.Repeats == 0 {
		pt.Wall, pt.CPU = math.Inf(1), math.Inf(1)
	}
	pt.Repeats++
	pt.SamplesUsed, pt.MarkersUsed, pt.K, pt.BlockSize, pt.Passes = rep.SamplesUsed, rep.MarkersUsed, rep.K, rep.BlockSize, rep.Passes
	pt.Plan = partsOf(rep.Memory.SolverBytes, rep.Memory.TableBytes, rep.Memory.TotalBytes)
	if u.Wall < pt.Wall {
		pt.Wall, pt.SolveWall = u.Wall, solveWall
	}
	if u.CPU < pt.CPU {
		pt.CPU, pt.SolveCPU = u.CPU, solveCPU
	}
	pt.PeakRSS = max(pt.PeakRSS, u.PeakRSS)
	return benchRow{Samples: pt.Samples, Markers: pt.Markers, Phase: "pca", U: u, Passes: rep.Passes, Threads: o.threads, K: o.k}, nil
}

func readPCAReport(path string) (*pcaReport, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("bench: %w", err)
	}
	var rep pcaReport
	if err := json.Unmarshal(b, &rep); err != nil {
		return nil, fmt.Errorf("bench: %s: %w", path, err)
	}
	return &rep, nil
}

// benchSizes is the grid of --samples x --markers followed by --extra.
func benchSizes(o *benchOptions) [][2]int {
	var out [][2]int
	for _, n := range o.samples {
		for _, mk := range o.markers {
			out = append(out, [2]int{n, mk})
		}
	}
	return append(out, o.extra...)
}

// benchTSVHeader is the header of bench.tsv.
const benchTSVHeader = "samples\tmarkers\tphase\twall_seconds\tcpu_seconds\tpeak_rss_bytes\tpasses\tthreads\tk"

func writeBenchTSV(path string, rows []benchRow) error {
	return matrixio.WriteFileAtomic(path, func(w io.Writer) error {
		bw := bufio.NewWriter(w)
		fmt.Fprintln(bw, benchTSVHeader)
		for _, r := range rows {
			passes := "NA"
			if r.Phase == "pca" {
				passes = strconv.Itoa(r.Passes)
			}
			fmt.Fprintf(bw, "%d\t%d\t%s\t%.3f\t%.3f\t%d\t%s\t%d\t%d\n", r.Samples, r.Markers, r.Phase, r.U.Wall, r.U.CPU,
				r.U.PeakRSS, passes, r.Threads, r.K)
		}
		return bw.Flush()
	})
}

// writeBenchPlots draws measured memory and time against markers (one
// line per sample count) and against samples (one line per marker count),
// with the fitted model dashed.
func writeBenchPlots(dir string, m *benchModel) error {
	by := func(key func(benchPoint) int) map[int][]benchPoint {
		g := map[int][]benchPoint{}
		for _, p := range m.Points {
			g[key(p)] = append(g[key(p)], p)
		}
		return g
	}
	mem := func(p benchPoint) (float64, float64) {
		return float64(p.PeakRSS) / (1 << 20), dot(m.Memory.Coef, memTerms(p.Plan)) / (1 << 20)
	}
	tim := func(p benchPoint) (float64, float64) {
		return p.Wall, dot(m.Wall.Coef, wallTerms(p.Samples, p.Markers, p.BlockSize, p.Passes, p.Threads))
	}
	plots := []struct {
		name, title, xlab, ylab string
		group, x                func(benchPoint) int
		y                       func(benchPoint) (float64, float64)
		series                  string
		logY                    bool
	}{
		{"memory-vs-markers", "Peak memory of clinal pca", "markers", "peak RSS (MiB)",
			func(p benchPoint) int { return p.Samples }, func(p benchPoint) int { return p.Markers }, mem, "%d samples", false},
		{"memory-vs-samples", "Peak memory of clinal pca", "samples", "peak RSS (MiB)",
			func(p benchPoint) int { return p.Markers }, func(p benchPoint) int { return p.Samples }, mem, "%d markers", false},
		{"time-vs-markers", "Wall time of clinal pca", "markers", "wall time (s)",
			func(p benchPoint) int { return p.Samples }, func(p benchPoint) int { return p.Markers }, tim, "%d samples", true},
		{"time-vs-samples", "Wall time of clinal pca", "samples", "wall time (s)",
			func(p benchPoint) int { return p.Markers }, func(p benchPoint) int { return p.Samples }, tim, "%d markers", true},
	}
	for _, pl := range plots {
		groups := by(pl.group)
		var keys []int
		for k := range groups {
			keys = append(keys, k)
		}
		sort.Ints(keys)
		lp := &htmlreport.LinePlot{Title: pl.title + " (dashed: model)", XLabel: pl.xlab, YLabel: pl.ylab, LogX: true, LogY: pl.logY}
		for _, k := range keys {
			pts := groups[k]
			if len(pts) < 2 {
				continue // an --extra size off the grid
			}
			sort.Slice(pts, func(i, j int) bool { return pl.x(pts[i]) < pl.x(pts[j]) })
			s := htmlreport.Series{Name: fmt.Sprintf(pl.series, k)}
			for _, p := range pts {
				y, model := pl.y(p)
				s.X, s.Y, s.Model = append(s.X, float64(pl.x(p))), append(s.Y, y), append(s.Model, model)
			}
			lp.Series = append(lp.Series, s)
		}
		if err := htmlreport.WriteLinePlot(filepath.Join(dir, pl.name), lp); err != nil {
			return err
		}
	}
	return nil
}

// printFits renders the model and its errors.
func printFits(w io.Writer, m *benchModel) {
	fmt.Fprintf(w, "bench: %d sizes, k=%d, %d threads, %d-%d passes\n", len(m.Points), m.K, m.Threads, m.PassesRange[0], m.PassesRange[1])
	for _, f := range []struct {
		name string
		fit  linFit
	}{{"memory", m.Memory}, {"wall time", m.Wall}, {"CPU time", m.CPU}} {
		fmt.Fprintf(w, "bench: %s: %s\n", f.name, f.fit.Formula)
		var cs []string
		for i, c := range f.fit.Coef {
			cs = append(cs, fmt.Sprintf("%s: %.4g", f.fit.Terms[i], c))
		}
		fmt.Fprintf(w, "bench:   coefficients %s\n", strings.Join(cs, ", "))
		h := f.fit.HeldOut
		fmt.Fprintf(w, "bench:   fit: max relative residual %.1f%%; leave-one-out: max error %.1f%%; largest size %dx%d held out: predicted %.4g, measured %.4g, error %+.1f%%\n",
			100*f.fit.MaxRelResidual, 100*f.fit.LOOMaxRelError, h.Samples, h.Markers, h.Predicted, h.Measured, 100*h.RelError)
	}
}

// thisMachine describes the calibration machine.
func thisMachine() machineInfo {
	mi := machineInfo{CPUs: runtime.NumCPU(), Arch: runtime.GOARCH, Go: runtime.Version(), Version: version}
	if b, err := os.ReadFile("/proc/cpuinfo"); err == nil {
		for _, l := range strings.Split(string(b), "\n") {
			if k, v, ok := strings.Cut(l, ":"); ok && strings.TrimSpace(k) == "model name" {
				mi.CPU = strings.TrimSpace(v)
				break
			}
		}
	}
	return mi
}

// formatSeconds renders a duration in the largest unit that keeps it at
// least 1.
func formatSeconds(s float64) string {
	switch {
	case s < 120:
		return fmt.Sprintf("%.1f s", s)
	case s < 2*3600:
		return fmt.Sprintf("%.1f min", s/60)
	case s < 3*86400:
		return fmt.Sprintf("%.1f h", s/3600)
	default:
		return fmt.Sprintf("%.1f days", s/86400)
	}
}
