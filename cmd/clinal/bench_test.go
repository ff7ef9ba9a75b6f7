package main

import (
	"bufio"
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"runtime"
	"strconv"
	"strings"
	"testing"

	"github.com/clinal/clinal/matrixio"
	"github.com/clinal/clinal/matrixio/synth"
	"github.com/clinal/clinal/randsvd"
)

// benchRefTool returns an external program's path, skipping the test when
// it is absent unless CLINAL_REQUIRE_REFS=1 (CI), where it fails.
func benchRefTool(t *testing.T, name string) string {
	t.Helper()
	p, err := exec.LookPath(name)
	if err != nil {
		if os.Getenv("CLINAL_REQUIRE_REFS") == "1" {
			t.Fatalf("%s not found and CLINAL_REQUIRE_REFS=1", name)
		}
		t.Skipf("%s not found", name)
	}
	return p
}

// TestWLSExact: on data generated exactly by y = X c, least squares
// returns c (by construction; any correct solver must), for full-rank
// designs of the shapes the model uses.
func TestWLSExact(t *testing.T) {
	cases := []struct {
		name string
		coef []float64
		x    func(i int) []float64
	}{
		{"line", []float64{2, 3}, func(i int) []float64 { return []float64{1, float64(i + 1)} }},
		{"time terms", []float64{0.2, 3e-10, 2e-8, 1e-6, 4e-6}, func(i int) []float64 {
			n, m, p := 1000*(1+i%3), 5000*(1<<(i/3)), 5+i%4
			return wallTerms(n, m, 20, p, 2)
		}},
		{"memory terms", []float64{3e7, 1.5, 0.4, 2}, func(i int) []float64 {
			n, m := int64(1000*(1<<(i%4))), int64(2500*(1<<(i/4)))
			return memTerms(planParts{Solver: 1280 * n, Other: 48<<20 + 3*n*2048/(1+n/2048), Tables: 300*m + 96*n})
		}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			var x [][]float64
			var y []float64
			for i := range 12 {
				x = append(x, tc.x(i))
				y = append(y, dot(tc.coef, tc.x(i)))
			}
			got, err := wls(x, y)
			if err != nil {
				t.Fatal(err)
			}
			for j := range got {
				if math.Abs(got[j]/tc.coef[j]-1) > 1e-6 {
					t.Errorf("coef %d: %g, want %g", j, got[j], tc.coef[j])
				}
			}
		})
	}
}

// TestWLSAgainstNumpy compares the relative-error least squares on noisy
// data with numpy.linalg.lstsq (Debian python3-numpy) on the same rows
// divided by y.
func TestWLSAgainstNumpy(t *testing.T) {
	py := benchRefTool(t, "/usr/bin/python3")
	if err := exec.Command(py, "-c", "import numpy").Run(); err != nil {
		if os.Getenv("CLINAL_REQUIRE_REFS") == "1" {
			t.Fatal("python3-numpy missing and CLINAL_REQUIRE_REFS=1")
		}
		t.Skip("python3-numpy missing")
	}
	r := rand.New(rand.NewPCG(3, 4))
	var x [][]float64
	var y []float64
	var rows []string
	for i := range 15 {
		n, m, p := 1000*(1+i%3), 2500*(1<<(i/3)), 5+i%4
		xi := wallTerms(n, m, 20, p, 2)
		yi := dot([]float64{0.3, 4e-10, 2e-8, 1e-6, 5e-6}, xi) * (1 + 0.1*r.NormFloat64())
		x, y = append(x, xi), append(y, yi)
		rows = append(rows, fmt.Sprintf("[%v,%v,%v,%v,%v,%v]", xi[0], xi[1], xi[2], xi[3], xi[4], yi))
	}
	got, err := wls(x, y)
	if err != nil {
		t.Fatal(err)
	}
	script := "import numpy as np\nd=np.array([" + strings.Join(rows, ",") + "])\n" +
		"A=d[:,:5]/d[:,5:6]\nc=np.linalg.lstsq(A,np.ones(len(d)),rcond=None)[0]\nprint(' '.join(repr(v) for v in c))\n"
	out, err := exec.Command(py, "-c", script).Output()
	if err != nil {
		t.Fatalf("python3: %v", err)
	}
	f := strings.Fields(string(out))
	if len(f) != 5 {
		t.Fatalf("numpy printed %q", out)
	}
	for j := range 5 {
		want, _ := strconv.ParseFloat(f[j], 64)
		if want < 0 {
			t.Skipf("numpy's unconstrained coefficient %d is negative (%g); the non-negative fit differs by design", j, want)
		}
		if math.Abs(got[j]/want-1) > 1e-6 {
			t.Errorf("coef %d: %g, numpy.linalg.lstsq %g", j, got[j], want)
		}
	}
}

