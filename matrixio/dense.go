package matrixio

import (
	"bufio"
	"bytes"
	"context"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"time"
)

// DenseOptions configure ImportDense.
type DenseOptions struct {
	// MarkersAsRows reads one marker per row (first column the marker ID,
	// the header the sample IDs). The default is one sample per row (first
	// column the sample ID, the header the marker IDs).
	MarkersAsRows bool
	// Codes stores the values as 2-bit genotype codes: every value must be
	// 0, 1 or 2 (or missing). Without it the store is float32.
	Codes bool
	// Threads is the number of store compressors (default 1).
	Threads int
	// ChunkMarkers is the number of markers per store chunk (0: default).
	ChunkMarkers int
	// Stdin is read for the input name "-".
	Stdin io.Reader
	// TempDir holds the transpose spool of a samples-as-rows matrix
	// (default: the output's directory).
	TempDir string
	// MemoryBytes bounds the transpose buffer (default 64 MiB).
	MemoryBytes int64
}

// DenseSummary reports what ImportDense read and wrote.
type DenseSummary struct {
	Files         []string `json:"files"`
	Output        string   `json:"output"`
	Codec         Codec    `json:"codec"`
	Samples       int      `json:"samples"`
	Markers       int      `json:"markers"`
	MissingValues int      `json:"missing_values"`
	SpoolBytes    int64    `json:"spool_bytes"` // size of the transpose spool (samples as rows)
	Seconds       float64  `json:"seconds"`
}

// denseIDPattern recognizes marker IDs that carry their position:
// CHROM:POS or CHROM:POS:REF:ALT.
var denseIDPattern = regexp.MustCompile(`^([^:]+):([0-9]{1,18})(?::([^:]+):([^:]+))?$`)

// denseMarker gives a matrix column or row its identity. An ID of the form
// CHROM:POS or CHROM:POS:REF:ALT supplies those fields; any other ID gets
// chromosome "0" (unplaced), position = its 1-based index in the matrix,
// and REF and ALT "N" (unknown base, valid in VCF). The ID is kept as
// given.
func denseMarker(id string, index int) Marker {
	if m := denseIDPattern.FindStringSubmatch(id); m != nil {
		pos, _ := strconv.ParseInt(m[2], 10, 64)
		mk := Marker{Chrom: m[1], Pos: pos, ID: id, Ref: "N", Alt: "N"}
		if m[3] != "" {
			mk.Ref, mk.Alt = m[3], m[4]
		}
		return mk
	}
	return Marker{Chrom: "0", Pos: int64(index), ID: id, Ref: "N", Alt: "N"}
}

// denseMaxHeader bounds the header line of a dense matrix (10^7 IDs of 25
// bytes).
const denseMaxHeader = 256 << 20

// denseMaxRow bounds a data row of cols values: 1 MiB for the ID plus 64
// bytes a value, above any decimal rendering of a float.
func denseMaxRow(cols int) int { return 1<<20 + 64*cols }

// denseLines reads lines up to max bytes (denseMaxHeader when 0), without
// the newline (and '\r').
type denseLines struct {
	r    *bufio.Reader
	in   *vcfInput
	buf  []byte
	line int
	max  int
}

func (d *denseLines) next() ([]byte, error) {
	d.buf = d.buf[:0]
	limit := d.max
	if limit <= 0 {
		limit = denseMaxHeader
	}
	for {
		b, err := d.r.ReadSlice('\n')
		if len(d.buf)+len(b) > limit {
			return nil, BadInput("%s:%d: line longer than %d MiB (no line ends?)", d.in.name, d.line+1, limit>>20)
		}
		d.buf = append(d.buf, b...)
		if err == bufio.ErrBufferFull {
			continue
		}
		if err == io.EOF {
			if len(d.buf) == 0 {
				return nil, io.EOF
			}
		} else if err != nil {
			return nil, vcfReadError(d.in, d.line+1, err)
		}
		d.line++
		return bytes.TrimRight(d.buf, "\r\n"), nil
	}
}

