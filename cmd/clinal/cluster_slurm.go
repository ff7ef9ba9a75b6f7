package main

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"os/exec"
	"regexp"
	"strconv"
	"strings"
	"syscall"
	"time"

	"github.com/clinal/clinal/matrixio"
)

// shellQuote returns s as a single word for POSIX sh and bash: unchanged
// when it holds only characters no shell treats specially, else inside
// single quotes, where nothing is special except the single quote itself,
// which is written as '"'"' (close, a double-quoted quote, reopen). This is
// how paths with spaces, quotes, $, backslashes, globs or newlines reach a
// generated script intact.
func shellQuote(s string) string {
	if s == "" {
		return "''"
	}
	safe := true
	for _, r := range s {
		if !(r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' || r >= '0' && r <= '9' || strings.ContainsRune("_@%+=:,./-", r)) {
			safe = false
			break
		}
	}
	if safe {
		return s
	}
	return "'" + strings.ReplaceAll(s, "'", `'"'"'`) + "'"
}

// slurmWord matches values that go into #SBATCH lines unquoted: partition,
// account and QOS names and time limits.
var slurmWord = regexp.MustCompile(`^[A-Za-z0-9_.,:+-]+$`)

// submitSettings are the Slurm options of a run, saved as submit.json so
// resume resubmits the same allocation.
type submitSettings struct {
	Partition   string `json:"partition,omitempty"`
	Time        string `json:"time,omitempty"`
	Account     string `json:"account,omitempty"`
	QOS         string `json:"qos,omitempty"`
	StepRetries int    `json:"step_retries"`
	Exe         string `json:"executable"`
}

func (s *submitSettings) validate() error {
	for _, f := range []struct{ name, v string }{{"partition", s.Partition}, {"time", s.Time}, {"account", s.Account}, {"qos", s.QOS}} {
		if f.v != "" && !slurmWord.MatchString(f.v) {
			return usage("--%s %q: want letters, digits and _.,:+- only", f.name, f.v)
		}
	}
	if s.StepRetries < 0 {
		return usage("--step-retries %d: want 0 or more", s.StepRetries)
	}
	return nil
}

// memPerCPUMiB is the --mem-per-cpu of a task: the planned bytes of one
// task plus the driver's headroom, spread over its CPUs, rounded up to
// whole MiB.
func memPerCPUMiB(m *clusterManifest) int64 {
	need := m.MemoryPerTask + m.DriverMemory
	per := (need + int64(m.CPUsPerTask) - 1) / int64(m.CPUsPerTask)
	return max(1, (per+(1<<20)-1)>>20)
}

// sbatchScript renders job.sbatch: one allocation of S tasks with
// CPUsPerTask CPUs each, whose batch step runs the driver. The driver then
// launches one srun step per pass inside the allocation. Paths appear only
// in the command line, shell-quoted; no #SBATCH line holds a path (sbatch
// parses those with rules of its own): the working directory is given to
// sbatch as an argument by submit (see sbatchArgs).
func sbatchScript(m *clusterManifest, d runDir, s submitSettings) string {
	var b strings.Builder
	fmt.Fprintf(&b, "#!/bin/bash\n")
	fmt.Fprintf(&b, "# clinal cluster: PCA passes as sharded Slurm steps (written by clinal %s).\n", version)
	fmt.Fprintf(&b, "# Submit with clinal cluster submit RUNDIR (or resume); by hand: cd RUNDIR/logs && sbatch ../job.sbatch\n")
	fmt.Fprintf(&b, "#SBATCH --job-name=clinal-pca\n")
	fmt.Fprintf(&b, "#SBATCH --ntasks=%d\n", len(m.Shards))
	fmt.Fprintf(&b, "#SBATCH --cpus-per-task=%d\n", m.CPUsPerTask)
	fmt.Fprintf(&b, "#SBATCH --mem-per-cpu=%dM\n", memPerCPUMiB(m))
	if s.Time != "" {
		fmt.Fprintf(&b, "#SBATCH --time=%s\n", s.Time)
	}
	if s.Partition != "" {
		fmt.Fprintf(&b, "#SBATCH --partition=%s\n", s.Partition)
	}
	if s.Account != "" {
		fmt.Fprintf(&b, "#SBATCH --account=%s\n", s.Account)
	}
	if s.QOS != "" {
		fmt.Fprintf(&b, "#SBATCH --qos=%s\n", s.QOS)
	}
	// A requeued job reruns this script, which resumes from the last
	// complete pass.
	fmt.Fprintf(&b, "#SBATCH --requeue\n")
	fmt.Fprintf(&b, "#SBATCH --open-mode=append\n")
	fmt.Fprintf(&b, "set -eu\n")
	fmt.Fprintf(&b, "exec %s cluster run %s --step-retries %d\n", shellQuote(s.Exe), shellQuote(string(d)), s.StepRetries)
	return b.String()
}

// sbatchArgs are the arguments of the sbatch call for the script. The job
// runs in RUNDIR/logs (--chdir, passed as its own argument: no shell, no
// quoting) and keeps sbatch's default log name there, slurm-JOBID.out.
// An explicit --output would go through Slurm's filename handling, which
// expands % patterns and drops backslashes; a relative default name is
// opened in the working directory as is, whatever the path holds.
func sbatchArgs(d runDir) []string {
	return []string{"--parsable", "--chdir=" + d.path(logsDir), d.path(scriptName)}
}

