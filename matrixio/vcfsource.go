package matrixio

import (
	"bufio"
	"bytes"
	"context"
	"encoding/binary"
	"errors"
	"fmt"
	"hash/crc32"
	"io"

	"github.com/klauspost/compress/flate"
	"github.com/klauspost/compress/gzip"
	"github.com/klauspost/compress/zstd"
)

// vcfInputKind is how an input file is compressed, detected from its first
// bytes (never from its name).
type vcfInputKind int

const (
	vcfPlain vcfInputKind = iota
	vcfGzip               // gzip, possibly several members
	vcfBGZF               // gzip whose first member carries the BGZF "BC" field
	vcfZstd
)

func (k vcfInputKind) String() string {
	return [...]string{"plain text", "gzip", "BGZF", "zstd"}[k]
}

var vcfZstdMagic = []byte{0x28, 0xb5, 0x2f, 0xfd}

// vcfDetect peeks at the start of br.
func vcfDetect(br *bufio.Reader) vcfInputKind {
	b, _ := br.Peek(18)
	switch {
	case len(b) >= 4 && bytes.Equal(b[:4], vcfZstdMagic):
		return vcfZstd
	case len(b) >= 2 && b[0] == 0x1f && b[1] == 0x8b:
		if len(b) >= 12 && b[2] == 8 && b[3]&4 != 0 {
			xlen := int(binary.LittleEndian.Uint16(b[10:]))
			if x, err := br.Peek(12 + xlen); err == nil && bgzfSubfield(x[12:]) >= 0 {
				return vcfBGZF
			}
		}
		return vcfGzip
	}
	return vcfPlain
}

// bgzfSubfield finds the BC vcfSubfield in a gzip extra field and returns its
// BSIZE value, or -1 when absent.
func bgzfSubfield(extra []byte) int {
	for len(extra) >= 4 {
		slen := int(binary.LittleEndian.Uint16(extra[2:]))
		if len(extra) < 4+slen {
			return -1
		}
		if extra[0] == 'B' && extra[1] == 'C' && slen == 2 {
			return int(binary.LittleEndian.Uint16(extra[4:]))
		}
		extra = extra[4+slen:]
	}
	return -1
}

// bgzfRawReader reads whole BGZF members, still compressed, from a file so
// they can be inflated in parallel.
type bgzfRawReader struct {
	r      *bufio.Reader
	name   string
	off    int64 // file offset of the next member
	sawEOF bool  // the last member read was the empty EOF marker
}

// bgzfRawBlock is one member: its compressed bytes and where it started.
type bgzfRawBlock struct {
	off   int64
	cdata []byte // deflate payload
	crc   uint32
	isize int
}

// next appends one member to buf and returns its description (cdata
// aliases buf). It returns io.EOF at a clean end of input.
func (b *bgzfRawReader) next(buf []byte) ([]byte, bgzfRawBlock, error) {
	var blk bgzfRawBlock
	blk.off = b.off
	hdr, err := b.r.Peek(12)
	if len(hdr) == 0 && err == io.EOF {
		if !b.sawEOF {
			return buf, blk, bgzfErrorf("truncated BGZF file: the end-of-file marker block is missing (at byte %d)", b.off)
		}
		return buf, blk, io.EOF
	}
	if err != nil {
		return buf, blk, b.truncated()
	}
	if hdr[0] != 0x1f || hdr[1] != 0x8b || hdr[2] != 8 || hdr[3]&4 == 0 {
		return buf, blk, bgzfErrorf("byte %d: not a BGZF block (plain gzip or other data after BGZF blocks?)", b.off)
	}
	xlen := int(binary.LittleEndian.Uint16(hdr[10:]))
	h2, err := b.r.Peek(12 + xlen)
	if err != nil {
		return buf, blk, b.truncated()
	}
	bsize := bgzfSubfield(h2[12:])
	if bsize < 0 {
		return buf, blk, bgzfErrorf("byte %d: gzip member without the BGZF block size field (mixed BGZF and plain gzip?)", b.off)
	}
	total := bsize + 1
	if total < 12+xlen+8 {
		return buf, blk, bgzfErrorf("byte %d: corrupt BGZF block size %d", b.off, total)
	}
	start := len(buf)
	buf = append(buf, make([]byte, total)...)
	if _, err := io.ReadFull(b.r, buf[start:]); err != nil {
		return buf[:start], blk, b.truncated()
	}
	m := buf[start:]
	blk.cdata = m[12+xlen : total-8]
	blk.crc = binary.LittleEndian.Uint32(m[total-8:])
	blk.isize = int(binary.LittleEndian.Uint32(m[total-4:]))
	if blk.isize > bgzfMaxBlock {
		return buf, blk, bgzfErrorf("byte %d: corrupt BGZF block: %d bytes uncompressed (at most 65536)", b.off, blk.isize)
	}
	b.sawEOF = blk.isize == 0
	b.off += int64(total)
	return buf, blk, nil
}