// denseValue parses one cell: NA, NaN, '.' or empty are missing (NaN).
func denseValue(b []byte) (float32, bool, error) {
	switch string(b) {
	case "", "NA", ".", "NaN", "nan":
		return float32(math.NaN()), true, nil
	}
	v, err := vcfParseFloat(b)
	return v, false, err
}

// denseRow parses the values after the first field into x.
func denseRow(d *denseLines, line []byte, x []float32, codes bool, missing *int) (string, error) {
	t := bytes.IndexByte(line, '\t')
	if t < 0 {
		return "", BadInput("%s:%d: %d columns, expected %d (tab-separated)", d.in.name, d.line, 1, len(x)+1)
	}
	id := string(line[:t])
	rest := line[t+1:]
	for k := range x {
		var cell []byte
		if e := bytes.IndexByte(rest, '\t'); e >= 0 {
			cell, rest = rest[:e], rest[e+1:]
		} else if k == len(x)-1 {
			cell, rest = rest, nil
		} else {
			return "", BadInput("%s:%d: %d columns, expected %d", d.in.name, d.line, k+2, len(x)+1)
		}
		v, miss, err := denseValue(cell)
		if err != nil {
			return "", BadInput("%s:%d: column %d: %v", d.in.name, d.line, k+2, err)
		}
		if miss {
			*missing++
		} else if codes && v != 0 && v != 1 && v != 2 {
			return "", BadInput("%s:%d: column %d: value %q is not a genotype code 0, 1 or 2", d.in.name, d.line, k+2, truncate(string(cell)))
		}
		x[k] = v
	}
	if rest != nil {
		return "", BadInput("%s:%d: %d columns, expected %d", d.in.name, d.line, len(x)+2+bytes.Count(rest, []byte{'\t'}), len(x)+1)
	}
	return id, nil
}

// denseHeader reads the header row and returns its IDs (the first,
// corner, field dropped).
func denseHeader(d *denseLines, kind string) ([]string, error) {
	h, err := d.next()
	if err == io.EOF {
		return nil, BadInput("%s: empty input", d.in.name)
	}
	if err != nil {
		return nil, err
	}
	f := bytes.Split(h, []byte{'\t'})
	if len(f) < 2 {
		return nil, BadInput("%s:1: header has no %s IDs (want a corner label and tab-separated IDs)", d.in.name, kind)
	}
	ids := make([]string, len(f)-1)
	for i, b := range f[1:] {
		ids[i] = string(b)
	}
	d.max = denseMaxRow(len(ids))
	return ids, nil
}

// ImportDense reads a dense numeric TSV matrix (plain, gzip, BGZF or zstd;
// "-" reads opt.Stdin) into a float32 store, or a 2-bit store with Codes.
// The first row is a header: a corner label, then the IDs of the columns.
// By default rows are samples and columns markers; with MarkersAsRows rows
// are markers. NA, NaN, '.' and empty cells are missing. Marker identities
// follow denseMarker.
//
// A store is marker-major, so a samples-as-rows matrix must be transposed.
// It is done with bounded memory by spooling: each sample row is appended
// to a temporary file of float32 values (4 bytes per cell, removed at the
// end), then markers are read back in blocks that fit in MemoryBytes, one
// read per sample and block. Peak memory is one input row plus MemoryBytes;
// the spool needs 4*N*M bytes of disk. Several files are accepted only with
// MarkersAsRows, where they are concatenated and must share the header.
func ImportDense(ctx context.Context, inputs []string, out string, opt DenseOptions) (*DenseSummary, error) {
	t0 := time.Now()
	if len(inputs) == 0 {
		return nil, BadInput("import: no input files")
	}
	if !opt.MarkersAsRows && len(inputs) > 1 {
		return nil, BadInput("import --matrix: one file with samples as rows, or several with --markers-as-rows")
	}
	if err := CheckOutputPath(out); err != nil {
		return nil, err
	}
	if opt.MemoryBytes <= 0 {
		opt.MemoryBytes = 64 << 20
	}
	sum := &DenseSummary{Output: out, Codec: CodecFloat32}
	if opt.Codes {
		sum.Codec = CodecGeno2
	}
	var err error
	if opt.MarkersAsRows {
		err = denseMarkerRows(ctx, inputs, out, &opt, sum)
	} else {
		err = denseSampleRows(ctx, inputs[0], out, &opt, sum)
	}
	if err != nil {
		return nil, err
	}
	sum.Seconds = time.Since(t0).Seconds()
	return sum, nil
}

