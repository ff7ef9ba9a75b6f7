package matrixio

import (
	"bufio"
	"crypto/rand"
	"encoding/binary"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"time"

	"github.com/klauspost/compress/zstd"
)

// WriterOptions configure a store writer.
type WriterOptions struct {
	Codec        Codec             // CodecGeno2 (default) or CodecFloat32
	ChunkMarkers int               // markers per chunk; 0 picks DefaultChunkMarkers
	Source       string            // free text: where the data came from
	Params       map[string]string // creation parameters recorded in the header
	Threads      int               // chunks compressed concurrently (default 1)
	Level        zstd.EncoderLevel // zstd level (default SpeedDefault)
}

// Writer streams a store to disk front to back. Data goes to a temporary
// file beside the destination; Close writes the marker table, index and
// footer, fsyncs and renames it into place, so the final name never names
// an incomplete store. A Writer is not safe for concurrent use.
type Writer struct {
	path, tmp string
	f         *os.File
	bw        *bufio.Writer
	off       uint64
	meta      Meta
	n         int
	rowBytes  int
	enc       *zstd.Encoder

	cur     []byte // raw rows of the chunk being filled
	curN    int
	first   uint64
	pending []*pendingChunk
	threads int

	index       []chunkRec
	markerTable []byte // binary marker records, appended as markers arrive
	markers     uint64
	sampleMiss  []uint32
	closed      bool
	err         error
}

type pendingChunk struct {
	done     chan struct{}
	comp     []byte
	raw      []byte
	first    uint64
	nmarkers int
}

// Create starts a store at path for the given samples. Sample IDs must be
// unique and pass ValidateID.
func Create(path string, samples []string, opt WriterOptions) (*Writer, error) {
	if opt.Codec == "" {
		opt.Codec = CodecGeno2
	}
	if opt.Codec != CodecGeno2 && opt.Codec != CodecFloat32 {
		return nil, fmt.Errorf("create %s: unknown codec %q", path, opt.Codec)
	}
	if len(samples) == 0 {
		return nil, fmt.Errorf("create %s: no samples", path)
	}
	if len(samples) > MaxSamples {
		return nil, fmt.Errorf("create %s: %d samples exceeds the limit of %d", path, len(samples), MaxSamples)
	}
	if err := ValidateSamples(samples); err != nil {
		return nil, fmt.Errorf("create %s: %w", path, err)
	}
	if opt.ChunkMarkers <= 0 {
		opt.ChunkMarkers = DefaultChunkMarkers(opt.Codec, len(samples))
	}
	rb := RowBytes(opt.Codec, len(samples))
	if int64(rb)*int64(opt.ChunkMarkers) > MaxChunkBytes {
		return nil, fmt.Errorf("create %s: chunk of %d markers x %d bytes exceeds %d bytes", path, opt.ChunkMarkers, rb, MaxChunkBytes)
	}
	if opt.Threads < 1 {
		opt.Threads = 1
	}
	if opt.Level == 0 {
		opt.Level = zstd.SpeedDefault
	}
	enc, err := zstd.NewWriter(nil, zstd.WithEncoderLevel(opt.Level), zstd.WithEncoderConcurrency(opt.Threads))
	if err != nil {
		return nil, fmt.Errorf("create %s: zstd: %w", path, err)
	}
	dir, base := filepath.Split(path)
	if dir == "" {
		dir = "."
	}
	f, err := createTemp(dir, base)
	if err != nil {
		return nil, fmt.Errorf("create %s: %w", path, err)
	}
	w := &Writer{
		path: path, tmp: f.Name(), f: f, bw: bufio.NewWriterSize(f, 1<<20),
		n: len(samples), rowBytes: rb, enc: enc, threads: opt.Threads,
		sampleMiss: make([]uint32, len(samples)),
	}
	w.meta = Meta{Version: formatVersion, Samples: len(samples), Codec: opt.Codec,
		ChunkMarkers: opt.ChunkMarkers, Source: opt.Source, Params: opt.Params,
		Created: time.Now().UTC().Format(time.RFC3339)}
	w.cur = make([]byte, 0, rb*opt.ChunkMarkers)
	if err := w.writeHeader(samples); err != nil {
		w.Abort()
		return nil, err
	}
	return w, nil
}

func (w *Writer) write(b []byte) error {
	if w.err != nil {
		return w.err
	}
	n, err := w.bw.Write(b)
	w.off += uint64(n)
	if err != nil {
		w.err = fmt.Errorf("write %s: %w", w.tmp, err)
	}
	return w.err
}