func (b *bgzfRawReader) truncated() error {
	return bgzfErrorf("truncated BGZF block at byte %d (unexpected end of file)", b.off)
}

// bgzfFormatError is a malformed or truncated BGZF input; the reader adds
// the file name and line (vcfReadError).
type bgzfFormatError struct{ msg string }

func (e *bgzfFormatError) Error() string { return e.msg }

func bgzfErrorf(format string, a ...any) error {
	return &bgzfFormatError{fmt.Sprintf(format, a...)}
}

// bgzfInflater inflates BGZF members and checks their CRC32 and size.
type bgzfInflater struct {
	fr  io.ReadCloser
	src bytes.Reader
}

// inflate appends the decoded block to dst.
func (z *bgzfInflater) inflate(dst []byte, blk bgzfRawBlock) ([]byte, error) {
	z.src.Reset(blk.cdata)
	if z.fr == nil {
		z.fr = flate.NewReader(&z.src)
	} else if err := z.fr.(flate.Resetter).Reset(&z.src, nil); err != nil {
		return dst, err
	}
	start := len(dst)
	dst = append(dst, make([]byte, blk.isize)...)
	out := dst[start:]
	n, err := io.ReadFull(z.fr, out)
	if err == nil {
		// The stream must end exactly here.
		var one [1]byte
		if k, e := z.fr.Read(one[:]); k != 0 || (e != io.EOF && e != nil) {
			err = errors.New("more data than the declared size")
		}
	}
	if err != nil || n != blk.isize {
		return dst[:start], bgzfErrorf("corrupt BGZF block at byte %d: %v", blk.off, bgzfErrOr(err, "short block"))
	}
	if crc32.ChecksumIEEE(out) != blk.crc {
		return dst[:start], bgzfErrorf("corrupt BGZF block at byte %d: CRC32 mismatch", blk.off)
	}
	return dst, nil
}

func bgzfErrOr(err error, s string) any {
	if err != nil {
		return err
	}
	return s
}

// bgzfSerial reads a BGZF file block by block on one goroutine; it serves
// the header, which must be read before the parallel stage can start.
type bgzfSerial struct {
	raw  *bgzfRawReader
	z    bgzfInflater
	buf  []byte // raw member
	data []byte // decoded member
	pos  int    // read position in data
}

func (s *bgzfSerial) Read(p []byte) (int, error) {
	for s.pos == len(s.data) {
		var blk bgzfRawBlock
		var err error
		s.buf, blk, err = s.raw.next(s.buf[:0])
		if err != nil {
			return 0, err
		}
		if s.data, err = s.z.inflate(s.data[:0], blk); err != nil {
			return 0, err
		}
		s.pos = 0
	}
	n := copy(p, s.data[s.pos:])
	s.pos += n
	return n, nil
}

