package main

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/clinal/clinal/matrixio"
)

// The Slurm integration test runs clinal cluster on a real Slurm cluster
// (Debian's slurm-wlm; testdata/slurm/start.sh starts a single-node one,
// and CI sets CLINAL_SLURM=1 once it is up). Without CLINAL_SLURM=1 it is
// skipped, also under CLINAL_REQUIRE_REFS=1: the cluster, not a program,
// is the missing piece, and CI only sets the variable after starting it.

// slurmTool returns the path of a Slurm client command or fails.
func slurmTool(t *testing.T, name string) string {
	t.Helper()
	p, err := exec.LookPath(name)
	if err != nil {
		t.Fatalf("CLINAL_SLURM=1 but %s is not on PATH", name)
	}
	return p
}

// buildClinal builds the command into dir (go build of this package).
func buildClinal(t *testing.T, dir string) string {
	t.Helper()
	gobin := filepath.Join(runtime.GOROOT(), "bin", "go")
	if _, err := os.Stat(gobin); err != nil {
		gobin = "go"
	}
	exe := filepath.Join(dir, "clinal")
	cmd := exec.Command(gobin, "build", "-o", exe, ".")
	if out, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	return exe
}

// slurmJob follows one submitted job.
type slurmJob struct {
	id string
}

// state asks scontrol for the job's state ("" if unknown).
func (j slurmJob) state(t *testing.T) string {
	out, err := exec.Command("scontrol", "show", "job", "-o", j.id).Output()
	if err != nil {
		return ""
	}
	s := string(out)
	if i := strings.Index(s, "JobState="); i >= 0 {
		if f := strings.Fields(s[i+len("JobState="):]); len(f) > 0 {
			return f[0]
		}
	}
	return ""
}

// wait polls scontrol (not sbatch --wait, which polls slowly) until the job
// leaves the active states, and returns its final state.
func (j slurmJob) wait(t *testing.T, limit time.Duration) string {
	t.Helper()
	end := time.Now().Add(limit)
	for time.Now().Before(end) {
		st := j.state(t)
		if st != "" && !jobActive(st) {
			return st
		}
		time.Sleep(200 * time.Millisecond)
	}
	t.Fatalf("job %s still %s after %s", j.id, j.state(t), limit)
	return ""
}

// clinalCmd runs the built binary with extra environment, returning stdout.
func clinalCmd(t *testing.T, exe string, env []string, args ...string) string {
	t.Helper()
	cmd := exec.Command(exe, args...)
	cmd.Env = append(os.Environ(), env...)
	var errb strings.Builder
	cmd.Stderr = &errb
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("clinal %s: %v: %s", strings.Join(args, " "), err, errb.String())
	}
	return string(out)
}

func submitted(t *testing.T, out string) slurmJob {
	t.Helper()
	id := strings.TrimSpace(out)
	if _, err := strconv.Atoi(id); err != nil {
		t.Fatalf("submit printed %q, want a job id", out)
	}
	return slurmJob{id: id}
}

// jobLogs returns the Slurm logs of a run directory, for failure messages.
func jobLogs(rd string) string {
	var b strings.Builder
	files, _ := filepath.Glob(filepath.Join(globEscape(rd), "logs", "slurm-*.out"))
	for _, f := range files {
		c, _ := os.ReadFile(f)
		fmt.Fprintf(&b, "--- %s\n%s\n", f, c)
	}
	return b.String()
}

// waitFor polls cond every 100 ms up to limit; on a timeout it reports an
// error (it may run on another goroutine, so it does not stop the test).
func waitFor(t *testing.T, limit time.Duration, what string, cond func() bool) bool {
	t.Helper()
	end := time.Now().Add(limit)
	for time.Now().Before(end) {
		if cond() {
			return true
		}
		time.Sleep(100 * time.Millisecond)
	}
	t.Errorf("timed out after %s waiting for %s", limit, what)
	return false
}

