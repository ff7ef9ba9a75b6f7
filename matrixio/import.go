package matrixio

import (
	"bufio"
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"strconv"
	"strings"
	"time"

	"golang.org/x/sync/errgroup"
)

// ImportOptions configure ImportVCF.
type ImportOptions struct {
	// Field is the FORMAT field imported: "GT" (default) for hard calls
	// into a 2-bit store, or "DS" for dosages into a float32 store.
	Field string
	// Haploid says how a haploid GT call is stored: "hom" (default) as a
	// homozygote (0 -> 0, 1 -> 2 ALT alleles) or "missing".
	Haploid string
	// SplitMultiallelic splits a record with several ALT alleles into one
	// biallelic marker per ALT instead of skipping it.
	SplitMultiallelic bool
	// Threads is the number of parser goroutines, which also inflate BGZF
	// blocks, and of store compressors (default 1). Plain gzip and zstd
	// inputs are decompressed on one more goroutine.
	Threads int
	// ChunkMarkers is the number of markers per store chunk (0: default).
	ChunkMarkers int
	// Stdin is read for the input name "-".
	Stdin io.Reader

	groupBytes int // bytes of text per parse group; 0 picks a size (tests set it small)
}

// ImportSummary reports what an import read and wrote.
type ImportSummary struct {
	Files               []string `json:"files"`
	Output              string   `json:"output"`
	Field               string   `json:"field"`
	Codec               Codec    `json:"codec"`
	Samples             int      `json:"samples"`
	Records             int      `json:"records"`              // data lines read
	Markers             int      `json:"markers"`              // markers written
	SkippedMultiallelic int      `json:"skipped_multiallelic"` // records with several ALTs, skipped
	SplitMultiallelic   int      `json:"split_multiallelic"`   // records with several ALTs, split
	SkippedLongFields   int      `json:"skipped_long_fields"`  // records with a field over 4096 bytes
	Monomorphic         int      `json:"monomorphic"`          // records with ALT '.', kept
	NoFieldRecords      int      `json:"no_field_records"`     // records whose FORMAT lacks the field (all missing)
	HaploidCalls        int      `json:"haploid_calls"`
	PartialMissingCalls int      `json:"partial_missing_calls"` // e.g. './1', stored as missing
	MissingCalls        int      `json:"missing_calls"`
	Seconds             float64  `json:"seconds"`
}

func (s *ImportSummary) addStats(st vcfStats) {
	s.Records += st.records
	s.Markers += st.markers
	s.SkippedMultiallelic += st.skippedMulti
	s.SplitMultiallelic += st.splitRecords
	s.SkippedLongFields += st.skippedLong
	s.Monomorphic += st.monomorphic
	s.NoFieldRecords += st.noField
	s.HaploidCalls += st.haploid
	s.PartialMissingCalls += st.partial
	s.MissingCalls += st.missing
}

func (o *ImportOptions) normalize() error {
	switch strings.ToUpper(o.Field) {
	case "", "GT":
		o.Field = "GT"
	case "DS":
		o.Field = "DS"
	default:
		return BadInput("unsupported --field %q (want GT or DS)", o.Field)
	}
	switch o.Haploid {
	case "", "hom":
		o.Haploid = "hom"
	case "missing":
	default:
		return BadInput("unsupported haploid mode %q (want hom or missing)", o.Haploid)
	}
	if o.Threads < 1 {
		o.Threads = 1
	}
	return nil
}