// vcfInput is one opened input: its name for messages, the decoded text
// reader for the header, and how its body is read.
type vcfInput struct {
	name   string
	kind   vcfInputKind
	closer io.Closer // the file, nil for stdin
	text   *bufio.Reader
	// For BGZF, raw and serial are set: after the header, the bytes still
	// held by text and serial are decoded leftovers; the rest is read raw.
	raw    *bgzfRawReader
	serial *bgzfSerial
	dec    io.Closer // gzip or zstd decoder to release
}

// vcfOpen opens path ("-" reads stdin) with OpenInput (so directories are
// refused and named pipes read as streams) and detects its compression.
func vcfOpen(ctx context.Context, path string, stdin io.Reader) (*vcfInput, error) {
	in := &vcfInput{name: path}
	var r io.Reader
	if path == "-" {
		if stdin == nil {
			return nil, BadInput("-: no standard input available")
		}
		in.name = "<stdin>"
		r = stdin
	} else {
		f, err := OpenInput(ctx, path)
		if err != nil {
			return nil, err
		}
		in.closer = f
		r = f
	}
	br := bufio.NewReaderSize(r, 1<<20)
	in.kind = vcfDetect(br)
	switch in.kind {
	case vcfPlain:
		in.text = br
	case vcfGzip:
		zr, err := gzip.NewReader(br)
		if err != nil {
			in.Close()
			return nil, BadInput("%s: bad gzip header: %v", in.name, err)
		}
		in.dec = zr
		in.text = bufio.NewReaderSize(zr, 1<<20)
	case vcfZstd:
		zr, err := zstd.NewReader(br, zstd.WithDecoderConcurrency(1), zstd.WithDecoderMaxMemory(1<<30))
		if err != nil {
			in.Close()
			return nil, BadInput("%s: bad zstd header: %v", in.name, err)
		}
		in.dec = zr.IOReadCloser()
		in.text = bufio.NewReaderSize(zr, 1<<20)
	case vcfBGZF:
		in.raw = &bgzfRawReader{r: br, name: in.name}
		in.serial = &bgzfSerial{raw: in.raw}
		in.text = bufio.NewReaderSize(in.serial, 1<<16)
	}
	return in, nil
}

// Close releases the decoder and the file.
func (in *vcfInput) Close() error {
	if in.dec != nil {
		in.dec.Close()
	}
	if in.closer != nil {
		return in.closer.Close()
	}
	return nil
}

// leftover returns, for a BGZF input after its header has been read, the
// decoded bytes not yet consumed (held by the text buffer and the current
// block). Afterwards the body is read from raw at a block boundary.
func (in *vcfInput) leftover() []byte {
	n := in.text.Buffered()
	b, _ := in.text.Peek(n)
	out := append([]byte(nil), b...)
	out = append(out, in.serial.data[in.serial.pos:]...)
	in.serial.pos = len(in.serial.data)
	return out
}

// vcfReadError turns an error from reading decoded text into a message
// naming the file and line.
func vcfReadError(in *vcfInput, line int, err error) error {
	var bad *BadInputError
	if errors.As(err, &bad) {
		return err
	}
	var bf *bgzfFormatError
	if errors.As(err, &bf) {
		return BadInput("%s:%d: %v", in.name, line, bf)
	}
	switch {
	case errors.Is(err, io.ErrUnexpectedEOF):
		return BadInput("%s:%d: truncated %s input (unexpected end of file)", in.name, line, in.kind)
	case errors.Is(err, gzip.ErrChecksum), errors.Is(err, gzip.ErrHeader):
		return BadInput("%s:%d: corrupt %s input: %v", in.name, line, in.kind, err)
	}
	var ce flate.CorruptInputError
	if errors.As(err, &ce) || in.kind == vcfZstd {
		return BadInput("%s:%d: corrupt %s input: %v", in.name, line, in.kind, err)
	}
	return fmt.Errorf("%s:%d: read: %w", in.name, line, err)
}