// submitJob writes the script and submit.json and submits the script with
// sbatch; it returns the job id and records it in jobs.tsv.
func submitJob(ctx context.Context, d runDir, m *clusterManifest, s submitSettings) (string, error) {
	if err := os.MkdirAll(d.path(logsDir), 0o777); err != nil {
		return "", fmt.Errorf("submit: %w", err)
	}
	script := sbatchScript(m, d, s)
	if err := matrixio.WriteFileAtomic(d.path(scriptName), func(w io.Writer) error {
		_, err := w.Write([]byte(script))
		return err
	}); err != nil {
		return "", err
	}
	if err := os.Chmod(d.path(scriptName), 0o755); err != nil {
		return "", fmt.Errorf("submit: %w", err)
	}
	if err := matrixio.WriteJSON(d.path(submitName), s); err != nil {
		return "", err
	}
	if _, err := exec.LookPath("sbatch"); err != nil {
		return "", fmt.Errorf("submit: sbatch not found on PATH (is this a Slurm login node? use --local to run here)")
	}
	cmd := exec.CommandContext(ctx, "sbatch", sbatchArgs(d)...)
	var out, errb bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &errb
	if err := cmd.Run(); err != nil {
		return "", fmt.Errorf("sbatch %s: %v: %s", d.path(scriptName), err, strings.TrimSpace(errb.String()))
	}
	id, _, _ := strings.Cut(strings.TrimSpace(out.String()), ";")
	if _, err := strconv.ParseUint(id, 10, 64); err != nil {
		return "", fmt.Errorf("sbatch printed %q, want a job id", out.String())
	}
	f, err := os.OpenFile(d.path(jobsName), os.O_WRONLY|os.O_APPEND|os.O_CREATE, 0o666)
	if err != nil {
		return id, fmt.Errorf("submitted job %s but cannot record it: %w", id, err)
	}
	fmt.Fprintf(f, "%s\t%s\n", id, time.Now().UTC().Format(time.RFC3339))
	if err := f.Close(); err != nil {
		return id, fmt.Errorf("submitted job %s but cannot record it: %w", id, err)
	}
	return id, nil
}

// readSubmit loads submit.json (zero settings when absent).
func readSubmit(d runDir) (submitSettings, error) {
	var s submitSettings
	b, err := os.ReadFile(d.path(submitName))
	if errors.Is(err, os.ErrNotExist) {
		return s, nil
	}
	if err != nil {
		return s, err
	}
	if err := json.Unmarshal(b, &s); err != nil {
		return s, matrixio.BadInput("%s: %v", d.path(submitName), err)
	}
	return s, nil
}

// jobIDs lists the jobs submitted for the run, oldest first.
func jobIDs(d runDir) []string {
	b, err := os.ReadFile(d.path(jobsName))
	if err != nil {
		return nil
	}
	var ids []string
	for _, line := range strings.Split(string(b), "\n") {
		if id, _, _ := strings.Cut(line, "\t"); id != "" {
			ids = append(ids, id)
		}
	}
	return ids
}

// jobState asks Slurm for a job's state: scontrol (while the controller
// remembers the job), else squeue, else sacct when accounting is on. It
// returns "" when none knows the job.
func jobState(ctx context.Context, id string) string {
	q := func(name string, args ...string) string {
		if _, err := exec.LookPath(name); err != nil {
			return ""
		}
		c, cancel := context.WithTimeout(ctx, 15*time.Second)
		defer cancel()
		out, err := exec.CommandContext(c, name, args...).Output()
		if err != nil {
			return ""
		}
		return string(out)
	}
	if out := q("scontrol", "show", "job", "-o", id); out != "" {
		if i := strings.Index(out, "JobState="); i >= 0 {
			f := strings.Fields(out[i+len("JobState="):])
			if len(f) > 0 {
				return f[0]
			}
		}
	}
	if out := strings.TrimSpace(q("squeue", "-h", "-j", id, "-o", "%T")); out != "" {
		return strings.Fields(out)[0]
	}
	if out := strings.TrimSpace(q("sacct", "-n", "-X", "-P", "-j", id, "-o", "State")); out != "" {
		return strings.Fields(out)[0]
	}
	return ""
}

// jobActive reports whether a job state means the job may still run.
func jobActive(state string) bool {
	switch state {
	case "PENDING", "RUNNING", "CONFIGURING", "COMPLETING", "REQUEUED", "REQUEUE_HOLD", "REQUEUE_FED",
		"RESIZING", "SUSPENDED", "SIGNALING", "STAGE_OUT", "STOPPED":
		return true
	}
	return false
}

// srunStep runs one pass's shard steps as a Slurm job step inside the
// current allocation: one task per listed shard, task i computing shard
// shards[i]. srun's own output goes to the driver's streams (the job log).
func srunStep(ctx context.Context, e *env, exe string, d runDir, m *clusterManifest, pass int, shards []int) error {
	list := make([]string, len(shards))
	for i, s := range shards {
		list[i] = strconv.Itoa(s)
	}
	args := []string{"--ntasks=" + strconv.Itoa(len(shards)), "--cpus-per-task=" + strconv.Itoa(m.CPUsPerTask),
		"--kill-on-bad-exit=1", "--job-name=clinal-pass-" + strconv.Itoa(pass),
		exe, "cluster", "step", string(d), "--pass", strconv.Itoa(pass), "--shards", strings.Join(list, ",")}
	cmd := exec.CommandContext(ctx, "srun", args...)
	cmd.Stdout, cmd.Stderr = e.stdout, e.stderr
	// On cancellation srun is asked to stop its tasks (SIGTERM) before it
	// is killed.
	cmd.Cancel = func() error { return cmd.Process.Signal(syscall.SIGTERM) }
	cmd.WaitDelay = 20 * time.Second
	if err := cmd.Run(); err != nil {
		if ctx.Err() != nil {
			return ctx.Err()
		}
		return fmt.Errorf("srun pass %d shards %s: %w", pass, strings.Join(list, ","), err)
	}
	return nil
}
