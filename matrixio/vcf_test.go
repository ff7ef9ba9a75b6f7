package matrixio

import (
	"bytes"
	"compress/gzip"
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// vcfRequireTool returns the path of an external tool or skips the test
// when it is absent, unless CLINAL_REQUIRE_REFS=1 (CI), which makes a
// missing tool a failure.
func vcfRequireTool(t testing.TB, name string) string {
	t.Helper()
	p, err := exec.LookPath(name)
	if err != nil {
		if os.Getenv("CLINAL_REQUIRE_REFS") == "1" {
			t.Fatalf("%s not found and CLINAL_REQUIRE_REFS=1 (install Debian bcftools and tabix)", name)
		}
		t.Skipf("%s not installed (Debian bcftools/tabix); skipping", name)
	}
	return p
}

// vcfReadStore returns the markers and decoded genotype rows of a store.
func vcfReadStore(t testing.TB, path string) ([]Marker, [][]byte, []string) {
	t.Helper()
	s, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	n := s.NumSamples()
	rows := make([][]byte, 0, s.NumMarkers())
	err = s.Stream(context.Background(), s.AllChunks(), 1, func(c *Chunk) error {
		for j := 0; j < c.N; j++ {
			g := make([]byte, n)
			DecodeGenotypes(c.Row(j, s.RowBytes()), g)
			rows = append(rows, g)
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return append([]Marker(nil), s.Markers()...), rows, append([]string(nil), s.Samples()...)
}

// vcfReadFloatStore returns the decoded float rows of a float store.
func vcfReadFloatStore(t testing.TB, path string) ([]Marker, [][]float32) {
	t.Helper()
	s, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	n := s.NumSamples()
	var rows [][]float32
	err = s.Stream(context.Background(), s.AllChunks(), 1, func(c *Chunk) error {
		for j := 0; j < c.N; j++ {
			x := make([]float32, n)
			DecodeFloats(c.Row(j, s.RowBytes()), x)
			rows = append(rows, x)
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return append([]Marker(nil), s.Markers()...), rows
}

const gM = Missing

// TestImportCallsFixture imports testdata/vcf/calls.vcf, written by hand,
// and checks every call. Reasoning for each expectation, from the VCF 4.2
// specification, section 1.6.2 (Genotype fields): "GT: genotype, encoded
// as allele values separated by either of / or |", "0 for the reference
// allele, 1 for the first allele listed in ALT, 2 for the second", "If a
// call cannot be made for a sample at a given locus, '.' should be
// specified for each missing allele", "for haploid calls, e.g. on Y, male
// non-pseudoautosomal X, or mitochondrion, only one allele value should be
// given", and "trailing fields can be dropped". The 2-bit code is the
// number of ALT alleles (store.go). Handling of partial and haploid calls
// is clinal's documented convention (vcf.go), not the specification's.
func TestImportCallsFixture(t *testing.T) {
	type want struct {
		id, alt string
		g       []byte
	}
	base := []want{
		{"rs1", "G", []byte{0, 1, 1, 2}},          // 0/0 0|1 1|0 1/1: phase dropped, 1|0 = 0|1
		{"1:200:C:T", "T", []byte{gM, gM, gM, 1}}, // ./. .|. . are missing; ID '.' -> CHROM:POS:REF:ALT
		{"m3", "A", []byte{gM, gM, 2, 0}},         // 0/. and ./1 partial -> missing; haploid 0 -> 0
		{"m5", "T", []byte{0, 2, gM, 2}},          // chrX haploid 0, 1 -> 0, 2; '.' missing
		{"m6", ".", []byte{0, 0, gM, 0}},          // ALT '.' kept; haploid 0 -> 0
		{"m7", "C", []byte{1, 2, gM, 0}},          // GT second in FORMAT DP:GT
		{"m8", "G", []byte{2, 1, gM, 0}},          // GT:DP with DP dropped; '.' missing
	}
	split := append(append([]want{}, base[:3]...),
		want{"m4:C", "C", []byte{1, 1, 0, 0}}, // 0/1 1/2 2/2 0/0 vs ALT 1: alleles equal to 1
		want{"m4:G", "G", []byte{0, 1, 2, 0}}) // vs ALT 2
	split = append(split, base[3:]...)
	hapMiss := make([]want, len(base))
	copy(hapMiss, base)
	hapMiss[2] = want{"m3", "A", []byte{gM, gM, 2, gM}}
	hapMiss[3] = want{"m5", "T", []byte{gM, gM, gM, 2}}
	hapMiss[4] = want{"m6", ".", []byte{0, 0, gM, gM}}

	cases := []struct {
		name    string
		opt     ImportOptions
		want    []want
		multi   int
		haploid int
		partial int
	}{
		{"default", ImportOptions{}, base, 1, 4, 2},
		{"split", ImportOptions{SplitMultiallelic: true}, split, 0, 4, 2},
		{"haploid-missing", ImportOptions{Haploid: "missing", Threads: 2}, hapMiss, 1, 4, 2},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			out := filepath.Join(t.TempDir(), "calls.clinal")
			sum, err := ImportVCF(context.Background(), []string{"../testdata/vcf/calls.vcf"}, out, tc.opt)
			if err != nil {
				t.Fatal(err)
			}
			ms, rows, samples := vcfReadStore(t, out)
			if got := strings.Join(samples, ","); got != "isle1-0001,isle1-0002,isle2-0001,isle2-0002" {
				t.Errorf("samples %s", got)
			}
			if len(ms) != len(tc.want) {
				t.Fatalf("%d markers, want %d", len(ms), len(tc.want))
			}
			for j, w := range tc.want {
				if ms[j].ID != w.id || ms[j].Alt != w.alt || !bytes.Equal(rows[j], w.g) {
					t.Errorf("marker %d: %s alt %s %v, want %s alt %s %v", j, ms[j].ID, ms[j].Alt, rows[j], w.id, w.alt, w.g)
				}
			}
			if sum.Records != 8 || sum.SkippedMultiallelic != tc.multi || sum.HaploidCalls != tc.haploid || sum.PartialMissingCalls != tc.partial || sum.Markers != len(tc.want) {
				t.Errorf("summary %+v", sum)
			}
		})
	}
}

// TestImportMatchesBcftools cross-checks the parser against htslib: the
// genotypes that `bcftools query -f '[%GT\t]'` prints for the fixture
// (bcftools, Debian package, the reference VCF implementation) are mapped
// to ALT counts by the same rule and compared with the store.
func TestImportMatchesBcftools(t *testing.T) {
	bcf := vcfRequireTool(t, "bcftools")
	fix := "../testdata/vcf/calls.vcf"
	cmd := exec.Command(bcf, "view", "-m1", "-M2", fix) // biallelic and monomorphic records
	cmd2 := exec.Command(bcf, "query", "-f", "%ID\t[%GT\t]\n")
	var err error
	cmd2.Stdin, err = cmd.StdoutPipe()
	if err != nil {
		t.Fatal(err)
	}
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	outb, err := cmd2.Output()
	if err != nil {
		t.Fatal(err)
	}
	cmd.Wait()
	out := filepath.Join(t.TempDir(), "c.clinal")
	if _, err := ImportVCF(context.Background(), []string{fix}, out, ImportOptions{}); err != nil {
		t.Fatal(err)
	}
	_, rows, _ := vcfReadStore(t, out)
	lines := strings.Split(strings.TrimSpace(string(outb)), "\n")
	if len(lines) != len(rows) {
		t.Fatalf("bcftools gives %d biallelic records, store %d", len(lines), len(rows))
	}
	for j, l := range lines {
		f := strings.Split(strings.TrimRight(l, "\t"), "\t")
		for i, gt := range f[1:] {
			// Rule: ALT count of a diploid call, haploid k -> 2k, any '.' missing.
			var want byte
			a := strings.FieldsFunc(gt, func(r rune) bool { return r == '/' || r == '|' })
			switch {
			case strings.Contains(gt, "."):
				want = gM
			case len(a) == 1:
				want = 2 * (a[0][0] - '0')
			default:
				want = a[0][0] - '0' + a[1][0] - '0'
			}
			if rows[j][i] != want {
				t.Errorf("record %s sample %d: bcftools GT %s, store code %d", f[0], i+1, gt, rows[j][i])
			}
		}
	}
}

// TestImportCompressions reads the same fixture as plain text, gzip, BGZF
// (written by htslib's bgzip when present, else by our writer) and several
// files, and expects the same store content.
func TestImportCompressions(t *testing.T) {
	dir := t.TempDir()
	raw, err := os.ReadFile("../testdata/vcf/calls.vcf")
	if err != nil {
		t.Fatal(err)
	}
	gz := filepath.Join(dir, "calls.vcf.gz")
	var b bytes.Buffer
	zw := gzip.NewWriter(&b)
	zw.Write(raw)
	zw.Close()
	os.WriteFile(gz, b.Bytes(), 0o644)
	ref := filepath.Join(dir, "ref.clinal")
	if _, err := ImportVCF(context.Background(), []string{"../testdata/vcf/calls.vcf"}, ref, ImportOptions{}); err != nil {
		t.Fatal(err)
	}
	_, want, _ := vcfReadStore(t, ref)
	inputs := map[string][]string{"gzip": {gz}}
	if p, err := exec.LookPath("bgzip"); err == nil {
		bg := filepath.Join(dir, "calls.bgz")
		c := exec.Command(p, "-c", "../testdata/vcf/calls.vcf")
		o, err := c.Output()
		if err != nil {
			t.Fatal(err)
		}
		os.WriteFile(bg, o, 0o644)
		inputs["bgzip"] = []string{bg}
	}
	for name, in := range inputs {
		for _, threads := range []int{1, 3} {
			out := filepath.Join(dir, fmt.Sprintf("%s%d.clinal", name, threads))
			if _, err := ImportVCF(context.Background(), in, out, ImportOptions{Threads: threads}); err != nil {
				t.Fatalf("%s: %v", name, err)
			}
			_, got, _ := vcfReadStore(t, out)
			if fmt.Sprint(got) != fmt.Sprint(want) {
				t.Errorf("%s threads %d: %v, want %v", name, threads, got, want)
			}
		}
	}
	// Plain text cut into groups of a few bytes: lines straddle groups.
	for _, gb := range []int{1, 7, 50} {
		out := filepath.Join(dir, fmt.Sprintf("g%d.clinal", gb))
		if _, err := ImportVCF(context.Background(), []string{"../testdata/vcf/calls.vcf"}, out, ImportOptions{Threads: 2, groupBytes: gb}); err != nil {
			t.Fatalf("group %d: %v", gb, err)
		}
		if _, got, _ := vcfReadStore(t, out); fmt.Sprint(got) != fmt.Sprint(want) {
			t.Errorf("group %d: %v, want %v", gb, got, want)
		}
	}
	// stdin
	out := filepath.Join(dir, "stdin.clinal")
	if _, err := ImportVCF(context.Background(), []string{"-"}, out, ImportOptions{Stdin: bytes.NewReader(b.Bytes())}); err != nil {
		t.Fatal(err)
	}
	if _, got, _ := vcfReadStore(t, out); fmt.Sprint(got) != fmt.Sprint(want) {
		t.Errorf("stdin: %v", got)
	}
	// Two files concatenated: every marker twice, in order.
	out = filepath.Join(dir, "two.clinal")
	if _, err := ImportVCF(context.Background(), []string{"../testdata/vcf/calls.vcf", gz}, out, ImportOptions{}); err != nil {
		t.Fatal(err)
	}
	if _, got, _ := vcfReadStore(t, out); fmt.Sprint(got) != fmt.Sprint(append(append([][]byte{}, want...), want...)) {
		t.Errorf("two files: %v", got)
	}
}

// TestImportDosages reads DS into a float store. Expected values are the
// decimal numbers written in the fixture (VCF 4.2 section 1.4.2 reserves DS
// for the dosage, Type=Float); '.' is missing (NaN).
func TestImportDosages(t *testing.T) {
	out := filepath.Join(t.TempDir(), "ds.clinal")
	sum, err := ImportVCF(context.Background(), []string{"../testdata/vcf/dosages.vcf"}, out, ImportOptions{Field: "DS", SplitMultiallelic: true})
	if err != nil {
		t.Fatal(err)
	}
	ms, rows := vcfReadFloatStore(t, out)
	nan := float32(math.NaN())
	want := [][]float32{
		{0, 1.02, 1.999, 0.5},
		{nan, 0.25, nan, 2},    // '.' and missing vcfSubfield
		{0.1, 1e-3, 1.5, 0},    // 1e-3 through the general parser
		{0.25, 0.5, 1, nan},    // first ALT of DS=0.25,0.75
		{0.75, 0.5, 0.25, nan}, // second ALT
	}
	if len(rows) != len(want) {
		t.Fatalf("%d markers (%v), want %d", len(rows), ms, len(want))
	}
	for j := range want {
		for i := range want[j] {
			g, w := rows[j][i], want[j][i]
			if !(g == w || (g != g && w != w)) {
				t.Errorf("marker %d sample %d: %v, want %v", j, i, g, w)
			}
		}
	}
	if sum.Codec != CodecFloat32 || sum.SplitMultiallelic != 1 {
		t.Errorf("summary %+v", sum)
	}
}

// TestVCFParseFloat compares the fast decimal path with strconv (the Go
// standard library's correctly rounded parser) on many decimals.
func TestVCFParseFloat(t *testing.T) {
	for _, s := range []string{"0", "1", "2", "0.1", "1.999", "-0.5", "+1.25", "0.0000001", "123456.7", "1677720.9", "0.3333333", "1e-3", "2.5E1"} {
		got, err := vcfParseFloat([]byte(s))
		if err != nil {
			t.Fatal(s, err)
		}
		w, _ := strconv.ParseFloat(s, 32) // correctly rounded to float32
		if got != float32(w) {
			t.Errorf("%s: %v, want %v", s, got, float32(w))
		}
	}
	for i := 0; i < 200000; i++ {
		s := fmt.Sprintf("%d.%04d", i%3, (i*7919)%10000)
		got, _ := vcfParseFloat([]byte(s))
		w, _ := strconv.ParseFloat(s, 32)
		if got != float32(w) {
			t.Fatalf("%s: %v, want %v", s, got, float32(w))
		}
	}
	for _, s := range []string{"", "abc", "1.2.3", "nan", "inf", "1e999", "-"} {
		if _, err := vcfParseFloat([]byte(s)); err == nil {
			t.Errorf("%q accepted", s)
		}
	}
}

// vcfCancelReader cancels a context once n bytes have been read.
type vcfCancelReader struct {
	r      io.Reader
	n      int
	cancel func()
}

func (c *vcfCancelReader) Read(p []byte) (int, error) {
	k, err := c.r.Read(p)
	if c.n -= k; c.n <= 0 {
		c.cancel()
	}
	return k, err
}

// TestImportCancelled: a context cancelled before the start, or while the
// input is being read (here after 64 KiB of a larger stdin), stops the
// import with context.Canceled and leaves no output.
func TestImportCancelled(t *testing.T) {
	var b strings.Builder
	b.WriteString(vcfTestHeader)
	for j := 0; j < 20000; j++ {
		b.WriteString(vcfTestRecord)
	}
	for _, at := range []int{0, 64 << 10} {
		ctx, cancel := context.WithCancel(context.Background())
		if at == 0 {
			cancel()
		}
		dir := t.TempDir()
		in := &vcfCancelReader{r: strings.NewReader(b.String()), n: at, cancel: cancel}
		_, err := ImportVCF(ctx, []string{"-"}, filepath.Join(dir, "c.clinal"), ImportOptions{Stdin: in, groupBytes: 4096, Threads: 2})
		if !errors.Is(err, context.Canceled) {
			t.Errorf("cancel at %d: error %v, want context.Canceled", at, err)
		}
		if left, _ := os.ReadDir(dir); len(left) != 0 {
			t.Errorf("cancel at %d: left behind: %v", at, left)
		}
		cancel()
	}
}
