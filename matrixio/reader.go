package matrixio

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"slices"
	"sync"

	"github.com/klauspost/compress/zstd"
	"golang.org/x/sync/errgroup"
)

// Store is an open .clinal store. Its tables (samples, markers, counts) are
// held in memory; chunks are read on demand. Methods are safe for
// concurrent use.
type Store struct {
	path       string
	f          *os.File
	size       int64
	meta       Meta
	samples    []string
	markers    markerTable
	counts     []Counts
	sampleMiss []uint32
	index      []chunkRec
	dec        *zstd.Decoder
	rowBytes   int
	maxRaw     int
	maxComp    int // largest compressed chunk

	poolMu sync.Mutex
	pool   []*Chunk  // chunk buffers kept between streams (at most maxPooled)
	ahead  *prefetch // chunks decoded for the next Stream (Prefetch)
	closed bool      // Close was called: no more prefetches
	// decoding counts prefetch goroutines and releases of unused
	// prefetches still running: Close waits for them.
	decoding sync.WaitGroup
}

const maxPooled = 16

// prefetch is a run of chunks decoded by Prefetch for the next Stream.
type prefetch struct {
	chunks []int
	bufs   []*Chunk
	errs   []error
	done   chan struct{} // closed when every chunk is decoded
}

// Prefetch decodes the given chunks, in order, on one goroutine, into
// buffers of the store's pool, for the next Stream whose list starts with
// them: a caller that streams the same chunks pass after pass (the PCA
// solver's operator) lets the first chunks of the next pass decode while
// it does serial work between passes, so that pass starts without waiting
// for them. The buffers are the ones the last Stream returned to the pool;
// a Stream over other chunks, a later Prefetch, or Close gives them back.
// It does nothing after Close.
func (s *Store) Prefetch(chunks []int) {
	p := &prefetch{chunks: append([]int(nil), chunks...), done: make(chan struct{})}
	p.bufs = make([]*Chunk, len(chunks))
	p.errs = make([]error, len(chunks))
	for i := range p.bufs {
		p.bufs[i] = s.getChunk()
	}
	s.poolMu.Lock()
	if s.closed {
		s.poolMu.Unlock()
		for _, b := range p.bufs {
			s.putChunk(b)
		}
		return
	}
	old := s.ahead
	s.ahead = p
	s.decoding.Add(1)
	s.poolMu.Unlock()
	go func() {
		defer s.decoding.Done()
		defer close(p.done)
		for i, c := range p.chunks {
			p.errs[i] = s.ReadChunk(c, p.bufs[i])
		}
	}()
	s.release(old)
}

// takePrefetch returns the prefetched chunks, once decoded, when chunks
// starts with them, else nil; either way the store holds none after it.
// One that does not match is given back without waiting for it.
func (s *Store) takePrefetch(chunks []int) *prefetch {
	s.poolMu.Lock()
	p := s.ahead
	s.ahead = nil
	s.poolMu.Unlock()
	if p == nil {
		return nil
	}
	if len(p.chunks) > len(chunks) || !slices.Equal(p.chunks, chunks[:len(p.chunks)]) {
		s.release(p)
		return nil
	}
	<-p.done
	return p
}

// release gives an unused prefetch's buffers back to the pool once its
// goroutine is done with them, without waiting for it (Close does).
func (s *Store) release(p *prefetch) {
	if p == nil {
		return
	}
	s.decoding.Add(1)
	go func() {
		defer s.decoding.Done()
		<-p.done
		for _, b := range p.bufs {
			s.putChunk(b)
		}
	}()
}

func (s *Store) getChunk() *Chunk {
	s.poolMu.Lock()
	defer s.poolMu.Unlock()
	if n := len(s.pool); n > 0 {
		c := s.pool[n-1]
		s.pool = s.pool[:n-1]
		return c
	}
	return &Chunk{}
}

func (s *Store) putChunk(c *Chunk) {
	s.poolMu.Lock()
	defer s.poolMu.Unlock()
	if len(s.pool) < maxPooled {
		s.pool = append(s.pool, c)
	}
}