// TestWLSNonNegative: when the unconstrained fit wants a negative cost,
// that term is fixed at 0 and the others refitted; the result equals the
// fit without the term.
func TestWLSNonNegative(t *testing.T) {
	// y = 10 - 0.5*x2 + 2*x1 exactly: the x2 coefficient is negative.
	var x, x2 [][]float64
	var y []float64
	for i := range 10 {
		a, b := float64(i+1), float64((i*7)%5+1)
		x = append(x, []float64{1, a, b})
		x2 = append(x2, []float64{1, a})
		y = append(y, 10+2*a-0.5*b)
	}
	got, err := wls(x, y)
	if err != nil {
		t.Fatal(err)
	}
	want, err := wls(x2, y)
	if err != nil {
		t.Fatal(err)
	}
	if got[2] != 0 || math.Abs(got[0]-want[0]) > 1e-9*math.Abs(want[0]) || math.Abs(got[1]-want[1]) > 1e-9*math.Abs(want[1]) {
		t.Errorf("got %v, want [%g %g 0]", got, want[0], want[1])
	}
}

// TestFitStatsHeldOut: exact data except the largest size, 10% high. The
// fit to the others is exact, so holding the largest out predicts its
// unperturbed value: relative error 1/1.1 - 1 = -9.09% (hand computed),
// and no leave-one-out error exceeds it by much.
func TestFitStatsHeldOut(t *testing.T) {
	var pts []benchPoint
	var x [][]float64
	var y []float64
	for i := range 6 {
		p := benchPoint{Samples: 1000 * (i + 1), Markers: 5000}
		xi := []float64{1, float64(p.Samples)}
		yi := dot([]float64{5, 0.01}, xi)
		if i == 5 {
			yi *= 1.1
		}
		pts, x, y = append(pts, p), append(x, xi), append(y, yi)
	}
	var f linFit
	if err := fitStats(&f, x, y, pts, func(idx []int) ([]float64, error) { return wls(pick(x, y, idx)) }); err != nil {
		t.Fatal(err)
	}
	if f.HeldOut.Samples != 6000 || math.Abs(f.HeldOut.RelError-(1/1.1-1)) > 1e-9 {
		t.Errorf("held out %+v, want 6000 samples with error %.6f", f.HeldOut, 1/1.1-1)
	}
	if f.LOOMaxRelError < 0.0909 || f.MaxRelResidual <= 0 || f.MaxRelResidual >= 0.0909 {
		t.Errorf("LOO max %.4f (want >= 0.0909), residual %.4f (want in (0, 0.0909))", f.LOOMaxRelError, f.MaxRelResidual)
	}
}

// TestPlanForMatchesPlanMemory: the plan of a cohort that does not exist
// (from proxy stores) agrees with randsvd.PlanMemory on a real store of
// that size (simulated here) for several shapes: solver blocks and tables
// exactly, the total within 5% (the chunk buffers hold compressed chunks
// whose size depends on the data).
func TestPlanForMatchesPlanMemory(t *testing.T) {
	cases := []struct{ n, m, k, threads int }{
		{300, 20000, 10, 2}, {1500, 12000, 5, 1}, {2500, 9000, 20, 4}, {9000, 3000, 10, 2},
	}
	for _, tc := range cases {
		t.Run(fmt.Sprintf("%dx%d", tc.n, tc.m), func(t *testing.T) {
			cfg := synth.DefaultConfig()
			cfg.Samples, cfg.Markers = tc.n, tc.m
			c, err := synth.New(cfg)
			if err != nil {
				t.Fatal(err)
			}
			path := filepath.Join(t.TempDir(), "s.clinal")
			if err := c.WriteStore(context.Background(), path, 2); err != nil {
				t.Fatal(err)
			}
			st, err := matrixio.Open(path)
			if err != nil {
				t.Fatal(err)
			}
			defer st.Close()
			plan, err := randsvd.PlanMemory(st, tc.k, 0, tc.threads, 0)
			if err != nil {
				t.Fatal(err)
			}
			mine, err := planFor(context.Background(), tc.n, tc.m, tc.k, 0, tc.threads)
			if err != nil {
				t.Fatal(err)
			}
			if mine.Solver != plan.SolverBytes || mine.Tables != plan.TableBytes {
				t.Errorf("solver %d, tables %d; PlanMemory on the store: %d, %d", mine.Solver, mine.Tables, plan.SolverBytes, plan.TableBytes)
			}
			if r := float64(mine.total()) / float64(plan.TotalBytes); math.Abs(r-1) > 0.05 {
				t.Errorf("total %d, PlanMemory on the store %d (ratio %.3f)", mine.total(), plan.TotalBytes, r)
			}
		})
	}
}

