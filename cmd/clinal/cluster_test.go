package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"

	"github.com/clinal/clinal/matrixio"
	"github.com/clinal/clinal/randsvd"
)

// clCohort writes a store of n samples in pops populations whose allele
// frequencies scatter around an ancestral one (a crude Balding-Nichols
// draw, enough for strong structure), with 1% missing calls, chunks of
// chunk markers, and returns its path and the genotypes (marker-major, 3 =
// missing) for dense references.
func clCohort(t *testing.T, dir string, n, m, chunk, pops int, codec matrixio.Codec) (string, [][]byte) {
	t.Helper()
	r := rand.New(rand.NewPCG(7, uint64(n*m)))
	ids := make([]string, n)
	for i := range ids {
		ids[i] = fmt.Sprintf("isle%d-%04d", i%pops+1, i+1)
	}
	path := filepath.Join(dir, "cohort.clinal")
	w, err := matrixio.Create(path, ids, matrixio.WriterOptions{ChunkMarkers: chunk, Codec: codec})
	if err != nil {
		t.Fatal(err)
	}
	geno := make([][]byte, m)
	f := make([]float32, n)
	for j := 0; j < m; j++ {
		anc := 0.1 + 0.8*r.Float64()
		pf := make([]float64, pops)
		for k := range pf {
			pf[k] = math.Min(0.98, math.Max(0.02, anc+0.25*r.NormFloat64()))
		}
		g := make([]byte, n)
		for i := range g {
			q := pf[i%pops]
			v := byte(0)
			if r.Float64() < q {
				v++
			}
			if r.Float64() < q {
				v++
			}
			if r.Float64() < 0.01 {
				v = matrixio.Missing
			}
			g[i] = v
		}
		geno[j] = g
		mk := matrixio.Marker{Chrom: strconv.Itoa(1 + j*3/m), Pos: int64(5000 * (j + 1)), ID: "mk" + strconv.Itoa(j), Ref: "A", Alt: "G"}
		if codec == matrixio.CodecFloat32 {
			for i, v := range g {
				f[i] = float32(v)
				if v == matrixio.Missing {
					f[i] = float32(math.NaN())
				}
			}
			err = w.AddFloats(mk, f)
		} else {
			err = w.AddGenotypes(mk, g)
		}
		if err != nil {
			t.Fatal(err)
		}
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	return path, geno
}

// denseKX computes K X = Z^T Z X / M with gonum's dense products, Z the
// Patterson-standardized genotypes (p from the non-missing calls, missing
// z = 0, monomorphic markers left out): the reference for the sum of the
// shard partials.
func denseKX(geno [][]byte, n int, x *mat.Dense) *mat.Dense {
	var rows [][]float64
	for _, g := range geno {
		var s, c float64
		for _, v := range g {
			if v != matrixio.Missing {
				s += float64(v)
				c++
			}
		}
		p := s / (2 * c)
		sd := math.Sqrt(2 * p * (1 - p))
		if c == 0 || !(sd > 1e-12) {
			continue
		}
		z := make([]float64, n)
		for i, v := range g {
			if v != matrixio.Missing {
				z[i] = (float64(v) - 2*p) / sd
			}
		}
		rows = append(rows, z)
	}
	zm := mat.NewDense(len(rows), n, nil)
	for j, z := range rows {
		zm.SetRow(j, z)
	}
	var w, y mat.Dense
	w.Mul(zm, x)
	y.Mul(zm.T(), &w)
	y.Scale(1/float64(len(rows)), &y)
	return &y
}

func maxAbs(v []float64) float64 {
	m := 0.0
	for _, x := range v {
		m = math.Max(m, math.Abs(x))
	}
	return m
}

// TestShardPartialsSumToK checks the identity the cluster rests on: the
// partials of disjoint shards (each with M of the whole selection), summed
// in shard order, equal K X of the full operator and of a dense gonum
// computation, to 1e-12 relative (not bitwise: the sums run in another
// order), and their trace contributions sum to trace(K).
func TestShardPartialsSumToK(t *testing.T) {
	for _, tc := range []struct {
		codec  matrixio.Codec
		shards int
	}{
		{matrixio.CodecGeno2, 1}, {matrixio.CodecGeno2, 3}, {matrixio.CodecGeno2, 7},
		{matrixio.CodecFloat32, 4},
	} {
		t.Run(fmt.Sprintf("%s/S=%d", tc.codec, tc.shards), func(t *testing.T) {
			n, m, l := 40, 700, 5
			path, geno := clCohort(t, t.TempDir(), n, m, 50, 2, tc.codec)
			st, err := matrixio.Open(path)
			if err != nil {
				t.Fatal(err)
			}
			defer st.Close()
			r := rand.New(rand.NewPCG(3, 4))
			x := make([]float64, n*l)
			for i := range x {
				x[i] = r.NormFloat64()
			}
			full, err := randsvd.NewOperator(st, randsvd.OperatorOptions{Threads: 2})
			if err != nil {
				t.Fatal(err)
			}
			yFull := make([]float64, n*l)
			if err := full.Apply(context.Background(), x, yFull, l); err != nil {
				t.Fatal(err)
			}
			sum := make([]float64, n*l)
			part := make([]float64, n*l)
			trace := 0.0
			shards := st.Shards(tc.shards)
			if len(shards) != tc.shards {
				t.Fatalf("%d shards, want %d", len(shards), tc.shards)
			}
			for _, sh := range shards {
				op, err := randsvd.NewOperator(st, randsvd.OperatorOptions{Threads: 1, Chunks: sh.Chunks()})
				if err != nil {
					t.Fatal(err)
				}
				if op.Markers() != full.Markers() {
					t.Fatalf("shard operator's M = %d, want the whole selection's %d", op.Markers(), full.Markers())
				}
				if err := op.Apply(context.Background(), x, part, l); err != nil {
					t.Fatal(err)
				}
				for i, v := range part {
					sum[i] += v
				}
				trace += op.Trace()
			}
			// Reference 1: the full operator (one pass over all chunks).
			diff := make([]float64, n*l)
			for i := range diff {
				diff[i] = sum[i] - yFull[i]
			}
			if rel := maxAbs(diff) / maxAbs(yFull); rel > 1e-12 {
				t.Errorf("sum of %d partials vs full Apply: max relative difference %.3g, want <= 1e-12", tc.shards, rel)
			}
			// Reference 2: gonum dense K X.
			ref := denseKX(geno, n, mat.NewDense(n, l, x))
			for i := range diff {
				diff[i] = sum[i] - ref.RawMatrix().Data[i]
			}
			if rel := maxAbs(diff) / maxAbs(ref.RawMatrix().Data); rel > 1e-12 {
				t.Errorf("sum of %d partials vs gonum dense Z^T Z X / M: max relative difference %.3g, want <= 1e-12", tc.shards, rel)
			}
			if tr := full.Trace(); math.Abs(trace-tr) > 1e-12*tr {
				t.Errorf("sum of shard traces %.17g, full trace %.17g", trace, tr)
			}
		})
	}
}

// clRun runs clinal in-process and fails the test on a non-zero exit.
func clRun(t *testing.T, args ...string) string {
	t.Helper()
	code, out, errs := runCmd(t, args...)
	if code != 0 {
		t.Fatalf("clinal %s: exit %d: %s", strings.Join(args, " "), code, errs)
	}
	return out
}

// clFilterFlags are the QC flags of the comparisons: real filters that
// remove some markers and samples (so the selection file carries counts
// over the kept samples), no LD pruning.
func clFilterFlags(dir string, drop []string) []string {
	df := filepath.Join(dir, "drop list.txt")
	os.WriteFile(df, []byte(strings.Join(drop, "\n")+"\n"), 0o666)
	return []string{"--min-maf", "0.05", "--min-hwe-p", "0", "--ld-r2", "0", "--chromosomes", "all", "--drop-samples", df}
}

// clOutputs reads the three data outputs of a PCA prefix.
func clOutputs(t *testing.T, prefix string) map[string]string {
	t.Helper()
	out := map[string]string{}
	for _, s := range []string{".covariates.tsv", ".spectrum.tsv", ".loadings.tsv.gz"} {
		out[s] = readMaybeGz(t, prefix+s)
	}
	return out
}

// clTable parses a TSV's numeric columns from first on (header skipped).
func clTable(t *testing.T, text string, first int) [][]float64 {
	t.Helper()
	var rows [][]float64
	for i, line := range strings.Split(strings.TrimSpace(text), "\n") {
		if i == 0 {
			continue
		}
		f := strings.Split(line, "\t")
		var row []float64
		for _, s := range f[first:] {
			v, err := strconv.ParseFloat(s, 64)
			if err != nil {
				v = math.NaN()
			}
			row = append(row, v)
		}
		rows = append(rows, row)
	}
	return rows
}

// clPlanAndRun plans a local cluster run of the cohort and runs it.
func clPlanAndRun(t *testing.T, store, runDir, prefix string, shards int, extra []string) {
	t.Helper()
	args := append([]string{"cluster", "plan", store, "-k", "3", "-o", prefix, "--seed", "11", "--shards", strconv.Itoa(shards),
		"--run-dir", runDir, "--threads", "2"}, extra...)
	clRun(t, args...)
	clRun(t, "cluster", "run", runDir, "--local", "--threads", "2", "--local-jobs", "2")
}

// TestClusterLocalMatchesPCA: a local cluster run gives the outputs of
// clinal pca with the same seed and filters (the reference is the
// single-process command, itself checked against gonum and base R in
// randsvd's and pca's tests), and two cluster runs with the same S give
// byte-identical files. With --exact-passes both iterate in float64 and
// agree to rounding: eigenvalues to 1e-12 relative, scores and loadings to
// 1e-10. By default both iterate with float32 tables, whose sums a shard
// split changes (the second product's float32 tile sums run over different
// blocks of markers), and finish with exact passes: eigenvalues (exact
// Rayleigh-Ritz values) still agree to 1e-10, and scores and loadings to
// 1e-6, the solver's tolerance (each run's vectors are that close to the
// exact ones; common practice, no source). Run directory and prefix hold
// a space, a $ and quotes.
func TestClusterLocalMatchesPCA(t *testing.T) {
	dir := t.TempDir()
	store, _ := clCohort(t, dir, 90, 2400, 100, 4, matrixio.CodecGeno2)
	for _, mode := range []struct {
		name          string
		flags         []string
		evTol, vecTol float64
	}{{"exact", []string{"--exact-passes"}, 1e-12, 1e-10}, {"fast", nil, 1e-10, 1e-6}} {
		flt := append(clFilterFlags(dir, []string{"isle1-0001", "isle2-0005"}), mode.flags...)
		pca := filepath.Join(dir, mode.name, "single", "pca")
		os.MkdirAll(filepath.Dir(pca), 0o777)
		clRun(t, append([]string{"pca", store, "-k", "3", "-o", pca, "--seed", "11", "--threads", "2"}, flt...)...)
		want := clOutputs(t, pca)
		for _, shards := range []int{1, 4} {
			t.Run(fmt.Sprintf("%s/S=%d", mode.name, shards), func(t *testing.T) {
				var got []map[string]string
				for rep := 0; rep < 2; rep++ {
					base := filepath.Join(dir, mode.name, fmt.Sprintf("run $HOME 'x\" %d-%d", shards, rep))
					clPlanAndRun(t, store, base+"/rd", base+"/out put", shards, flt)
					got = append(got, clOutputs(t, base+"/out put"))
				}
				for name := range got[0] {
					if got[0][name] != got[1][name] {
						t.Errorf("%s differs between two cluster runs with S=%d (want byte-identical)", name, shards)
					}
				}
				ws, gs := clTable(t, want[".spectrum.tsv"], 1), clTable(t, got[0][".spectrum.tsv"], 1)
				if len(ws) != 3 || len(gs) != 3 {
					t.Fatalf("spectrum rows: pca %d, cluster %d, want 3", len(ws), len(gs))
				}
				for j := range ws {
					if rel := math.Abs(gs[j][0]-ws[j][0]) / ws[j][0]; !(rel <= mode.evTol) {
						t.Errorf("eigenvalue %d: cluster %.17g, pca %.17g (relative %.3g > %g)", j+1, gs[j][0], ws[j][0], rel, mode.evTol)
					}
				}
				for _, f := range []struct {
					name  string
					first int
				}{{".covariates.tsv", 1}, {".loadings.tsv.gz", 7}} {
					a, b := clTable(t, want[f.name], f.first), clTable(t, got[0][f.name], f.first)
					if len(a) != len(b) || len(a) == 0 {
						t.Fatalf("%s: pca %d rows, cluster %d", f.name, len(a), len(b))
					}
					worst := 0.0
					for i := range a {
						for j := range a[i] {
							worst = math.Max(worst, math.Abs(a[i][j]-b[i][j]))
						}
					}
					if !(worst <= mode.vecTol) {
						t.Errorf("%s: cluster vs pca differ by up to %.3g, want <= %g", f.name, worst, mode.vecTol)
					}
				}
				if strings.Split(want[".covariates.tsv"], "\n")[0] != strings.Split(got[0][".covariates.tsv"], "\n")[0] {
					t.Errorf("covariates header differs from pca's")
				}
			})
		}
	}
}

// clEvents summarizes events.jsonl: solver passes reduced (with redone
// ones) and shard partials computed, per pass.
func clEvents(t *testing.T, d runDir) (reduced map[int]int, computed map[int]int) {
	t.Helper()
	evs, err := readEvents(d)
	if err != nil {
		t.Fatal(err)
	}
	reduced, computed = map[int]int{}, map[int]int{}
	for _, ev := range evs {
		if ev.Phase != "solve" {
			continue
		}
		switch ev.Event {
		case "pass":
			reduced[ev.Pass]++
			computed[ev.Pass] += len(ev.Computed)
		case "pass-failed":
			computed[ev.Pass] += len(ev.Computed)
		}
	}
	return reduced, computed
}

// TestClusterFaultResume kills the computation at several points (a shard
// task mid-pass, the driver between reduction and checkpoint, the driver
// after a checkpoint, a cancelled context) and resumes: the outputs are
// byte-identical to an uninterrupted run, at most one pass is reduced
// twice, and no shard partial that was complete is computed again.
func TestClusterFaultResume(t *testing.T) {
	dir := t.TempDir()
	store, _ := clCohort(t, dir, 60, 1600, 100, 3, matrixio.CodecGeno2)
	flt := []string{"--min-maf", "0.01", "--ld-r2", "0", "--chromosomes", "all", "--tw", "off"}
	const S = 4
	plan := func(name string) (runDir, string) {
		rd, prefix := filepath.Join(dir, name, "run $dir"), filepath.Join(dir, name, "out")
		clRun(t, append([]string{"cluster", "plan", store, "-k", "3", "-o", prefix, "--seed", "5", "--shards", strconv.Itoa(S),
			"--run-dir", rd, "--max-passes", "12", "--tol", "1e-9"}, flt...)...)
		return runDir(rd), prefix
	}
	rd, prefix := plan("reference")
	e := &env{stdout: io.Discard, stderr: io.Discard}
	ref, err := runDriver(context.Background(), e, &driverOptions{dir: rd, local: true, localJobs: 1, threads: 2})
	if err != nil {
		t.Fatal(err)
	}
	if ref.Passes < 6 {
		t.Fatalf("reference run took %d passes; the faults below need at least 6", ref.Passes)
	}
	want := clOutputs(t, prefix)
	errKill := errors.New("simulated kill")
	for _, tc := range []struct {
		name string
		// set installs the fault on the options of the first run.
		set func(o *driverOptions, cancel context.CancelFunc)
		// redone is the pass reduced twice (0: none).
		redone int
		// reusedInPass: shards whose partial survived into the resumed pass.
		reusedPass, reused int
	}{
		{"shard task killed mid-pass", func(o *driverOptions, _ context.CancelFunc) {
			o.stepHook = func(p, s int) error {
				if p == 4 && s == 2 {
					return errKill
				}
				return nil
			}
		}, 0, 4, 2},
		{"driver killed between reduce and checkpoint", func(o *driverOptions, _ context.CancelFunc) {
			o.afterReduce = func(p int) error {
				if p == 5 {
					return errKill
				}
				return nil
			}
		}, 5, 5, 4},
		{"driver stopped after checkpoint", func(o *driverOptions, _ context.CancelFunc) { o.exitAfterPass = 3 }, 0, 0, 0},
		{"context cancelled mid-pass", func(o *driverOptions, cancel context.CancelFunc) {
			o.stepHook = func(p, s int) error {
				if p == 2 && s == 1 {
					cancel()
					return context.Canceled
				}
				return nil
			}
		}, 0, 2, 1},
	} {
		t.Run(tc.name, func(t *testing.T) {
			rd, prefix := plan(strings.ReplaceAll(tc.name, " ", "_"))
			ctx, cancel := context.WithCancel(context.Background())
			defer cancel()
			o := &driverOptions{dir: rd, local: true, localJobs: 1, threads: 2}
			tc.set(o, cancel)
			if _, err := runDriver(ctx, e, o); err == nil {
				t.Fatal("the faulty run succeeded")
			}
			if _, err := os.Stat(prefix + ".covariates.tsv"); err == nil {
				t.Fatal("the faulty run left outputs")
			}
			st, err := runStatus(context.Background(), rd)
			if err != nil || st.Complete {
				t.Fatalf("status after the fault: %+v, %v", st, err)
			}
			// Resume through the command, as a user would (local mode).
			clRun(t, "cluster", "resume", string(rd), "--local", "--threads", "2")
			got := clOutputs(t, prefix)
			for name := range want {
				if got[name] != want[name] {
					t.Errorf("%s after resume differs from the uninterrupted run", name)
				}
			}
			reduced, computed := clEvents(t, rd)
			for p := 1; p <= ref.Passes; p++ {
				switch {
				case reduced[p] == 2 && p == tc.redone:
				case reduced[p] != 1:
					t.Errorf("pass %d reduced %d times (want 1%s)", p, reduced[p], map[bool]string{true: fmt.Sprintf(", or 2 for pass %d", tc.redone)}[tc.redone > 0])
				}
				if computed[p] != S {
					t.Errorf("pass %d: %d shard partials computed in all, want %d (none recomputed)", p, computed[p], S)
				}
			}
			if len(reduced) != ref.Passes {
				t.Errorf("passes reduced: %v; the reference took %d", reduced, ref.Passes)
			}
			if tc.reusedPass > 0 {
				evs, _ := readEvents(rd)
				found := false
				for _, ev := range evs {
					if ev.Event == "pass" && ev.Pass == tc.reusedPass && len(ev.Reused) == tc.reused {
						found = true
					}
				}
				if !found {
					t.Errorf("no event shows pass %d resumed with %d reused partials", tc.reusedPass, tc.reused)
				}
			}
		})
	}
}

// TestClusterStepRetry: a step that fails, or leaves a partial that does
// not pass its checksum, is relaunched for those shards only, and the run
// completes in one go with the outputs of an undisturbed run.
func TestClusterStepRetry(t *testing.T) {
	dir := t.TempDir()
	store, _ := clCohort(t, dir, 40, 800, 100, 2, matrixio.CodecGeno2)
	e := &env{stdout: io.Discard, stderr: io.Discard}
	run := func(name string, o *driverOptions) (runDir, string) {
		rd, prefix := filepath.Join(dir, name, "rd"), filepath.Join(dir, name, "out")
		clRun(t, "cluster", "plan", store, "-k", "2", "-o", prefix, "--shards", "3", "--run-dir", rd,
			"--ld-r2", "0", "--chromosomes", "all", "--tw", "off")
		o.dir, o.local, o.localJobs, o.threads = runDir(rd), true, 1, 1
		if _, err := runDriver(context.Background(), e, o); err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		return runDir(rd), prefix
	}
	_, refPrefix := run("reference", &driverOptions{})
	want := clOutputs(t, refPrefix)
	var failedOnce, damagedOnce bool
	var damRD runDir
	for _, tc := range []struct {
		name     string
		opt      *driverOptions
		computed string // shards computed in pass 2, in order
	}{
		{"task fails once", &driverOptions{stepRetries: 1, stepHook: func(p, s int) error {
			if p == 2 && s == 1 && !failedOnce {
				failedOnce = true
				return errors.New("simulated node failure")
			}
			return nil
		}}, "[0 1 2]"},
		{"partial damaged once", &driverOptions{stepRetries: 1, afterLaunch: func(p int) {
			if p == 2 && !damagedOnce {
				damagedOnce = true
				path := damRD.partialPath(2, 1)
				b, _ := os.ReadFile(path)
				b[len(b)/3] ^= 1
				os.WriteFile(path, b, 0o666)
			}
		}}, "[0 1 1 2]"},
	} {
		name := strings.ReplaceAll(tc.name, " ", "_")
		damRD = runDir(filepath.Join(dir, name, "rd"))
		rd, prefix := run(name, tc.opt)
		evs, _ := readEvents(rd)
		for _, ev := range evs {
			if ev.Event == "pass" && ev.Pass == 2 {
				if ev.Attempts != 2 || fmt.Sprint(ev.Computed) != tc.computed {
					t.Errorf("%s: pass 2: %d attempts, computed %v; want 2 attempts and %s", tc.name, ev.Attempts, ev.Computed, tc.computed)
				}
			}
		}
		got := clOutputs(t, prefix)
		for f := range want {
			if got[f] != want[f] {
				t.Errorf("%s: %s differs from the undisturbed run", tc.name, f)
			}
		}
	}
}

// TestClusterDamagedPartial: a partial whose bytes were damaged (or that
// was made from another X) is not used: the step recomputes it.
func TestClusterDamagedPartial(t *testing.T) {
	dir := t.TempDir()
	store, _ := clCohort(t, dir, 30, 600, 100, 2, matrixio.CodecGeno2)
	rd := runDir(filepath.Join(dir, "rd"))
	clRun(t, "cluster", "plan", store, "-k", "2", "-o", filepath.Join(dir, "out"), "--shards", "2", "--run-dir", string(rd),
		"--ld-r2", "0", "--chromosomes", "all")
	w, err := openShardWorker(rd, 1)
	if err != nil {
		t.Fatal(err)
	}
	defer w.close()
	n, l := w.m.SamplesUsed, w.m.BlockSize
	x := make([]float64, n*l)
	for i := range x {
		x[i] = float64(i%7) - 3
	}
	os.MkdirAll(rd.passDir(1), 0o777)
	if _, err := writeBlock(rd.xPath(1), 1, n, l, x, false); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name   string
		damage func()
		want   bool // computed
	}{
		{"fresh", func() {}, true},
		{"valid partial reused", func() {}, false},
		{"flipped byte", func() {
			p := rd.partialPath(1, 0)
			b, _ := os.ReadFile(p)
			b[len(b)/2] ^= 0x40
			os.WriteFile(p, b, 0o666)
		}, true},
		{"truncated", func() {
			p := rd.partialPath(1, 0)
			b, _ := os.ReadFile(p)
			os.WriteFile(p, b[:len(b)-9], 0o666)
		}, true},
		{"other X", func() {
			x[0] += 1
			writeBlock(rd.xPath(1), 1, n, l, x, false)
		}, true},
	} {
		tc.damage()
		computed, err := w.compute(context.Background(), 1, 0)
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		if computed != tc.want {
			t.Errorf("%s: computed = %v, want %v", tc.name, computed, tc.want)
		}
	}
}

