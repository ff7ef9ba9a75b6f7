package main

import (
	"bytes"
	"compress/gzip"
	"context"
	"encoding/json"
	"io"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/clinal/clinal/matrixio"
	"github.com/clinal/clinal/randsvd"
)

// writeTestStore writes a small two-population store (frequencies differ
// by a fixed shift) for command tests; the numbers themselves are checked
// against gonum in randsvd's tests.
func writeTestStore(t *testing.T, dir string, n, m int) string {
	t.Helper()
	r := rand.New(rand.NewPCG(42, 1))
	ids := make([]string, n)
	for i := range ids {
		ids[i] = "isle" + string(rune('1'+i%2)) + "-" + string(rune('a'+i/26%26)) + string(rune('a'+i%26))
	}
	path := filepath.Join(dir, "c.clinal")
	w, err := matrixio.Create(path, ids, matrixio.WriterOptions{ChunkMarkers: 50})
	if err != nil {
		t.Fatal(err)
	}
	g := make([]byte, n)
	for j := 0; j < m; j++ {
		p := 0.1 + 0.8*r.Float64()
		for i := range g {
			q := p
			if i%2 == 1 {
				q = 1 - p
			}
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
		if err := w.AddGenotypes(matrixio.Marker{Chrom: "1", Pos: int64(1000 * (j + 1)), ID: "mk" + strconv.Itoa(j), Ref: "C", Alt: "T"}, g); err != nil {
			t.Fatal(err)
		}
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	return path
}

func runCmd(t *testing.T, args ...string) (int, string, string) {
	t.Helper()
	var out, errb bytes.Buffer
	code := run(context.Background(), &env{stdin: strings.NewReader(""), stdout: &out, stderr: &errb}, args)
	return code, out.String(), errb.String()
}

func readMaybeGz(t *testing.T, path string) string {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if strings.HasSuffix(path, ".gz") {
		zr, err := gzip.NewReader(bytes.NewReader(b))
		if err != nil {
			t.Fatal(err)
		}
		b, err = io.ReadAll(zr)
		if err != nil {
			t.Fatal(err)
		}
	}
	return string(b)
}

// TestPCACommandOutputs checks the output contract of design.md (file
// names and headers) and that --threads 1 and 2 give identical files.
func TestPCACommandOutputs(t *testing.T) {
	dir := t.TempDir()
	store := writeTestStore(t, dir, 120, 400)
	var first map[string]string
	for _, th := range []string{"1", "2"} {
		prefix := filepath.Join(dir, "run"+th)
		code, stdout, stderr := runCmd(t, "pca", store, "-k", "4", "-o", prefix, "--threads", th, "--seed", "7")
		if code != 0 {
			t.Fatalf("exit %d: %s", code, stderr)
		}
		if !strings.Contains(stdout, "pca: 120 samples") {
			t.Errorf("summary: %q", stdout)
		}
		files := map[string]string{}
		for _, f := range []string{"covariates.tsv", "spectrum.tsv", "loadings.tsv.gz"} {
			files[f] = readMaybeGz(t, prefix+"."+f)
		}
		if h := strings.SplitN(files["covariates.tsv"], "\n", 2)[0]; h != "sample_id\tPC1\tPC2\tPC3\tPC4" {
			t.Errorf("covariates header %q", h)
		}
		if n := strings.Count(files["covariates.tsv"], "\n"); n != 121 {
			t.Errorf("covariates has %d lines, want 121", n)
		}
		if h := strings.SplitN(files["spectrum.tsv"], "\n", 2)[0]; h != matrixio.SpectrumHeader {
			t.Errorf("spectrum header %q", h)
		}
		if h := strings.SplitN(files["loadings.tsv.gz"], "\n", 2)[0]; !strings.HasPrefix(h, "chrom\tpos\tid\tref\talt\tallele\tfreq\tscale\tPC1") {
			t.Errorf("loadings header %q", h)
		}
		var rep map[string]any
		if err := json.Unmarshal([]byte(readMaybeGz(t, prefix+".report.json")), &rep); err != nil {
			t.Fatal(err)
		}
		for _, key := range []string{"samples_used", "markers_used", "k", "passes", "trace", "eigenvalues", "residuals", "seed", "threads", "kernels", "wall_seconds", "peak_rss_bytes", "version", "qc"} {
			if _, ok := rep[key]; !ok {
				t.Errorf("report.json lacks %q", key)
			}
		}
		// -k 4: a basis of l = 4 + 10 (the default oversampling) and
		// passes of b = max(4, 14/2) rounded up to 4 = 8 vectors
		// (randsvd.blockWidth's rule, the project's own).
		if rep["block_size"] != 14.0 || rep["krylov_block"] != 8.0 {
			t.Errorf("report.json block_size %v, krylov_block %v, want 14 and 8", rep["block_size"], rep["krylov_block"])
		}
		if k := rep["kernels"]; k != randsvd.Kernels() || (k != "avx512" && k != "avx2" && k != "portable") {
			t.Errorf("report.json kernels %v, this process runs %q", k, randsvd.Kernels())
		}
		if first == nil {
			first = files
		} else {
			for f, v := range files {
				if v != first[f] {
					t.Errorf("%s differs between --threads 1 and 2", f)
				}
			}
		}
	}
}

// TestPCALoadingsAcrossThreads: the loadings of 6,000 markers (rows go
// to the formatters in batches of 1,024, five in flight, so batches are
// reused and can finish out of order) are the same text, in marker order,
// with 1, 3 and 4 threads (the product's rule that the thread count never
// changes a number; no outside source).
func TestPCALoadingsAcrossThreads(t *testing.T) {
	dir := t.TempDir()
	const m = 6000
	store := writeTestStore(t, dir, 40, m)
	var first string
	for _, th := range []string{"1", "3", "4"} {
		prefix := filepath.Join(dir, "run"+th)
		code, _, stderr := runCmd(t, "pca", store, "-k", "3", "-o", prefix, "--threads", th, "--seed", "3",
			"--min-sample-call-rate", "0", "--min-marker-call-rate", "0", "--min-maf", "0", "--min-hwe-p", "0",
			"--chromosomes", "all", "--ld-r2", "0")
		if code != 0 {
			t.Fatalf("--threads %s: exit %d: %s", th, code, stderr)
		}
		text := readMaybeGz(t, prefix+".loadings.tsv.gz")
		lines := strings.Split(strings.TrimSuffix(text, "\n"), "\n")
		if len(lines) != m+1 {
			t.Fatalf("--threads %s: %d lines, want %d", th, len(lines), m+1)
		}
		for j, l := range lines[1:] {
			if id := strings.SplitN(l, "\t", 4)[2]; id != "mk"+strconv.Itoa(j) {
				t.Fatalf("--threads %s: row %d is marker %s, want mk%d", th, j+1, id, j)
			}
		}
		if first == "" {
			first = text
		} else if text != first {
			t.Errorf("loadings differ between --threads 1 and %s", th)
		}
	}
}

// TestPCAAutoK runs -k auto on two populations (one structured PC: k
// populations give k-1 significant PCs under the Tracy-Widom test,
// Patterson, Price & Reich 2006, from memory) and checks that every output has that
// many PCs; under -race it also covers the trimming of a result whose last
// checkpoint is written in the background.
func TestPCAAutoK(t *testing.T) {
	dir := t.TempDir()
	store := writeTestStore(t, dir, 150, 600)
	prefix := filepath.Join(dir, "auto")
	code, _, stderr := runCmd(t, "pca", store, "-k", "auto", "--k-max", "6", "-o", prefix, "--seed", "3")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	if !strings.Contains(stderr, "-k auto: 1 of 6 PCs significant") {
		t.Fatalf("stderr %q: want 1 of 6 PCs kept", stderr)
	}
	if h := strings.SplitN(readMaybeGz(t, prefix+".covariates.tsv"), "\n", 2)[0]; h != "sample_id\tPC1" {
		t.Errorf("covariates header %q", h)
	}
	var rep struct {
		Markers int `json:"markers_used"`
	}
	if err := json.Unmarshal([]byte(readMaybeGz(t, prefix+".report.json")), &rep); err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(readMaybeGz(t, prefix+".loadings.tsv.gz")), "\n")
	if h := lines[0]; !strings.HasSuffix(h, "\tscale\tPC1") || len(lines) != rep.Markers+1 || rep.Markers < 100 {
		t.Errorf("loadings: header %q and %d rows, want PC1 only and the %d markers used", h, len(lines)-1, rep.Markers)
	}
	if _, err := os.Stat(prefix + ".checkpoint"); !os.IsNotExist(err) {
		t.Errorf("checkpoint left after a finished run: %v", err)
	}
}

// TestPCABadUsage checks exit code 2 and a one-line error.
func TestPCABadUsage(t *testing.T) {
	dir := t.TempDir()
	store := writeTestStore(t, dir, 30, 60)
	cases := []struct {
		name string
		args []string
		want string
	}{
		{"no store", []string{"pca", "-k", "2", "-o", filepath.Join(dir, "x")}, "want one STORE"},
		{"no prefix", []string{"pca", store, "-k", "2"}, "-o PREFIX"},
		{"k zero", []string{"pca", store, "-k", "0", "-o", filepath.Join(dir, "x")}, "-k 0"},
		{"k too big", []string{"pca", store, "-k", "40", "-o", filepath.Join(dir, "x")}, "exceeds"},
		{"memory too small", []string{"pca", store, "-k", "2", "-o", filepath.Join(dir, "x"), "--memory", "1MiB"}, "too small"},
		{"missing store", []string{"pca", filepath.Join(dir, "nope.clinal"), "-o", filepath.Join(dir, "x")}, "nope.clinal"},
		{"bad scaling", []string{"pca", store, "-o", filepath.Join(dir, "x"), "-k", "2", "--scaling", "zz"}, "scaling"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			code, _, stderr := runCmd(t, tc.args...)
			if code != 2 {
				t.Fatalf("exit %d, want 2 (stderr %q)", code, stderr)
			}
			if strings.Count(strings.TrimRight(stderr, "\n"), "\n") != 0 || !strings.Contains(stderr, tc.want) {
				t.Errorf("stderr %q, want one line containing %q", stderr, tc.want)
			}
			if m, _ := filepath.Glob(filepath.Join(dir, "x*")); len(m) != 0 {
				t.Errorf("left outputs %v", m)
			}
		})
	}
}