// TestPredictFormula: a model with round coefficients gives the forecast
// computed by hand from the documented formulas.
func TestPredictFormula(t *testing.T) {
	m := &benchModel{K: 10, Threads: 2, PassesRange: [2]int{5, 7},
		Memory: linFit{Coef: []float64{1e7, 2, 0.5, 3}, MaxRelResidual: 0.05, LOOMaxRelError: 0.1},
		Wall:   linFit{Coef: []float64{1, 1e-10, 1e-8, 1e-6}, MaxRelResidual: 0.2, LOOMaxRelError: 0.1},
		CPU:    linFit{Coef: []float64{2, 2e-10, 2e-8, 3e-6}, MaxRelResidual: 0.1, LOOMaxRelError: 0.15},
	}
	n, mk, k, thr, passes := 100000, 200000, 10, 4, 6
	p := planParts{Solver: 8 * 100000 * 20 * 8, Other: 90 << 20, Tables: 200000*300 + 100000*96}
	f := m.predict(n, mk, k, thr, passes, p)
	l := 20.0 // k + max(10, k/2)
	wantMem := 1e7 + 2*float64(p.Solver) + 0.5*float64(p.Other) + 3*float64(p.Tables)
	wantWall := 1 + 1e-10*float64(n)*float64(mk)*l*float64(passes)/4 + 1e-8*float64(n)*float64(mk)/4 + 1e-6*float64(mk)
	wantCPU := 2 + 2e-10*float64(n)*float64(mk)*l*float64(passes) + 2e-8*float64(n)*float64(mk) + 3e-6*float64(mk)
	for _, c := range []struct {
		name      string
		got, want float64
	}{
		{"memory", f.Memory, wantMem}, {"memory hi", f.MemoryHi, wantMem * 1.1},
		{"wall", f.Wall, wantWall}, {"wall lo", f.WallLo, wantWall * 0.8},
		{"cpu", f.CPU, wantCPU}, {"cpu hi", f.CPUHi, wantCPU * 1.15},
		{"solver floor", float64(f.Floor), float64(p.Solver + p.Tables)},
	} {
		if math.Abs(c.got/c.want-1) > 1e-12 {
			t.Errorf("%s: %g, want %g", c.name, c.got, c.want)
		}
	}
	// The per-sample term (models written since it was added have five
	// time coefficients; the four-term model above reads with c_n = 0).
	m.Wall.Coef = append(m.Wall.Coef, 1e-5)
	if f := m.predict(n, mk, k, thr, passes, p); math.Abs(f.Wall/(wantWall+1e-5*float64(n))-1) > 1e-12 ||
		math.Abs(f.Once/(1e-8*float64(n)*float64(mk)/4+1e-6*float64(mk)+1e-5*float64(n))-1) > 1e-12 {
		t.Errorf("five-term wall %g, once %g", f.Wall, f.Once)
	}
	// A model whose memory fit says less than the floor is lifted to it.
	m.Memory.Coef = []float64{0, 0, 0, 0}
	if f := m.predict(n, mk, k, thr, passes, p); f.Memory != float64(f.Floor) || f.MemoryLo != float64(f.Floor) {
		t.Errorf("memory %g, lo %g: want both at the floor %d", f.Memory, f.MemoryLo, f.Floor)
	}
}

