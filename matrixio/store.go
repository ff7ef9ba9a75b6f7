// Package matrixio reads and writes the matrices and tables of clinal: the
// .clinal store (a checksummed, chunked, compressed sample-by-marker matrix
// that can be streamed many times), the VCF and dense TSV importers, the VCF
// exporter, and the writers of covariate, spectrum and loading tables.
//
// # The .clinal store
//
// A store is one file written front to back and finished by a fixed-size
// footer written last, so a file without a valid footer is an incomplete
// write and is rejected. Like archive/zip, the reader finds the container
// from its end:
//
//	header   magic "CLINAL\x00\x01", u32 version, u32 length, JSON metadata, u32 CRC32C
//	samples  u32 length, zstd(sample IDs separated by '\n'), u32 CRC32C
//	chunks   zstd frames; chunk c holds markers [c*B, c*B+n) marker-major
//	markers  zstd(binary marker table: chrom, pos, id, ref, alt, counts;
//	         then per-sample missing counts)
//	index    one fixed record per chunk: offset, sizes, CRC32C, first marker, count
//	footer   64 bytes: offsets and lengths of markers and index, counts, CRC32C, magic
//
// The design card places the marker table before the chunks; it is placed
// after them here because an importer that streams a VCF does not know the
// markers (nor their counts) until the end, and writing the table last keeps
// the writer single-pass with memory independent of the number of markers
// spent only on the marker table itself.
//
// Genotype chunks use 2 bits per call, four samples per byte, sample i at
// bits 2*(i%4) of byte i/4 of its marker's row: 0 hom-ref, 1 het, 2 hom-alt
// (the number of ALT alleles) and 3 missing. Float chunks (dosages, dense
// numeric data) hold little-endian float32 values with NaN for missing.
//
// Every allocation made while opening or reading is bounded by sizes the
// file declares and checked against the file's length first; absurd sizes
// are refused before anything is allocated.
package matrixio

import (
	"encoding/binary"
	"encoding/json"
	"errors"
	"fmt"
	"hash/crc32"
	"math"
	"strings"
)

// Codec names the encoding of a store's chunks.
type Codec string

const (
	// CodecGeno2 stores hard calls in 2 bits each.
	CodecGeno2 Codec = "geno2"
	// CodecFloat32 stores float32 values (dosages or any dense numeric data).
	CodecFloat32 Codec = "float32"
)

// Missing is the 2-bit code of a missing call.
const Missing = 3

const (
	formatVersion = 1
	footerSize    = 64
	indexRecSize  = 40
	// MaxSamples bounds the number of samples a store may declare.
	MaxSamples = 1 << 26
	// MaxMarkers bounds the number of markers a store may declare.
	MaxMarkers = 1 << 32
	// MaxChunkBytes bounds the decoded size of one chunk.
	MaxChunkBytes = 1 << 30
)

var (
	headerMagic = [8]byte{'C', 'L', 'I', 'N', 'A', 'L', 0, 1}
	footerMagic = [8]byte{'C', 'L', 'N', 'L', 'E', 'N', 'D', 1}
	castagnoli  = crc32.MakeTable(crc32.Castagnoli)
)

// Errors returned (wrapped with context) by the store reader.
var (
	ErrNotStore   = errors.New("not a .clinal store (bad magic)")
	ErrIncomplete = errors.New("incomplete store: no valid footer (interrupted write?)")
	ErrCorrupt    = errors.New("corrupt store")
	ErrChecksum   = errors.New("checksum mismatch")
)

func crc(b []byte) uint32 { return crc32.Checksum(b, castagnoli) }

// Marker is the identity of one marker (one VCF record, one matrix column).
type Marker struct {
	Chrom string
	Pos   int64
	ID    string
	Ref   string
	Alt   string
}

// Counts are the per-marker call counts stored at import. For float stores
// HomRef/Het/HomAlt count dosages rounded to the nearest integer, and Sum and
// SumSq are the sum and sum of squares of the non-missing values.
type Counts struct {
	HomRef, Het, HomAlt, Missing uint32
	Sum, SumSq                   float64
}

// AddFloat counts one float value: NaN is missing; otherwise it adds to
// Sum and SumSq and to the genotype class of its nearest integer (<= 0
// hom-ref, 1 het, >= 2 hom-alt), as the float writer does at import.
func (c *Counts) AddFloat(v float32) {
	if v != v {
		c.Missing++
		return
	}
	d := float64(v)
	c.Sum += d
	c.SumSq += d * d
	switch r := math.Round(d); {
	case r <= 0:
		c.HomRef++
	case r == 1:
		c.Het++
	default:
		c.HomAlt++
	}
}

// Called returns the number of non-missing calls.
func (c Counts) Called() uint32 { return c.HomRef + c.Het + c.HomAlt }

// AltFreq returns the ALT allele frequency over called genotypes, and NaN
// when nothing was called.
func (c Counts) AltFreq() float64 {
	n := c.Called()
	if n == 0 {
		return math.NaN()
	}
	return (float64(c.Het) + 2*float64(c.HomAlt)) / (2 * float64(n))
}

// Meta is the JSON metadata in a store's header.
type Meta struct {
	Version      int               `json:"version"`
	Samples      int               `json:"samples"`
	Codec        Codec             `json:"codec"`
	ChunkMarkers int               `json:"chunk_markers"`
	Source       string            `json:"source,omitempty"`
	Created      string            `json:"created,omitempty"`
	Params       map[string]string `json:"params,omitempty"`
}