// Open opens a store, validating its footer, header, tables and chunk index
// (chunk payloads are verified as they are read, or all at once by Verify).
func Open(path string) (*Store, error) {
	fi, err := os.Stat(path)
	if err != nil {
		return nil, fmt.Errorf("open store: %w", err)
	}
	if !fi.Mode().IsRegular() {
		// A directory, pipe or device cannot hold a store (it is read from
		// its end): bad input, exit 2.
		return nil, BadInput("open store %s: not a regular file (a %s)", path, fileKind(fi.Mode()))
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("open store: %w", err)
	}
	s := &Store{path: path, f: f, size: fi.Size()}
	if err := s.load(); err != nil {
		f.Close()
		return nil, fmt.Errorf("open store %s: %w", path, err)
	}
	return s, nil
}

// Close releases the file.
func (s *Store) Close() error {
	s.poolMu.Lock()
	s.closed = true
	p := s.ahead
	s.ahead = nil
	s.poolMu.Unlock()
	s.release(p)
	s.decoding.Wait() // no read of the file outlives Close
	s.dec.Close()
	return s.f.Close()
}

func (s *Store) readAt(off, n int64, what string) ([]byte, error) {
	if off < 0 || n < 0 || off+n > s.size {
		return nil, fmt.Errorf("%s: %w: range [%d,%d) outside file of %d bytes", what, ErrCorrupt, off, off+n, s.size)
	}
	b := make([]byte, n)
	if _, err := s.f.ReadAt(b, off); err != nil {
		return nil, fmt.Errorf("%s: %w", what, err)
	}
	return b, nil
}