// TestBuiltinModel: the built-in model is the recorded run of
// benchmarks/scaling, and its forecast for 500,000 x 1,000,000 prints
// the assumptions.
func TestBuiltinModel(t *testing.T) {
	rec, err := os.ReadFile(filepath.Join("..", "..", "benchmarks", "scaling", "bench-model.json"))
	if err != nil {
		t.Fatal(err)
	}
	var a, b any
	if err := json.Unmarshal(rec, &a); err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal([]byte(defaultModelJSON), &b); err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(a, b) {
		t.Error("defaultModelJSON differs from benchmarks/scaling/bench-model.json: copy the recorded model into bench_default.go")
	}
	var out, errb bytes.Buffer
	e := &env{stdout: &out, stderr: &errb}
	if code := run(context.Background(), e, []string{"bench", "--predict", "--samples", "500k", "--markers", "1000000", "--threads", "16"}); code != 0 {
		t.Fatalf("exit %d: %s", code, errb.String())
	}
	for _, want := range []string{"500000 samples x 1000000 markers, k=10, 16 threads", "peak memory", "wall time", "CPU time",
		"threads      16", "passes", "k=10, block l=20", "floor", "interval", "built-in model"} {
		if !strings.Contains(out.String(), want) {
			t.Errorf("forecast lacks %q:\n%s", want, out.String())
		}
	}
}

// TestParseBench: bad flags are usage errors (exit 2) that say what is
// wrong.
func TestParseBench(t *testing.T) {
	dir := t.TempDir()
	badModel := filepath.Join(dir, "m.json")
	os.WriteFile(badModel, []byte(`{"k": 10}`), 0o644)
	cases := []struct {
		args []string
		want string
	}{
		{[]string{"--samples", "1000,2000", "--markers", "5000,10000"}, "-o DIR is required"},
		{[]string{"-o", dir, "--samples", "1000", "--markers", "5000,10000", "--extra", ""}, "2 sizes; the model needs at least 4"},
		{[]string{"-o", dir, "--samples", "0,10"}, "want comma-separated positive whole counts"},
		{[]string{"-o", dir, "--samples", "1.5k,x"}, "want comma-separated positive whole counts"},
		{[]string{"-o", dir, "--extra", "5000"}, "want SAMPLESxMARKERS"},
		{[]string{"-o", dir, "--repeat", "0"}, "--repeat 0"},
		{[]string{"-o", dir, "--samples", "5,1000", "-k", "10"}, "want more samples than -k 10"},
		{[]string{"--predict", "--samples", "1000,2000", "--markers", "5000"}, "want one --samples and one --markers"},
		{[]string{"--predict", "--samples", "1000", "--markers", "5000", "--model", badModel}, badModel + ": bench model lacks coefficients"},
		{[]string{"--predict", "--samples", "1000", "--markers", "5000", "--model", filepath.Join(dir, "none.json")}, "none.json"},
	}
	for _, tc := range cases {
		t.Run(strings.Join(tc.args, " "), func(t *testing.T) {
			var out, errb bytes.Buffer
			code := run(context.Background(), &env{stdout: &out, stderr: &errb}, append([]string{"bench"}, tc.args...))
			if code != 2 || !strings.Contains(errb.String(), tc.want) {
				t.Errorf("exit %d, stderr %q; want 2 and %q", code, errb.String(), tc.want)
			}
		})
	}
}

