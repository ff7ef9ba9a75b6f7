package main

import (
	"bytes"
	"context"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/clinal/clinal/matrixio"
	"github.com/clinal/clinal/matrixio/synth"
)

func prjRun(t *testing.T, args ...string) (int, string, string) {
	t.Helper()
	var out, errb bytes.Buffer
	code := run(context.Background(), &env{stdin: strings.NewReader(""), stdout: &out, stderr: &errb}, args)
	return code, out.String(), errb.String()
}

// prjCohort writes a small Meridian Archipelago cohort (three islands, 1%
// missing calls) as a store and as a BGZF VCF.
func prjCohort(t *testing.T, dir string) (store, vcf string) {
	t.Helper()
	cfg := synth.DefaultConfig()
	cfg.Samples, cfg.Markers, cfg.Populations, cfg.Admixed = 180, 2500, 3, 0
	cfg.PoorSamples, cfg.Chromosomes, cfg.Seed = 0, 2, 11
	c, err := synth.New(cfg)
	if err != nil {
		t.Fatal(err)
	}
	store, vcf = filepath.Join(dir, "meridian.clinal"), filepath.Join(dir, "meridian.vcf.gz")
	if err := c.WriteStore(context.Background(), store, 2); err != nil {
		t.Fatal(err)
	}
	if err := c.WriteVCF(context.Background(), vcf, 2); err != nil {
		t.Fatal(err)
	}
	return store, vcf
}

// prjTable reads a TSV into its header and rows.
func prjTable(t *testing.T, path string) ([]string, [][]string) {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSuffix(string(b), "\n"), "\n")
	var rows [][]string
	for _, l := range lines[1:] {
		rows = append(rows, strings.Split(l, "\t"))
	}
	return strings.Split(lines[0], "\t"), rows
}

func prjFloat(t *testing.T, s string) float64 {
	t.Helper()
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		t.Fatalf("not a number: %q", s)
	}
	return v
}

// prjNoFilters turns the default QC filters off so the fit keeps every
// sample and marker.
var prjNoFilters = []string{"--min-sample-call-rate", "0", "--min-marker-call-rate", "0", "--min-maf", "0",
	"--min-hwe-p", "0", "--chromosomes", "all", "--ld-r2", "0"}

