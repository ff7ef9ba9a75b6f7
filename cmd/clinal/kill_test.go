package main

import (
	"bufio"
	"bytes"
	"compress/gzip"
	"context"
	"encoding/json"
	"encoding/xml"
	"errors"
	"fmt"
	"image/png"
	"io"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/clinal/clinal/matrixio"
	"github.com/clinal/clinal/randsvd"
)

// Kill safety (issue 9, items 2 and 5). The harness builds the clinal
// binary, simulates one cohort, and for each of import (from a BGZF VCF),
// qc and pca starts the command as a child process, SIGKILLs it after a
// seeded random delay within its normal run time, and checks the output
// directory: every file under a final name must be complete (a store opens
// and verifies, TSV and JSON parse fully, gzip decompresses fully, a pca
// checkpoint passes its checksum); only hidden *.partial temporaries may
// remain (counted and reported: SIGKILL gives no chance to remove them).
// For pca the same command is then rerun: it resumes from PREFIX.checkpoint
// and must give covariates.tsv, spectrum.tsv and loadings.tsv.gz
// byte-identical to an uninterrupted run. For cluster runs (the driver with
// --local shard steps, after a plan that is not killed) the rerun is
// `clinal cluster resume RUNDIR --local`: it must accept the run directory
// the kill left (its manifest, selection, blocks, partials and state are
// checksummed and re-verified on resume) and give the same three files.
//
// CLINAL_KILL_TRIALS sets the trials per command (default 5; the recorded
// run in benchmarks/memory/README.md used 20), CLINAL_KILL_SEED the seed
// of the delays (default 1). Skipped under -short.

// kbTool builds clinal and simulates the cohort once per test binary.
type kbTool struct {
	bin, vcf, store string
}

func kbSetup(t *testing.T) *kbTool {
	t.Helper()
	if testing.Short() {
		t.Skip("kill and signal harness: builds the binary and runs it many times")
	}
	gobin, err := exec.LookPath("go")
	if err != nil {
		t.Skip("the go tool is not on PATH: cannot build the binary")
	}
	dir := t.TempDir()
	k := &kbTool{bin: filepath.Join(dir, "clinal"), vcf: filepath.Join(dir, "cohort.vcf.gz"), store: filepath.Join(dir, "cohort.clinal")}
	if out, err := exec.Command(gobin, "build", "-buildvcs=false", "-o", k.bin, ".").CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	// 600 samples x 24,000 markers in three populations: import, qc and
	// pca each take a fraction of a second to a few seconds here.
	for _, o := range []string{k.vcf, k.store} {
		if out, err := exec.Command(k.bin, "simulate", "-o", o, "--samples", "600", "--markers", "24000",
			"--populations", "3", "--fst", "0.05", "--seed", "11", "--threads", "2").CombinedOutput(); err != nil {
			t.Fatalf("simulate: %v\n%s", err, out)
		}
	}
	return k
}

// kbCommand is one command of the harness with its output directory.
type kbCommand struct {
	name string
	args func(out string) []string
	// compare lists the outputs that must be byte-identical after a resume
	// (pca and cluster).
	compare []string
	// setup, when set, runs to completion before the command (not killed);
	// rerun, when set, replaces the command for the rerun after a kill;
	// skipDir names a subdirectory of the output that kbCheckDir leaves to
	// the rerun (the cluster run directory).
	setup, rerun func(out string) []string
	skipDir      string
}

func (k *kbTool) commands() []kbCommand {
	return []kbCommand{
		{name: "import", args: func(out string) []string {
			return []string{"import", "-o", filepath.Join(out, "c.clinal"), "--threads", "2", k.vcf}
		}},
		{name: "qc", args: func(out string) []string {
			return []string{"qc", k.store, "-o", filepath.Join(out, "q"), "--threads", "2"}
		}},
		{name: "pca", args: func(out string) []string {
			return []string{"pca", k.store, "-k", "4", "--seed", "5", "--threads", "2", "-o", filepath.Join(out, "p")}
		}, compare: []string{"p.covariates.tsv", "p.spectrum.tsv", "p.loadings.tsv.gz"}},
		{name: "cluster", setup: func(out string) []string {
			return []string{"cluster", "plan", k.store, "-k", "4", "--seed", "5", "--shards", "3", "-o", filepath.Join(out, "p"),
				"--run-dir", filepath.Join(out, "rd")}
		}, args: func(out string) []string {
			return []string{"cluster", "run", filepath.Join(out, "rd"), "--local", "--threads", "2", "--local-jobs", "2"}
		}, rerun: func(out string) []string {
			return []string{"cluster", "resume", filepath.Join(out, "rd"), "--local", "--threads", "2", "--local-jobs", "2"}
		}, skipDir: "rd", compare: []string{"p.covariates.tsv", "p.spectrum.tsv", "p.loadings.tsv.gz"}},
	}
}