// TestShellQuote quotes hostile strings and has POSIX sh (dash) and bash
// (the outside references: the shells that run the scripts) print them
// back.
func TestShellQuote(t *testing.T) {
	cases := []string{"", "plain/path.clinal", "with space", "dollar $HOME and ${x}", "it's", `dq " here`,
		"back`tick`", "$(rm -rf /)", `back\slash`, "new\nline", "tab\there", "glob *?[a]", "semi;colon&amp|pipe",
		"'''", `'"'"'`, "~user", "-dash", "ünïcødé €", "!bang", "#hash", "%j%%"}
	for _, sh := range []string{"/bin/sh", "bash"} {
		if _, err := exec.LookPath(sh); err != nil {
			clRequireTool(t, sh)
			continue
		}
		for _, s := range cases {
			out, err := exec.Command(sh, "-c", "printf '%s' "+shellQuote(s)).Output()
			if err != nil {
				t.Errorf("%s -c printf %s: %v", sh, shellQuote(s), err)
				continue
			}
			if string(out) != s {
				t.Errorf("%s printed %q for %q (quoted %s)", sh, out, s, shellQuote(s))
			}
		}
	}
	// Words that need no quoting are left alone (readable scripts).
	if q := shellQuote("/srv/run-01/a_b.c:d"); q != "/srv/run-01/a_b.c:d" {
		t.Errorf("safe word quoted as %s", q)
	}
}