// TestProjectCommand fits a PCA with clinal pca and projects the same
// cohort back with clinal project. Expected: with --rescale none and
// --keep-ambiguous the raw scores are the fitted covariates (identity
// score = (K u)/lambda = u, up to the fit's residual: --tol 1e-10 gives
// 1e-8 here); corrected = raw / factor with the factors of the JSON; the
// store and the VCF of the same cohort give identical files; 1 and 2
// threads give identical files; by default the strand-ambiguous markers
// (C/G, A/T) of the cohort are dropped and counted.
func TestProjectCommand(t *testing.T) {
	dir := t.TempDir()
	store, vcf := prjCohort(t, dir)
	fit := filepath.Join(dir, "fit")
	args := append([]string{"pca", store, "-k", "2", "-o", fit, "--tol", "1e-10", "--max-passes", "100", "--tw", "off", "--threads", "2"}, prjNoFilters...)
	if code, _, stderr := prjRun(t, args...); code != 0 {
		t.Fatalf("pca exit %d: %s", code, stderr)
	}
	_, fitted := prjTable(t, fit+".covariates.tsv")

	outs := map[string]string{}
	for _, c := range []struct{ name, input, threads string }{{"store", store, "1"}, {"store2", store, "2"}, {"vcf", vcf, "2"}} {
		out := filepath.Join(dir, c.name)
		code, stdout, stderr := prjRun(t, "project", "--model", fit, c.input, "-o", out, "--rescale", "none", "--keep-ambiguous", "--threads", c.threads)
		if code != 0 {
			t.Fatalf("%s: exit %d: %s", c.name, code, stderr)
		}
		if !strings.Contains(stdout, "project: 180 samples onto 2 PCs") {
			t.Errorf("%s: summary %q", c.name, stdout)
		}
		var all []byte
		for _, suf := range []string{".covariates.tsv", ".projection.tsv"} {
			b, err := os.ReadFile(out + suf)
			if err != nil {
				t.Fatal(err)
			}
			all = append(all, b...)
		}
		outs[c.name] = string(all)
	}
	if outs["store"] != outs["store2"] || outs["store"] != outs["vcf"] {
		t.Error("outputs differ between threads 1 and 2 or between the store and the VCF")
	}

	out := filepath.Join(dir, "store")
	var rep struct {
		Markers struct {
			Used      int  `json:"used"`
			Model     int  `json:"model_markers"`
			Ambiguous int  `json:"strand_ambiguous"`
			Dropped   bool `json:"strand_ambiguous_dropped"`
		} `json:"markers"`
		Shrinkage struct {
			Factors   []float64 `json:"factors"`
			Corrected []bool    `json:"corrected"`
		} `json:"shrinkage"`
		Overlap struct{ Min, Median, Max float64 } `json:"overlap"`
	}
	b, err := os.ReadFile(out + ".projection.json")
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &rep); err != nil {
		t.Fatal(err)
	}
	if rep.Markers.Used != rep.Markers.Model || rep.Markers.Used == 0 || len(rep.Shrinkage.Factors) != 2 {
		t.Fatalf("report %s", b)
	}
	for j, f := range rep.Shrinkage.Factors {
		if !rep.Shrinkage.Corrected[j] || !(f > 0 && f < 1) {
			t.Errorf("PC%d: factor %v corrected %v, want a factor in (0, 1) for a structured PC", j+1, f, rep.Shrinkage.Corrected[j])
		}
	}
	hdr, cov := prjTable(t, out+".covariates.tsv")
	if strings.Join(hdr, " ") != "sample_id PC1 PC2" {
		t.Errorf("covariates header %q", hdr)
	}
	thdr, tab := prjTable(t, out+".projection.tsv")
	if strings.Join(thdr, " ") != "sample_id markers_present overlap PC1_raw PC2_raw PC1_mass PC2_mass" {
		t.Errorf("projection header %q", thdr)
	}
	if len(cov) != len(fitted) || len(tab) != len(fitted) {
		t.Fatalf("%d covariate rows, %d projection rows, %d fitted", len(cov), len(tab), len(fitted))
	}
	for i := range fitted {
		if cov[i][0] != fitted[i][0] || tab[i][0] != fitted[i][0] {
			t.Fatalf("row %d: IDs %q %q, fitted %q", i, cov[i][0], tab[i][0], fitted[i][0])
		}
		present := prjFloat(t, tab[i][1])
		if ov := prjFloat(t, tab[i][2]); math.Abs(ov-present/float64(rep.Markers.Model)) > 1e-15 || ov > 1 || ov < 0.95 {
			t.Errorf("row %d: overlap %v for %v markers present of %d", i, ov, present, rep.Markers.Model)
		}
		for j := 0; j < 2; j++ {
			u, raw, cor := prjFloat(t, fitted[i][1+j]), prjFloat(t, tab[i][3+j]), prjFloat(t, cov[i][1+j])
			if math.Abs(raw-u) > 1e-8 {
				t.Errorf("row %d PC%d: raw %v, fitted %v", i, j+1, raw, u)
			}
			if math.Abs(cor-raw/rep.Shrinkage.Factors[j]) > 1e-12*math.Abs(cor) {
				t.Errorf("row %d PC%d: corrected %v, raw/factor %v", i, j+1, cor, raw/rep.Shrinkage.Factors[j])
			}
		}
	}

	// Defaults: ambiguous markers dropped and counted.
	def := filepath.Join(dir, "default")
	if code, _, stderr := prjRun(t, "project", "--model", fit, store, "-o", def); code != 0 {
		t.Fatalf("default: exit %d: %s", code, stderr)
	}
	b, _ = os.ReadFile(def + ".projection.json")
	rep.Markers.Ambiguous, rep.Markers.Used = 0, 0
	if err := json.Unmarshal(b, &rep); err != nil {
		t.Fatal(err)
	}
	if rep.Markers.Ambiguous == 0 || !rep.Markers.Dropped || rep.Markers.Used != rep.Markers.Model-rep.Markers.Ambiguous {
		t.Errorf("default run: markers %+v, want the strand-ambiguous ones dropped", rep.Markers)
	}
}

