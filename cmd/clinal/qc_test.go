package main

import (
	"bufio"
	"bytes"
	"compress/gzip"
	"context"
	"encoding/json"
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/clinal/clinal/matrixio"
	"github.com/clinal/clinal/qc"
)

// qcRun runs clinal in-process and returns its exit code and streams.
func qcRun(t *testing.T, args ...string) (int, string, string) {
	t.Helper()
	var out, errb bytes.Buffer
	code := run(context.Background(), &env{stdin: strings.NewReader(""), stdout: &out, stderr: &errb}, args)
	return code, out.String(), errb.String()
}

// qcCohortStore writes a VCF of 60 samples (isle2-0001..) and markers on
// chr1, chr2 and chrX: blocks of 4 identical markers (strong LD) 100 kb
// apart, with ~1% missing calls from a fixed pattern, and imports it.
func qcCohortStore(t *testing.T, dir string) string {
	t.Helper()
	const n = 60
	var b strings.Builder
	b.WriteString("##fileformat=VCFv4.2\n##FORMAT=<ID=GT,Number=1,Type=String,Description=\"Genotype\">\n#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT")
	for i := 1; i <= n; i++ {
		fmt.Fprintf(&b, "\tisle2-%04d", i)
	}
	b.WriteString("\n")
	gt := []string{"0/0", "0/1", "1/1"}
	s := uint64(5)
	rnd := func() uint64 { s = s*6364136223846793005 + 1442695040888963407; return s >> 33 }
	id := 0
	for _, chrom := range []string{"chr1", "chr2", "chrX"} {
		for blk := 0; blk < 10; blk++ {
			base := make([]int, n)
			for i := range base {
				base[i] = int(rnd()%2 + rnd()%2)
			}
			for k := 0; k < 4; k++ {
				id++
				fmt.Fprintf(&b, "%s\t%d\trs%d\tA\tG\t.\tPASS\t.\tGT", chrom, 10000+blk*100000+k*1000, id)
				for i := 0; i < n; i++ {
					g := gt[base[i]]
					if (i*7+id*3)%97 == 0 {
						g = "./."
					}
					b.WriteString("\t" + g)
				}
				b.WriteString("\n")
			}
		}
	}
	vcf := filepath.Join(dir, "cohort.vcf")
	if err := os.WriteFile(vcf, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	st := filepath.Join(dir, "cohort.clinal")
	if code, _, errs := qcRun(t, "import", "-o", st, vcf); code != 0 {
		t.Fatalf("import: exit %d: %s", code, errs)
	}
	return st
}

func qcFirstLine(t *testing.T, path string) string {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	var sc *bufio.Scanner
	if strings.HasSuffix(path, ".gz") {
		zr, err := gzip.NewReader(f)
		if err != nil {
			t.Fatal(err)
		}
		sc = bufio.NewScanner(zr)
	} else {
		sc = bufio.NewScanner(f)
	}
	sc.Scan()
	return sc.Text()
}

// TestQCCommand runs clinal qc end to end and checks the output contract
// of design.md: names, header starts, kept yes/no, why names, and the
// report's counts per filter in order. Expected counts come from the
// construction of the cohort: 120 markers, 40 on chrX (not an autosome),
// blocks of 4 identical markers of which LD pruning keeps one.
func TestQCCommand(t *testing.T) {
	dir := t.TempDir()
	st := qcCohortStore(t, dir)
	prefix := filepath.Join(dir, "out")
	code, out, errs := qcRun(t, "qc", st, "-o", prefix, "--threads", "2", "--min-maf", "0.05")
	if code != 0 {
		t.Fatalf("qc: exit %d: %s", code, errs)
	}
	if !strings.Contains(out, "Kept 60 of 60 samples") || !strings.Contains(out, "of 120 markers") {
		t.Errorf("summary %q", out)
	}
	for suffix, start := range map[string]string{
		".sample-stats.tsv":    "sample_id\tcall_rate\tkept\twhy",
		".marker-stats.tsv.gz": "chrom\tpos\tid\tref\talt\tcall_rate\talt_freq\tmaf\thwe_p\tkept\twhy",
	} {
		if h := qcFirstLine(t, prefix+suffix); !strings.HasPrefix(h, start) {
			t.Errorf("%s header %q, want it to start with %q", suffix, h, start)
		}
	}
	var rep qc.Report
	b, err := os.ReadFile(prefix + ".qc.json")
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &rep); err != nil {
		t.Fatal(err)
	}
	if rep.Options.MinMAF != 0.05 || rep.Options.MinHWEP != 1e-6 || rep.Options.LDWindow != "500kb" {
		t.Errorf("thresholds %+v", rep.Options)
	}
	var names []string
	for _, s := range rep.Markers.Removed {
		names = append(names, s.Filter)
	}
	if got := strings.Join(names, ","); got != "chromosome,region,call-rate,monomorphic,maf,hwe,ld" {
		t.Errorf("marker filters in order %q", got)
	}
	if rep.Markers.Removed[0].Removed != 40 {
		t.Errorf("chromosome filter removed %d, want the 40 chrX markers", rep.Markers.Removed[0].Removed)
	}
	if rep.Markers.Kept < 15 || rep.Markers.Kept > 20 {
		t.Errorf("%d markers kept, want about one per block of the 20 autosomal blocks", rep.Markers.Kept)
	}
	kept, _ := os.ReadFile(prefix + ".kept-markers.txt")
	if n := strings.Count(string(kept), "\n"); n != rep.Markers.Kept {
		t.Errorf("kept-markers.txt: %d lines, report says %d", n, rep.Markers.Kept)
	}
	// The saved selection loads back for the same store (clinal pca --qc).
	s, err := matrixio.Open(st)
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	sel, err := qcSelection(context.Background(), nil, s, qc.Options{}, prefix)
	if err != nil {
		t.Fatal(err)
	}
	if sel.NumKeptMarkers() != rep.Markers.Kept || sel.NumKeptSamples() != 60 {
		t.Errorf("loaded %d markers %d samples", sel.NumKeptMarkers(), sel.NumKeptSamples())
	}
	// A keep list with one unknown ID: a warning with the count.
	keep := filepath.Join(dir, "keep.txt")
	os.WriteFile(keep, []byte("isle2-0001\nisle2-0002\nisle7-0001\n"), 0o644)
	code, _, errs = qcRun(t, "qc", st, "-o", filepath.Join(dir, "k"), "--keep-samples", keep, "--ld-r2", "0")
	if code != 0 || !strings.Contains(errs, "warning: --keep-samples "+keep+": 1 of 3 IDs are not samples of the store") {
		t.Errorf("keep list with an unknown ID: exit %d, stderr %q", code, errs)
	}
}

