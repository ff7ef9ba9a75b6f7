package main

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/clinal/clinal/matrixio"
)

// simRun runs clinal with args and returns the exit code, stdout and stderr.
func simRun(args ...string) (int, string, string) {
	var out, errb bytes.Buffer
	code := run(context.Background(), &env{stdout: &out, stderr: &errb}, args)
	return code, out.String(), errb.String()
}

// TestSimulateCommand: simulate writes the cohort in the format its
// extension names and the labels beside it, with the dimensions asked
// for, and prints one summary line. The file contents are checked against
// their references in matrixio/synth's tests; here the wiring is.
func TestSimulateCommand(t *testing.T) {
	cases := []struct {
		name   string
		out    string
		labels string
		args   []string
		groups []string // distinct groups, in order of first appearance
	}{
		{"store-default-scenario", "cohort.clinal", "cohort.labels.tsv", []string{"--samples", "120", "--markers", "300"},
			[]string{"isle1", "isle2", "isle3", "isle4", "isle5", "mainland", "mixed"}},
		{"store-flags", "c.clinal", "c.labels.tsv", []string{"--samples", "90", "--markers", "250", "--populations", "3",
			"--fst", "0.2", "--admixed", "0", "--missing", "0", "--poor-samples", "0", "--ld-block", "5", "--seed", "7",
			"--threads", "1", "--chromosomes", "2"}, []string{"isle1", "isle2", "mainland"}},
		{"one-population", "one.clinal", "one.labels.tsv", []string{"--samples", "30", "--markers", "50", "--populations", "1"},
			[]string{"mainland"}},
		{"vcf", "cohort.vcf.gz", "cohort.labels.tsv", []string{"--samples", "40", "--markers", "100", "--admixed", "0.5"},
			[]string{"isle1", "isle2", "isle3", "isle4", "isle5", "mainland", "mixed"}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			dir := t.TempDir()
			out := filepath.Join(dir, tc.out)
			code, stdout, stderr := simRun(append([]string{"simulate", "-o", out}, tc.args...)...)
			if code != 0 {
				t.Fatalf("exit %d, stderr %q", code, stderr)
			}
			if strings.Count(stdout, "\n") != 1 || !strings.HasPrefix(stdout, "Simulated ") || !strings.Contains(stdout, out) {
				t.Errorf("summary %q: want one line naming %s", stdout, out)
			}
			lb, err := os.ReadFile(filepath.Join(dir, tc.labels))
			if err != nil {
				t.Fatalf("labels: %v", err)
			}
			lines := strings.Split(strings.TrimSuffix(string(lb), "\n"), "\n")
			if lines[0] != "sample_id\tgroup" {
				t.Fatalf("labels header %q", lines[0])
			}
			var ids, groups []string
			for _, l := range lines[1:] {
				id, g, _ := strings.Cut(l, "\t")
				ids = append(ids, id)
				if !slices.Contains(groups, g) {
					groups = append(groups, g)
				}
			}
			if !slices.Equal(groups, tc.groups) {
				t.Errorf("label groups %v, want %v", groups, tc.groups)
			}
			if strings.HasSuffix(tc.out, ".vcf.gz") {
				b, err := os.ReadFile(out)
				if err != nil || len(b) < 2 || b[0] != 0x1f || b[1] != 0x8b { // gzip magic, RFC 1952
					t.Fatalf("VCF output not gzip: %v", err)
				}
				return
			}
			s, err := matrixio.Open(out)
			if err != nil {
				t.Fatalf("Open: %v", err)
			}
			defer s.Close()
			want := map[string]int{"--samples": 0, "--markers": 0}
			for i := 0; i+1 < len(tc.args); i++ {
				if _, ok := want[tc.args[i]]; ok {
					want[tc.args[i]] = atoi(t, tc.args[i+1])
				}
			}
			if s.NumSamples() != want["--samples"] || s.NumMarkers() != want["--markers"] {
				t.Errorf("store %d x %d, want %d x %d", s.NumSamples(), s.NumMarkers(), want["--samples"], want["--markers"])
			}
			if !slices.Equal(s.Samples(), ids) {
				t.Errorf("store samples differ from the labels' sample IDs")
			}
		})
	}
}