// TestProjectCommandBadInput: usage errors and bad models or inputs exit
// with code 2, a one-line message naming the problem, and no output file.
func TestProjectCommandBadInput(t *testing.T) {
	dir := t.TempDir()
	store, _ := prjCohort(t, dir)
	fit := filepath.Join(dir, "fit")
	args := append([]string{"pca", store, "-k", "2", "-o", fit, "--tw", "off"}, prjNoFilters...)
	if code, _, stderr := prjRun(t, args...); code != 0 {
		t.Fatalf("pca exit %d: %s", code, stderr)
	}
	// A store on other chromosomes: nothing in common.
	other := filepath.Join(dir, "other.clinal")
	w, err := matrixio.Create(other, []string{"isle9-0001", "isle9-0002"}, matrixio.WriterOptions{})
	if err != nil {
		t.Fatal(err)
	}
	for j := 0; j < 10; j++ {
		if err := w.AddGenotypes(matrixio.Marker{Chrom: "19", Pos: int64(100 + j), ID: "x" + strconv.Itoa(j), Ref: "A", Alt: "G"}, []byte{0, 1}); err != nil {
			t.Fatal(err)
		}
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	// A model whose loadings file is cut short.
	cut := filepath.Join(dir, "cut")
	for _, suf := range []string{".spectrum.tsv", ".report.json"} {
		b, _ := os.ReadFile(fit + suf)
		os.WriteFile(cut+suf, b, 0o644)
	}
	lw, err := matrixio.CreateLoadings(cut+".loadings.tsv.gz", 2)
	if err != nil {
		t.Fatal(err)
	}
	lw.Write(matrixio.Marker{Chrom: "1", Pos: 5, ID: "a", Ref: "A", Alt: "G"}, 0.5, 0.7, []float64{1, 0})
	lw.Close()

	cases := []struct {
		name string
		args []string
		want string
	}{
		{"no-model", []string{"project", store, "-o", "%o"}, "--model PREFIX is required"},
		{"no-output", []string{"project", "--model", fit, store}, "-o PREFIX2 is required"},
		{"no-input", []string{"project", "--model", fit, "-o", "%o"}, "want one INPUT"},
		{"bad-rescale", []string{"project", "--model", fit, store, "-o", "%o", "--rescale", "fraction"}, "--rescale"},
		{"bad-shrinkage", []string{"project", "--model", fit, store, "-o", "%o", "--shrinkage", "x"}, "--shrinkage"},
		{"missing-model", []string{"project", "--model", filepath.Join(dir, "nope"), store, "-o", "%o"}, "does not exist"},
		{"cut-model", []string{"project", "--model", cut, store, "-o", "%o"}, "marker rows"},
		{"nothing-in-common", []string{"project", "--model", fit, other, "-o", "%o"}, "no markers in common"},
		{"missing-input", []string{"project", "--model", fit, filepath.Join(dir, "none.vcf"), "-o", "%o"}, "none.vcf"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			out := filepath.Join(t.TempDir(), "p")
			args := make([]string, len(c.args))
			for i, a := range c.args {
				args[i] = strings.ReplaceAll(a, "%o", out)
			}
			code, _, stderr := prjRun(t, args...)
			if code != 2 || !strings.Contains(stderr, c.want) || strings.Count(strings.TrimSpace(stderr), "\n") != 0 {
				t.Errorf("exit %d, stderr %q; want 2 and one line containing %q", code, stderr, c.want)
			}
			if left, _ := filepath.Glob(out + "*"); len(left) != 0 {
				t.Errorf("outputs left: %v", left)
			}
		})
	}
}
