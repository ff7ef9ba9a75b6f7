package matrixio

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"github.com/klauspost/compress/zstd"
)

// denseTestMatrix renders an n x m matrix (rows samples) as TSV text in
// both layouts; NaN cells are written as one of the missing spellings.
func denseTestMatrix(rng *rand.Rand, n, m int) (vals [][]float32, byRows, byCols string) {
	vals = make([][]float32, n)
	cell := make([][]string, n)
	missing := []string{"NA", ".", "", "NaN"}
	for i := range vals {
		vals[i] = make([]float32, m)
		cell[i] = make([]string, m)
		for j := range vals[i] {
			if rng.IntN(6) == 0 {
				vals[i][j] = float32(math.NaN())
				cell[i][j] = missing[rng.IntN(len(missing))]
				continue
			}
			v := float64(rng.IntN(4001)-1000) / 1000
			vals[i][j] = float32(v)
			cell[i][j] = strconv.FormatFloat(v, 'f', -1, 64)
		}
	}
	var a, b strings.Builder
	a.WriteString("sample_id")
	for j := 0; j < m; j++ {
		fmt.Fprintf(&a, "\tm%d", j+1)
	}
	a.WriteString("\n")
	for i := 0; i < n; i++ {
		fmt.Fprintf(&a, "isle2-%04d", i+1)
		for j := 0; j < m; j++ {
			a.WriteString("\t" + cell[i][j])
		}
		a.WriteString("\n")
	}
	b.WriteString("marker")
	for i := 0; i < n; i++ {
		fmt.Fprintf(&b, "\tisle2-%04d", i+1)
	}
	b.WriteString("\r\n") // CRLF tolerated
	for j := 0; j < m; j++ {
		fmt.Fprintf(&b, "m%d", j+1)
		for i := 0; i < n; i++ {
			b.WriteString("\t" + cell[i][j])
		}
		b.WriteString("\r\n")
	}
	return vals, a.String(), b.String()
}

// TestImportDense: the same random matrix given with samples as rows
// (plain, gzip, zstd; transposed through the spool in blocks of 1, 3 and
// all markers) and with markers as rows gives the values written, NaN for
// NA, '.', empty and NaN cells (the missing spellings are clinal's
// convention, common practice, no source).
func TestImportDense(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 5))
	n, m := 13, 29
	vals, byRows, byCols := denseTestMatrix(rng, n, m)
	dir := t.TempDir()
	plain := filepath.Join(dir, "rows.tsv")
	os.WriteFile(plain, []byte(byRows), 0o644)
	gz := filepath.Join(dir, "rows.tsv.gz")
	os.WriteFile(gz, vcfTestGzip([]byte(byRows)), 0o644)
	zs := filepath.Join(dir, "rows.tsv.zst")
	enc, _ := zstd.NewWriter(nil)
	os.WriteFile(zs, enc.EncodeAll([]byte(byRows), nil), 0o644)
	cols := filepath.Join(dir, "cols.tsv")
	os.WriteFile(cols, []byte(byCols), 0o644)
	cases := []struct {
		name string
		in   string
		opt  DenseOptions
	}{
		{"rows-plain", plain, DenseOptions{}},
		{"rows-gzip-block1", gz, DenseOptions{MemoryBytes: 4 * int64(n)}},
		{"rows-zstd-block3", zs, DenseOptions{MemoryBytes: 3 * 4 * int64(n), ChunkMarkers: 8}},
		{"markers-as-rows", cols, DenseOptions{MarkersAsRows: true, Threads: 2}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			outDir := t.TempDir()
			out := filepath.Join(outDir, "d.clinal")
			tc.opt.TempDir = outDir
			sum, err := ImportDense(context.Background(), []string{tc.in}, out, tc.opt)
			if err != nil {
				t.Fatal(err)
			}
			if sum.Samples != n || sum.Markers != m {
				t.Fatalf("summary %+v", sum)
			}
			ms, rows := vcfReadFloatStore(t, out)
			for j := 0; j < m; j++ {
				// Plain IDs: chromosome "0", position = 1-based index, REF/ALT N.
				if w := (Marker{"0", int64(j + 1), fmt.Sprintf("m%d", j+1), "N", "N"}); ms[j] != w {
					t.Errorf("marker %d: %+v, want %+v", j, ms[j], w)
				}
				for i := 0; i < n; i++ {
					a, b := rows[j][i], vals[i][j]
					if a != b && !(a != a && b != b) {
						t.Fatalf("marker %d sample %d: %v, want %v", j, i, a, b)
					}
				}
			}
			if left, _ := filepath.Glob(filepath.Join(outDir, "*.partial")); len(left) != 0 {
				t.Errorf("spool left: %v", left)
			}
		})
	}
}