// kbRun runs the binary to completion and returns its duration.
func (k *kbTool) run(t *testing.T, args []string) (time.Duration, string) {
	t.Helper()
	var stderr bytes.Buffer
	c := exec.Command(k.bin, args...)
	c.Stderr = &stderr
	t0 := time.Now()
	if err := c.Run(); err != nil {
		t.Fatalf("clinal %s: %v: %s", strings.Join(args, " "), err, stderr.String())
	}
	return time.Since(t0), stderr.String()
}

func kbEnvInt(name string, def int) int {
	if v, err := strconv.Atoi(os.Getenv(name)); err == nil && v > 0 {
		return v
	}
	return def
}

func TestKillSafety(t *testing.T) {
	k := kbSetup(t)
	trials := kbEnvInt("CLINAL_KILL_TRIALS", 5)
	seed := uint64(kbEnvInt("CLINAL_KILL_SEED", 1))
	rng := rand.New(rand.NewPCG(seed, 9))
	for _, cmd := range k.commands() {
		t.Run(cmd.name, func(t *testing.T) {
			base := t.TempDir()
			if cmd.setup != nil {
				k.run(t, cmd.setup(base))
			}
			normal, _ := k.run(t, cmd.args(base))
			var corrupt, partials, finals, resumed, equal, kills int
			var minD, maxD time.Duration
			for trial := 0; trial < trials; trial++ {
				out := t.TempDir()
				if cmd.setup != nil {
					k.run(t, cmd.setup(out))
				}
				// A delay within the normal run time, after the child has
				// had 20 ms to start.
				d := 20*time.Millisecond + time.Duration(rng.Int64N(int64(normal)))
				if trial == 0 || d < minD {
					minD = d
				}
				maxD = max(maxD, d)
				c := exec.Command(k.bin, cmd.args(out)...)
				if err := c.Start(); err != nil {
					t.Fatal(err)
				}
				time.Sleep(d)
				c.Process.Signal(syscall.SIGKILL)
				c.Wait()
				if ws, ok := c.ProcessState.Sys().(syscall.WaitStatus); ok && ws.Signaled() {
					kills++
				}
				f, p, bad := kbCheckDir(t, out, cmd.skipDir)
				finals += f
				partials += p
				corrupt += len(bad)
				for _, b := range bad {
					t.Errorf("trial %d (SIGKILL after %v): %s", trial, d, b)
				}
				if cmd.compare == nil {
					continue
				}
				rerun := cmd.args(out)
				if cmd.rerun != nil {
					rerun = cmd.rerun(out)
				}
				_, msg := k.run(t, rerun)
				if strings.Contains(msg, "resuming from pass") || strings.Contains(msg, "cluster: resuming") {
					resumed++
				}
				same := true
				for _, name := range cmd.compare {
					a, _ := os.ReadFile(filepath.Join(base, name))
					b, err := os.ReadFile(filepath.Join(out, name))
					if err != nil || !bytes.Equal(a, b) {
						same = false
						t.Errorf("trial %d (SIGKILL after %v): %s after the rerun differs from the uninterrupted run (%v)", trial, d, name, err)
					}
				}
				if same {
					equal++
				}
			}
			t.Logf("%s: normal run %v; %d trials, SIGKILL after %v..%v (%d killed before finishing); %d complete final files found, %d corrupt; %d *.partial temporaries left",
				cmd.name, normal.Round(time.Millisecond), trials, minD.Round(time.Millisecond), maxD.Round(time.Millisecond), kills, finals, corrupt, partials)
			if cmd.compare != nil {
				t.Logf("%s: %d of %d reruns resumed from a checkpoint; %d of %d gave outputs identical to the uninterrupted run", cmd.name, resumed, trials, equal, trials)
			}
		})
	}
}