func TestClusterSlurm(t *testing.T) {
	if os.Getenv("CLINAL_SLURM") != "1" {
		t.Skip("set CLINAL_SLURM=1 with a running Slurm cluster (bash testdata/slurm/start.sh) to run the Slurm integration test")
	}
	for _, c := range []string{"sbatch", "srun", "squeue", "scontrol", "scancel"} {
		slurmTool(t, c)
	}
	dir := t.TempDir()
	os.Chmod(dir, 0o755)
	exe := buildClinal(t, dir)
	store, _ := clCohort(t, dir, 120, 3000, 100, 4, matrixio.CodecGeno2) // 30 chunks
	// --tw off: the exact trace(K^2) passes are covered by the local test;
	// here every srun step is a solver pass.
	flt := []string{"--min-maf", "0.02", "--ld-r2", "0", "--chromosomes", "all", "--tw", "off"}
	common := append([]string{"-k", "3", "--seed", "21", "--threads", "1"}, flt...)
	ref := filepath.Join(dir, "pca")
	clinalCmd(t, exe, nil, append([]string{"pca", store, "-o", ref}, common...)...)
	want := clOutputs(t, ref)

	var mu sync.Mutex
	var jobs []slurmJob
	t.Cleanup(func() {
		for _, j := range jobs {
			exec.Command("scancel", j.id).Run()
		}
	})
	// plan and submit one run; env goes to the submitting process and so,
	// through sbatch's default --export=ALL, to the job.
	start := func(name string, env []string, retries int) (string, string, slurmJob) {
		base := filepath.Join(dir, name+` $run 'q' 5%j \b`)
		rd, prefix := filepath.Join(base, "rd"), filepath.Join(base, "out")
		clinalCmd(t, exe, nil, append([]string{"cluster", "plan", store, "-o", prefix, "--shards", "4", "--run-dir", rd}, common...)...)
		j := submitted(t, clinalCmd(t, exe, env, "cluster", "submit", rd, "--time", "5", "--step-retries", strconv.Itoa(retries)))
		mu.Lock()
		jobs = append(jobs, j)
		mu.Unlock()
		return rd, prefix, j
	}
	checkSame := func(what, prefix string, ref map[string]string) {
		got := clOutputs(t, prefix)
		for name := range ref {
			if got[name] != ref[name] {
				t.Errorf("%s: %s differs from the first cluster run (want byte-identical)", what, name)
			}
		}
	}
	status := func(rd string) *clusterStatus {
		var s clusterStatus
		if err := json.Unmarshal([]byte(clinalCmd(t, exe, nil, "cluster", "status", rd, "--json")), &s); err != nil {
			t.Fatal(err)
		}
		return &s
	}
	// At most one pass redone: solver passes reduced <= passes + 1.
	checkRedo := func(what, rd string) {
		reduced, _ := clEvents(t, runDir(rd))
		total := 0
		for _, n := range reduced {
			total += n
		}
		s := status(rd)
		t.Logf("%s: %d passes, %d reductions in all", what, s.PassesDone, total)
		if !s.Complete || total > s.PassesDone+1 || len(reduced) != s.PassesDone {
			t.Errorf("%s: complete %v, %d passes, %d reductions over %d distinct passes; want complete and at most one pass redone", what, s.Complete, s.PassesDone, total, len(reduced))
		}
	}
	t0 := time.Now()

	// Two clean runs at once (2 x 4 tasks fit the test node's 8 CPUs).
	rdA, prefixA, jA := start("a", nil, 1)
	rdB, prefixB, jB := start("b", nil, 1)
	if st := jA.wait(t, 90*time.Second); st != "COMPLETED" {
		t.Fatalf("job %s ended %s\n%s", jA.id, st, jobLogs(rdA))
	}
	if st := jB.wait(t, 90*time.Second); st != "COMPLETED" {
		t.Fatalf("job %s ended %s\n%s", jB.id, st, jobLogs(rdB))
	}
	t.Logf("two clean runs: %.1f s", time.Since(t0).Seconds())
	script, _ := os.ReadFile(filepath.Join(rdA, scriptName))
	if !strings.Contains(string(script), "#SBATCH --ntasks=4\n") {
		t.Errorf("job.sbatch does not ask for 4 tasks:\n%s", script)
	}
	gotA := clOutputs(t, prefixA)
	checkSame("second run", prefixB, gotA)
	// Against clinal pca (the single-process command is the reference):
	// both iterate with fast passes, whose float32 tile sums a shard split
	// changes, and finish exactly, so eigenvalues agree to 1e-10 relative
	// and scores and loadings to 1e-6, the solver's tolerance (as in
	// TestClusterLocalMatchesPCA, which also checks --exact-passes to 1e-10).
	ws, gs := clTable(t, want[".spectrum.tsv"], 1), clTable(t, gotA[".spectrum.tsv"], 1)
	if len(ws) != 3 || len(gs) != 3 {
		t.Fatalf("spectrum rows: pca %d, cluster %d", len(ws), len(gs))
	}
	for j := range ws {
		if rel := math.Abs(gs[j][0]-ws[j][0]) / ws[j][0]; !(rel <= 1e-10) {
			t.Errorf("eigenvalue %d: cluster %.17g, pca %.17g (relative %.3g > 1e-10)", j+1, gs[j][0], ws[j][0], rel)
		}
	}
	for _, f := range []struct {
		name  string
		first int
	}{{".covariates.tsv", 1}, {".loadings.tsv.gz", 7}} {
		a, b := clTable(t, want[f.name], f.first), clTable(t, gotA[f.name], f.first)
		if len(a) != len(b) || len(a) == 0 {
			t.Fatalf("%s: pca %d rows, cluster %d", f.name, len(a), len(b))
		}
		worst := 0.0
		for i := range a {
			for j := range a[i] {
				worst = math.Max(worst, math.Abs(a[i][j]-b[i][j]))
			}
		}
		if !(worst <= 1e-6) {
			t.Errorf("%s: cluster vs pca differ by up to %.3g, want <= 1e-6", f.name, worst)
		}
	}

	// Faults, both at once. Each step waits 1 s before computing
	// (CLINAL_CLUSTER_STEP_DELAY), so there is time to strike mid-pass.
	slow := []string{"CLINAL_CLUSTER_STEP_DELAY=1s"}
	rdC, prefixC, jC := start("step-cancelled", slow, 0)
	rdD, prefixD, jD := start("driver-killed", slow, 0)
	var wg sync.WaitGroup
	wg.Add(2)
	go func() { // C: scancel the srun step of pass 3 while it runs
		defer wg.Done()
		stepID := ""
		ok := waitFor(t, 60*time.Second, "pass 3's step", func() bool {
			if _, err := os.Stat(filepath.Join(rdC, "pass-0003", xName)); err != nil {
				return false
			}
			out, _ := exec.Command("squeue", "-h", "-s", "-j", jC.id, "-o", "%i").Output()
			for _, f := range strings.Fields(string(out)) {
				if _, s, ok := strings.Cut(f, "."); ok {
					if _, err := strconv.Atoi(s); err == nil {
						stepID = f
					}
				}
			}
			return stepID != ""
		})
		if !ok {
			return
		}
		// While the job runs, resume refuses to submit a second one.
		cmd := exec.Command(exe, "cluster", "resume", rdC)
		if out, err := cmd.CombinedOutput(); cmd.ProcessState.ExitCode() != 2 || !strings.Contains(string(out), "still RUNNING") {
			t.Errorf("resume of a running job: %v, %s; want exit 2 and \"still RUNNING\"", err, out)
		}
		if out, err := exec.Command("scancel", stepID).CombinedOutput(); err != nil {
			t.Errorf("scancel %s: %v %s", stepID, err, out)
		}
	}()
	go func() { // D: scancel the whole job (the driver) after pass 2's checkpoint
		defer wg.Done()
		if !waitFor(t, 60*time.Second, "pass 2's checkpoint", func() bool {
			_, err := os.Stat(filepath.Join(rdD, "pass-0003", xName))
			return err == nil
		}) {
			return
		}
		if out, err := exec.Command("scancel", jD.id).CombinedOutput(); err != nil {
			t.Errorf("scancel %s: %v %s", jD.id, err, out)
		}
	}()
	wg.Wait()
	if t.Failed() {
		return
	}
	for _, f := range []struct {
		name, rd, prefix string
		j                slurmJob
	}{{"step cancelled", rdC, prefixC, jC}, {"driver killed", rdD, prefixD, jD}} {
		st := f.j.wait(t, 60*time.Second)
		if st == "COMPLETED" {
			t.Fatalf("%s: job %s completed despite the fault\n%s", f.name, f.j.id, jobLogs(f.rd))
		}
		s := status(f.rd)
		if s.Complete {
			t.Fatalf("%s: status says complete after the fault", f.name)
		}
		t.Logf("%s: job %s ended %s after %d passes", f.name, f.j.id, st, s.PassesDone)
		f.j = submitted(t, clinalCmd(t, exe, nil, "cluster", "resume", f.rd))
		mu.Lock()
		jobs = append(jobs, f.j)
		mu.Unlock()
		if st := f.j.wait(t, 90*time.Second); st != "COMPLETED" {
			t.Fatalf("%s: resumed job %s ended %s\n%s", f.name, f.j.id, st, jobLogs(f.rd))
		}
		checkSame(f.name+" then resumed", f.prefix, gotA)
		checkRedo(f.name, f.rd)
	}
	t.Logf("Slurm test: %.1f s in all", time.Since(t0).Seconds())
}