// ImportVCF reads VCF 4.x files (plain, gzip, BGZF or zstd, detected from
// their content; "-" reads opt.Stdin) and writes their genotypes, or
// dosages, to the store out. Several inputs are concatenated in order (one
// file per chromosome, say) and must list the same samples in the same
// order. The conventions for GT and DS values are in the comment at the top
// of vcf.go; in short: phase is dropped, partially missing and (by option)
// haploid calls are missing, multi-allelic records are skipped or split.
//
// Input errors are reported as BadInput errors naming the file and line,
// and leave no output. Memory is bounded by the number of samples and
// threads, not by the number of markers (beyond the store's marker table).
func ImportVCF(ctx context.Context, inputs []string, out string, opt ImportOptions) (*ImportSummary, error) {
	t0 := time.Now()
	if err := opt.normalize(); err != nil {
		return nil, err
	}
	if len(inputs) == 0 {
		return nil, BadInput("import: no input files")
	}
	stdin := 0
	for _, in := range inputs {
		if in == "-" {
			stdin++
		}
	}
	if stdin > 1 {
		return nil, BadInput("import: standard input ('-') named more than once")
	}
	if err := CheckOutputPath(out); err != nil {
		return nil, err
	}
	sum := &ImportSummary{Output: out, Field: opt.Field, Codec: CodecGeno2}
	if opt.Field == "DS" {
		sum.Codec = CodecFloat32
	}
	var w *Writer
	var firstSamples []string
	var firstName string
	fail := func(err error) (*ImportSummary, error) {
		if w != nil {
			w.Abort()
		}
		return nil, err
	}
	for _, path := range inputs {
		if err := ctx.Err(); err != nil {
			return fail(err)
		}
		in, err := vcfOpen(ctx, path, opt.Stdin)
		if err != nil {
			return fail(err)
		}
		sum.Files = append(sum.Files, in.name)
		samples, hlines, err := readVCFHeader(in)
		if err != nil {
			in.Close()
			return fail(err)
		}
		if w == nil {
			firstSamples, firstName = samples, in.name
			sum.Samples = len(samples)
			w, err = Create(out, samples, WriterOptions{
				Codec: sum.Codec, ChunkMarkers: opt.ChunkMarkers, Threads: opt.Threads,
				Source: "vcf: " + strings.Join(inputs, " "),
				Params: map[string]string{"field": opt.Field, "haploid": opt.Haploid,
					"split_multiallelic": strconv.FormatBool(opt.SplitMultiallelic)},
			})
			if err != nil {
				in.Close()
				return fail(BadInput("%s:%d: %v", in.name, hlines, err))
			}
		} else if err := impSameSamples(firstName, firstSamples, in.name, hlines, samples); err != nil {
			in.Close()
			return fail(err)
		}
		err = impBody(ctx, in, hlines, w, &opt, sum)
		in.Close()
		if err != nil {
			return fail(err)
		}
	}
	if sum.Markers == 0 {
		return fail(BadInput("%s: no markers to import (%d records read, %d multi-allelic skipped, %d with over-long fields skipped)",
			strings.Join(sum.Files, ", "), sum.Records, sum.SkippedMultiallelic, sum.SkippedLongFields))
	}
	if err := w.Close(); err != nil {
		return nil, err
	}
	sum.Seconds = time.Since(t0).Seconds()
	return sum, nil
}

// impSameSamples checks that a later file lists the first file's samples.
func impSameSamples(firstName string, first []string, name string, line int, s []string) error {
	if len(s) != len(first) {
		return BadInput("%s:%d: %d samples, but %s has %d: all inputs must list the same samples in the same order",
			name, line, len(s), firstName, len(first))
	}
	for i := range s {
		if s[i] != first[i] {
			return BadInput("%s:%d: sample column %d is %q, but %q in %s: all inputs must list the same samples in the same order",
				name, line, i+1, truncate(s[i]), truncate(first[i]), firstName)
		}
	}
	return nil
}

// vcfMaxHeaderLine bounds one VCF header line (meta lines are short; a
// #CHROM line of 10^7 samples with 25-byte IDs takes 250 MB), so an input
// without line ends cannot make the reader buffer it all.
const vcfMaxHeaderLine = 256 << 20

// vcfMaxLine bounds one data line for n samples: 64 MiB for the fixed
// columns plus 1 KiB per sample column, far above any real FORMAT (a
// "0|1:0.998,0.002,0:12,3:99" column is about 25 bytes). Lines are held
// whole only when they straddle two parse groups.
func vcfMaxLine(n int) int { return 64<<20 + 1024*n }

