package matrixio_test

import (
	"bufio"
	"compress/gzip"
	"context"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/clinal/clinal/matrixio"
)

// hapmapRefDir is where testdata/hapmap/make.sh (run by
// testdata/setup-refs.sh) writes the HapMap CEU/YRI fixture, relative to
// this package's directory.
const hapmapRefDir = "../testdata/ref/hapmap"

// hapmapMissingRef skips the test when a reference fixture is absent, or
// fails it when CLINAL_REQUIRE_REFS=1 (CI sets it, after running
// testdata/setup-refs.sh).
func hapmapMissingRef(t *testing.T, format string, args ...any) {
	t.Helper()
	msg := fmt.Sprintf(format, args...)
	if os.Getenv("CLINAL_REQUIRE_REFS") == "1" {
		t.Fatalf("%s (CLINAL_REQUIRE_REFS=1; run bash testdata/setup-refs.sh)", msg)
	}
	t.Skipf("%s; run bash testdata/setup-refs.sh to prepare it", msg)
}

// hapmapTable reads a tab-separated file with a header line into one map
// per row, keyed by column name.
func hapmapTable(t *testing.T, path string) []map[string]string {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		hapmapMissingRef(t, "HapMap reference table: %v", err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	sc.Buffer(make([]byte, 1<<20), 1<<20)
	var head []string
	var rows []map[string]string
	for line := 1; sc.Scan(); line++ {
		fields := strings.Split(sc.Text(), "\t")
		if head == nil {
			head = fields
			continue
		}
		if len(fields) != len(head) {
			t.Fatalf("%s:%d: %d fields, header has %d", path, line, len(fields), len(head))
		}
		row := make(map[string]string, len(head))
		for i, h := range head {
			row[h] = fields[i]
		}
		rows = append(rows, row)
	}
	if err := sc.Err(); err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	return rows
}

func hapmapUint(t *testing.T, row map[string]string, col string) uint64 {
	t.Helper()
	v, err := strconv.ParseUint(row[col], 10, 32)
	if err != nil {
		t.Fatalf("reference column %s: %v", col, err)
	}
	return v
}

// hapmapGzip writes a gzip copy of src into dir, for the compressed-input
// case of the test.
func hapmapGzip(t *testing.T, src, dir string) string {
	t.Helper()
	b, err := os.ReadFile(src)
	if err != nil {
		t.Fatal(err)
	}
	dst := filepath.Join(dir, "hapmap.vcf.gz")
	f, err := os.Create(dst)
	if err != nil {
		t.Fatal(err)
	}
	zw := gzip.NewWriter(f)
	if _, err := zw.Write(b); err != nil {
		t.Fatal(err)
	}
	if err := zw.Close(); err != nil {
		t.Fatal(err)
	}
	if err := f.Close(); err != nil {
		t.Fatal(err)
	}
	return dst
}

// TestHapMapImportCounts imports the HapMap CEU/YRI VCF converted from
// Debian's r-bioc-snpstats (ld.example.RData, sha256 pinned in
// testdata/hapmap/make.sh) and checks the per-marker genotype counts and
// per-sample missing counts stored at import against the ones base R
// computed from the original raw matrices (testdata/hapmap/convert.R,
// counts.tsv and samples.tsv). The dimensions, 180 samples (90 CEU, 90 YRI)
// and 603 markers, are those stated by the snpStats documentation of
// ld.example (references.md). The import runs with several option sets
// (plain and gzip input, one and two threads, default and small chunks):
// each must store the same counts.
func TestHapMapImportCounts(t *testing.T) {
	vcf := filepath.Join(hapmapRefDir, "hapmap.vcf")
	if _, err := os.Stat(vcf); err != nil {
		hapmapMissingRef(t, "HapMap fixture absent: %v", err)
	}
	markers := hapmapTable(t, filepath.Join(hapmapRefDir, "counts.tsv"))
	samples := hapmapTable(t, filepath.Join(hapmapRefDir, "samples.tsv"))

	// Dimensions: snpStats documentation of ld.example (references.md).
	const wantSamples, wantMarkers = 180, 603
	if len(samples) != wantSamples || len(markers) != wantMarkers {
		t.Fatalf("R tables have %d samples and %d markers, want %d and %d (snpStats ld.example: 90 CEU + 90 YRI, 603 SNPs)",
			len(samples), len(markers), wantSamples, wantMarkers)
	}
	// Consistency of R's own tables, so a broken fixture cannot pass:
	// every marker's four counts sum to the sample count, and the sample
	// missing counts sum to the marker missing counts.
	var mSum, sSum uint64
	for _, row := range markers {
		n := hapmapUint(t, row, "hom_ref") + hapmapUint(t, row, "het") + hapmapUint(t, row, "hom_alt") + hapmapUint(t, row, "missing")
		if n != wantSamples {
			t.Fatalf("counts.tsv %s: counts sum to %d, want %d", row["id"], n, wantSamples)
		}
		mSum += hapmapUint(t, row, "missing")
	}
	for _, row := range samples {
		sSum += hapmapUint(t, row, "missing")
	}
	if mSum != sSum {
		t.Fatalf("reference tables disagree: %d missing calls by marker, %d by sample", mSum, sSum)
	}

	tmp := t.TempDir()
	vcfGz := hapmapGzip(t, vcf, tmp)
	cases := []struct {
		name  string
		input string
		opt   matrixio.ImportOptions
	}{
		{"plain_default", vcf, matrixio.ImportOptions{}},
		{"gzip_2threads_chunk50", vcfGz, matrixio.ImportOptions{Threads: 2, ChunkMarkers: 50}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			out := filepath.Join(t.TempDir(), "hapmap.clinal")
			sum, err := matrixio.ImportVCF(context.Background(), []string{tc.input}, out, tc.opt)
			if err != nil {
				t.Fatalf("ImportVCF(%s): %v", tc.input, err)
			}
			if sum.Samples != wantSamples || sum.Markers != wantMarkers || sum.MissingCalls != int(mSum) {
				t.Errorf("summary: %d samples, %d markers, %d missing calls; base R says %d, %d, %d",
					sum.Samples, sum.Markers, sum.MissingCalls, wantSamples, wantMarkers, mSum)
			}
			st, err := matrixio.Open(out)
			if err != nil {
				t.Fatalf("Open(%s): %v", out, err)
			}
			defer st.Close()
			if st.NumSamples() != wantSamples || st.NumMarkers() != wantMarkers {
				t.Fatalf("store has %d samples and %d markers, want %d and %d",
					st.NumSamples(), st.NumMarkers(), wantSamples, wantMarkers)
			}
			hapmapCompare(t, st, markers, samples)
		})
	}
}

