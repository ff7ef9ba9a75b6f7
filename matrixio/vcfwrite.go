package matrixio

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/klauspost/compress/flate"
)

// VCFWriterOptions configure a VCF writer.
type VCFWriterOptions struct {
	// Source is free text recorded in a ##clinal_source header line (for
	// example the store a file was exported from); the ##source line is
	// always "clinal".
	Source string
	// Threads is the number of goroutines compressing BGZF blocks
	// (default 1).
	Threads int
	// Field is the FORMAT field written: "GT" (default, hard calls, use
	// Write) or "DS" (dosages, use WriteFloats).
	Field string
	// Level is the deflate level (0 means flate.DefaultCompression).
	Level int
}

// VCFWriter writes a BGZF-compressed VCF 4.2 file: one record per marker,
// QUAL, FILTER and INFO '.', and one FORMAT field (GT or DS).
//
// The ##contig header lines must come before the records but the contigs
// are only known once every record is seen, so records are compressed into
// a temporary body file beside the output; Close writes the header as its
// own BGZF blocks, appends the compressed body unchanged (BGZF members
// concatenate) and the EOF marker, and renames the file into place. The
// final name never names an incomplete file. A VCFWriter is not safe for
// concurrent use.
type VCFWriter struct {
	path    string
	samples []string
	opt     VCFWriterOptions
	out     *AtomicFile
	body    *os.File
	bw      *bufio.Writer
	z       *bgzfWriter
	line    []byte
	contigs []string
	seen    map[string]bool
	records int
	done    bool
	err     error
}

// gtText are the GT strings of the 2-bit codes 0, 1, 2 and Missing, each
// followed by the tab that separates samples.
var gtText = [4]string{"0/0\t", "0/1\t", "1/1\t", "./.\t"}

// CreateVCF starts a BGZF VCF file at path for the given samples (in
// order). Sample IDs must pass ValidateID and be unique.
func CreateVCF(path string, samples []string, opt VCFWriterOptions) (*VCFWriter, error) {
	if opt.Field == "" {
		opt.Field = "GT"
	}
	if opt.Field != "GT" && opt.Field != "DS" {
		return nil, fmt.Errorf("create %s: unsupported FORMAT field %q (want GT or DS)", path, opt.Field)
	}
	if opt.Level == 0 {
		opt.Level = flate.DefaultCompression
	}
	if len(samples) == 0 {
		return nil, fmt.Errorf("create %s: no samples", path)
	}
	if err := ValidateSamples(samples); err != nil {
		return nil, fmt.Errorf("create %s: %w", path, err)
	}
	out, err := CreateAtomic(path)
	if err != nil {
		return nil, err
	}
	dir, base := filepath.Split(path)
	if dir == "" {
		dir = "."
	}
	body, err := os.CreateTemp(dir, "."+base+".*.body.partial")
	if err != nil {
		out.Discard()
		return nil, fmt.Errorf("create %s: %w", path, err)
	}
	w := &VCFWriter{path: path, samples: samples, opt: opt, out: out, body: body,
		bw: bufio.NewWriterSize(body, 1<<20), seen: map[string]bool{}}
	w.z = newBGZFWriter(w.bw, opt.Level, opt.Threads)
	return w, nil
}

func (w *VCFWriter) begin(m Marker) error {
	if w.done {
		return errors.New("write to a closed VCF writer")
	}
	if w.err != nil {
		return w.err
	}
	for _, f := range [...]struct{ k, v string }{{"chromosome", m.Chrom}, {"marker ID", m.ID}, {"REF allele", m.Ref}, {"ALT allele", m.Alt}} {
		if err := validMarkerField(f.k, f.v); err != nil {
			return fmt.Errorf("write %s: marker %s:%d: %w", w.path, m.Chrom, m.Pos, err)
		}
	}
	if strings.ContainsAny(m.Chrom, ":<>[]*=,") {
		return fmt.Errorf("write %s: chromosome %q has a character VCF forbids in contig names", w.path, truncate(m.Chrom))
	}
	if !w.seen[m.Chrom] {
		w.seen[m.Chrom] = true
		w.contigs = append(w.contigs, m.Chrom)
	}
	l := AppendMarker(w.line[:0], m)
	l = append(l, "\t.\t.\t.\t"...)
	l = append(l, w.opt.Field...)
	l = append(l, '\t')
	w.line = l
	return nil
}

func (w *VCFWriter) end() error {
	w.line[len(w.line)-1] = '\n'
	if _, err := w.z.Write(w.line); err != nil {
		w.err = fmt.Errorf("write %s: %w", w.path, err)
		return w.err
	}
	w.records++
	return nil
}

// Write appends one record of hard calls: g[i] is the number of ALT alleles
// (0, 1, 2) of sample i or Missing (3), written as GT 0/0, 0/1, 1/1 or ./.
// (unphased).
func (w *VCFWriter) Write(m Marker, g []byte) error {
	if w.opt.Field != "GT" {
		return fmt.Errorf("write %s: genotypes written to a %s file", w.path, w.opt.Field)
	}
	if len(g) != len(w.samples) {
		return fmt.Errorf("write %s: marker %s:%d: %d genotypes for %d samples", w.path, m.Chrom, m.Pos, len(g), len(w.samples))
	}
	if err := w.begin(m); err != nil {
		return err
	}
	for i, v := range g {
		if v > 3 {
			return fmt.Errorf("write %s: marker %s:%d: genotype code %d for sample %d", w.path, m.Chrom, m.Pos, v, i+1)
		}
		w.line = append(w.line, gtText[v]...)
	}
	return w.end()
}