func (s *Store) load() error {
	if s.size < int64(len(headerMagic))+footerSize {
		if s.size >= 8 {
			var m [8]byte
			s.f.ReadAt(m[:], 0)
			if m != headerMagic {
				return ErrNotStore
			}
		} else {
			return ErrNotStore
		}
		return ErrIncomplete
	}
	var magic [8]byte
	if _, err := s.f.ReadAt(magic[:], 0); err != nil {
		return err
	}
	if magic != headerMagic {
		return ErrNotStore
	}
	fb, err := s.readAt(s.size-footerSize, footerSize, "footer")
	if err != nil {
		return err
	}
	var ft footer
	if err := ft.unmarshal(fb); err != nil {
		return err
	}
	// Header: version, meta JSON.
	hb, err := s.readAt(8, 8, "header")
	if err != nil {
		return err
	}
	if v := binary.LittleEndian.Uint32(hb); v != formatVersion {
		return BadInput("header: unsupported format version %d (this clinal reads version %d)", v, formatVersion)
	}
	metaLen := int64(binary.LittleEndian.Uint32(hb[4:]))
	if metaLen > 1<<20 {
		return fmt.Errorf("header: %w: metadata of %d bytes", ErrCorrupt, metaLen)
	}
	mb, err := s.readAt(16, metaLen+4, "header metadata")
	if err != nil {
		return err
	}
	if binary.LittleEndian.Uint32(mb[metaLen:]) != crc(mb[:metaLen]) {
		return fmt.Errorf("header metadata: %w", ErrChecksum)
	}
	if err := json.Unmarshal(mb[:metaLen], &s.meta); err != nil {
		return fmt.Errorf("header metadata: %w: %v", ErrCorrupt, err)
	}
	m := &s.meta
	if m.Samples <= 0 || m.Samples > MaxSamples {
		return fmt.Errorf("header: %w: %d samples", ErrCorrupt, m.Samples)
	}
	if m.Codec != CodecGeno2 && m.Codec != CodecFloat32 {
		return BadInput("header: unknown codec %q", truncate(string(m.Codec)))
	}
	s.rowBytes = RowBytes(m.Codec, m.Samples)
	if m.ChunkMarkers <= 0 || int64(m.ChunkMarkers)*int64(s.rowBytes) > MaxChunkBytes {
		return fmt.Errorf("header: %w: chunk of %d markers", ErrCorrupt, m.ChunkMarkers)
	}
	s.maxRaw = m.ChunkMarkers * s.rowBytes
	// DecodeAll stops at the capacity of its buffer, which ReadChunk sizes
	// to the chunk's declared length: a chunk never decodes to more. The
	// frames' own content checksums (xxhash64 of the decoded bytes) are not
	// verified: ReadChunk checks each chunk's CRC32C over its compressed
	// bytes before decoding, so a second hash of the same data would only
	// cost time (about 1.5% of a pass's CPU).
	s.dec, err = zstd.NewReader(nil, zstd.WithDecoderConcurrency(0),
		zstd.WithDecoderMaxMemory(uint64(s.maxRaw)+(16<<20)), zstd.WithDecodeAllCapLimit(true),
		zstd.IgnoreChecksum(true))
	if err != nil {
		return err
	}
	// Sample table.
	off := int64(16) + metaLen + 4
	sb, err := s.readAt(off, 12, "sample table")
	if err != nil {
		return err
	}
	rawLen := binary.LittleEndian.Uint64(sb)
	compLen := int64(binary.LittleEndian.Uint32(sb[8:]))
	if rawLen > uint64(m.Samples)*4097 || compLen > s.size {
		return fmt.Errorf("sample table: %w: declared %d bytes", ErrCorrupt, rawLen)
	}
	cb, err := s.readAt(off+12, compLen+4, "sample table")
	if err != nil {
		return err
	}
	if binary.LittleEndian.Uint32(cb[compLen:]) != crc(cb[:compLen]) {
		return fmt.Errorf("sample table: %w", ErrChecksum)
	}
	raw, err := s.decode(cb[:compLen], int(rawLen))
	if err != nil {
		return fmt.Errorf("sample table: %w", err)
	}
	s.samples = splitLines(raw)
	if len(s.samples) != m.Samples {
		return fmt.Errorf("sample table: %w: %d IDs for %d samples", ErrCorrupt, len(s.samples), m.Samples)
	}
	// IDs end up in TSV outputs: refuse what the writer would have refused.
	if err := ValidateSamples(s.samples); err != nil {
		return fmt.Errorf("sample table: %w: %v", ErrCorrupt, err)
	}
	chunkStart := off + 12 + compLen + 4
	// Chunk index.
	if ft.chunks > uint64(s.size/indexRecSize) || ft.markers > MaxMarkers || ft.markers == 0 {
		return fmt.Errorf("footer: %w: %d chunks, %d markers", ErrCorrupt, ft.chunks, ft.markers)
	}
	want := (ft.markers + uint64(m.ChunkMarkers) - 1) / uint64(m.ChunkMarkers)
	if ft.chunks != want {
		return fmt.Errorf("footer: %w: %d chunks for %d markers of %d per chunk", ErrCorrupt, ft.chunks, ft.markers, m.ChunkMarkers)
	}
	if ft.indexOff+ft.chunks*indexRecSize != uint64(s.size-footerSize) {
		return fmt.Errorf("chunk index: %w: bad offset", ErrCorrupt)
	}
	ib, err := s.readAt(int64(ft.indexOff), int64(ft.chunks*indexRecSize), "chunk index")
	if err != nil {
		return err
	}
	s.index = make([]chunkRec, ft.chunks)
	prevEnd := uint64(chunkStart)
	for i := range s.index {
		r := &s.index[i]
		if err := r.unmarshal(ib[i*indexRecSize:]); err != nil {
			return fmt.Errorf("chunk index record %d: %w", i, err)
		}
		n := uint64(m.ChunkMarkers)
		if i == len(s.index)-1 {
			n = ft.markers - uint64(i)*n
		}
		if r.first != uint64(i*m.ChunkMarkers) || uint64(r.nmarkers) != n ||
			r.rawLen != uint32(int(n)*s.rowBytes) || r.off != prevEnd || r.off+uint64(r.compLen) > ft.markersOff {
			return fmt.Errorf("chunk index record %d: %w: inconsistent sizes", i, ErrCorrupt)
		}
		prevEnd = r.off + uint64(r.compLen)
		s.maxComp = max(s.maxComp, int(r.compLen))
	}
	if prevEnd != ft.markersOff {
		return fmt.Errorf("chunk index: %w: chunks end at %d, marker table at %d", ErrCorrupt, prevEnd, ft.markersOff)
	}
	// Marker table.
	if ft.markersOff+ft.markersLen != ft.indexOff || ft.markersRaw > ft.markers*(5*4106+2*8+5*4)+uint64(m.Samples)*5 {
		return fmt.Errorf("marker table: %w: bad size", ErrCorrupt)
	}
	tb, err := s.readAt(int64(ft.markersOff), int64(ft.markersLen), "marker table")
	if err != nil {
		return err
	}
	if crc(tb) != ft.markersCRC {
		return fmt.Errorf("marker table: %w", ErrChecksum)
	}
	raw, err = s.decode(tb, int(ft.markersRaw))
	if err != nil {
		return fmt.Errorf("marker table: %w", err)
	}
	return s.parseMarkers(raw, int(ft.markers))
}

