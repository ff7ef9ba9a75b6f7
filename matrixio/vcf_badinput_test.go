package matrixio

import (
	"bytes"
	"compress/gzip"
	"context"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// vcfTestHeader is a minimal valid header (7 lines) for two samples.
const vcfTestHeader = "##fileformat=VCFv4.2\n##contig=<ID=1>\n##FORMAT=<ID=GT,Number=1,Type=String,Description=\"Genotype\">\n" +
	"##FORMAT=<ID=DP,Number=1,Type=Integer,Description=\"Depth\">\n##source=clinal test\n##phasing=none\n" +
	"#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\tisle1-0001\tisle1-0002\n"

const vcfTestRecord = "1\t100\trs1\tA\tG\t.\t.\t.\tGT\t0/1\t1/1\n"

func vcfTestGzip(b []byte) []byte {
	var buf bytes.Buffer
	w := gzip.NewWriter(&buf)
	w.Write(b)
	w.Close()
	return buf.Bytes()
}

// TestImportBadInput: each malformed input must fail with a BadInput
// error whose one-line message names the file and the line (or byte) and
// says what is wrong, and leave no output or temporary file behind. The
// rules come from the VCF 4.2 specification (section 1.4 header, 1.6
// data lines: "fixed fields" CHROM..INFO tab-separated, POS an integer,
// GT allele indices into REF and ALT) and clinal's strictness (vcf.go).
func TestImportBadInput(t *testing.T) {
	many := strings.Repeat(vcfTestRecord, 3000)
	full := []byte(vcfTestHeader + many)
	gz := vcfTestGzip(full)
	dir := t.TempDir()
	bgzf := filepath.Join(dir, "full.vcf.gz")
	{
		w, err := CreateVCF(bgzf, []string{"isle1-0001", "isle1-0002"}, VCFWriterOptions{})
		if err != nil {
			t.Fatal(err)
		}
		for j := 0; j < 40000; j++ {
			w.Write(Marker{"1", int64(j + 1), "m", "A", "G"}, []byte{byte(j % 3), 1})
		}
		if err := w.Close(); err != nil {
			t.Fatal(err)
		}
	}
	bg, _ := os.ReadFile(bgzf)
	rec := func(s ...string) string { return vcfTestHeader + vcfTestRecord + strings.Join(s, "") }
	cases := []struct {
		name  string
		files map[string][]byte // written in name order; inputs in this order
		order []string
		want  string // regexp; FILE stands for the first failing file's path
	}{
		{"truncated gzip", map[string][]byte{"a.vcf.gz": gz[:len(gz)/2]}, nil, `^FILE:\d+: truncated gzip input \(unexpected end of file\)$`},
		{"truncated BGZF mid-block", map[string][]byte{"a.vcf.gz": bg[:len(bg)/2]}, nil, `^FILE:\d+: truncated BGZF block at byte \d+ \(unexpected end of file\)$`},
		{"BGZF without EOF block", map[string][]byte{"a.vcf.gz": bg[:len(bg)-28]}, nil, `^FILE:\d+: truncated BGZF file: the end-of-file marker block is missing \(at byte \d+\)$`},
		{"wrong column count", map[string][]byte{"a.vcf": []byte(rec("1\t200\trs2\tA\tG\t.\t.\t.\tGT\t0/1\n"))}, nil, `^FILE:9: wrong number of columns: 10, expected 11 \(9 fixed and 2 samples\)$`},
		{"extra column", map[string][]byte{"a.vcf": []byte(rec("1\t200\trs2\tA\tG\t.\t.\t.\tGT\t0/1\t0/0\t1/1\n"))}, nil, `^FILE:9: wrong number of columns: 12, expected 11`},
		{"too few fixed columns", map[string][]byte{"a.vcf": []byte(rec("1\t200\trs2\tA\n"))}, nil, `^FILE:9: wrong number of columns: 4, expected 11`},
		{"non-numeric POS", map[string][]byte{"a.vcf": []byte(rec("1\t12a4\trs2\tA\tG\t.\t.\t.\tGT\t0/1\t0/0\n"))}, nil, `^FILE:9: POS "12a4" is not a non-negative integer$`},
		{"unknown GT code", map[string][]byte{"a.vcf": []byte(rec("1\t200\trs2\tA\tG\t.\t.\t.\tGT\t0/1\t0/x\n"))}, nil, `^FILE:9: sample 2: unknown GT code "0/x"$`},
		{"GT index beyond ALT", map[string][]byte{"a.vcf": []byte(rec("1\t200\trs2\tA\tG\t.\t.\t.\tGT\t0/2\t0/0\n"))}, nil, `^FILE:9: sample 1: GT "0/2" has allele index 2 beyond the 1 ALT allele\(s\)$`},
		{"triploid", map[string][]byte{"a.vcf": []byte(rec("1\t200\trs2\tA\tG\t.\t.\t.\tGT\t0/1/1\t0/0\n"))}, nil, `^FILE:9: sample 1: GT "0/1/1" has ploidy above 2`},
		{"space in ID", map[string][]byte{"a.vcf": []byte(rec("1\t200\trs 2\tA\tG\t.\t.\t.\tGT\t0/1\t0/0\n"))}, nil, `^FILE:9: ID "rs 2" contains a space$`},
		{"duplicate sample IDs", map[string][]byte{"a.vcf": []byte(strings.Replace(vcfTestHeader, "isle1-0002", "isle1-0001", 1) + vcfTestRecord)}, nil, `^FILE:7: duplicate sample ID "isle1-0001" \(sample columns 1 and 2\)$`},
		{"control character in sample ID", map[string][]byte{"a.vcf": []byte(strings.Replace(vcfTestHeader, "isle1-0002", "isle1\x01-0002", 1) + vcfTestRecord)}, nil, `^FILE:7: sample column 2: sample ID "isle1\\x01-0002" has a control character \(0x01\) at byte 5$`},
		{"no #CHROM line", map[string][]byte{"a.vcf": []byte("##fileformat=VCFv4.2\n" + vcfTestRecord)}, nil, `^FILE:2: data line before the #CHROM header line`},
		{"header only, cut", map[string][]byte{"a.vcf": []byte("##fileformat=VCFv4.2\n##contig=<ID=1>\n")}, nil, `^FILE:2: end of file before the #CHROM header line$`},
		{"empty file", map[string][]byte{"a.vcf": nil}, nil, `^FILE: empty input \(not a VCF file\)$`},
		{"space-separated header", map[string][]byte{"a.vcf": []byte("##fileformat=VCFv4.2\n#CHROM POS ID REF ALT QUAL FILTER INFO FORMAT s1\n")}, nil, `^FILE:2: #CHROM line: column 1 is "#CHROM POS`},
		{"mismatched samples", map[string][]byte{
			"a.vcf": full,
			"b.vcf": []byte(strings.Replace(vcfTestHeader, "isle1-0002", "isle2-0002", 1) + vcfTestRecord)},
			[]string{"a.vcf", "b.vcf"}, `^FILE:7: sample column 2 is "isle2-0002", but "isle1-0002" in .*a\.vcf: all inputs must list the same samples`},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			d := t.TempDir()
			order := tc.order
			if order == nil {
				for k := range tc.files {
					order = append(order, k)
				}
			}
			var inputs []string
			for _, k := range order {
				p := filepath.Join(d, k)
				if err := os.WriteFile(p, tc.files[k], 0o644); err != nil {
					t.Fatal(err)
				}
				inputs = append(inputs, p)
			}
			outDir := t.TempDir()
			out := filepath.Join(outDir, "o.clinal")
			_, err := ImportVCF(context.Background(), inputs, out, ImportOptions{Threads: 2})
			if err == nil {
				t.Fatal("no error")
			}
			if !IsBadInput(err) {
				t.Errorf("not a bad-input error: %v", err)
			}
			failing := inputs[len(inputs)-1]
			re := regexp.MustCompile(strings.ReplaceAll(tc.want, "FILE", regexp.QuoteMeta(failing)))
			if msg := err.Error(); !re.MatchString(msg) || strings.Contains(msg, "\n") {
				t.Errorf("error %q does not match %q", msg, re)
			}
			if left, _ := os.ReadDir(outDir); len(left) != 0 {
				t.Errorf("left in the output directory: %v", left)
			}
		})
	}
}
