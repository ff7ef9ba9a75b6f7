package main

import (
	"context"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"

	"github.com/clinal/clinal/randsvd"
)

// runBench: clinal bench -o DIR [--samples LIST] [--markers LIST] [-k K]
// [--threads T] measures pca over a grid of simulated cohorts and fits a
// cost model; clinal bench --predict --samples N --markers M forecasts
// memory and time from a saved model (or the built-in one).
func runBench(ctx context.Context, e *env, args []string) error {
	// Internal mode of runChild: clinal bench --measure-into FILE -- CMD
	// [ARGS]. Recognized before flag parsing so that CMD's own flags are
	// left alone.
	if len(args) >= 3 && args[0] == "--measure-into" && args[2] == "--" {
		return doMeasure(ctx, e, args[1], args[3:])
	}
	o, err := parseBench(args)
	if err != nil {
		return err
	}
	if o.predict {
		return doPredict(ctx, e.stdout, o)
	}
	if o.replot {
		m, err := loadModel(filepath.Join(o.out, "bench-model.json"))
		if err != nil {
			return err
		}
		return writeBenchPlots(o.out, m)
	}
	if o.exe == "" {
		exe, err := os.Executable()
		if err != nil {
			return fmt.Errorf("bench: %w", err)
		}
		o.exe = exe
	}
	return doBench(ctx, e, o)
}

func parseBench(args []string) (*benchOptions, error) {
	o := &benchOptions{}
	fs := flag.NewFlagSet("bench", flag.ContinueOnError)
	fs.StringVar(&o.out, "o", "", "output directory (bench.tsv, bench-model.json, plots)")
	samples := fs.String("samples", "1000,2000,4000", "comma-separated sample counts (with --predict: one count)")
	markers := fs.String("markers", "10000,20000,40000,80000", "comma-separated marker counts (with --predict: one count)")
	extra := fs.String("extra", "8000x5000,16000x2500,32000x2500,1000x160000",
		"sizes beyond the grid, SAMPLESxMARKERS: leverage for the per-sample and per-marker terms of the model (\"\" for none)")
	fs.IntVar(&o.repeat, "repeat", 5, "pca runs per size; the least wall and CPU time count (the least disturbed by other load)")
	fs.IntVar(&o.k, "k", 10, "number of PCs")
	fs.IntVar(&o.threads, "threads", runtime.NumCPU(), "compute threads of every run (and of the forecast)")
	fs.Uint64Var(&o.seed, "seed", 1, "simulation and solver seed")
	fs.BoolVar(&o.importVCF, "import", true, "simulate VCFs and time their import (false: simulate stores directly)")
	fs.BoolVar(&o.keep, "keep", false, "keep the simulated cohorts and pca outputs in DIR/work")
	fs.BoolVar(&o.replot, "replot", false, "with -o DIR: redraw DIR's plots from DIR/bench-model.json, measuring nothing")
	fs.BoolVar(&o.predict, "predict", false, "forecast memory and time for --samples N --markers M")
	fs.StringVar(&o.model, "model", "", "with --predict: bench-model.json of a bench run (default: the built-in model)")
	fs.StringVar(&o.exe, "clinal", "", "clinal binary to measure (default: this one), e.g. to compare two builds")
	fs.IntVar(&o.passes, "passes", 0, "with --predict: passes to assume (default: the most seen in calibration)")
	pos, err := parseArgs(fs, args)
	if err != nil {
		return nil, err
	}
	if len(pos) > 0 {
		return nil, usage("bench: unexpected argument %q", pos[0])
	}
	if o.samples, err = parseCounts("--samples", *samples); err != nil {
		return nil, err
	}
	if o.markers, err = parseCounts("--markers", *markers); err != nil {
		return nil, err
	}
	if o.extra, err = parseSizes(*extra); err != nil {
		return nil, err
	}
	switch {
	case o.repeat < 1:
		return nil, usage("bench: --repeat %d: want at least 1", o.repeat)
	case o.k < 1:
		return nil, usage("bench: -k %d: want at least 1", o.k)
	case o.threads < 1:
		return nil, usage("bench: --threads %d: want at least 1", o.threads)
	case o.passes < 0:
		return nil, usage("bench: --passes %d: want at least 1", o.passes)
	}
	if o.predict {
		if len(o.samples) != 1 || len(o.markers) != 1 {
			return nil, usage("bench --predict: want one --samples and one --markers value, got %d and %d", len(o.samples), len(o.markers))
		}
		return o, nil
	}
	if o.out == "" {
		return nil, usage("bench: -o DIR is required (or --predict)")
	}
	if n := len(benchSizes(o)); n < 4 {
		return nil, usage("bench: %d sizes; the model needs at least 4 (one is held out to test it)", n)
	}
	for _, sz := range benchSizes(o) {
		if sz[0] <= o.k {
			return nil, usage("bench: %d samples: want more samples than -k %d", sz[0], o.k)
		}
	}
	return o, nil
}

// parseCounts reads a comma-separated list of positive counts; 1e6 and
// 500k style values are accepted.
func parseCounts(flagName, s string) ([]int, error) {
	var out []int
	for _, f := range strings.Split(s, ",") {
		f = strings.TrimSpace(f)
		mult := 1.0
		switch {
		case strings.HasSuffix(f, "k"):
			mult, f = 1e3, strings.TrimSuffix(f, "k")
		case strings.HasSuffix(f, "M"):
			mult, f = 1e6, strings.TrimSuffix(f, "M")
		}
		v, err := strconv.ParseFloat(f, 64)
		if err != nil || v*mult < 1 || v*mult > 1e12 || v*mult != float64(int64(v*mult)) {
			return nil, usage("bench: %s %q: want comma-separated positive whole counts (e.g. 1000,2000 or 500k)", flagName, s)
		}
		out = append(out, int(v*mult))
	}
	return out, nil
}