func splitLines(b []byte) []string {
	if len(b) == 0 {
		return nil
	}
	parts := bytes.Split(b, []byte{'\n'})
	out := make([]string, len(parts))
	for i, p := range parts {
		out[i] = string(p)
	}
	return out
}

// zstdMaxRatio bounds what a zstd input can decode to: every block
// regenerates at most 128 KiB and takes at least 4 bytes (a 3-byte block
// header and one RLE byte; RFC 8878 sections 3.1.1.2 and 3.1.1.2.2), so n
// compressed bytes decode to at most 32768*n bytes.
const zstdMaxRatio = (128 << 10) / 4

// decode decompresses exactly want bytes of a table. A want that comp cannot
// decode to is refused before anything is allocated, and the decoder stops
// at want bytes (the capacity of its buffer; the 16 MiB of slack in its
// memory limit admits the encoder's window sizes). The tables get their own
// decoder because they may be far larger than a chunk.
func (s *Store) decode(comp []byte, want int) ([]byte, error) {
	if want < 0 || uint64(want) > uint64(len(comp))*zstdMaxRatio {
		return nil, fmt.Errorf("%w: %d compressed bytes cannot decode to the declared %d", ErrCorrupt, len(comp), want)
	}
	dec, err := zstd.NewReader(nil, zstd.WithDecoderConcurrency(1), zstd.WithDecoderMaxMemory(uint64(want)+(16<<20)),
		zstd.WithDecodeAllCapLimit(true))
	if err != nil {
		return nil, err
	}
	defer dec.Close()
	out, err := dec.DecodeAll(comp, make([]byte, 0, want))
	if err != nil {
		return nil, fmt.Errorf("%w: zstd: %v", ErrCorrupt, err)
	}
	if len(out) != want {
		return nil, fmt.Errorf("%w: decoded %d bytes, expected %d", ErrCorrupt, len(out), want)
	}
	return out, nil
}

type tableReader struct {
	b   []byte
	err error
}

func (t *tableReader) uvarint() uint64 {
	if t.err != nil {
		return 0
	}
	v, n := binary.Uvarint(t.b)
	if n <= 0 {
		t.err = ErrCorrupt
		return 0
	}
	t.b = t.b[n:]
	return v
}

// bytes returns the next length-prefixed field without copying it.
func (t *tableReader) bytes() []byte {
	n := t.uvarint()
	if t.err != nil || n > uint64(len(t.b)) || n > 4096 {
		t.err = ErrCorrupt
		return nil
	}
	v := t.b[:n:n]
	t.b = t.b[n:]
	return v
}

func (t *tableReader) str() string {
	n := t.uvarint()
	if t.err != nil || n > uint64(len(t.b)) || n > 4096 {
		t.err = ErrCorrupt
		return ""
	}
	s := string(t.b[:n])
	t.b = t.b[n:]
	return s
}

func (t *tableReader) f64() float64 {
	if t.err != nil || len(t.b) < 8 {
		t.err = ErrCorrupt
		return 0
	}
	v := math.Float64frombits(binary.LittleEndian.Uint64(t.b))
	t.b = t.b[8:]
	return v
}