func atoi(t *testing.T, s string) int {
	t.Helper()
	n := 0
	for _, c := range s {
		if c < '0' || c > '9' {
			t.Fatalf("not a number: %q", s)
		}
		n = 10*n + int(c-'0')
	}
	return n
}

// TestSimulateThreadsIdentical: --threads changes nothing in the store's
// data (the package contract), seen through the stored per-marker counts.
func TestSimulateThreadsIdentical(t *testing.T) {
	dir := t.TempDir()
	var counts [][]matrixio.Counts
	for _, th := range []string{"1", "2"} {
		out := filepath.Join(dir, "t"+th+".clinal")
		if code, _, stderr := simRun("simulate", "-o", out, "--samples", "200", "--markers", "2000", "--threads", th); code != 0 {
			t.Fatalf("threads %s: exit %d: %s", th, code, stderr)
		}
		s, err := matrixio.Open(out)
		if err != nil {
			t.Fatal(err)
		}
		counts = append(counts, slices.Clone(s.Counts()))
		s.Close()
	}
	if !slices.Equal(counts[0], counts[1]) {
		t.Errorf("--threads 1 and --threads 2 stores differ")
	}
}

// TestSimulateBadUsage: bad flag values exit 2 with a one-line error that
// names the problem, and leave no output.
func TestSimulateBadUsage(t *testing.T) {
	cases := []struct {
		name string
		args []string
		want string
	}{
		{"negative-samples", []string{"-o", "c.clinal", "--samples", "-5"}, "samples -5"},
		{"fst-one", []string{"-o", "c.clinal", "--fst", "1"}, "fst 1"},
		{"fst-over-one", []string{"-o", "c.clinal", "--fst", "1.5"}, "fst 1.5"},
		{"unknown-extension", []string{"-o", "c.txt"}, "unknown output type"},
		{"bare-extension", []string{"-o", ".clinal"}, "unknown output type"},
		{"no-output", []string{"--samples", "10"}, "-o OUT.clinal"},
		{"positional", []string{"-o", "c.clinal", "extra"}, `unexpected argument "extra"`},
		{"not-a-number", []string{"-o", "c.clinal", "--samples", "many"}, "invalid value"},
		{"unknown-flag", []string{"-o", "c.clinal", "--islands", "5"}, "islands"},
		{"zero-threads", []string{"-o", "c.clinal", "--threads", "0"}, "--threads 0"},
		{"too-many-chromosomes", []string{"-o", "c.clinal", "--chromosomes", "40"}, "chromosomes 40"},
		{"admixed-one-population", []string{"-o", "c.vcf.gz", "--populations", "1", "--admixed", "0.1"}, "at least 2 populations"},
		{"missing-one", []string{"-o", "c.clinal", "--missing", "1"}, "missing rate 1"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			dir := t.TempDir()
			args := slices.Clone(tc.args)
			for i, a := range args {
				if i > 0 && args[i-1] == "-o" {
					args[i] = filepath.Join(dir, a)
				}
			}
			code, stdout, stderr := simRun(append([]string{"simulate"}, args...)...)
			if code != 2 {
				t.Errorf("exit %d, want 2 (stderr %q)", code, stderr)
			}
			if strings.Count(stderr, "\n") != 1 || !strings.Contains(stderr, tc.want) {
				t.Errorf("stderr %q: want one line containing %q", stderr, tc.want)
			}
			if stdout != "" {
				t.Errorf("stdout %q, want nothing", stdout)
			}
			if left, _ := os.ReadDir(dir); len(left) != 0 {
				t.Errorf("files left: %v", left)
			}
		})
	}
}