// parseSizes reads a comma-separated list of SAMPLESxMARKERS sizes.
func parseSizes(s string) ([][2]int, error) {
	if strings.TrimSpace(s) == "" {
		return nil, nil
	}
	var out [][2]int
	for _, f := range strings.Split(s, ",") {
		a, b, ok := strings.Cut(strings.TrimSpace(f), "x")
		if !ok {
			return nil, usage("bench: --extra %q: want SAMPLESxMARKERS sizes, e.g. 32000x2500", s)
		}
		n, err := parseCounts("--extra", a)
		if err != nil {
			return nil, err
		}
		m, err := parseCounts("--extra", b)
		if err != nil {
			return nil, err
		}
		out = append(out, [2]int{n[0], m[0]})
	}
	return out, nil
}

// doPredict prints the forecast for one size with its interval and
// assumptions.
func doPredict(ctx context.Context, w io.Writer, o *benchOptions) error {
	var m *benchModel
	var err error
	src := o.model
	if src == "" {
		src = "built-in model (benchmarks/scaling/bench-model.json)"
		m, err = parseModel("built-in model", []byte(defaultModelJSON))
	} else {
		m, err = loadModel(o.model)
	}
	if err != nil {
		return err
	}
	n, mk := o.samples[0], o.markers[0]
	if n <= o.k {
		return usage("bench --predict: --samples %d: want more samples than -k %d", n, o.k)
	}
	passes := o.passes
	passNote := "set with --passes"
	if passes == 0 {
		passes = m.PassesRange[1]
		passNote = fmt.Sprintf("the most of the calibration runs, which took %d-%d; set with --passes", m.PassesRange[0], m.PassesRange[1])
	}
	plan, err := planFor(ctx, n, mk, o.k, m.Oversample, o.threads)
	if err != nil {
		return err
	}
	f := m.predict(n, mk, o.k, o.threads, passes, plan)
	n0, n1, m0, m1 := m.sizeRange()
	fmt.Fprintf(w, "forecast for clinal pca on %d samples x %d markers, k=%d, %d threads:\n", n, mk, o.k, o.threads)
	fmt.Fprintf(w, "  peak memory  %s  (interval %s to %s)\n", randsvd.FormatBytes(int64(f.Memory)),
		randsvd.FormatBytes(int64(f.MemoryLo)), randsvd.FormatBytes(int64(f.MemoryHi)))
	fmt.Fprintf(w, "               floor %s: the solver's 8 blocks of %d x %d float64 and the marker/sample tables (randsvd.PlanMemory's formula)\n",
		randsvd.FormatBytes(f.Floor), n, f.BlockSize)
	lo, hi := m.rssOverPlan()
	fmt.Fprintf(w, "               randsvd.PlanMemory's own estimate %s; the calibration runs (no --memory) peaked at %.2f-%.2fx theirs\n",
		randsvd.FormatBytes(f.Plan.total()), lo, hi)
	fmt.Fprintf(w, "  wall time    %s  (interval %s to %s)\n", formatSeconds(f.Wall), formatSeconds(f.WallLo), formatSeconds(f.WallHi))
	fmt.Fprintf(w, "               %s per pass x %d passes + %s once (QC recount, loadings, per-marker and per-sample output)\n",
		formatSeconds(f.PerPass), passes, formatSeconds(f.Once))
	fmt.Fprintf(w, "  CPU time     %s  (interval %s to %s; %.1f core-hours)\n", formatSeconds(f.CPU), formatSeconds(f.CPULo),
		formatSeconds(f.CPUHi), f.CPU/3600)
	fmt.Fprintln(w, "assumptions:")
	fmt.Fprintf(w, "  threads      %d (wall time scales as 1/threads; memory counts the plan's chunk buffers: threads+1, and up to two more for decoding ahead)\n", o.threads)
	fmt.Fprintf(w, "  passes       %d (%s)\n", passes, passNote)
	fmt.Fprintf(w, "  k, l         k=%d, block l=%d = k + oversample (a pass applies K to b = max(k, l/2) vectors, rounded up to 4; its cost, as fitted, grows with N*M and with l)\n", o.k, f.BlockSize)
	fmt.Fprintf(w, "  run          clinal pca %s, default QC, loadings written, a geno2 store with default chunks\n", strings.Join(m.PCAFlags, " "))
	fmt.Fprintf(w, "  machine      like the calibration one: %s, %d CPUs, %s, %s\n", m.Machine.CPU, m.Machine.CPUs, m.Machine.Arch, m.Created)
	fmt.Fprintf(w, "  scaling      cost per genotype as measured at the calibration sizes, where the N x l blocks took at most %s;\n"+
		"               here they take %s each, beyond the CPU caches, so a pass may cost more\n",
		randsvd.FormatBytes(int64(8*n1*blockSize(n1, m.K, m.Oversample))), randsvd.FormatBytes(int64(8*n*f.BlockSize)))
	fmt.Fprintf(w, "  calibration  %d sizes, %d-%d samples x %d-%d markers: this is %.0fx their largest samples and %.0fx their largest markers\n",
		len(m.Points), n0, n1, m0, m1, float64(n)/float64(n1), float64(mk)/float64(m1))
	fmt.Fprintf(w, "  interval     +-%.0f%% memory, +-%.0f%% wall, +-%.0f%% CPU: the worst relative fit residual or leave-one-out error of the calibration\n",
		100*f.MemErr, 100*f.WallErr, 100*f.CPUErr)
	fmt.Fprintf(w, "  model        %s\n", src)
	return nil
}