func (s *Store) parseMarkers(raw []byte, n int) error {
	// Each record takes at least 9 bytes (four length prefixes, position
	// and four counts, one byte each; 16 more for float sums): refuse a
	// count the table cannot hold before allocating n records.
	minRec := 9
	if s.meta.Codec == CodecFloat32 {
		minRec += 16
	}
	if uint64(n) > uint64(len(raw))/uint64(minRec) {
		return fmt.Errorf("marker table: %w: %d bytes cannot hold %d markers", ErrCorrupt, len(raw), n)
	}
	t := &tableReader{b: raw}
	mb := newMarkerBuilder(n)
	s.counts = make([]Counts, n)
	N := uint64(s.meta.Samples)
	for i := 0; i < n && t.err == nil; i++ {
		chrom := t.bytes()
		pos := int64(t.uvarint())
		id, ref, alt := t.bytes(), t.bytes(), t.bytes()
		if t.err != nil {
			break
		}
		for _, f := range [...]struct {
			k string
			v []byte
		}{{"chromosome", chrom}, {"marker ID", id}, {"REF allele", ref}, {"ALT allele", alt}} {
			if err := validMarkerField(f.k, string(f.v)); err != nil {
				return fmt.Errorf("marker table: %w: marker %d: %v", ErrCorrupt, i+1, err)
			}
		}
		if err := mb.add(string(chrom), pos, id, ref, alt); err != nil {
			return fmt.Errorf("%w: %v", ErrCorrupt, err)
		}
		c := &s.counts[i]
		a, b, d, e := t.uvarint(), t.uvarint(), t.uvarint(), t.uvarint()
		if t.err == nil && a+b+d+e != N {
			return fmt.Errorf("marker table: %w: counts of marker %d sum to %d, not %d samples", ErrCorrupt, i+1, a+b+d+e, N)
		}
		c.HomRef, c.Het, c.HomAlt, c.Missing = uint32(a), uint32(b), uint32(d), uint32(e)
		if s.meta.Codec == CodecFloat32 {
			c.Sum, c.SumSq = t.f64(), t.f64()
		}
	}
	s.sampleMiss = make([]uint32, N)
	for i := range s.sampleMiss {
		v := t.uvarint()
		if v > uint64(n) {
			t.err = ErrCorrupt
		}
		s.sampleMiss[i] = uint32(v)
	}
	if t.err != nil {
		return fmt.Errorf("marker table: %w", t.err)
	}
	if len(t.b) != 0 {
		return fmt.Errorf("marker table: %w: %d trailing bytes", ErrCorrupt, len(t.b))
	}
	s.markers = mb.table()
	return nil
}

// Path returns the file name the store was opened from.
func (s *Store) Path() string { return s.path }

// Meta returns the header metadata.
func (s *Store) Meta() Meta { return s.meta }

// Codec returns the chunk codec.
func (s *Store) Codec() Codec { return s.meta.Codec }

// NumSamples returns N.
func (s *Store) NumSamples() int { return s.meta.Samples }

// NumMarkers returns M.
func (s *Store) NumMarkers() int { return s.markers.len() }

// NumChunks returns the number of chunks.
func (s *Store) NumChunks() int { return len(s.index) }

// ChunkMarkers returns the number of markers per chunk (the last may hold fewer).
func (s *Store) ChunkMarkers() int { return s.meta.ChunkMarkers }

// RowBytes returns the bytes of one marker row in a decoded chunk.
func (s *Store) RowBytes() int { return s.rowBytes }

// Samples returns the sample IDs in store order. Do not modify.
func (s *Store) Samples() []string { return s.samples }

// Markers returns a new copy of the marker table in store order (about
// 72 bytes a marker plus shared strings); loops over a large store should
// call Marker instead.
func (s *Store) Markers() []Marker {
	ms := make([]Marker, s.markers.len())
	for i := range ms {
		ms[i] = s.markers.at(i)
	}
	return ms
}

// Marker returns marker j (0-based). It does not allocate: prefer it to
// Markers in loops over large stores.
func (s *Store) Marker(j int) Marker { return s.markers.at(j) }

// Counts returns the per-marker counts stored at import. Do not modify.
func (s *Store) Counts() []Counts { return s.counts }

// SampleMissing returns the per-sample number of missing calls. Do not modify.
func (s *Store) SampleMissing() []uint32 { return s.sampleMiss }

// ChunkOf returns the chunk holding marker j.
func (s *Store) ChunkOf(j int) int { return j / s.meta.ChunkMarkers }

// ChunkSpan returns the first marker and the number of markers of chunk c.
func (s *Store) ChunkSpan(c int) (first, n int) {
	r := s.index[c]
	return int(r.first), int(r.nmarkers)
}

// CompressedBytes returns the total size of the chunk payloads.
func (s *Store) CompressedBytes() int64 {
	var t int64
	for _, r := range s.index {
		t += int64(r.compLen)
	}
	return t
}

// Chunk is one decoded chunk. Buffers are reused across ReadChunk calls.
type Chunk struct {
	Index int    // chunk number
	First int    // first marker
	N     int    // markers in the chunk
	Raw   []byte // N rows of RowBytes each: packed 2-bit calls or float32 LE
	comp  []byte
}

// Row returns the raw bytes of marker First+j.
func (c *Chunk) Row(j, rowBytes int) []byte { return c.Raw[j*rowBytes : (j+1)*rowBytes] }

// ChunkBufferBytes returns the memory one Chunk buffer needs at most.
func (s *Store) ChunkBufferBytes() int64 {
	var maxComp uint32
	for _, r := range s.index {
		maxComp = max(maxComp, r.compLen)
	}
	return int64(s.maxRaw) + int64(maxComp)
}