func (w *Writer) writeSection(raw []byte) error {
	var hdr [4]byte
	binary.LittleEndian.PutUint32(hdr[:], uint32(len(raw)))
	if err := w.write(hdr[:]); err != nil {
		return err
	}
	if err := w.write(raw); err != nil {
		return err
	}
	binary.LittleEndian.PutUint32(hdr[:], crc(raw))
	return w.write(hdr[:])
}

func (w *Writer) writeHeader(samples []string) error {
	mj, err := marshalMeta(&w.meta)
	if err != nil {
		return err
	}
	if err := w.write(headerMagic[:]); err != nil {
		return err
	}
	var v [4]byte
	binary.LittleEndian.PutUint32(v[:], formatVersion)
	if err := w.write(v[:]); err != nil {
		return err
	}
	if err := w.writeSection(mj); err != nil {
		return err
	}
	var raw []byte
	for i, s := range samples {
		if i > 0 {
			raw = append(raw, '\n')
		}
		raw = append(raw, s...)
	}
	var rl [8]byte
	binary.LittleEndian.PutUint64(rl[:], uint64(len(raw)))
	comp := w.enc.EncodeAll(raw, nil)
	if err := w.write(rl[:]); err != nil {
		return err
	}
	return w.writeSection(comp)
}

// Samples returns the number of samples of the store being written.
func (w *Writer) Samples() int { return w.n }

// Codec returns the chunk codec of the store being written.
func (w *Writer) Codec() Codec { return w.meta.Codec }

func (w *Writer) checkMarker(m Marker) error {
	if w.closed {
		return errors.New("write to a closed store")
	}
	if w.err != nil {
		return w.err
	}
	if err := validMarkerField("chromosome", m.Chrom); err != nil {
		return err
	}
	if m.Pos < 0 {
		return fmt.Errorf("negative position %d", m.Pos)
	}
	for _, f := range [...]struct{ k, v string }{{"marker ID", m.ID}, {"REF allele", m.Ref}, {"ALT allele", m.Alt}} {
		if err := validMarkerField(f.k, f.v); err != nil {
			return err
		}
	}
	if w.markers >= MaxMarkers {
		return fmt.Errorf("more than %d markers", uint64(MaxMarkers))
	}
	return nil
}

func (w *Writer) appendMarker(m Marker, c Counts) {
	t := w.markerTable
	t = appendString(t, m.Chrom)
	t = binary.AppendUvarint(t, uint64(m.Pos))
	t = appendString(t, m.ID)
	t = appendString(t, m.Ref)
	t = appendString(t, m.Alt)
	t = binary.AppendUvarint(t, uint64(c.HomRef))
	t = binary.AppendUvarint(t, uint64(c.Het))
	t = binary.AppendUvarint(t, uint64(c.HomAlt))
	t = binary.AppendUvarint(t, uint64(c.Missing))
	if w.meta.Codec == CodecFloat32 {
		t = binary.LittleEndian.AppendUint64(t, math.Float64bits(c.Sum))
		t = binary.LittleEndian.AppendUint64(t, math.Float64bits(c.SumSq))
	}
	w.markerTable = t
	w.markers++
}

func appendString(b []byte, s string) []byte {
	b = binary.AppendUvarint(b, uint64(len(s)))
	return append(b, s...)
}

// AddGenotypes appends one marker of hard calls: g[i] is 0, 1 or 2 ALT
// alleles or Missing (3) for sample i. Counts are computed here.
func (w *Writer) AddGenotypes(m Marker, g []byte) error {
	if w.meta.Codec != CodecGeno2 {
		return fmt.Errorf("marker %s:%d: genotypes written to a %s store", m.Chrom, m.Pos, w.meta.Codec)
	}
	if err := w.checkMarker(m); err != nil {
		return fmt.Errorf("marker %s:%d: %w", m.Chrom, m.Pos, err)
	}
	if len(g) != w.n {
		return fmt.Errorf("marker %s:%d: %d genotypes for %d samples", m.Chrom, m.Pos, len(g), w.n)
	}
	var cnt [4]uint32
	start := len(w.cur)
	w.cur = w.cur[:start+w.rowBytes]
	row := w.cur[start:]
	clear(row)
	for i, v := range g {
		if v > 3 {
			return fmt.Errorf("marker %s:%d: genotype code %d for sample %d", m.Chrom, m.Pos, v, i+1)
		}
		cnt[v]++
		if v == Missing {
			w.sampleMiss[i]++
		}
		row[i>>2] |= v << (2 * uint(i&3))
	}
	w.appendMarker(m, Counts{HomRef: cnt[0], Het: cnt[1], HomAlt: cnt[2], Missing: cnt[3]})
	return w.markerDone()
}

