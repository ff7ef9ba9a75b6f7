package matrixio

import (
	"bufio"
	"bytes"
	"context"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
)

// vcfRandomStore writes a store of random genotypes (or floats) over three
// chromosomes and returns its content.
func vcfRandomStore(t *testing.T, path string, n, m int, codec Codec, seed uint64) ([]string, []Marker, [][]byte, [][]float32) {
	t.Helper()
	rng := rand.New(rand.NewPCG(seed, 7))
	samples := make([]string, n)
	for i := range samples {
		samples[i] = fmt.Sprintf("isle%d-%04d", i%5+1, i+1)
	}
	w, err := Create(path, samples, WriterOptions{Codec: codec, ChunkMarkers: 64})
	if err != nil {
		t.Fatal(err)
	}
	var markers []Marker
	var geno [][]byte
	var flt [][]float32
	for j := 0; j < m; j++ {
		mk := Marker{Chrom: fmt.Sprint(1 + 3*j/m), Pos: int64(100 + 17*j), ID: fmt.Sprintf("snp%d", j+1), Ref: "A", Alt: "T"}
		if j%7 == 3 {
			mk.Ref, mk.Alt = "GTC", "G" // an indel
		}
		markers = append(markers, mk)
		if codec == CodecFloat32 {
			x := make([]float32, n)
			for i := range x {
				switch rng.IntN(5) {
				case 0:
					x[i] = float32(math.NaN())
				case 1:
					x[i] = float32(rng.IntN(3)) // integers
				case 2:
					x[i] = float32(rng.IntN(2001)) / 1000 // three decimals
				default:
					x[i] = 2 * rng.Float32() // full float32 precision
				}
			}
			flt = append(flt, x)
			err = w.AddFloats(mk, x)
		} else {
			g := make([]byte, n)
			for i := range g {
				g[i] = byte(rng.IntN(4))
			}
			geno = append(geno, g)
			err = w.AddGenotypes(mk, g)
		}
		if err != nil {
			t.Fatal(err)
		}
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	return samples, markers, geno, flt
}

// TestVCFRoundTrip: random genotypes -> store -> ExportVCF -> ImportVCF
// must give back exactly the same samples, markers and calls, whatever the
// threads and the size of the parse groups (down to groups shorter than a
// line, so that lines straddle many groups). The BGZF output is checked
// with htslib (Debian tabix and bcftools, the reference implementation of
// VCF and BGZF, references.md): `htsfile` must call it BGZF, `tabix -p
// vcf` must index it, `bcftools view` must read it with exit 0 and no
// message on stderr, and `bcftools query` must print the same genotypes.
func TestVCFRoundTrip(t *testing.T) {
	dir := t.TempDir()
	src := filepath.Join(dir, "src.clinal")
	samples, markers, geno, _ := vcfRandomStore(t, src, 37, 700, CodecGeno2, 1)
	vcf := filepath.Join(dir, "out.vcf.gz")
	sum, err := ExportVCF(context.Background(), src, vcf, ExportOptions{Threads: 2})
	if err != nil {
		t.Fatal(err)
	}
	if sum.Markers != 700 || sum.Samples != 37 {
		t.Errorf("export summary %+v", sum)
	}
	for _, tc := range []struct {
		threads, group int
	}{{1, 0}, {3, 0}, {2, 100}, {3, 997}, {1, 40000}} {
		out := filepath.Join(dir, fmt.Sprintf("back-%d-%d.clinal", tc.threads, tc.group))
		if _, err := ImportVCF(context.Background(), []string{vcf}, out, ImportOptions{Threads: tc.threads, groupBytes: tc.group}); err != nil {
			t.Fatal(err)
		}
		ms, rows, ss := vcfReadStore(t, out)
		if fmt.Sprint(ss) != fmt.Sprint(samples) || fmt.Sprint(ms) != fmt.Sprint(markers) {
			t.Fatalf("threads %d group %d: samples or markers differ", tc.threads, tc.group)
		}
		for j := range rows {
			if !bytes.Equal(rows[j], geno[j]) {
				t.Fatalf("threads %d group %d: marker %d: %v, want %v", tc.threads, tc.group, j, rows[j], geno[j])
			}
		}
	}

	t.Run("htslib", func(t *testing.T) {
		htsfile := vcfRequireTool(t, "htsfile")
		tabix := vcfRequireTool(t, "tabix")
		bcftools := vcfRequireTool(t, "bcftools")
		o, err := exec.Command(htsfile, vcf).CombinedOutput()
		if err != nil || !strings.Contains(string(o), "BGZF-compressed") {
			t.Errorf("htsfile: %v: %s", err, o)
		}
		if o, err := exec.Command(tabix, "-f", "-p", "vcf", vcf).CombinedOutput(); err != nil {
			t.Errorf("tabix -p vcf: %v: %s", err, o)
		}
		var stderr bytes.Buffer
		c := exec.Command(bcftools, "view", "-Ou", "-o", os.DevNull, vcf)
		c.Stderr = &stderr
		if err := c.Run(); err != nil || stderr.Len() != 0 {
			t.Errorf("bcftools view: %v, stderr %q", err, stderr.String())
		}
		q, err := exec.Command(bcftools, "query", "-f", "[%GT\t]\n", vcf).Output()
		if err != nil {
			t.Fatal(err)
		}
		text := [4]string{"0/0", "0/1", "1/1", "./."}
		lines := strings.Split(strings.TrimSpace(string(q)), "\n")
		if len(lines) != len(geno) {
			t.Fatalf("bcftools query: %d lines for %d markers", len(lines), len(geno))
		}
		for j, l := range lines {
			f := strings.Split(strings.TrimRight(l, "\t"), "\t")
			for i, gt := range f {
				if gt != text[geno[j][i]] {
					t.Fatalf("marker %d sample %d: bcftools reads %s, wrote code %d", j, i, gt, geno[j][i])
				}
			}
		}
	})

	t.Run("subset", func(t *testing.T) {
		keep := filepath.Join(dir, "keep.txt")
		// Listed out of order, with a comment and a blank line; written in store order.
		os.WriteFile(keep, []byte("# keep\n"+samples[9]+"\n\n"+samples[2]+"\t extra column\n"), 0o644)
		sub := filepath.Join(dir, "sub.vcf.gz")
		if _, err := ExportVCF(context.Background(), src, sub, ExportOptions{KeepSamplesFile: keep, Chromosomes: "2-3"}); err != nil {
			t.Fatal(err)
		}
		out := filepath.Join(dir, "sub.clinal")
		if _, err := ImportVCF(context.Background(), []string{sub}, out, ImportOptions{}); err != nil {
			t.Fatal(err)
		}
		ms, rows, ss := vcfReadStore(t, out)
		if fmt.Sprint(ss) != fmt.Sprint([]string{samples[2], samples[9]}) {
			t.Errorf("samples %v", ss)
		}
		k := 0
		for j, m := range markers {
			if m.Chrom == "1" {
				continue
			}
			if k >= len(ms) || ms[k] != m || rows[k][0] != geno[j][2] || rows[k][1] != geno[j][9] {
				t.Fatalf("subset marker %d differs", k)
			}
			k++
		}
		if k != len(ms) {
			t.Errorf("%d markers, want %d", len(ms), k)
		}
	})
}

// TestVCFRoundTripDosages: a float store exported as DS and imported with
// Field DS gives back the same float32 values bit for bit (the writer
// prints the shortest decimal that reads back as the same float32,
// strconv 'g' -1; the reader rounds correctly), NaN as missing.
func TestVCFRoundTripDosages(t *testing.T) {
	dir := t.TempDir()
	src := filepath.Join(dir, "src.clinal")
	_, markers, _, flt := vcfRandomStore(t, src, 23, 300, CodecFloat32, 2)
	vcf := filepath.Join(dir, "ds.vcf.gz")
	if _, err := ExportVCF(context.Background(), src, vcf, ExportOptions{}); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "back.clinal")
	if _, err := ImportVCF(context.Background(), []string{vcf}, out, ImportOptions{Field: "DS", Threads: 2}); err != nil {
		t.Fatal(err)
	}
	ms, rows := vcfReadFloatStore(t, out)
	if fmt.Sprint(ms) != fmt.Sprint(markers) {
		t.Fatal("markers differ")
	}
	for j := range rows {
		for i := range rows[j] {
			a, b := rows[j][i], flt[j][i]
			if math.Float32bits(a) != math.Float32bits(b) && !(a != a && b != b) {
				t.Fatalf("marker %d sample %d: %v, want %v", j, i, a, b)
			}
		}
	}
}

