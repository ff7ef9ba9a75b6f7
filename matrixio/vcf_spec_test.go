package matrixio

import (
	"bytes"
	"context"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// vcfSpecFixture returns a file of testdata/ref/vcf-spec (made by
// testdata/fetch-spec-examples.sh) or skips, failing under
// CLINAL_REQUIRE_REFS=1.
func vcfSpecFixture(t *testing.T, name string) string {
	t.Helper()
	p := filepath.Join("..", "testdata", "ref", "vcf-spec", name)
	if _, err := os.Stat(p); err != nil {
		if os.Getenv("CLINAL_REQUIRE_REFS") == "1" {
			t.Fatalf("%s missing and CLINAL_REQUIRE_REFS=1: run bash testdata/fetch-spec-examples.sh", p)
		}
		t.Skipf("%s missing: run bash testdata/fetch-spec-examples.sh (Debian golang-github-brentp-vcfgo-dev)", p)
	}
	return p
}

// TestSpecExample imports the example of the VCF 4.x specification
// (section 1.1), as shipped in Debian's golang-github-brentp-vcfgo-dev,
// file usr/share/gocode/src/github.com/brentp/vcfgo/header_test.go (string
// vcfStr; extracted by testdata/fetch-spec-examples.sh). The genotypes
// below are the ones printed in the specification's example (checked
// against the fetched file): samples NA00001 NA00002 NA00003 at
//
//	20 14370   rs6054257 G   A       0|0 1|0 1/1   -> 0 1 2
//	20 17330   .         T   A       0|0 0|1 0/0   -> 0 1 0
//	20 1110696 rs6040355 A   G,T     1|2 2|1 2/2   multi-allelic
//	20 1230237 .         T   .       0|0 0|0 0/0   -> 0 0 0 (no ALT: kept, monomorphic)
//	20 1234567 microsat1 GTC G,GTCT  0/1 0/2 1/1   multi-allelic
//
// Split, each ALT against the rest: rs6040355 G: 1 1 0, T: 1 1 2;
// microsat1 G: 1 0 2, GTCT: 0 1 0.
func TestSpecExample(t *testing.T) {
	spec := vcfSpecFixture(t, "spec-example.vcf")
	type mk struct {
		id, ref, alt string
		g            []byte
	}
	cases := []struct {
		name  string
		split bool
		want  []mk
		multi int
	}{
		{"skip-multiallelic", false, []mk{
			{"rs6054257", "G", "A", []byte{0, 1, 2}},
			{"20:17330:T:A", "T", "A", []byte{0, 1, 0}},
			{"20:1230237:T:.", "T", ".", []byte{0, 0, 0}},
		}, 2},
		{"split-multiallelic", true, []mk{
			{"rs6054257", "G", "A", []byte{0, 1, 2}},
			{"20:17330:T:A", "T", "A", []byte{0, 1, 0}},
			{"rs6040355:G", "A", "G", []byte{1, 1, 0}},
			{"rs6040355:T", "A", "T", []byte{1, 1, 2}},
			{"20:1230237:T:.", "T", ".", []byte{0, 0, 0}},
			{"microsat1:G", "GTC", "G", []byte{1, 0, 2}},
			{"microsat1:GTCT", "GTC", "GTCT", []byte{0, 1, 0}},
		}, 0},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			out := filepath.Join(t.TempDir(), "spec.clinal")
			sum, err := ImportVCF(context.Background(), []string{spec}, out, ImportOptions{SplitMultiallelic: tc.split})
			if err != nil {
				t.Fatal(err)
			}
			ms, rows, samples := vcfReadStore(t, out)
			if strings.Join(samples, " ") != "NA00001 NA00002 NA00003" {
				t.Errorf("samples %v", samples)
			}
			if len(ms) != len(tc.want) {
				t.Fatalf("%d markers, want %d", len(ms), len(tc.want))
			}
			for j, w := range tc.want {
				if ms[j].Chrom != "20" || ms[j].ID != w.id || ms[j].Ref != w.ref || ms[j].Alt != w.alt || !bytes.Equal(rows[j], w.g) {
					t.Errorf("marker %d: %+v %v, want %+v", j, ms[j], rows[j], w)
				}
			}
			if sum.Records != 5 || sum.SkippedMultiallelic != tc.multi || sum.Monomorphic != 1 {
				t.Errorf("summary %+v", sum)
			}
		})
	}
}

// TestSpecExampleVcfgoExtras: vcfgo appends two records of its own to the
// specification example: "X 153171993 rs5201 A . ... GT 0 1 ." (allele 1
// with no ALT allele) and a triploid record "0|0|0 1/0/1". Both are bad
// input under clinal's strict rules (vcf.go: an allele index beyond the
// ALT count, ploidy above two); the error must name the file and the
// line of the first one.
func TestSpecExampleVcfgoExtras(t *testing.T) {
	p := vcfSpecFixture(t, "vcfgo-example.vcf")
	raw, err := os.ReadFile(p)
	if err != nil {
		t.Fatal(err)
	}
	line := 0
	for i, l := range strings.Split(string(raw), "\n") {
		if strings.HasPrefix(l, "X\t153171993\t") {
			line = i + 1
			break
		}
	}
	if line == 0 {
		t.Fatal("no X record in the vcfgo example")
	}
	out := filepath.Join(t.TempDir(), "x.clinal")
	_, err = ImportVCF(context.Background(), []string{p}, out, ImportOptions{})
	want := fmt.Sprintf("%s:%d: sample 2: GT \"1\" has allele index 1 beyond the 0 ALT allele(s)", p, line)
	if err == nil || err.Error() != want || !IsBadInput(err) {
		t.Fatalf("error %v, want %q", err, want)
	}
	if _, err := os.Stat(out); !os.IsNotExist(err) {
		t.Errorf("output left behind: %v", err)
	}
}
