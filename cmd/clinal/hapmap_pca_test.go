package main

import (
	"bufio"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"testing"
)

// hapmapDir is where testdata/hapmap/make.sh puts the HapMap CEU/YRI data
// from Debian's r-bioc-snpstats (references.md), converted to VCF, with the
// base-R reference eigen decomposition of K = Z^T Z / M.
const hapmapDir = "../../testdata/ref/hapmap"

func requireRef(t *testing.T, path string) {
	t.Helper()
	if _, err := os.Stat(path); err != nil {
		if os.Getenv("CLINAL_REQUIRE_REFS") == "1" {
			t.Fatalf("reference %s missing (run bash testdata/setup-refs.sh): %v", path, err)
		}
		t.Skipf("reference %s missing; run bash testdata/setup-refs.sh", path)
	}
}

// readTSV reads a headed TSV into its header and rows.
func readTSV(t *testing.T, path string) ([]string, [][]string) {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	sc.Buffer(make([]byte, 1<<20), 1<<24)
	var hdr []string
	var rows [][]string
	for sc.Scan() {
		fs := strings.Split(sc.Text(), "\t")
		if hdr == nil {
			hdr = fs
			continue
		}
		rows = append(rows, fs)
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	return hdr, rows
}

func atof(t *testing.T, s string) float64 {
	t.Helper()
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		t.Fatalf("parse %q: %v", s, err)
	}
	return v
}

// TestHapMapPCA imports the HapMap CEU/YRI VCF and runs clinal pca with
// every filter off, then compares with base R's eigen() of the same K
// (computed by testdata/hapmap/convert.R, independently of clinal):
// eigenvalues to 1e-8 relative and scores (signs aligned) to 1e-6 for the
// PCs that converged, and PC1 separating CEU from YRI completely
// (references.md: "perfect separation under the standardized convention").
func TestHapMapPCA(t *testing.T) {
	vcf := filepath.Join(hapmapDir, "hapmap.vcf")
	requireRef(t, vcf)
	dir := t.TempDir()
	store := filepath.Join(dir, "hapmap.clinal")
	if code, _, stderr := runCmd(t, "import", "-o", store, vcf); code != 0 {
		t.Fatalf("import: exit %d: %s", code, stderr)
	}
	prefix := filepath.Join(dir, "pca")
	args := append([]string{"pca", store, "-k", "5", "-o", prefix, "--tol", "1e-9", "--max-passes", "60"}, noFilterFlags()...)
	if code, _, stderr := runCmd(t, args...); code != 0 {
		t.Fatalf("pca: exit %d: %s", code, stderr)
	}
	_, eig := readTSV(t, filepath.Join(hapmapDir, "eigen.tsv"))
	_, spec := readTSV(t, prefix+".spectrum.tsv")
	_, refScores := readTSV(t, filepath.Join(hapmapDir, "scores.tsv"))
	_, scores := readTSV(t, prefix+".covariates.tsv")
	if len(scores) != 180 || len(refScores) != 180 {
		t.Fatalf("%d covariate rows, %d reference rows; want 180", len(scores), len(refScores))
	}
	for pc := 1; pc <= 5; pc++ {
		got, want := atof(t, spec[pc-1][1]), atof(t, eig[pc-1][1])
		converged := spec[pc-1][5] == "yes"
		t.Logf("PC%d: clinal %.12g, R %.12g, converged %v", pc, got, want, converged)
		if !converged {
			continue
		}
		if rel := math.Abs(got-want) / want; rel > 1e-8 {
			t.Errorf("PC%d eigenvalue %v, base R eigen %v (rel %g)", pc, got, want, rel)
		}
		// Align signs on the largest reference entry, then compare.
		sign, big := 1.0, 0.0
		for i := range scores {
			if r := atof(t, refScores[i][pc]); math.Abs(r) > big {
				big = math.Abs(r)
				sign = math.Copysign(1, r*atof(t, scores[i][pc]))
			}
		}
		for i := range scores {
			if scores[i][0] != refScores[i][0] {
				t.Fatalf("row %d: sample %s, reference %s", i, scores[i][0], refScores[i][0])
			}
			if d := math.Abs(sign*atof(t, scores[i][pc]) - atof(t, refScores[i][pc])); d > 1e-6 {
				t.Errorf("PC%d sample %s: score differs from base R by %g", pc, scores[i][0], d)
				break
			}
		}
	}
	// PC1 separates the two groups: every CEU score on one side of every
	// YRI score (AUC = 1).
	var ceu, yri []float64
	for _, r := range scores {
		v := atof(t, r[1])
		if strings.HasPrefix(r[0], "ceu-") {
			ceu = append(ceu, v)
		} else {
			yri = append(yri, v)
		}
	}
	sort.Float64s(ceu)
	sort.Float64s(yri)
	if !(ceu[len(ceu)-1] < yri[0] || yri[len(yri)-1] < ceu[0]) {
		t.Errorf("PC1 does not separate CEU [%g, %g] from YRI [%g, %g]", ceu[0], ceu[len(ceu)-1], yri[0], yri[len(yri)-1])
	}
}

// noFilterFlags turns every default QC filter off, so clinal sees the same
// markers and samples as the base-R reference.
func noFilterFlags() []string {
	return []string{"--min-sample-call-rate", "0", "--min-marker-call-rate", "0", "--min-maf", "0", "--min-hwe-p", "0", "--chromosomes", "all", "--ld-r2", "0"}
}