// clRequireTool skips, or fails under CLINAL_REQUIRE_REFS=1, when an
// external tool is missing.
func clRequireTool(t *testing.T, name string) {
	t.Helper()
	if os.Getenv("CLINAL_REQUIRE_REFS") == "1" {
		t.Fatalf("%s not found and CLINAL_REQUIRE_REFS=1", name)
	}
	t.Skipf("%s not found", name)
}

// TestSbatchScriptHostilePaths runs the generated batch script's command
// line with bash (Slurm hands the script to bash; #SBATCH lines are
// comments to it) against a stand-in executable at a hostile path, and
// checks the arguments arrive intact.
func TestSbatchScriptHostilePaths(t *testing.T) {
	if _, err := exec.LookPath("bash"); err != nil {
		clRequireTool(t, "bash")
	}
	dir := t.TempDir()
	for _, name := range []string{"run dir", "a $HOME b", `q'u"o`, "back\\slash", "50%j"} {
		base := filepath.Join(dir, name)
		os.MkdirAll(base, 0o777)
		exe := filepath.Join(base, "fake clinal $x")
		argsOut := filepath.Join(dir, "args")
		os.WriteFile(exe, []byte("#!/bin/sh\nfor a in \"$@\"; do printf '%s\\0' \"$a\"; done > "+shellQuote(argsOut)+"\n"), 0o755)
		rd := runDir(filepath.Join(base, "rd"))
		m := &clusterManifest{Shards: make([]clusterShard, 4), CPUsPerTask: 2, MemoryPerTask: 3 << 20, DriverMemory: 1<<20 + 1}
		script := sbatchScript(m, rd, submitSettings{Exe: exe, StepRetries: 1, Time: "0:10:00"})
		for _, want := range []string{"#SBATCH --ntasks=4\n", "#SBATCH --cpus-per-task=2\n", "#SBATCH --mem-per-cpu=3M\n", "#SBATCH --time=0:10:00\n"} {
			if !strings.Contains(script, want) {
				t.Errorf("script lacks %q:\n%s", want, script)
			}
		}
		sp := filepath.Join(base, "job.sbatch")
		os.WriteFile(sp, []byte(script), 0o755)
		if out, err := exec.Command("bash", sp).CombinedOutput(); err != nil {
			t.Fatalf("%s: bash job.sbatch: %v: %s", name, err, out)
		}
		b, err := os.ReadFile(argsOut)
		if err != nil {
			t.Fatal(err)
		}
		got := strings.Split(strings.TrimSuffix(string(b), "\x00"), "\x00")
		want := []string{"cluster", "run", string(rd), "--step-retries", "1"}
		if fmt.Sprint(got) != fmt.Sprint(want) {
			t.Errorf("%s: the script passed %q, want %q", name, got, want)
		}
		// The working directory (and so the log) goes to sbatch as one
		// argument, never through a shell or a filename pattern.
		if got, want := fmt.Sprint(sbatchArgs(rd)), fmt.Sprint([]string{"--parsable", "--chdir=" + filepath.Join(string(rd), "logs"), filepath.Join(string(rd), "job.sbatch")}); got != want {
			t.Errorf("%s: sbatch args %s, want %s", name, got, want)
		}
	}
}