// ReadChunk reads, verifies (CRC32C) and decodes chunk c into dst, reusing
// its buffers.
func (s *Store) ReadChunk(c int, dst *Chunk) error {
	if c < 0 || c >= len(s.index) {
		return fmt.Errorf("%s: chunk %d out of range [0,%d)", s.path, c, len(s.index))
	}
	r := s.index[c]
	if cap(dst.comp) < int(r.compLen) {
		dst.comp = make([]byte, r.compLen, s.maxComp)
	}
	dst.comp = dst.comp[:r.compLen]
	if _, err := s.f.ReadAt(dst.comp, int64(r.off)); err != nil && !(errors.Is(err, io.EOF)) {
		return fmt.Errorf("%s: chunk %d: %w", s.path, c, err)
	}
	if crc(dst.comp) != r.crc {
		return fmt.Errorf("%s: chunk %d (markers %d-%d): %w", s.path, c, r.first+1, r.first+uint64(r.nmarkers), ErrChecksum)
	}
	if cap(dst.Raw) < int(r.rawLen) {
		// The declared chunk length, checked against the header at Open,
		// not the header's largest chunk: a store that declares huge
		// chunks but holds small ones costs only what it holds.
		dst.Raw = make([]byte, 0, r.rawLen)
	}
	out, err := s.dec.DecodeAll(dst.comp, dst.Raw[:0])
	if err != nil {
		return fmt.Errorf("%s: chunk %d: %w: zstd: %v", s.path, c, ErrCorrupt, err)
	}
	if len(out) != int(r.rawLen) {
		return fmt.Errorf("%s: chunk %d: %w: decoded %d bytes, expected %d", s.path, c, ErrCorrupt, len(out), r.rawLen)
	}
	dst.Raw = out
	dst.Index, dst.First, dst.N = c, int(r.first), int(r.nmarkers)
	return nil
}

// Stream decodes the given chunks with up to workers goroutines and calls fn
// on each, in the order given, from a single goroutine. At most workers+1
// chunk buffers exist at once; a buffer passed to fn is reused after fn
// returns. Cancelling ctx or an error from fn or a chunk stops the stream.
func (s *Store) Stream(ctx context.Context, chunks []int, workers int, fn func(*Chunk) error) error {
	if workers < 1 {
		workers = 1
	}
	// nbuf jobs, each with its chunk buffer and result channel, circulate
	// for the whole stream (free -> decoders -> fn -> free), and a fixed set
	// of decoder goroutines serves them: nothing is allocated per chunk.
	type job struct {
		c    int
		buf  *Chunk
		done chan error
	}
	nbuf := workers + 1
	// Chunks decoded ahead (Prefetch) start the stream: the first jobs
	// (free hands them out in order) carry their buffers, already done.
	var pre *prefetch
	if p := s.takePrefetch(chunks); p != nil {
		pre = p
		for _, b := range p.bufs[min(len(p.bufs), nbuf):] {
			s.putChunk(b) // more than this stream keeps (not so from the operator)
		}
		p.bufs, p.errs = p.bufs[:min(len(p.bufs), nbuf)], p.errs[:min(len(p.errs), nbuf)]
	}
	all := make([]*job, nbuf)
	free := make(chan *job, nbuf)
	for i := range all {
		var buf *Chunk
		if pre != nil && i < len(pre.bufs) {
			buf = pre.bufs[i]
		} else {
			buf = s.getChunk()
		}
		all[i] = &job{buf: buf, done: make(chan error, 1)}
		free <- all[i]
	}
	order := make(chan *job, nbuf)
	work := make(chan *job, nbuf)
	// Decoders still running when the stream stops are waited for, so no
	// read of the file outlives Stream (the caller may Close the store);
	// then every buffer goes back to the store's pool, so repeated passes
	// do not allocate them again.
	var decoders sync.WaitGroup
	defer func() {
		decoders.Wait()
		for _, j := range all {
			s.putChunk(j.buf)
		}
	}()
	for w := 0; w < workers; w++ {
		decoders.Add(1)
		go func() {
			defer decoders.Done()
			for j := range work {
				j.done <- s.ReadChunk(j.c, j.buf)
			}
		}()
	}
	g, ctx := errgroup.WithContext(ctx)
	g.Go(func() error {
		defer close(order)
		defer close(work)
		for i, c := range chunks {
			var j *job
			select {
			case j = <-free:
			case <-ctx.Done():
				return ctx.Err()
			}
			j.c = c
			if pre != nil && i < len(pre.bufs) {
				j.done <- pre.errs[i] // decoded ahead, into this job's buffer
			} else {
				select {
				case work <- j:
				case <-ctx.Done():
					return ctx.Err()
				}
			}
			select {
			case order <- j:
			case <-ctx.Done():
				return ctx.Err()
			}
		}
		return nil
	})
	g.Go(func() error {
		for j := range order {
			var err error
			select {
			case err = <-j.done:
			case <-ctx.Done():
				return ctx.Err()
			}
			if err != nil {
				return err
			}
			if err := fn(j.buf); err != nil {
				return err
			}
			free <- j
		}
		return nil
	})
	return g.Wait()
}