// AddFloats appends one marker of float values (NaN for missing) to a float
// store.
func (w *Writer) AddFloats(m Marker, x []float32) error {
	if w.meta.Codec != CodecFloat32 {
		return fmt.Errorf("marker %s:%d: floats written to a %s store", m.Chrom, m.Pos, w.meta.Codec)
	}
	if err := w.checkMarker(m); err != nil {
		return fmt.Errorf("marker %s:%d: %w", m.Chrom, m.Pos, err)
	}
	if len(x) != w.n {
		return fmt.Errorf("marker %s:%d: %d values for %d samples", m.Chrom, m.Pos, len(x), w.n)
	}
	var c Counts
	start := len(w.cur)
	w.cur = w.cur[:start+w.rowBytes]
	row := w.cur[start:]
	for i, v := range x {
		binary.LittleEndian.PutUint32(row[4*i:], math.Float32bits(v))
		if math.IsInf(float64(v), 0) {
			return fmt.Errorf("marker %s:%d: infinite value for sample %d", m.Chrom, m.Pos, i+1)
		}
		if v != v {
			w.sampleMiss[i]++
		}
		c.AddFloat(v)
	}
	w.appendMarker(m, c)
	return w.markerDone()
}

func (w *Writer) markerDone() error {
	w.curN++
	if w.curN == w.meta.ChunkMarkers {
		return w.flushChunk()
	}
	return nil
}

// flushChunk hands the current chunk to a compressor goroutine and writes
// finished chunks in order, keeping at most Threads chunks in flight.
func (w *Writer) flushChunk() error {
	if w.curN == 0 {
		return nil
	}
	p := &pendingChunk{done: make(chan struct{}), raw: w.cur, first: w.first, nmarkers: w.curN}
	go func() {
		p.comp = w.enc.EncodeAll(p.raw, make([]byte, 0, len(p.raw)/2+64))
		close(p.done)
	}()
	w.pending = append(w.pending, p)
	w.first += uint64(w.curN)
	w.curN = 0
	// Reuse the raw buffer of the oldest finished chunk when possible.
	var next []byte
	for len(w.pending) > w.threads {
		old, err := w.writeOldest()
		if err != nil {
			return err
		}
		next = old
	}
	if next == nil {
		next = make([]byte, 0, w.rowBytes*w.meta.ChunkMarkers)
	}
	w.cur = next[:0]
	return nil
}

func (w *Writer) writeOldest() ([]byte, error) {
	p := w.pending[0]
	w.pending = w.pending[1:]
	<-p.done
	rec := chunkRec{off: w.off, compLen: uint32(len(p.comp)), rawLen: uint32(len(p.raw)),
		crc: crc(p.comp), first: p.first, nmarkers: uint32(p.nmarkers)}
	if err := w.write(p.comp); err != nil {
		return nil, err
	}
	w.index = append(w.index, rec)
	return p.raw, nil
}

// Markers returns the number of markers written so far.
func (w *Writer) Markers() uint64 { return w.markers }

// Close finishes the store: last chunk, marker table, index and footer,
// fsync, rename to the final name and fsync of the directory. On error the
// temporary file is removed.
func (w *Writer) Close() error {
	if w.closed {
		return errors.New("store already closed")
	}
	err := w.finish()
	w.closed = true
	if err != nil {
		w.f.Close()
		os.Remove(w.tmp)
		return err
	}
	return nil
}