// TestBenchRun runs a real (tiny) bench through child processes of the
// built command and checks the measurements against the children's own
// accounts: each pca child's report.json records its wall time, CPU time
// and peak RSS from inside (getrusage RUSAGE_SELF), which cannot exceed
// what the parent measured around it (wait4's rusage of the child).
func TestBenchRun(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the command and runs child processes")
	}
	exe := buildBenchClinal(t)
	dir := t.TempDir()
	var out, errb bytes.Buffer
	args := []string{"bench", "-o", dir, "--clinal", exe, "--samples", "600,1200", "--markers", "1500,3000",
		"--extra", "", "--repeat", "2", "--threads", "2", "--keep"}
	if code := run(context.Background(), &env{stdout: &out, stderr: &errb}, args); code != 0 {
		t.Fatalf("exit %d: %s%s", code, out.String(), errb.String())
	}
	f, err := os.Open(filepath.Join(dir, "bench.tsv"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	sc.Scan()
	if sc.Text() != benchTSVHeader {
		t.Fatalf("header %q", sc.Text())
	}
	phases := map[string]int{}
	pcaRows := map[string][]string{}
	for sc.Scan() {
		c := strings.Split(sc.Text(), "\t")
		if len(c) != 9 {
			t.Fatalf("row %q: %d columns", sc.Text(), len(c))
		}
		phases[c[2]]++
		wall, _ := strconv.ParseFloat(c[3], 64)
		cpu, _ := strconv.ParseFloat(c[4], 64)
		rss, _ := strconv.ParseInt(c[5], 10, 64)
		if wall <= 0 || cpu <= 0 || rss < 1<<20 {
			t.Errorf("row %q: wall, CPU and peak RSS must be positive", sc.Text())
		}
		if c[2] == "pca" {
			pcaRows[c[0]+"x"+c[1]] = c
		}
	}
	if phases["simulate"] != 4 || phases["import"] != 4 || phases["pca"] != 8 {
		t.Errorf("phases %v, want 4 simulate, 4 import, 8 pca (2 repeats)", phases)
	}
	// The last pca repeat of each size left its report.json (--keep).
	for size, c := range pcaRows {
		var rep struct {
			Wall    float64 `json:"wall_seconds"`
			CPU     float64 `json:"cpu_seconds"`
			PeakRSS int64   `json:"peak_rss_bytes"`
			Passes  int     `json:"passes"`
		}
		b, err := os.ReadFile(filepath.Join(dir, "work", "s_"+size+".report.json"))
		if err != nil {
			t.Fatal(err)
		}
		if err := json.Unmarshal(b, &rep); err != nil {
			t.Fatal(err)
		}
		wall, _ := strconv.ParseFloat(c[3], 64)
		cpu, _ := strconv.ParseFloat(c[4], 64)
		rss, _ := strconv.ParseInt(c[5], 10, 64)
		passes, _ := strconv.Atoi(c[6])
		// The child reads its peak from /proc/self/status (VmHWM), the parent
		// from getrusage: the two page counts may differ by a few pages.
		if rep.Wall > wall+0.002 || rep.CPU > cpu+0.002 || rep.PeakRSS > rss+rss/100+(1<<20) || passes != rep.Passes {
			t.Errorf("%s: child says wall %.3f CPU %.3f RSS %d passes %d; parent measured %.3f %.3f %d %d",
				size, rep.Wall, rep.CPU, rep.PeakRSS, rep.Passes, wall, cpu, rss, passes)
		}
	}
	m, err := loadModel(filepath.Join(dir, "bench-model.json"))
	if err != nil {
		t.Fatal(err)
	}
	if len(m.Points) != 4 || m.Memory.HeldOut.Samples != 1200 || m.Memory.HeldOut.Markers != 3000 {
		t.Errorf("model has %d points, held out %dx%d; want 4 and 1200x3000", len(m.Points), m.Memory.HeldOut.Samples, m.Memory.HeldOut.Markers)
	}
	for _, name := range []string{"memory-vs-markers", "memory-vs-samples", "time-vs-markers", "time-vs-samples"} {
		b, err := os.ReadFile(filepath.Join(dir, name+".png"))
		if err != nil || !bytes.HasPrefix(b, []byte("\x89PNG\r\n\x1a\n")) {
			t.Errorf("%s.png: missing or not a PNG (%v)", name, err)
		}
	}
	out.Reset()
	if code := run(context.Background(), &env{stdout: &out, stderr: &errb}, []string{"bench", "--predict", "--model",
		filepath.Join(dir, "bench-model.json"), "--samples", "500000", "--markers", "1000000", "--passes", "8"}); code != 0 {
		t.Fatalf("predict: exit %d: %s", code, errb.String())
	}
	if !strings.Contains(out.String(), "passes       8 (set with --passes)") {
		t.Errorf("forecast:\n%s", out.String())
	}
}

// buildBenchClinal builds the command into a temporary directory.
func buildBenchClinal(t *testing.T) string {
	t.Helper()
	gobin := filepath.Join(runtime.GOROOT(), "bin", "go")
	if _, err := os.Stat(gobin); err != nil {
		gobin = "go"
	}
	exe := filepath.Join(t.TempDir(), "clinal")
	if out, err := exec.Command(gobin, "build", "-o", exe, ".").CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	return exe
}