// kbCheckDir checks every file in dir after a kill: hidden *.partial
// temporaries are counted, every other file must be complete for its
// type. It returns the number of final files, of temporaries, and the
// problems found.
func kbCheckDir(t *testing.T, dir, skipDir string) (finals, partials int, bad []string) {
	t.Helper()
	es, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range es {
		name := e.Name()
		p := filepath.Join(dir, name)
		if e.IsDir() && name == skipDir {
			continue
		}
		if strings.HasPrefix(name, ".") && strings.HasSuffix(name, ".partial") {
			partials++
			continue
		}
		finals++
		if err := kbComplete(p); err != nil {
			bad = append(bad, fmt.Sprintf("%s: incomplete or corrupt under its final name: %v", name, err))
		}
	}
	return finals, partials, bad
}

// kbComplete checks that the file at p is complete for its type.
func kbComplete(p string) error {
	name := filepath.Base(p)
	switch {
	case strings.HasSuffix(name, ".clinal"):
		st, err := matrixio.Open(p)
		if err != nil {
			return err
		}
		defer st.Close()
		return st.Verify(context.Background(), 1)
	case strings.HasSuffix(name, ".checkpoint"):
		// Any key: a complete checkpoint passes its CRC32C and then reports
		// the key mismatch.
		_, err := randsvd.ReadCheckpoint(p, "")
		if err == nil || errors.Is(err, randsvd.ErrCheckpointMismatch) {
			return nil
		}
		return err
	case strings.HasSuffix(name, ".json"):
		b, err := os.ReadFile(p)
		if err != nil {
			return err
		}
		var v any
		return json.Unmarshal(b, &v)
	case strings.HasSuffix(name, ".gz"):
		f, err := os.Open(p)
		if err != nil {
			return err
		}
		defer f.Close()
		zr, err := gzip.NewReader(f)
		if err != nil {
			return err
		}
		b, err := io.ReadAll(zr)
		if err != nil {
			return err
		}
		return kbTable(b)
	case strings.HasSuffix(name, ".tsv"), strings.HasSuffix(name, ".txt"):
		b, err := os.ReadFile(p)
		if err != nil {
			return err
		}
		return kbTable(b)
	case strings.HasSuffix(name, ".png"):
		f, err := os.Open(p)
		if err != nil {
			return err
		}
		defer f.Close()
		// image/png reads through to the IEND chunk and checks every CRC.
		_, err = png.Decode(f)
		return err
	case strings.HasSuffix(name, ".svg"):
		f, err := os.Open(p)
		if err != nil {
			return err
		}
		defer f.Close()
		return kbXML(f)
	case strings.HasSuffix(name, ".html"):
		b, err := os.ReadFile(p)
		if err != nil {
			return err
		}
		if !bytes.Contains(b, []byte("</html>")) {
			return errors.New("no closing </html>")
		}
		return nil
	}
	return errors.New("unexpected output file (no completeness check for its type)")
}

// kbXML checks that r is well-formed XML to its end with every element
// closed (a cut SVG file is not).
func kbXML(r io.Reader) error {
	d := xml.NewDecoder(r)
	depth, elems := 0, 0
	for {
		tok, err := d.Token()
		if err == io.EOF {
			if depth != 0 || elems == 0 {
				return fmt.Errorf("%d elements left open, %d elements in all", depth, elems)
			}
			return nil
		}
		if err != nil {
			return err
		}
		switch tok.(type) {
		case xml.StartElement:
			depth++
			elems++
		case xml.EndElement:
			depth--
		}
	}
}

// kbTable checks a tab-separated table: non-empty, ending with a newline,
// every line with the header's number of fields.
func kbTable(b []byte) error {
	if len(b) == 0 || b[len(b)-1] != '\n' {
		return errors.New("empty or not ending with a newline")
	}
	sc := bufio.NewScanner(bytes.NewReader(b))
	sc.Buffer(make([]byte, 1<<16), 1<<26)
	fields := -1
	for n := 1; sc.Scan(); n++ {
		k := strings.Count(sc.Text(), "\t") + 1
		if fields < 0 {
			fields = k
		} else if k != fields {
			return fmt.Errorf("line %d has %d fields, the header %d", n, k, fields)
		}
	}
	return sc.Err()
}