// hapmapCompare checks a store's marker identities, per-marker counts and
// ALT frequencies, sample order and per-sample missing counts against the
// base-R tables (testdata/hapmap/convert.R -> counts.tsv, samples.tsv).
func hapmapCompare(t *testing.T, st *matrixio.Store, markers, samples []map[string]string) {
	ids := st.Markers()
	counts := st.Counts()
	markerFields := []struct {
		col string
		got func(j int) string
	}{
		{"chrom", func(j int) string { return ids[j].Chrom }},
		{"pos", func(j int) string { return strconv.FormatInt(ids[j].Pos, 10) }},
		{"id", func(j int) string { return ids[j].ID }},
		{"ref", func(j int) string { return ids[j].Ref }},
		{"alt", func(j int) string { return ids[j].Alt }},
		{"hom_ref", func(j int) string { return strconv.Itoa(int(counts[j].HomRef)) }},
		{"het", func(j int) string { return strconv.Itoa(int(counts[j].Het)) }},
		{"hom_alt", func(j int) string { return strconv.Itoa(int(counts[j].HomAlt)) }},
		{"missing", func(j int) string { return strconv.Itoa(int(counts[j].Missing)) }},
	}
	for _, f := range markerFields {
		bad := 0
		for j, row := range markers {
			if got := f.got(j); got != row[f.col] && bad < 5 {
				bad++
				t.Errorf("marker %d (%s): %s = %s, base R says %s", j+1, row["id"], f.col, got, row[f.col])
			}
		}
	}

	// ALT frequency from the stored counts against R's (het + 2 hom_alt) /
	// (2 called), to 1e-14 relative: both are one division of small integers.
	for j, row := range markers {
		want, err := strconv.ParseFloat(row["alt_freq"], 64)
		if err != nil {
			t.Fatalf("counts.tsv alt_freq of %s: %v", row["id"], err)
		}
		if got := counts[j].AltFreq(); math.Abs(got-want) > 1e-14*want {
			t.Errorf("marker %d (%s): alt frequency %.17g, base R says %.17g", j+1, row["id"], got, want)
		}
	}

	names := st.Samples()
	miss := st.SampleMissing()
	sampleFields := []struct {
		col string
		got func(i int) string
	}{
		{"sample_id", func(i int) string { return names[i] }},
		{"missing", func(i int) string { return strconv.Itoa(int(miss[i])) }},
	}
	for _, f := range sampleFields {
		bad := 0
		for i, row := range samples {
			if got := f.got(i); got != row[f.col] && bad < 5 {
				bad++
				t.Errorf("sample %d (%s): %s = %s, base R says %s", i+1, row["sample_id"], f.col, got, row[f.col])
			}
		}
	}
}
