package matrixio

import (
	"fmt"
	"math"
	"strings"
)

// markerTable holds the marker identities of an open store compactly, so
// that a store of millions of markers costs about 16 bytes a marker plus
// its text (design.md: memory must stay flat as markers grow). There is
// no per-marker allocation and no per-marker pointer for the collector to
// scan: the IDs and alleles of all markers are one string, "ID\tREF\tALT"
// per marker back to back (ValidateID keeps tabs out of every field), and
// Marker values are built on demand from substrings of it.
type markerTable struct {
	text   string   // "ID\tREF\tALT" of every marker, concatenated
	off    []uint32 // marker i's text is text[off[i]:off[i+1]]
	pos    []int64
	chrom  []uint32 // index into chroms
	chroms []string
}

// markerBuilder accumulates a markerTable.
type markerBuilder struct {
	t       markerTable
	buf     []byte
	chromIx map[string]uint32
}

func newMarkerBuilder(n int) *markerBuilder {
	b := &markerBuilder{chromIx: map[string]uint32{}}
	b.t.off = make([]uint32, 1, n+1)
	b.t.pos = make([]int64, 0, n)
	b.t.chrom = make([]uint32, 0, n)
	return b
}

// add appends one marker; its fields must already be valid (no tabs).
func (b *markerBuilder) add(chrom string, pos int64, id, ref, alt []byte) error {
	ci, ok := b.chromIx[chrom]
	if !ok {
		ci = uint32(len(b.t.chroms))
		b.chromIx[chrom] = ci
		b.t.chroms = append(b.t.chroms, chrom)
	}
	b.buf = append(b.buf, id...)
	b.buf = append(b.buf, '\t')
	b.buf = append(b.buf, ref...)
	b.buf = append(b.buf, '\t')
	b.buf = append(b.buf, alt...)
	if len(b.buf) > math.MaxUint32 {
		return fmt.Errorf("marker table: the IDs and alleles of %d markers exceed 4 GiB", len(b.t.pos)+1)
	}
	b.t.off = append(b.t.off, uint32(len(b.buf)))
	b.t.pos = append(b.t.pos, pos)
	b.t.chrom = append(b.t.chrom, ci)
	return nil
}

// table returns the finished table (one copy of the text).
func (b *markerBuilder) table() markerTable {
	t := b.t
	t.text = string(b.buf)
	b.buf = nil
	return t
}

func (t *markerTable) len() int { return len(t.pos) }

// at returns marker i; its strings share the table's memory.
func (t *markerTable) at(i int) Marker {
	s := t.text[t.off[i]:t.off[i+1]]
	a := strings.IndexByte(s, '\t')
	rest := s[a+1:]
	b := strings.IndexByte(rest, '\t')
	return Marker{Chrom: t.chroms[t.chrom[i]], Pos: t.pos[i], ID: s[:a], Ref: rest[:b], Alt: rest[b+1:]}
}