func (opt *DenseOptions) writerOptions(codec Codec, source string) WriterOptions {
	layout := "samples-as-rows"
	if opt.MarkersAsRows {
		layout = "markers-as-rows"
	}
	return WriterOptions{Codec: codec, ChunkMarkers: opt.ChunkMarkers, Threads: opt.Threads,
		Source: "dense matrix: " + source, Params: map[string]string{"layout": layout}}
}

// denseAdd writes one marker to w in its codec.
func denseAdd(w *Writer, m Marker, x []float32, g []byte) error {
	if w.Codec() == CodecFloat32 {
		return w.AddFloats(m, x)
	}
	for i, v := range x {
		if v != v {
			g[i] = Missing
		} else {
			g[i] = byte(v)
		}
	}
	return w.AddGenotypes(m, g)
}

func denseMarkerRows(ctx context.Context, inputs []string, out string, opt *DenseOptions, sum *DenseSummary) error {
	var w *Writer
	var first []string
	var firstName string
	fail := func(err error) error {
		if w != nil {
			w.Abort()
		}
		return err
	}
	var x []float32
	var g []byte
	for _, path := range inputs {
		in, err := vcfOpen(ctx, path, opt.Stdin)
		if err != nil {
			return fail(err)
		}
		sum.Files = append(sum.Files, in.name)
		d := &denseLines{r: in.text, in: in}
		samples, err := denseHeader(d, "sample")
		if err != nil {
			in.Close()
			return fail(err)
		}
		if w == nil {
			first, firstName = samples, in.name
			if w, err = Create(out, samples, opt.writerOptions(sum.Codec, path)); err != nil {
				in.Close()
				return fail(BadInput("%s:1: %v", in.name, err))
			}
			sum.Samples = len(samples)
			x, g = make([]float32, len(samples)), make([]byte, len(samples))
		} else if err := impSameSamples(firstName, first, in.name, 1, samples); err != nil {
			in.Close()
			return fail(err)
		}
		for {
			if err := ctx.Err(); err != nil {
				in.Close()
				return fail(err)
			}
			line, err := d.next()
			if err == io.EOF {
				break
			}
			if err != nil {
				in.Close()
				return fail(err)
			}
			if len(line) == 0 {
				continue
			}
			id, err := denseRow(d, line, x, opt.Codes, &sum.MissingValues)
			if err != nil {
				in.Close()
				return fail(err)
			}
			m := denseMarker(id, sum.Markers+1)
			if err := vcfCheckMarker(m); err != nil {
				in.Close()
				return fail(BadInput("%s:%d: marker ID: %v", in.name, d.line, err))
			}
			if err := denseAdd(w, m, x, g); err != nil {
				in.Close()
				return fail(fmt.Errorf("%s:%d: %w", in.name, d.line, err))
			}
			sum.Markers++
		}
		in.Close()
	}
	if sum.Markers == 0 {
		return fail(BadInput("%s: no marker rows", firstName))
	}
	return w.Close()
}