// TestBGZFWriterBlocks checks the BGZF framing against the SAM/BAM
// specification, section 4.1: every member has the BC extra subfield with
// BSIZE = member size - 1, holds at most 64 KiB of input, and the file
// ends with the 28-byte EOF block (bytes as printed in section 4.1.2).
// Incompressible input exercises the stored-block fallback.
func TestBGZFWriterBlocks(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 3))
	for _, size := range []int{0, 1, bgzfBlockInput, 3*bgzfBlockInput + 17} {
		in := make([]byte, size)
		for i := range in {
			in[i] = byte(rng.Uint32())
		}
		var buf bytes.Buffer
		w := newBGZFWriter(&buf, 6, 2)
		w.Write(in[:size/2])
		w.Write(in[size/2:])
		if err := w.Close(); err != nil {
			t.Fatal(err)
		}
		b := buf.Bytes()
		eof := []byte{0x1f, 0x8b, 8, 4, 0, 0, 0, 0, 0, 0xff, 6, 0, 0x42, 0x43, 2, 0, 0x1b, 0, 3, 0, 0, 0, 0, 0, 0, 0, 0, 0}
		if !bytes.HasSuffix(b, eof) {
			t.Fatalf("size %d: no EOF block", size)
		}
		r := &bgzfRawReader{r: bufio.NewReader(bytes.NewReader(b)), name: "mem"}
		var z bgzfInflater
		var got []byte
		blocks := 0
		for {
			var blk bgzfRawBlock
			var err error
			_, blk, err = r.next(nil)
			if err != nil {
				if err == io.EOF {
					break
				}
				t.Fatal(err)
			}
			if blk.isize > bgzfBlockInput {
				t.Errorf("block of %d bytes", blk.isize)
			}
			if got, err = z.inflate(got, blk); err != nil {
				t.Fatal(err)
			}
			blocks++
		}
		if !bytes.Equal(got, in) {
			t.Errorf("size %d: content differs after %d blocks", size, blocks)
		}
		if want := (size+bgzfBlockInput-1)/bgzfBlockInput + 1; blocks != want {
			t.Errorf("size %d: %d blocks, want %d", size, blocks, want)
		}
	}
}