// errLongLine is returned by readLineMax for a line over its limit.
var errLongLine = errors.New("line too long")

// readLineMax reads one line like ReadBytes('\n') but returns errLongLine
// once the line exceeds limit bytes, before buffering more of it.
func readLineMax(r *bufio.Reader, limit int) ([]byte, error) {
	var line []byte
	for {
		b, err := r.ReadSlice('\n')
		if len(line)+len(b) > limit {
			return nil, errLongLine
		}
		line = append(line, b...)
		if err != bufio.ErrBufferFull {
			return line, err
		}
	}
}

// vcfFixed are the eight mandatory #CHROM header columns.
var vcfFixed = [...]string{"#CHROM", "POS", "ID", "REF", "ALT", "QUAL", "FILTER", "INFO"}

// readVCFHeader reads the meta lines and the #CHROM line and returns the
// sample IDs and the number of header lines.
func readVCFHeader(in *vcfInput) ([]string, int, error) {
	line := 0
	for {
		b, err := readLineMax(in.text, vcfMaxHeaderLine)
		if errors.Is(err, errLongLine) {
			return nil, line, BadInput("%s:%d: header line longer than %d MiB (not a VCF file, or no line ends?)", in.name, line+1, vcfMaxHeaderLine>>20)
		}
		if len(b) == 0 && err == io.EOF {
			if line == 0 {
				return nil, 0, BadInput("%s: empty input (not a VCF file)", in.name)
			}
			return nil, line, BadInput("%s:%d: end of file before the #CHROM header line", in.name, line)
		}
		if err != nil && err != io.EOF {
			return nil, line, vcfReadError(in, line+1, err)
		}
		line++
		b = bytes.TrimRight(b, "\r\n")
		if len(b) == 0 {
			continue
		}
		if b[0] != '#' {
			return nil, line, BadInput("%s:%d: data line before the #CHROM header line (not a VCF file? a dense matrix needs --matrix)", in.name, line)
		}
		if !bytes.HasPrefix(b, []byte("#CHROM")) {
			if err == io.EOF {
				return nil, line, BadInput("%s:%d: end of file before the #CHROM header line", in.name, line)
			}
			continue
		}
		cols := strings.Split(string(b), "\t")
		for k, want := range vcfFixed {
			if k >= len(cols) || cols[k] != want {
				got := "nothing"
				if k < len(cols) {
					got = fmt.Sprintf("%q", truncate(cols[k]))
				}
				return nil, line, BadInput("%s:%d: #CHROM line: column %d is %s, expected %q (columns must be tab-separated)", in.name, line, k+1, got, want)
			}
		}
		if len(cols) < 10 {
			return nil, line, BadInput("%s:%d: #CHROM line has no sample columns (a sites-only VCF has no genotypes to import)", in.name, line)
		}
		if cols[8] != "FORMAT" {
			return nil, line, BadInput("%s:%d: #CHROM line: column 9 is %q, expected \"FORMAT\"", in.name, line, truncate(cols[8]))
		}
		samples := cols[9:]
		seen := make(map[string]int, len(samples))
		for i, s := range samples {
			if err := ValidateID("sample ID", s); err != nil {
				return nil, line, BadInput("%s:%d: sample column %d: %v", in.name, line, i+1, err)
			}
			if j, ok := seen[s]; ok {
				return nil, line, BadInput("%s:%d: duplicate sample ID %q (sample columns %d and %d)", in.name, line, truncate(s), j+1, i+1)
			}
			seen[s] = i
		}
		if len(samples) > MaxSamples {
			return nil, line, BadInput("%s:%d: %d samples exceeds the limit of %d", in.name, line, len(samples), MaxSamples)
		}
		return samples, line, nil
	}
}