// WriteFloats appends one record of dosages (DS); NaN is written as '.'.
// Values are written with the fewest digits that read back as the same
// float32.
func (w *VCFWriter) WriteFloats(m Marker, x []float32) error {
	if w.opt.Field != "DS" {
		return fmt.Errorf("write %s: dosages written to a %s file", w.path, w.opt.Field)
	}
	if len(x) != len(w.samples) {
		return fmt.Errorf("write %s: marker %s:%d: %d values for %d samples", w.path, m.Chrom, m.Pos, len(x), len(w.samples))
	}
	if err := w.begin(m); err != nil {
		return err
	}
	for i, v := range x {
		switch {
		case v != v:
			w.line = append(w.line, '.')
		case math.IsInf(float64(v), 0):
			return fmt.Errorf("write %s: marker %s:%d: infinite value for sample %d", w.path, m.Chrom, m.Pos, i+1)
		default:
			w.line = strconv.AppendFloat(w.line, float64(v), 'g', -1, 32)
		}
		w.line = append(w.line, '\t')
	}
	return w.end()
}

// Records returns the number of records written so far.
func (w *VCFWriter) Records() int { return w.records }

// header renders the VCF header with the contigs seen.
func (w *VCFWriter) header() []byte {
	var b strings.Builder
	b.WriteString("##fileformat=VCFv4.2\n##source=clinal\n")
	if w.opt.Source != "" {
		src := strings.Map(func(r rune) rune {
			if r < 0x20 || r == 0x7f {
				return ' '
			}
			return r
		}, w.opt.Source)
		b.WriteString("##clinal_source=" + src + "\n")
	}
	for _, c := range w.contigs {
		b.WriteString("##contig=<ID=" + c + ">\n")
	}
	if w.opt.Field == "DS" {
		b.WriteString("##FORMAT=<ID=DS,Number=1,Type=Float,Description=\"Estimated ALT allele dosage\">\n")
	} else {
		b.WriteString("##FORMAT=<ID=GT,Number=1,Type=String,Description=\"Genotype\">\n")
	}
	b.WriteString("#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT")
	for _, s := range w.samples {
		b.WriteString("\t" + s)
	}
	b.WriteString("\n")
	return []byte(b.String())
}

// Close finishes the file: header, body, EOF marker, fsync, rename.
func (w *VCFWriter) Close() error {
	if w.done {
		return errors.New("VCF writer already closed")
	}
	err := w.finish()
	w.done = true
	w.body.Close()
	os.Remove(w.body.Name())
	if err != nil {
		w.out.Discard()
		return err
	}
	// CreateTemp makes the file 0600; an export is meant to be shared.
	w.out.Chmod(0o644)
	return w.out.Commit()
}

func (w *VCFWriter) finish() error {
	if w.err != nil {
		w.z.abort()
		return w.err
	}
	// Body: flush its blocks but not its EOF marker (that ends the file).
	if err := w.z.flushBlock(); err != nil {
		w.z.abort()
		return fmt.Errorf("write %s: %w", w.path, err)
	}
	for len(w.z.pending) > 0 {
		if err := w.z.writeOldest(); err != nil {
			w.z.abort()
			return fmt.Errorf("write %s: %w", w.path, err)
		}
	}
	w.z.closed = true
	if err := w.bw.Flush(); err != nil {
		return fmt.Errorf("write %s: %w", w.path, err)
	}
	ob := bufio.NewWriterSize(w.out, 1<<20)
	hz := newBGZFWriter(ob, w.opt.Level, 1)
	if _, err := hz.Write(w.header()); err != nil {
		return fmt.Errorf("write %s: %w", w.path, err)
	}
	// Header blocks end here so the first record starts a block.
	if err := hz.flushBlock(); err != nil {
		return fmt.Errorf("write %s: %w", w.path, err)
	}
	for len(hz.pending) > 0 {
		if err := hz.writeOldest(); err != nil {
			return fmt.Errorf("write %s: %w", w.path, err)
		}
	}
	if _, err := w.body.Seek(0, io.SeekStart); err != nil {
		return fmt.Errorf("write %s: %w", w.path, err)
	}
	if _, err := io.Copy(ob, w.body); err != nil {
		return fmt.Errorf("write %s: %w", w.path, err)
	}
	if _, err := ob.Write(bgzfEOF); err != nil {
		return fmt.Errorf("write %s: %w", w.path, err)
	}
	if err := ob.Flush(); err != nil {
		return fmt.Errorf("write %s: %w", w.path, err)
	}
	return nil
}

// Abort discards the file being written and its temporary files.
func (w *VCFWriter) Abort() {
	if w.done {
		return
	}
	w.done = true
	w.z.abort()
	w.body.Close()
	os.Remove(w.body.Name())
	w.out.Discard()
}