// TestImportDenseIdentityAndCodes: IDs CHROM:POS[:REF:ALT] give the
// marker identity; with Codes the values go to a 2-bit store and anything
// but 0, 1, 2 or missing is rejected naming file, line and column.
func TestImportDenseIdentityAndCodes(t *testing.T) {
	dir := t.TempDir()
	in := filepath.Join(dir, "g.tsv")
	os.WriteFile(in, []byte("id\t3:1200:A:G\tX:55\tchr1:12:AT:A\n"+
		"isle1-0001\t0\t1\t2\nisle1-0002\tNA\t2\t0\n"), 0o644)
	out := filepath.Join(dir, "g.clinal")
	if _, err := ImportDense(context.Background(), []string{in}, out, DenseOptions{Codes: true}); err != nil {
		t.Fatal(err)
	}
	ms, rows, _ := vcfReadStore(t, out)
	want := []Marker{{"3", 1200, "3:1200:A:G", "A", "G"}, {"X", 55, "X:55", "N", "N"}, {"chr1", 12, "chr1:12:AT:A", "AT", "A"}}
	if fmt.Sprint(ms) != fmt.Sprint(want) {
		t.Errorf("markers %v, want %v", ms, want)
	}
	if fmt.Sprint(rows) != fmt.Sprint([][]byte{{0, Missing}, {1, 2}, {2, 0}}) {
		t.Errorf("codes %v", rows)
	}
	bad := filepath.Join(dir, "bad.tsv")
	os.WriteFile(bad, []byte("id\ta\tb\nisle1-0001\t0\t1.5\n"), 0o644)
	_, err := ImportDense(context.Background(), []string{bad}, filepath.Join(dir, "b.clinal"), DenseOptions{Codes: true})
	if err == nil || err.Error() != bad+`:2: column 3: value "1.5" is not a genotype code 0, 1 or 2` {
		t.Errorf("error %v", err)
	}
}

// TestImportDenseBadInput: malformed matrices fail with a one-line
// bad-input error naming the file and line, leaving nothing behind.
func TestImportDenseBadInput(t *testing.T) {
	cases := []struct {
		name, text string
		rows       bool
		want       string
	}{
		{"not a number", "id\tm1\tm2\nisle1-0001\t0.5\tabc\n", false, `^FILE:2: column 3: value "abc" is not a finite number$`},
		{"short row", "id\tm1\tm2\nisle1-0001\t0.5\n", false, `^FILE:2: 2 columns, expected 3$`},
		{"long row", "id\tm1\tm2\nisle1-0001\t0.5\t1\t2\n", false, `^FILE:2: 4 columns, expected 3$`},
		{"duplicate sample", "id\tm1\nisle1-0001\t1\nisle1-0001\t2\n", false, `^FILE:3: duplicate sample ID "isle1-0001" \(also on line 2\)$`},
		{"control char in sample", "id\tm1\nisle1\x7f\t1\n", false, `^FILE:2: sample ID "isle1\\x7f" has a control character`},
		{"no header IDs", "id\n", false, `^FILE:1: header has no marker IDs`},
		{"infinite", "m\tisle1-0001\nm1\tInf\n", true, `^FILE:2: column 2: value "Inf" is not a finite number$`},
		{"duplicate sample in header", "m\tisle1-0001\tisle1-0001\nm1\t1\t2\n", true, `^FILE:1: create .*duplicate sample ID`},
		{"no data", "m\tisle1-0001\n", true, `^FILE: no marker rows$`},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			dir := t.TempDir()
			in := filepath.Join(dir, "in.tsv")
			os.WriteFile(in, []byte(tc.text), 0o644)
			outDir := t.TempDir()
			_, err := ImportDense(context.Background(), []string{in}, filepath.Join(outDir, "o.clinal"), DenseOptions{MarkersAsRows: tc.rows})
			re := regexp.MustCompile(strings.ReplaceAll(tc.want, "FILE", regexp.QuoteMeta(in)))
			if err == nil || !IsBadInput(err) || !re.MatchString(err.Error()) {
				t.Errorf("error %v, want match %q", err, re)
			}
			if left, _ := os.ReadDir(outDir); len(left) != 0 {
				t.Errorf("left behind: %v", left)
			}
		})
	}
}

// TestImportDenseMatchesR reads a gzip matrix with base R (Debian
// r-base-core: read.delim on the gz file, na.strings NA . and empty) and
// compares R's per-column sums and missing counts with the stored
// per-marker Counts of the samples-as-rows import.
func TestImportDenseMatchesR(t *testing.T) {
	rscript := vcfRequireTool(t, "Rscript")
	rng := rand.New(rand.NewPCG(9, 9))
	_, byRows, _ := denseTestMatrix(rng, 40, 25)
	byRows = strings.ReplaceAll(byRows, "\tNaN", "\tNA") // R reads NaN as a number
	dir := t.TempDir()
	gz := filepath.Join(dir, "m.tsv.gz")
	os.WriteFile(gz, vcfTestGzip([]byte(byRows)), 0o644)
	out := filepath.Join(dir, "m.clinal")
	if _, err := ImportDense(context.Background(), []string{gz}, out, DenseOptions{}); err != nil {
		t.Fatal(err)
	}
	st, err := Open(out)
	if err != nil {
		t.Fatal(err)
	}
	defer st.Close()
	script := `x <- read.delim(gzfile(commandArgs(TRUE)[1]), row.names = 1, na.strings = c("NA", ".", ""), check.names = FALSE)
for (j in seq_len(ncol(x))) cat(sprintf("%.10f %d\n", sum(x[[j]], na.rm = TRUE), sum(is.na(x[[j]]))))`
	o, err := exec.Command(rscript, "--vanilla", "-e", script, gz).Output()
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(o)), "\n")
	if len(lines) != st.NumMarkers() {
		t.Fatalf("R sees %d columns, store %d markers", len(lines), st.NumMarkers())
	}
	for j, l := range lines {
		var sum float64
		var na uint32
		fmt.Sscan(l, &sum, &na)
		c := st.Counts()[j]
		// float32 storage of 3-decimal values: each off by < 6e-8 relative.
		if c.Missing != na || math.Abs(c.Sum-sum) > 1e-5 {
			t.Errorf("column %d: store sum %v missing %d, R %v %d", j+1, c.Sum, c.Missing, sum, na)
		}
	}
}