// TestSignalStop: SIGINT and SIGTERM stop import, qc and pca cleanly: exit
// code 128+signal (130, 143), no *.partial temporary left, and one message
// saying the run was interrupted and how to resume (main.go). The signal
// is sent at 40% of the normal run time; a run that finished first is
// retried with a shorter delay. Also: a command waiting on a named pipe
// that has no writer ends on SIGTERM (matrixio.OpenInput).
func TestSignalStop(t *testing.T) {
	k := kbSetup(t)
	for _, cmd := range k.commands() {
		base := t.TempDir()
		if cmd.setup != nil {
			k.run(t, cmd.setup(base))
		}
		normal, _ := k.run(t, cmd.args(base))
		for _, sig := range []syscall.Signal{syscall.SIGINT, syscall.SIGTERM} {
			t.Run(cmd.name+"/"+sig.String(), func(t *testing.T) {
				hint := "rerun the same command to start again"
				if cmd.name == "pca" || cmd.name == "cluster" {
					hint = "rerun the same command to resume from the last completed pass"
				}
				d := normal * 4 / 10
				for try := 0; ; try++ {
					out := t.TempDir()
					if cmd.setup != nil {
						k.run(t, cmd.setup(out))
					}
					code, stderr := kbSignal(t, k.bin, cmd.args(out), sig, max(d, 30*time.Millisecond))
					if code == 0 && try < 4 {
						d /= 2 // finished before the signal: try earlier
						continue
					}
					if code != 128+int(sig) {
						t.Fatalf("exit %d after %v, want %d (stderr %q)", code, d, 128+int(sig), stderr)
					}
					want := "clinal " + cmd.name + ": interrupted; no partial output left; " + hint + "\n"
					if !strings.HasSuffix(stderr, want) {
						t.Errorf("stderr %q, want it to end with %q", stderr, want)
					}
					_, partials, bad := kbCheckDir(t, out, cmd.skipDir)
					if partials != 0 {
						t.Errorf("%d *.partial temporaries left after %s", partials, sig)
					}
					for _, b := range bad {
						t.Error(b)
					}
					t.Logf("%s after %v: exit %d", sig, max(d, 30*time.Millisecond), code)
					return
				}
			})
		}
	}
	t.Run("import waiting on a pipe/SIGTERM", func(t *testing.T) {
		out := t.TempDir()
		fifo := filepath.Join(out, "in.vcf")
		if err := syscall.Mkfifo(fifo, 0o644); err != nil {
			t.Fatal(err)
		}
		t0 := time.Now()
		code, stderr := kbSignal(t, k.bin, []string{"import", "-o", filepath.Join(out, "c.clinal"), fifo}, syscall.SIGTERM, 300*time.Millisecond)
		if code != 143 || !strings.Contains(stderr, "interrupted") {
			t.Fatalf("exit %d, stderr %q; want 143 and the interrupted message", code, stderr)
		}
		if el := time.Since(t0); el > 5*time.Second {
			t.Errorf("took %v to stop", el)
		}
		if es, _ := os.ReadDir(out); len(es) != 1 {
			t.Errorf("output directory holds %v, want only the pipe", es)
		}
	})
}

// kbSignal starts the binary, sends sig after d and returns the exit code
// (128+n when the signal killed it outright) and stderr. It gives up
// (SIGKILL, test failure) after 60 s.
func kbSignal(t *testing.T, bin string, args []string, sig syscall.Signal, d time.Duration) (int, string) {
	t.Helper()
	var stderr bytes.Buffer
	c := exec.Command(bin, args...)
	c.Stderr = &stderr
	if err := c.Start(); err != nil {
		t.Fatal(err)
	}
	time.Sleep(d)
	c.Process.Signal(sig)
	done := make(chan error, 1)
	go func() { done <- c.Wait() }()
	select {
	case <-done:
	case <-time.After(60 * time.Second):
		c.Process.Kill()
		<-done
		t.Fatalf("clinal %s did not stop within 60 s of %s", args[0], sig)
	}
	ws := c.ProcessState.Sys().(syscall.WaitStatus)
	if ws.Signaled() {
		return 128 + int(ws.Signal()), stderr.String()
	}
	return ws.ExitStatus(), stderr.String()
}