// TestClusterBadUsage: usage and input errors exit 2 with one line naming
// what was wrong.
func TestClusterBadUsage(t *testing.T) {
	dir := t.TempDir()
	store, _ := clCohort(t, dir, 20, 300, 100, 2, matrixio.CodecGeno2)
	rd := filepath.Join(dir, "rd")
	clRun(t, "cluster", "plan", store, "-k", "2", "-o", filepath.Join(dir, "o"), "--shards", "2", "--run-dir", rd, "--ld-r2", "0", "--chromosomes", "all")
	for _, tc := range []struct {
		args []string
		want string
	}{
		{[]string{"cluster"}, "subcommand"},
		{[]string{"cluster", "frobnicate"}, "frobnicate"},
		{[]string{"cluster", "plan", store, "-k", "2", "-o", "x", "--run-dir", rd + "2"}, "--shards"},
		{[]string{"cluster", "plan", store, "-k", "2", "-o", "x", "--shards", "2"}, "--run-dir"},
		{[]string{"cluster", "plan", store, "-k", "2", "-o", "x", "--shards", "2", "--run-dir", rd}, "already holds"},
		{[]string{"cluster", "plan", store, "-k", "2", "-o", "x", "--shards", "2", "--run-dir", rd + "3", "--tw", "maybe"}, "--tw"},
		{[]string{"cluster", "status", filepath.Join(dir, "nothing")}, "not a run directory"},
		{[]string{"cluster", "step", rd, "--pass", "1", "--shard", "9"}, "shard 9"},
		{[]string{"cluster", "step", rd, "--pass", "0"}, "--pass"},
		{[]string{"cluster", "submit", rd, "--partition", "a b"}, "--partition"},
	} {
		code, _, errs := runCmd(t, tc.args...)
		if code != 2 || !strings.Contains(errs, tc.want) || strings.Count(strings.TrimSpace(errs), "\n") > 0 {
			t.Errorf("clinal %s: exit %d, stderr %q; want exit 2 and one line mentioning %q", strings.Join(tc.args, " "), code, errs, tc.want)
		}
	}
	// A run whose store changed since the plan is refused.
	os.Rename(store, store+".old")
	clCohort(t, dir, 20, 301, 100, 2, matrixio.CodecGeno2)
	code, _, errs := runCmd(t, "cluster", "run", rd, "--local")
	if code != 2 || !strings.Contains(errs, "changed since") {
		t.Errorf("run on a changed store: exit %d, %q", code, errs)
	}
}