func (w *Writer) finish() error {
	if err := w.flushChunk(); err != nil {
		return err
	}
	for len(w.pending) > 0 {
		if _, err := w.writeOldest(); err != nil {
			return err
		}
	}
	if w.markers == 0 {
		return fmt.Errorf("write %s: no markers", w.path)
	}
	// Marker table followed by per-sample missing counts.
	raw := w.markerTable
	for _, m := range w.sampleMiss {
		raw = binary.AppendUvarint(raw, uint64(m))
	}
	comp := w.enc.EncodeAll(raw, nil)
	ft := footer{markersOff: w.off, markersLen: uint64(len(comp)), markersRaw: uint64(len(raw)),
		markers: w.markers, chunks: uint64(len(w.index)), markersCRC: crc(comp)}
	if err := w.write(comp); err != nil {
		return err
	}
	ft.indexOff = w.off
	rec := make([]byte, indexRecSize)
	for i := range w.index {
		w.index[i].marshal(rec)
		if err := w.write(rec); err != nil {
			return err
		}
	}
	if err := w.write(ft.marshal()); err != nil {
		return err
	}
	if err := w.bw.Flush(); err != nil {
		return fmt.Errorf("write %s: %w", w.tmp, err)
	}
	if err := w.f.Sync(); err != nil {
		return fmt.Errorf("fsync %s: %w", w.tmp, err)
	}
	if err := w.f.Close(); err != nil {
		return fmt.Errorf("close %s: %w", w.tmp, err)
	}
	return CommitTemp(w.tmp, w.path)
}

// Abort discards the store being written and removes its temporary file.
func (w *Writer) Abort() {
	if w.closed {
		return
	}
	w.closed = true
	for _, p := range w.pending {
		<-p.done
	}
	w.f.Close()
	os.Remove(w.tmp)
}

// CommitTemp renames a finished, fsynced temporary file to its final name
// and fsyncs the directory so the rename survives a crash.
func CommitTemp(tmp, final string) error {
	if err := os.Rename(tmp, final); err != nil {
		os.Remove(tmp)
		return fmt.Errorf("rename %s: %w", final, err)
	}
	if d, err := os.Open(filepath.Dir(final)); err == nil {
		d.Sync()
		d.Close()
	}
	return nil
}

// AtomicFile is an output file written under a temporary name and renamed
// into place by Commit; Discard removes it. Use it for every output so an
// interrupted run never leaves a half-written file under its final name.
type AtomicFile struct {
	*os.File
	final string
	done  bool
}

// CreateAtomic opens a temporary file beside path.
func CreateAtomic(path string) (*AtomicFile, error) {
	dir, base := filepath.Split(path)
	if dir == "" {
		dir = "."
	}
	f, err := createTemp(dir, base)
	if err != nil {
		return nil, fmt.Errorf("create %s: %w", path, err)
	}
	return &AtomicFile{File: f, final: path}, nil
}

// Commit fsyncs, closes and renames the file to its final name.
func (a *AtomicFile) Commit() error {
	if a.done {
		return nil
	}
	a.done = true
	if err := a.File.Sync(); err != nil {
		a.File.Close()
		os.Remove(a.File.Name())
		return fmt.Errorf("fsync %s: %w", a.final, err)
	}
	if err := a.File.Close(); err != nil {
		os.Remove(a.File.Name())
		return fmt.Errorf("close %s: %w", a.final, err)
	}
	return CommitTemp(a.File.Name(), a.final)
}

// Discard closes and removes the temporary file (no-op after Commit).
func (a *AtomicFile) Discard() {
	if a.done {
		return
	}
	a.done = true
	a.File.Close()
	os.Remove(a.File.Name())
}

// WriteFileAtomic writes data produced by fn to path atomically.
func WriteFileAtomic(path string, fn func(io.Writer) error) error {
	a, err := CreateAtomic(path)
	if err != nil {
		return err
	}
	bw := bufio.NewWriterSize(a, 1<<16)
	if err := fn(bw); err != nil {
		a.Discard()
		return err
	}
	if err := bw.Flush(); err != nil {
		a.Discard()
		return fmt.Errorf("write %s: %w", path, err)
	}
	return a.Commit()
}

// createTemp creates a new hidden temporary file ".BASE.RANDOM.partial" in
// dir with mode 0666 less the umask (as the final file would get), unlike
// os.CreateTemp's 0600.
func createTemp(dir, base string) (*os.File, error) {
	var last error
	for try := 0; try < 100; try++ {
		var rb [6]byte
		if _, err := rand.Read(rb[:]); err != nil {
			return nil, err
		}
		name := filepath.Join(dir, "."+base+"."+hex.EncodeToString(rb[:])+".partial")
		f, err := os.OpenFile(name, os.O_RDWR|os.O_CREATE|os.O_EXCL, 0o666)
		if err == nil {
			return f, nil
		}
		if !errors.Is(err, os.ErrExist) {
			return nil, err
		}
		last = err
	}
	return nil, last
}