// impGroup is a run of input bytes parsed by one worker: decoded text, or
// BGZF blocks to inflate first, and the parse results.
type impGroup struct {
	data    []byte
	raw     []byte
	blocks  []bgzfRawBlock
	readErr error // the producer's error after this group's bytes

	head, tail []byte // bytes before the first and after the last newline
	hasNL      bool
	nl         int // newlines in data
	batch      vcfBatch
	err        error
	errIdx     int // index of the failing complete line, -1 if not a line
	done       chan struct{}
}

// impBody streams the data lines of one input into w.
//
// Pipeline: one producer goroutine reads the input in groups of about
// target bytes (raw BGZF blocks, or text decoded from gzip/zstd/plain);
// opt.Threads workers inflate BGZF blocks and parse the complete lines of a
// group; this goroutine takes groups in input order, parses the one line
// that straddles two groups, and adds the markers to the store. At most
// threads+2 groups exist at once.
func impBody(parent context.Context, in *vcfInput, hlines int, w *Writer, opt *ImportOptions, sum *ImportSummary) error {
	n := w.Samples()
	target := max(1<<22, 8*(4*n+128))
	if opt.groupBytes > 0 {
		target = opt.groupBytes
	}
	ctx, cancel := context.WithCancel(parent)
	defer cancel()
	eg, ctx := errgroup.WithContext(ctx)
	nbuf := opt.Threads + 2
	free := make(chan *impGroup, nbuf)
	for i := 0; i < nbuf; i++ {
		free <- &impGroup{}
	}
	work := make(chan *impGroup, nbuf)
	order := make(chan *impGroup, nbuf)

	eg.Go(func() error {
		defer close(work)
		defer close(order)
		var leftover []byte
		if in.kind == vcfBGZF {
			leftover = in.leftover()
		}
		for {
			var g *impGroup
			select {
			case g = <-free:
			case <-ctx.Done():
				return ctx.Err()
			}
			g.data, g.raw, g.blocks, g.readErr = g.data[:0], g.raw[:0], g.blocks[:0], nil
			g.done = make(chan struct{})
			end := false
			if in.kind == vcfBGZF {
				g.data = append(g.data, leftover...)
				leftover = nil
				end = impReadBGZF(in.raw, g, target)
			} else {
				end = impReadText(in, g, target)
			}
			select {
			case work <- g:
			case <-ctx.Done():
				return ctx.Err()
			}
			select {
			case order <- g:
			case <-ctx.Done():
				return ctx.Err()
			}
			if end {
				return nil
			}
		}
	})
	for i := 0; i < opt.Threads; i++ {
		eg.Go(func() error {
			p := newVCFParser(n, opt)
			var z bgzfInflater
			for g := range work {
				impParseGroup(p, &z, g)
				close(g.done)
			}
			return nil
		})
	}
	err := impConsume(ctx, in, hlines, w, opt, order, free, sum)
	cancel()
	werr := eg.Wait()
	if err != nil {
		return err
	}
	if werr != nil && !errors.Is(werr, context.Canceled) {
		return werr
	}
	return parent.Err()
}

// impReadBGZF appends raw BGZF blocks to g until their decoded size
// reaches target; it reports whether the input ended.
func impReadBGZF(r *bgzfRawReader, g *impGroup, target int) bool {
	size := len(g.data)
	for size < target {
		var blk bgzfRawBlock
		var err error
		// blk.cdata aliases raw; if raw grows into a new array the old one
		// still holds the bytes, so the alias stays valid.
		g.raw, blk, err = r.next(g.raw)
		if err == io.EOF {
			return true
		}
		if err != nil {
			g.readErr = err
			return true
		}
		g.blocks = append(g.blocks, blk)
		size += blk.isize
	}
	return false
}

// impReadText fills g.data with up to target decoded bytes.
func impReadText(in *vcfInput, g *impGroup, target int) bool {
	if cap(g.data) < target {
		g.data = make([]byte, 0, target)
	}
	for len(g.data) < target {
		k, err := in.text.Read(g.data[len(g.data):target])
		g.data = g.data[:len(g.data)+k]
		if err == io.EOF {
			return true
		}
		if err != nil {
			g.readErr = err
			return true
		}
	}
	return false
}