func denseSampleRows(ctx context.Context, path, out string, opt *DenseOptions, sum *DenseSummary) error {
	in, err := vcfOpen(ctx, path, opt.Stdin)
	if err != nil {
		return err
	}
	defer in.Close()
	sum.Files = append(sum.Files, in.name)
	d := &denseLines{r: in.text, in: in}
	ids, err := denseHeader(d, "marker")
	if err != nil {
		return err
	}
	M := len(ids)
	markers := make([]Marker, M)
	for j, id := range ids {
		markers[j] = denseMarker(id, j+1)
		if err := vcfCheckMarker(markers[j]); err != nil {
			return BadInput("%s:1: column %d: marker ID: %v", in.name, j+2, err)
		}
	}
	dir := opt.TempDir
	if dir == "" {
		dir = filepath.Dir(out)
	}
	spool, err := os.CreateTemp(dir, "."+filepath.Base(out)+".*.spool.partial")
	if err != nil {
		return fmt.Errorf("transpose spool: %w", err)
	}
	defer func() {
		spool.Close()
		os.Remove(spool.Name())
	}()
	sw := bufio.NewWriterSize(spool, 1<<20)
	x := make([]float32, M)
	rowb := make([]byte, 4*M)
	var samples []string
	seen := map[string]int{}
	for {
		if err := ctx.Err(); err != nil {
			return err
		}
		line, err := d.next()
		if err == io.EOF {
			break
		}
		if err != nil {
			return err
		}
		if len(line) == 0 {
			continue
		}
		id, err := denseRow(d, line, x, opt.Codes, &sum.MissingValues)
		if err != nil {
			return err
		}
		if err := ValidateID("sample ID", id); err != nil {
			return BadInput("%s:%d: %v", in.name, d.line, err)
		}
		if j, ok := seen[id]; ok {
			return BadInput("%s:%d: duplicate sample ID %q (also on line %d)", in.name, d.line, truncate(id), j)
		}
		seen[id] = d.line
		samples = append(samples, id)
		if len(samples) > MaxSamples {
			return BadInput("%s:%d: more than %d samples", in.name, d.line, MaxSamples)
		}
		for j, v := range x {
			binary.LittleEndian.PutUint32(rowb[4*j:], math.Float32bits(v))
		}
		if _, err := sw.Write(rowb); err != nil {
			return fmt.Errorf("transpose spool: %w", err)
		}
	}
	if len(samples) == 0 {
		return BadInput("%s: no sample rows", in.name)
	}
	if err := sw.Flush(); err != nil {
		return fmt.Errorf("transpose spool: %w", err)
	}
	N := len(samples)
	sum.Samples, sum.Markers, sum.SpoolBytes = N, M, int64(N)*int64(M)*4
	w, err := Create(out, samples, opt.writerOptions(sum.Codec, path))
	if err != nil {
		return BadInput("%s: %v", in.name, err)
	}
	C := int(min(int64(M), max(1, opt.MemoryBytes/(4*int64(N)))))
	blk := make([]byte, 4*C*N)
	col := make([]float32, N)
	g := make([]byte, N)
	for c0 := 0; c0 < M; c0 += C {
		if err := ctx.Err(); err != nil {
			w.Abort()
			return err
		}
		nc := min(C, M-c0)
		for i := 0; i < N; i++ {
			dst := blk[4*i*nc : 4*(i+1)*nc]
			if _, err := spool.ReadAt(dst, (int64(i)*int64(M)+int64(c0))*4); err != nil && !errors.Is(err, io.EOF) {
				w.Abort()
				return fmt.Errorf("transpose spool: %w", err)
			}
		}
		for j := 0; j < nc; j++ {
			for i := 0; i < N; i++ {
				col[i] = math.Float32frombits(binary.LittleEndian.Uint32(blk[4*(i*nc+j):]))
			}
			if err := denseAdd(w, markers[c0+j], col, g); err != nil {
				w.Abort()
				return fmt.Errorf("%s: marker column %d: %w", in.name, c0+j+2, err)
			}
		}
	}
	return w.Close()
}
