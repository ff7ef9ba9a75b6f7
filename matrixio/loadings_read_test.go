package matrixio

import (
	"bytes"
	"compress/gzip"
	"encoding/binary"
	"fmt"
	"io"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

// modelFiles is a valid model of 4 markers and 2 PCs, written by hand: the
// loading columns (1/2)(1, 1, 1, 1) and (1/2)(1, -1, 1, -1) are
// orthonormal, as the reader requires.
func modelFiles() map[string]string {
	return map[string]string{
		ModelReportSuffix: `{"version": "x", "samples_used": 50, "markers_used": 4, "k": 2, "trace": 52.5, "scaling": "patterson", "eigenvalues": [9.5, 3.25]}`,
		ModelSpectrumSuffix: SpectrumHeader + "\n" +
			"1\t9.5\t0.18095238095238095\t0.18095238095238095\t1e-9\tyes\tNA\tNA\n" +
			"2\t3.25\t0.06190476190476191\t0.24285714285714285\t1e-9\tyes\tNA\tNA\n",
		ModelLoadingsSuffix: LoadingsHeaderStart + "\tPC1\tPC2\n" +
			"1\t100\trs1\tA\tG\tG\t0.25\t0.6123724356957945\t0.5\t0.5\n" +
			"1\t200\trs2\tC\tT\tT\t0.5\t0.7071067811865476\t0.5\t-0.5\n" +
			"chr2\t300\trs3\tA\tT\tT\t0.1\t0.4242640687119285\t0.5\t0.5\n" +
			"2\t400\trs4\tG\tC\tG\t0.75\t0.6123724356957945\t0.5\t-0.5\n",
	}
}

// writeModel writes the files under dir/m, gzip-compressing the loadings
// with the standard library's compress/gzip (a second implementation next
// to the writer's).
func writeModel(t *testing.T, dir string, files map[string]string) string {
	t.Helper()
	prefix := filepath.Join(dir, "m")
	for suf, text := range files {
		b := []byte(text)
		if suf == ModelLoadingsSuffix && !strings.HasPrefix(text, "plain:") {
			var buf bytes.Buffer
			zw := gzip.NewWriter(&buf)
			zw.Write(b)
			zw.Close()
			b = buf.Bytes()
		}
		b = bytes.TrimPrefix(b, []byte("plain:"))
		if err := os.WriteFile(prefix+suf, b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return prefix
}

// TestReadPCAModel reads the hand-written model back: every field as
// written (decimal text parsed by strconv, exact).
func TestReadPCAModel(t *testing.T) {
	prefix := writeModel(t, t.TempDir(), modelFiles())
	m, err := ReadPCAModel(prefix)
	if err != nil {
		t.Fatal(err)
	}
	if m.K != 2 || m.MarkersUsed != 4 || m.SamplesUsed != 50 || m.Trace != 52.5 || m.Scaling != "patterson" {
		t.Errorf("model %+v", m)
	}
	if !slices.Equal(m.Eigenvalues, []float64{9.5, 3.25}) {
		t.Errorf("eigenvalues %v", m.Eigenvalues)
	}
	want := []Marker{{"1", 100, "rs1", "A", "G"}, {"1", 200, "rs2", "C", "T"}, {"chr2", 300, "rs3", "A", "T"}, {"2", 400, "rs4", "G", "C"}}
	if !slices.Equal(m.Markers, want) || !slices.Equal(m.Counted, []string{"G", "T", "T", "G"}) {
		t.Errorf("markers %v counted %v", m.Markers, m.Counted)
	}
	if !slices.Equal(m.Freq, []float64{0.25, 0.5, 0.1, 0.75}) || m.Scale[1] != 0.7071067811865476 {
		t.Errorf("freq %v scale %v", m.Freq, m.Scale)
	}
	if !slices.Equal(m.Loading(3), []float64{0.5, -0.5}) {
		t.Errorf("loading 4 %v", m.Loading(3))
	}
	// Without a trace in the report it comes from the spectrum:
	// eigenvalue / variance_fraction = 9.5 / 0.18095238095238095 = 52.5.
	f := modelFiles()
	f[ModelReportSuffix] = `{"samples_used": 50, "markers_used": 4, "eigenvalues": [9.5, 3.25]}`
	m, err = ReadPCAModel(writeModel(t, t.TempDir(), f))
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(m.Trace-52.5) > 1e-12 {
		t.Errorf("trace from spectrum %v, want 52.5", m.Trace)
	}
}

// TestReadPCAModelRoundTrip writes a model with the package's own writers
// and reads it back exactly (FormatFloat prints the shortest decimal that
// parses back to the same float64, a guarantee of strconv).
func TestReadPCAModelRoundTrip(t *testing.T) {
	dir := t.TempDir()
	prefix := filepath.Join(dir, "rt")
	lw, err := CreateLoadings(prefix+ModelLoadingsSuffix, 1)
	if err != nil {
		t.Fatal(err)
	}
	vals := []float64{0.6, 0.8 * (1 - 1e-17), 1.0 / 3 * 0}
	for j, v := range vals {
		lw.Write(Marker{Chrom: "3", Pos: int64(j + 1), ID: ".", Ref: "A", Alt: "C"}, 0.1+float64(j)/7, math.Sqrt(0.18), []float64{v})
	}
	if err := lw.Close(); err != nil {
		t.Fatal(err)
	}
	WriteSpectrum(prefix+ModelSpectrumSuffix, []SpectrumRow{{Eigenvalue: 2.0 / 3, VarianceFraction: 0.1, TWStatistic: math.NaN(), TWP: math.NaN()}})
	WriteJSON(prefix+ModelReportSuffix, map[string]any{"eigenvalues": []float64{2.0 / 3}, "markers_used": 3, "samples_used": 10})
	m, err := ReadPCAModel(prefix)
	if err != nil {
		t.Fatal(err)
	}
	for j, v := range vals {
		if m.Loading(j)[0] != v || m.Freq[j] != 0.1+float64(j)/7 || m.Scale[j] != math.Sqrt(0.18) {
			t.Errorf("marker %d: %v %v %v", j, m.Loading(j), m.Freq[j], m.Scale[j])
		}
	}
	if m.Eigenvalues[0] != 2.0/3 {
		t.Errorf("eigenvalue %v", m.Eigenvalues[0])
	}
}

// TestReadPCAModelBadInput edits one file of the valid model at a time.
// Expected: a BadInput error naming the file (and the line where there is
// one) and the problem.
func TestReadPCAModelBadInput(t *testing.T) {
	rep := func(s string) func(map[string]string) {
		return func(f map[string]string) { f[ModelReportSuffix] = s }
	}
	edit := func(suf, old, new string) func(map[string]string) {
		return func(f map[string]string) {
			if !strings.Contains(f[suf], old) {
				panic("test edit does not apply: " + old)
			}
			f[suf] = strings.Replace(f[suf], old, new, 1)
		}
	}
	del := func(suf string) func(map[string]string) { return func(f map[string]string) { delete(f, suf) } }
	L, S, R := ModelLoadingsSuffix, ModelSpectrumSuffix, ModelReportSuffix
	cases := []struct {
		name string
		mod  func(map[string]string)
		want string // substring of the message
	}{
		{"no-report", del(R), "m.report.json does not exist"},
		{"no-spectrum", del(S), "m.spectrum.tsv does not exist"},
		{"no-loadings", del(L), "m.loadings.tsv.gz does not exist"},
		{"report-not-json", rep("eigenvalues: 1"), "m.report.json: not a valid report"},
		{"report-no-markers", rep(`{"samples_used": 5, "eigenvalues": [1]}`), `no "markers_used"`},
		{"report-no-samples", rep(`{"markers_used": 5, "eigenvalues": [1]}`), `no "samples_used"`},
		{"report-no-eigenvalues", rep(`{"markers_used": 5, "samples_used": 5}`), `no "eigenvalues"`},
		{"report-negative", rep(`{"markers_used": 4, "samples_used": 5, "eigenvalues": [9.5, -1]}`), "eigenvalue 2 is -1"},
		{"report-k", edit(R, `"k": 2`, `"k": 3`), "k 3 but 2 eigenvalues"},
		{"spectrum-header", edit(S, "eigenvalue\t", "ev\t"), "m.spectrum.tsv:1: header"},
		{"spectrum-fields", edit(S, "\tNA\tNA\n2", "\tNA\n2"), "m.spectrum.tsv:2: 7 fields, want 8"},
		{"spectrum-value", edit(S, "\n2\t3.25\t", "\n2\t3.5\t"), "m.spectrum.tsv:3: eigenvalue 3.5 differs"},
		{"spectrum-short", edit(S, "2\t3.25\t0.06190476190476191\t0.24285714285714285\t1e-9\tyes\tNA\tNA\n", ""), "1 PCs, but"},
		{"loadings-not-gzip", edit(L, LoadingsHeaderStart, "plain:"+LoadingsHeaderStart), "not a gzip file"},
		{"loadings-header", edit(L, "\tPC2\n", "\n"), "m.loadings.tsv.gz:1: header"},
		{"loadings-fields", edit(L, "\t0.5\t0.5\n1\t200", "\t0.5\n1\t200"), "m.loadings.tsv.gz:2: 9 fields, want 10"},
		{"loadings-pos", edit(L, "\t200\t", "\t2e2\t"), "m.loadings.tsv.gz:3: position \"2e2\""},
		{"loadings-number", edit(L, "\t0.5\t-0.5\n", "\tabc\t-0.5\n"), "m.loadings.tsv.gz:3: PC1: \"abc\" is not a finite number"},
		{"loadings-nan", edit(L, "\t0.5\t-0.5\n", "\tNaN\t-0.5\n"), "m.loadings.tsv.gz:3: PC1: \"NaN\" is not a finite number"},
		{"loadings-scale", edit(L, "0.7071067811865476", "0"), "m.loadings.tsv.gz:3: scale \"0\""},
		{"loadings-freq", edit(L, "\t0.25\t", "\tx\t"), "m.loadings.tsv.gz:2: freq"},
		{"loadings-allele", edit(L, "\tA\tG\tG\t", "\tA\tG\tC\t"), "m.loadings.tsv.gz:2: counted allele \"C\" is neither"},
		{"loadings-empty-id", edit(L, "\trs3\t", "\t\t"), "m.loadings.tsv.gz:4: empty id"},
		{"loadings-short", edit(L, "2\t400\trs4\tG\tC\tG\t0.75\t0.6123724356957945\t0.5\t-0.5\n", ""), "3 marker rows, but"},
		{"loadings-long", edit(L, "\t0.5\t0.5\n1\t200", "\t0.5\t0.5\n9\t9\tx\tA\tG\tG\t0.5\t1\t0\t0\n1\t200"), "m.loadings.tsv.gz:6: more marker rows"},
		{"loadings-norm", edit(L, "\t0.5\t0.5\n1\t200", "\t0.4\t0.5\n1\t200"), "loadings of PC1 have squared norm"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			f := modelFiles()
			c.mod(f)
			_, err := ReadPCAModel(writeModel(t, t.TempDir(), f))
			if err == nil || !IsBadInput(err) || !strings.Contains(err.Error(), c.want) {
				t.Errorf("error %v, want a bad-input error containing %q", err, c.want)
			}
		})
	}
}

// TestLoadingsBGZF writes the same rows with one and with three compressing
// goroutines. Expected: both files are BGZF (SAM/BAM specification
// section 4.1: every member carries the "BC" extra field giving its size,
// and the file ends with the fixed empty EOF member), the same bytes, and
// Go's compress/gzip, an independent multi-member reader, reads them back
// to the expected text (rows past one 64 KiB block). Where htslib's
// htsfile is installed (Debian tabix/htslib), it must call them BGZF.
func TestLoadingsBGZF(t *testing.T) {
	dir := t.TempDir()
	var texts, files [][]byte
	for _, threads := range []int{1, 3} {
		path := filepath.Join(dir, fmt.Sprintf("t%d.loadings.tsv.gz", threads))
		lw, err := CreateLoadingsThreads(path, 2, threads)
		if err != nil {
			t.Fatal(err)
		}
		for j := 0; j < 3000; j++ {
			v := []float64{math.Sin(float64(j)), math.Cos(float64(j)) / 3}
			if err := lw.Write(Marker{Chrom: "2", Pos: int64(100 + j), ID: fmt.Sprintf("m%d", j), Ref: "A", Alt: "T"}, 0.3, 0.7, v); err != nil {
				t.Fatal(err)
			}
		}
		if err := lw.Close(); err != nil {
			t.Fatal(err)
		}
		raw, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		// Walk the members by their BSIZE fields: each must be BGZF, and
		// the last the EOF member.
		members := 0
		for off := 0; off < len(raw); members++ {
			m := raw[off:]
			if len(m) < bgzfHeaderLen || m[0] != 0x1f || m[1] != 0x8b || m[3]&4 == 0 || bgzfSubfield(m[12:12+int(m[10])]) < 0 {
				t.Fatalf("threads %d: member %d at byte %d is not BGZF", threads, members, off)
			}
			off += int(binary.LittleEndian.Uint16(m[16:])) + 1
		}
		if members < 3 || !bytes.HasSuffix(raw, bgzfEOF) {
			t.Fatalf("threads %d: %d members, want several and the EOF member last", threads, members)
		}
		files = append(files, raw)
		zr, err := gzip.NewReader(bytes.NewReader(raw))
		if err != nil {
			t.Fatal(err)
		}
		text, err := io.ReadAll(zr)
		if err != nil {
			t.Fatal(err)
		}
		if len(text) <= bgzfBlockInput {
			t.Fatalf("threads %d: %d bytes of text, want more than one block", threads, len(text))
		}
		texts = append(texts, text)
		if htsfile, err := exec.LookPath("htsfile"); err == nil {
			out, err := exec.Command(htsfile, path).CombinedOutput()
			if err != nil || !strings.Contains(string(out), "BGZF") {
				t.Errorf("htsfile %s: %s (%v)", path, out, err)
			}
		}
	}
	if !bytes.Equal(texts[0], texts[1]) || !bytes.Equal(files[0], files[1]) {
		t.Error("one and three goroutines wrote different files")
	}
	if !strings.HasPrefix(string(texts[0]), LoadingsHeaderStart+"\tPC1\tPC2\n2\t100\tm0\tA\tT\tT\t0.3\t0.7\t0\t0.3333333333333333\n") {
		t.Errorf("text starts %q", texts[0][:120])
	}
}