// impParseGroup inflates a group's blocks and parses its complete lines.
func impParseGroup(p *vcfParser, z *bgzfInflater, g *impGroup) {
	g.batch.reset()
	g.err, g.errIdx, g.head, g.tail, g.hasNL, g.nl = nil, -1, nil, nil, false, 0
	for _, blk := range g.blocks {
		var err error
		if g.data, err = z.inflate(g.data, blk); err != nil {
			g.err = err
			return
		}
	}
	d := g.data
	i := bytes.IndexByte(d, '\n')
	if i < 0 {
		return
	}
	g.hasNL = true
	g.head = d[:i]
	last := bytes.LastIndexByte(d, '\n')
	g.tail = d[last+1:]
	g.nl = 1
	body := d[i+1 : last+1]
	for idx := 0; len(body) > 0; idx++ {
		e := bytes.IndexByte(body, '\n')
		line := body[:e]
		body = body[e+1:]
		g.nl++
		if len(line) > 0 && line[len(line)-1] == '\r' {
			line = line[:len(line)-1]
		}
		if len(line) == 0 {
			continue
		}
		if err := p.parseLine(line, &g.batch, idx); err != nil {
			g.err, g.errIdx = err, idx
			return
		}
	}
}

// impConsume takes parsed groups in order and writes their markers.
func impConsume(ctx context.Context, in *vcfInput, hlines int, w *Writer, opt *ImportOptions,
	order <-chan *impGroup, free chan<- *impGroup, sum *ImportSummary) error {
	n := w.Samples()
	p := newVCFParser(n, opt)
	var carry []byte
	var one vcfBatch
	L := hlines // lines completed before the current group
	parseOne := func(line []byte, lineNo int) error {
		if len(line) > 0 && line[len(line)-1] == '\r' {
			line = line[:len(line)-1]
		}
		if len(line) == 0 {
			return nil
		}
		one.reset()
		if err := p.parseLine(line, &one, 0); err != nil {
			return BadInput("%s:%d: %v", in.name, lineNo, err)
		}
		return impEmit(w, in.name, &one, func(int) int { return lineNo }, n, sum)
	}
	for g := range order {
		select {
		case <-g.done:
		case <-ctx.Done():
			return ctx.Err()
		}
		if g.err != nil && g.errIdx < 0 {
			return vcfReadError(in, L+1, g.err)
		}
		if !g.hasNL {
			carry = append(carry, g.data...)
			if len(carry) > vcfMaxLine(n) {
				return BadInput("%s:%d: line longer than %d MiB for %d samples (no line ends?)", in.name, L+1, vcfMaxLine(n)>>20, n)
			}
		} else {
			carry = append(carry, g.head...)
			if err := parseOne(carry, L+1); err != nil {
				return err
			}
			base := L + 2
			if err := impEmit(w, in.name, &g.batch, func(i int) int { return base + i }, n, sum); err != nil {
				return err
			}
			if g.err != nil {
				return BadInput("%s:%d: %v", in.name, base+g.errIdx, g.err)
			}
			L += g.nl
			carry = append(carry[:0], g.tail...)
		}
		if g.readErr != nil {
			return vcfReadError(in, L+1, g.readErr)
		}
		free <- g
		if err := ctx.Err(); err != nil {
			return err
		}
	}
	if len(carry) > 0 {
		return parseOne(carry, L+1)
	}
	return nil
}

// impEmit adds a batch's markers to the store.
func impEmit(w *Writer, name string, b *vcfBatch, lineNo func(int) int, n int, sum *ImportSummary) error {
	for k, r := range b.recs {
		var err error
		if w.Codec() == CodecFloat32 {
			err = w.AddFloats(r.m, b.flt[k*n:(k+1)*n])
		} else {
			err = w.AddGenotypes(r.m, b.geno[k*n:(k+1)*n])
		}
		if err != nil {
			return fmt.Errorf("%s:%d: %w", name, lineNo(r.line), err)
		}
	}
	sum.addStats(b.stats)
	return nil
}
