package qc

import (
	"bufio"
	"compress/gzip"
	"context"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/clinal/clinal/matrixio"
)

// testCohort is a small genotype matrix built in a test: codes 0, 1, 2 or
// matrixio.Missing, marker-major.
type testCohort struct {
	samples []string
	markers []matrixio.Marker
	g       [][]byte // g[j][i]
}

// vcf renders the cohort as plain VCF 4.2 text.
func (c *testCohort) vcf() string {
	var b strings.Builder
	b.WriteString("##fileformat=VCFv4.2\n")
	seen := map[string]bool{}
	for _, m := range c.markers {
		if !seen[m.Chrom] {
			seen[m.Chrom] = true
			fmt.Fprintf(&b, "##contig=<ID=%s>\n", m.Chrom)
		}
	}
	b.WriteString("##FORMAT=<ID=GT,Number=1,Type=String,Description=\"Genotype\">\n")
	b.WriteString("#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT")
	for _, s := range c.samples {
		b.WriteString("\t" + s)
	}
	b.WriteString("\n")
	gt := [4]string{"0/0", "0/1", "1/1", "./."}
	for j, m := range c.markers {
		fmt.Fprintf(&b, "%s\t%d\t%s\t%s\t%s\t.\tPASS\t.\tGT", m.Chrom, m.Pos, m.ID, m.Ref, m.Alt)
		for _, v := range c.g[j] {
			b.WriteString("\t" + gt[v])
		}
		b.WriteString("\n")
	}
	return b.String()
}

// store writes the cohort with the store writer and opens it.
func (c *testCohort) store(t testing.TB, chunkMarkers int) *matrixio.Store {
	t.Helper()
	path := filepath.Join(t.TempDir(), "c.clinal")
	w, err := matrixio.Create(path, c.samples, matrixio.WriterOptions{ChunkMarkers: chunkMarkers})
	if err != nil {
		t.Fatal(err)
	}
	for j, m := range c.markers {
		if err := w.AddGenotypes(m, c.g[j]); err != nil {
			t.Fatal(err)
		}
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	return openStore(t, path)
}

func openStore(t testing.TB, path string) *matrixio.Store {
	t.Helper()
	st, err := matrixio.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { st.Close() })
	return st
}

// importVCF imports a VCF file with matrixio.ImportVCF and opens the store.
func importVCF(t testing.TB, vcf string, chunkMarkers int) *matrixio.Store {
	t.Helper()
	out := filepath.Join(t.TempDir(), "v.clinal")
	if _, err := matrixio.ImportVCF(context.Background(), []string{vcf}, out, matrixio.ImportOptions{ChunkMarkers: chunkMarkers}); err != nil {
		t.Fatal(err)
	}
	return openStore(t, out)
}

// readTSV reads a tab-separated table (plain or gzip) with a header into
// rows keyed by column name.
func readTSV(t testing.TB, path string) []map[string]string {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	var r io.Reader = f
	if strings.HasSuffix(path, ".gz") {
		zr, err := gzip.NewReader(f)
		if err != nil {
			t.Fatal(err)
		}
		r = zr
	}
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 1<<20), 1<<24)
	var head []string
	var rows []map[string]string
	for line := 1; sc.Scan(); line++ {
		f := strings.Split(sc.Text(), "\t")
		if head == nil {
			head = f
			continue
		}
		if len(f) != len(head) {
			t.Fatalf("%s:%d: %d fields, header has %d", path, line, len(f), len(head))
		}
		row := map[string]string{}
		for i, h := range head {
			row[h] = strings.TrimSpace(f[i])
		}
		rows = append(rows, row)
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	return rows
}

// rng is a small deterministic generator for test data (SplitMix64).
type rng struct{ s uint64 }

func (r *rng) next() uint64 {
	r.s += 0x9e3779b97f4a7c15
	z := r.s
	z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9
	z = (z ^ (z >> 27)) * 0x94d049bb133111eb
	return z ^ (z >> 31)
}

func (r *rng) float() float64 { return float64(r.next()>>11) / (1 << 53) }

// geno draws a genotype under HWE with ALT frequency p, missing with
// probability miss.
func (r *rng) geno(p, miss float64) byte {
	if r.float() < miss {
		return matrixio.Missing
	}
	var g byte
	if r.float() < p {
		g++
	}
	if r.float() < p {
		g++
	}
	return g
}

func writeFile(t testing.TB, path, text string) {
	t.Helper()
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
}