// TestQCBadInput: bad inputs exit 2 with a one-line error naming the file
// and line (or the flag), and leave no output file.
func TestQCBadInput(t *testing.T) {
	dir := t.TempDir()
	st := qcCohortStore(t, dir)
	file := func(name, text string) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	bed := file("bad.bed", "chr1\t100\t200\nchr1\t300\tx\n")
	none := file("none.txt", "isle9-0001\n")
	for _, tc := range []struct {
		name string
		args []string
		want string
	}{
		{"bed line", []string{"--exclude-regions", bed}, bed + `:2: bad end "x"`},
		{"keep none", []string{"--keep-samples", none}, "none of its 1 IDs is a sample of the store"},
		{"maf range", []string{"--min-maf", "0.9"}, "--min-maf 0.9: must be between 0 and 0.5"},
		{"maf text", []string{"--min-maf", "abc"}, "min-maf"},
		{"window", []string{"--ld-window", "kb"}, `--ld-window "kb"`},
		{"chromosomes", []string{"--chromosomes", "5-2"}, "runs backwards"},
		{"no store", []string{filepath.Join(dir, "absent.clinal")}, "absent.clinal"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			prefix := filepath.Join(dir, "o-"+strings.ReplaceAll(tc.name, " ", "-"))
			args := append([]string{"qc", "-o", prefix}, tc.args...)
			if tc.name != "no store" {
				args = append(args, st)
			}
			code, _, errs := qcRun(t, args...)
			if code != 2 {
				t.Fatalf("exit %d, want 2; stderr %q", code, errs)
			}
			if strings.Count(errs, "\n") != 1 || !strings.Contains(errs, tc.want) {
				t.Errorf("stderr %q, want one line containing %q", errs, tc.want)
			}
			if m, _ := filepath.Glob(prefix + "*"); len(m) > 0 {
				t.Errorf("output left behind: %v", m)
			}
			if m, _ := filepath.Glob(filepath.Join(dir, ".o-*")); len(m) > 0 {
				t.Errorf("temporary files left behind: %v", m)
			}
		})
	}
	// --qc together with filter flags is a usage error.
	fs := newQCFlagSetForTest()
	fs.Parse([]string{"--min-maf", "0.1"})
	s, err := matrixio.Open(st)
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	if _, err := qcSelection(context.Background(), fs, s, qc.Options{}, filepath.Join(dir, "x")); err == nil || !matrixio.IsBadInput(err) || !strings.Contains(err.Error(), "--min-maf") {
		t.Errorf("--qc with --min-maf: %v", err)
	}
}

func newQCFlagSetForTest() *flag.FlagSet {
	var o qc.Options
	fs := flag.NewFlagSet("t", flag.ContinueOnError)
	addFilterFlags(fs, &o)
	return fs
}