// AllChunks returns 0..NumChunks()-1.
func (s *Store) AllChunks() []int {
	c := make([]int, len(s.index))
	for i := range c {
		c[i] = i
	}
	return c
}

// Shard is a marker-range view of a store made of whole chunks.
type Shard struct {
	Index                  int
	FirstChunk, EndChunk   int // chunks [FirstChunk, EndChunk)
	FirstMarker, EndMarker int // markers [FirstMarker, EndMarker)
}

// Chunks lists the chunks of the shard.
func (sh Shard) Chunks() []int {
	c := make([]int, 0, sh.EndChunk-sh.FirstChunk)
	for i := sh.FirstChunk; i < sh.EndChunk; i++ {
		c = append(c, i)
	}
	return c
}

// Shards splits the store into at most n marker ranges of whole chunks,
// as even as chunk boundaries allow.
func (s *Store) Shards(n int) []Shard {
	nc := len(s.index)
	if n < 1 {
		n = 1
	}
	if n > nc {
		n = nc
	}
	out := make([]Shard, n)
	for i := range out {
		a, b := i*nc/n, (i+1)*nc/n
		fm, _ := s.ChunkSpan(a)
		lf, ln := s.ChunkSpan(b - 1)
		out[i] = Shard{Index: i, FirstChunk: a, EndChunk: b, FirstMarker: fm, EndMarker: lf + ln}
	}
	return out
}

// Verify reads every chunk and checks its CRC32C and decoded size.
func (s *Store) Verify(ctx context.Context, workers int) error {
	return s.Stream(ctx, s.AllChunks(), workers, func(*Chunk) error { return nil })
}

// DecodeGenotypes unpacks a 2-bit row into dst (len N): codes 0..3.
func DecodeGenotypes(row []byte, dst []byte) {
	n := len(dst)
	for i := 0; i+4 <= n; i += 4 {
		b := row[i>>2]
		dst[i] = b & 3
		dst[i+1] = (b >> 2) & 3
		dst[i+2] = (b >> 4) & 3
		dst[i+3] = b >> 6
	}
	for i := n &^ 3; i < n; i++ {
		dst[i] = (row[i>>2] >> (2 * uint(i&3))) & 3
	}
}

// DecodeFloats unpacks a float32 row into dst (len N).
func DecodeFloats(row []byte, dst []float32) {
	for i := range dst {
		dst[i] = math.Float32frombits(binary.LittleEndian.Uint32(row[4*i:]))
	}
}

// Fingerprint returns a SHA-256 over the store's metadata, sample table
// checksum and chunk index (which holds every chunk's CRC32C) and footer
// (which holds the marker table's CRC32C): it identifies the content without
// reading the chunks, so reports and checkpoints can name their input.
func (s *Store) Fingerprint() string {
	h := sha256.New()
	mj, _ := json.Marshal(s.meta.Samples)
	h.Write(mj)
	h.Write([]byte(s.meta.Codec))
	for _, id := range s.samples {
		h.Write([]byte(id))
		h.Write([]byte{0})
	}
	var b [indexRecSize]byte
	for i := range s.index {
		s.index[i].marshal(b[:])
		h.Write(b[:])
	}
	var ft [footerSize]byte
	s.f.ReadAt(ft[:], s.size-footerSize)
	h.Write(ft[:])
	return hex.EncodeToString(h.Sum(nil))
}

// Size returns the store's file size in bytes.
func (s *Store) Size() int64 { return s.size }
