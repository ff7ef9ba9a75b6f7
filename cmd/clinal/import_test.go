package main

import (
	"bytes"
	"compress/gzip"
	"context"
	"encoding/binary"
	"encoding/json"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// impRun runs clinal in-process and returns its exit code and streams.
func impRun(t *testing.T, stdin string, args ...string) (int, string, string) {
	t.Helper()
	var out, errb bytes.Buffer
	code := run(context.Background(), &env{stdin: strings.NewReader(stdin), stdout: &out, stderr: &errb}, args)
	return code, out.String(), errb.String()
}

// impRequireTool returns the path of an external tool, or skips (fails
// under CLINAL_REQUIRE_REFS=1, as in CI) when it is absent.
func impRequireTool(t *testing.T, name string) string {
	t.Helper()
	p, err := exec.LookPath(name)
	if err != nil {
		if os.Getenv("CLINAL_REQUIRE_REFS") == "1" {
			t.Fatalf("%s not found and CLINAL_REQUIRE_REFS=1", name)
		}
		t.Skipf("%s not installed (Debian bcftools/tabix); skipping", name)
	}
	return p
}

const impHeader = "##fileformat=VCFv4.2\n##contig=<ID=1>\n##FORMAT=<ID=GT,Number=1,Type=String,Description=\"Genotype\">\n" +
	"#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\tisle4-0001\tisle4-0002\tisle4-0003\n"

// impVCF renders m biallelic records for the three samples of impHeader.
func impVCF(m int) string {
	var b strings.Builder
	b.WriteString(impHeader)
	gt := []string{"0/0", "0|1", "1/1", "./."}
	for j := 0; j < m; j++ {
		fmt.Fprintf(&b, "1\t%d\tsnp%d\tC\tT\t.\tPASS\t.\tGT\t%s\t%s\t%s\n", 100+j, j+1, gt[j%4], gt[(j/4)%4], gt[(j/16)%4])
	}
	return b.String()
}

func impGzip(s string) []byte {
	var b bytes.Buffer
	w := gzip.NewWriter(&b)
	w.Write([]byte(s))
	w.Close()
	return b.Bytes()
}

// TestImportInspectExport runs the three commands end to end: import
// prints its summary paragraph, inspect reports the dimensions (JSON
// contract of design.md: integer samples and markers at the top level),
// export writes a VCF that imports back to the same calls.
func TestImportInspectExport(t *testing.T) {
	dir := t.TempDir()
	st := filepath.Join(dir, "calls.clinal")
	code, out, errs := impRun(t, "", "import", "-o", st, "--threads", "2", "../../testdata/vcf/calls.vcf")
	if code != 0 {
		t.Fatalf("import: exit %d: %s", code, errs)
	}
	// testdata/vcf/calls.vcf: 8 records, one multi-allelic (skipped), 4
	// haploid calls, 2 partially missing ones (see matrixio/vcf_test.go).
	for _, want := range []string{"Read 8 records for 4 samples", "wrote 7 markers", "1 multi-allelic records skipped", "4 haploid calls (hom)", "2 partially missing"} {
		if !strings.Contains(out, want) {
			t.Errorf("summary %q lacks %q", out, want)
		}
	}
	if strings.Count(strings.TrimSpace(out), "\n") != 0 {
		t.Errorf("summary is not one paragraph: %q", out)
	}
	code, out, errs = impRun(t, "", "inspect", st, "--json", "--verify")
	if code != 0 {
		t.Fatalf("inspect: exit %d: %s", code, errs)
	}
	var info map[string]any
	if err := json.Unmarshal([]byte(out), &info); err != nil {
		t.Fatal(err)
	}
	if info["samples"] != 4.0 || info["markers"] != 7.0 || info["verified"] != true || info["codec"] != "geno2" {
		t.Errorf("inspect JSON: %v", info)
	}
	if !regexp.MustCompile(`"samples": 4,`).MatchString(out) {
		t.Errorf("samples not an integer: %s", out)
	}
	code, out, _ = impRun(t, "", "inspect", st)
	if code != 0 || !strings.Contains(out, "markers") || !strings.Contains(out, "rs1") {
		t.Errorf("inspect text: exit %d\n%s", code, out)
	}
	vcf := filepath.Join(dir, "calls.vcf.gz")
	if code, _, errs = impRun(t, "", "export", "-o", vcf, st, "--chromosomes", "1,2"); code != 0 {
		t.Fatalf("export: exit %d: %s", code, errs)
	}
	back := filepath.Join(dir, "back.clinal")
	if code, _, errs = impRun(t, "", "import", "-o", back, vcf); code != 0 {
		t.Fatalf("re-import: exit %d: %s", code, errs)
	}
	code, out, _ = impRun(t, "", "inspect", "--json", back)
	json.Unmarshal([]byte(out), &info)
	// Chromosome X (one marker, m5) left out: 6 markers.
	if code != 0 || info["markers"] != 6.0 {
		t.Errorf("re-imported: %v", info)
	}
	// Standard input.
	if code, _, errs = impRun(t, impVCF(10), "import", "-o", filepath.Join(dir, "stdin.clinal"), "-"); code != 0 {
		t.Errorf("stdin: exit %d: %s", code, errs)
	}
	// Dense matrix.
	tsv := filepath.Join(dir, "m.tsv")
	os.WriteFile(tsv, []byte("id\tm1\tm2\nisle1-0001\t0.5\tNA\nisle1-0002\t1\t2\n"), 0o644)
	code, out, errs = impRun(t, "", "import", "--matrix", "-o", filepath.Join(dir, "m.clinal"), tsv)
	if code != 0 || !strings.Contains(out, "2 samples x 2 markers") {
		t.Errorf("dense: exit %d: %s %s", code, out, errs)
	}
}

// TestExportHtslib: an exported file is valid BGZF VCF for htslib (Debian
// tabix/bcftools, the reference implementation; references.md): htsfile
// says BGZF, tabix indexes it, bcftools view exits 0 with empty stderr.
func TestExportHtslib(t *testing.T) {
	htsfile := impRequireTool(t, "htsfile")
	tabix := impRequireTool(t, "tabix")
	bcftools := impRequireTool(t, "bcftools")
	dir := t.TempDir()
	in := filepath.Join(dir, "in.vcf")
	os.WriteFile(in, []byte(impVCF(3000)), 0o644)
	st := filepath.Join(dir, "s.clinal")
	if code, _, errs := impRun(t, "", "import", "-o", st, in); code != 0 {
		t.Fatal(errs)
	}
	vcf := filepath.Join(dir, "out.vcf.gz")
	if code, _, errs := impRun(t, "", "export", "-o", vcf, st); code != 0 {
		t.Fatal(errs)
	}
	if o, err := exec.Command(htsfile, vcf).CombinedOutput(); err != nil || !strings.Contains(string(o), "BGZF-compressed") {
		t.Errorf("htsfile: %v %s", err, o)
	}
	if o, err := exec.Command(tabix, "-p", "vcf", vcf).CombinedOutput(); err != nil {
		t.Errorf("tabix: %v %s", err, o)
	}
	var stderr bytes.Buffer
	c := exec.Command(bcftools, "view", vcf)
	c.Stdout, c.Stderr = nil, &stderr
	if err := c.Run(); err != nil || stderr.Len() != 0 {
		t.Errorf("bcftools view: %v %q", err, stderr.String())
	}
}

// impStoreWithChunks writes a store of 200 markers in chunks of 64 and
// returns its path and bytes.
func impStoreWithChunks(t *testing.T, dir string) (string, []byte) {
	t.Helper()
	in := filepath.Join(dir, "src.vcf")
	os.WriteFile(in, []byte(impVCF(200)), 0o644)
	st := filepath.Join(dir, "good.clinal")
	if code, _, errs := impRun(t, "", "import", "-o", st, "--chunk-markers", "64", in); code != 0 {
		t.Fatal(errs)
	}
	b, err := os.ReadFile(st)
	if err != nil {
		t.Fatal(err)
	}
	return st, b
}

// TestCommandBadInput is the bad-input battery through the command: each
// case must exit 2 with one line on stderr naming the file and the line
// or chunk, and leave no output file (neither the final name nor a
// *.partial temporary) in the output directory.
func TestCommandBadInput(t *testing.T) {
	src := t.TempDir()
	_, good := impStoreWithChunks(t, src)
	// Chunk 1 of the store: offset and size from the chunk index (store.go:
	// footer fields at 24 (index offset) and 40 (chunks); 40-byte index
	// records, offset at 0 and compressed length at 8).
	le := binary.LittleEndian
	foot := good[len(good)-64:]
	indexOff := le.Uint64(foot[24:])
	rec1 := good[indexOff+40:]
	off1, len1 := le.Uint64(rec1), le.Uint32(rec1[8:])
	flipped := append([]byte(nil), good...)
	flipped[off1+uint64(len1)/2] ^= 0x10

	full := impVCF(5000)
	gz := impGzip(full)
	type file struct{ name, text string }
	cases := []struct {
		name  string
		files []file
		args  func(in []string, out string) []string
		want  string // regexp; IN is the last input's path
	}{
		{"truncated gzip", []file{{"a.vcf.gz", string(gz[:len(gz)*2/3])}}, impArgs, `IN:\d+: truncated gzip input`},
		{"wrong column count", []file{{"a.vcf", impHeader + "1\t5\tx\tA\tG\t.\t.\t.\tGT\t0/0\t0/1\n"}}, impArgs, `IN:5: wrong number of columns: 11, expected 12`},
		{"non-numeric POS", []file{{"a.vcf", impVCF(3) + "1\t12a4\tx\tA\tG\t.\t.\t.\tGT\t0/0\t0/1\t1/1\n"}}, impArgs, `IN:8: POS "12a4" is not a non-negative integer`},
		{"unknown GT code", []file{{"a.vcf", impVCF(2) + "1\t9\tx\tA\tG\t.\t.\t.\tGT\t0/0\t0/1\tA/G\n"}}, impArgs, `IN:7: sample 3: unknown GT code "A/G"`},
		{"mismatched samples", []file{{"a.vcf", impVCF(3)}, {"b.vcf", strings.Replace(impVCF(3), "isle4-0003", "isle5-0003", 1)}}, impArgs, `IN:4: sample column 3 is "isle5-0003", but "isle4-0003" in .*a\.vcf`},
		{"duplicate sample IDs", []file{{"a.vcf", strings.Replace(impVCF(3), "isle4-0003", "isle4-0001", 1)}}, impArgs, `IN:4: duplicate sample ID "isle4-0001" \(sample columns 1 and 3\)`},
		{"control char in sample ID", []file{{"a.vcf", strings.Replace(impVCF(3), "isle4-0003", "isle4-\x1b0003", 1)}}, impArgs, `IN:4: sample column 3: sample ID "isle4-\\x1b0003" has a control character`},
		{"flipped bit: inspect --verify", []file{{"s.clinal", string(flipped)}}, func(in []string, _ string) []string {
			return []string{"inspect", "--verify", in[0]}
		}, `IN: chunk 1 \(markers 65-128\): checksum mismatch`},
		{"flipped bit: export", []file{{"s.clinal", string(flipped)}}, func(in []string, out string) []string {
			return []string{"export", "-o", out, in[0]}
		}, `IN: chunk 1 \(markers 65-128\): checksum mismatch`},
		{"footer cut off", []file{{"s.clinal", string(good[:len(good)-64])}}, func(in []string, _ string) []string {
			return []string{"inspect", in[0]}
		}, `IN: incomplete store: no valid footer`},
		{"missing input", nil, func(_ []string, out string) []string {
			return []string{"import", "-o", out, "/nonexistent/x.vcf"}
		}, `/nonexistent/x.vcf: no such file`},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			in := t.TempDir()
			var paths []string
			for _, f := range tc.files {
				p := filepath.Join(in, f.name)
				os.WriteFile(p, []byte(f.text), 0o644)
				paths = append(paths, p)
			}
			outDir := t.TempDir()
			out := filepath.Join(outDir, "out.clinal")
			last := ""
			if len(paths) > 0 {
				last = paths[len(paths)-1]
			}
			code, stdout, stderr := impRun(t, "", tc.args(paths, out)...)
			if code != 2 {
				t.Errorf("exit %d, want 2 (stderr %q)", code, stderr)
			}
			re := regexp.MustCompile(strings.ReplaceAll(tc.want, "IN", regexp.QuoteMeta(last)))
			if strings.Count(stderr, "\n") != 1 || !re.MatchString(stderr) {
				t.Errorf("stderr %q, want one line matching %q", stderr, re)
			}
			if stdout != "" {
				t.Errorf("stdout %q", stdout)
			}
			if left, _ := os.ReadDir(outDir); len(left) != 0 {
				t.Errorf("left in output dir: %v", left)
			}
		})
	}
}

func impArgs(in []string, out string) []string {
	return append([]string{"import", "-o", out, "--threads", "2"}, in...)
}