// footer is the fixed trailer of a store.
type footer struct {
	markersOff, markersLen uint64 // compressed marker table
	markersRaw             uint64 // its decoded size
	indexOff               uint64
	markers                uint64
	chunks                 uint64
	markersCRC             uint32
}

func (f *footer) marshal() []byte {
	b := make([]byte, footerSize)
	le := binary.LittleEndian
	le.PutUint64(b[0:], f.markersOff)
	le.PutUint64(b[8:], f.markersLen)
	le.PutUint64(b[16:], f.markersRaw)
	le.PutUint64(b[24:], f.indexOff)
	le.PutUint64(b[32:], f.markers)
	le.PutUint64(b[40:], f.chunks)
	le.PutUint32(b[48:], f.markersCRC)
	le.PutUint32(b[52:], crc(b[:52]))
	copy(b[56:], footerMagic[:])
	return b
}

func (f *footer) unmarshal(b []byte) error {
	if len(b) != footerSize || string(b[56:]) != string(footerMagic[:]) {
		return ErrIncomplete
	}
	le := binary.LittleEndian
	if le.Uint32(b[52:]) != crc(b[:52]) {
		return fmt.Errorf("footer: %w", ErrChecksum)
	}
	f.markersOff = le.Uint64(b[0:])
	f.markersLen = le.Uint64(b[8:])
	f.markersRaw = le.Uint64(b[16:])
	f.indexOff = le.Uint64(b[24:])
	f.markers = le.Uint64(b[32:])
	f.chunks = le.Uint64(b[40:])
	f.markersCRC = le.Uint32(b[48:])
	return nil
}

// chunkRec is one chunk index record.
type chunkRec struct {
	off      uint64
	compLen  uint32
	rawLen   uint32
	crc      uint32
	first    uint64
	nmarkers uint32
}

func (r *chunkRec) marshal(b []byte) {
	le := binary.LittleEndian
	le.PutUint64(b[0:], r.off)
	le.PutUint32(b[8:], r.compLen)
	le.PutUint32(b[12:], r.rawLen)
	le.PutUint32(b[16:], r.crc)
	le.PutUint64(b[20:], r.first)
	le.PutUint32(b[28:], r.nmarkers)
	le.PutUint32(b[32:], 0)
	le.PutUint32(b[36:], crc(b[:36]))
}

func (r *chunkRec) unmarshal(b []byte) error {
	le := binary.LittleEndian
	if le.Uint32(b[36:]) != crc(b[:36]) {
		return ErrChecksum
	}
	r.off = le.Uint64(b[0:])
	r.compLen = le.Uint32(b[8:])
	r.rawLen = le.Uint32(b[12:])
	r.crc = le.Uint32(b[16:])
	r.first = le.Uint64(b[20:])
	r.nmarkers = le.Uint32(b[28:])
	return nil
}

// RowBytes returns the bytes of one marker's row in a chunk of codec c for n
// samples.
func RowBytes(c Codec, n int) int {
	if c == CodecFloat32 {
		return 4 * n
	}
	return (n + 3) / 4
}

// DefaultChunkMarkers picks markers per chunk so a decoded chunk is about
// 1 MiB, between 8 and 8192 markers: large enough that the per-chunk costs
// of the PCA kernels (group tables, block set-up) are small against the
// per-marker work, small enough that a few chunk buffers stay cheap.
func DefaultChunkMarkers(c Codec, samples int) int {
	rb := RowBytes(c, samples)
	if rb == 0 {
		return 4096
	}
	b := (1 << 20) / rb
	if b < 8 {
		b = 8
	}
	if b > 8192 {
		b = 8192
	}
	return b
}

// ValidateID reports whether s may be used as a sample or marker field in
// the store and in the TSV files written from it: non-empty, no whitespace
// that would break a TSV or VCF (tab, newline, carriage return) and no other
// control characters.
func ValidateID(kind, s string) error {
	if s == "" {
		return fmt.Errorf("empty %s", kind)
	}
	for i, r := range s {
		if r < 0x20 || r == 0x7f {
			return fmt.Errorf("%s %q has a control character (0x%02x) at byte %d", kind, truncate(s), r, i)
		}
	}
	if len(s) > 4096 {
		return fmt.Errorf("%s longer than 4096 bytes", kind)
	}
	return nil
}

// ValidateSamples checks every sample ID with ValidateID and that no ID
// repeats; the error names the sample's 1-based position.
func ValidateSamples(ids []string) error {
	seen := make(map[string]int, len(ids))
	for i, s := range ids {
		if err := ValidateID("sample ID", s); err != nil {
			return fmt.Errorf("sample %d: %w", i+1, err)
		}
		if j, ok := seen[s]; ok {
			return fmt.Errorf("duplicate sample ID %q (samples %d and %d)", truncate(s), j+1, i+1)
		}
		seen[s] = i
	}
	return nil
}

func truncate(s string) string {
	if len(s) > 40 {
		return s[:40] + "..."
	}
	return s
}

func marshalMeta(m *Meta) ([]byte, error) { return json.Marshal(m) }

func validMarkerField(kind, s string) error {
	if err := ValidateID(kind, s); err != nil {
		return err
	}
	if strings.ContainsAny(s, " ") {
		return fmt.Errorf("%s %q contains a space", kind, truncate(s))
	}
	return nil
}
