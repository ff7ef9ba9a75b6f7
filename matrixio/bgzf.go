package matrixio

import (
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"hash/crc32"
	"io"

	"github.com/klauspost/compress/flate"
)

// BGZF (the Blocked GNU Zip Format of the SAM/BAM specification, section
// 4.1) is a series of gzip members, each holding at most 64 KiB of input
// and carrying an extra field "BC" with the member's total size minus one,
// finished by a fixed empty member (the EOF marker). Plain gzip readers read
// it as a multi-member gzip file; indexers seek to block boundaries.

// bgzfBlockInput is the most input put in one block. It is below 64 KiB so
// that even incompressible input, stored by deflate with its 5-byte block
// headers, fits with the gzip header and trailer in the 64 KiB that the
// 16-bit BSIZE field can describe (the same margin htslib keeps).
const bgzfBlockInput = 0xff00

// bgzfMaxBlock is the largest BGZF member: BSIZE is 16 bits of size-1.
const bgzfMaxBlock = 1 << 16

// bgzfHeaderLen is the fixed gzip header of a BGZF member, extra field
// included.
const bgzfHeaderLen = 18

// bgzfEOF is the empty BGZF member that ends a file (SAM/BAM spec 4.1.2).
var bgzfEOF = []byte{
	0x1f, 0x8b, 0x08, 0x04, 0x00, 0x00, 0x00, 0x00, 0x00, 0xff, 0x06, 0x00,
	0x42, 0x43, 0x02, 0x00, 0x1b, 0x00, 0x03, 0x00, 0x00, 0x00, 0x00, 0x00,
	0x00, 0x00, 0x00, 0x00,
}

// bgzfWriter compresses a byte stream into BGZF blocks. Blocks are deflated
// by up to threads goroutines and written to the destination in order.
// Close writes the pending data and the EOF marker; it does not close the
// destination.
type bgzfWriter struct {
	dst     io.Writer
	level   int
	buf     []byte // input of the block being filled
	pending []*bgzfBlock
	free    []*bgzfBlock
	threads int
	err     error
	closed  bool
}

type bgzfBlock struct {
	in    []byte
	out   bytes.Buffer
	done  chan struct{}
	err   error
	fw    *flate.Writer
	level int // level of fw
}

// newBGZFWriter returns a BGZF writer on dst compressing with deflate level
// (flate.DefaultCompression when 0 is not wanted, pass it explicitly) on up
// to threads goroutines.
func newBGZFWriter(dst io.Writer, level, threads int) *bgzfWriter {
	if threads < 1 {
		threads = 1
	}
	return &bgzfWriter{dst: dst, level: level, threads: threads, buf: make([]byte, 0, bgzfBlockInput)}
}

// Write buffers p, cutting it into blocks.
func (w *bgzfWriter) Write(p []byte) (int, error) {
	if w.err != nil {
		return 0, w.err
	}
	if w.closed {
		return 0, errors.New("bgzf: write after close")
	}
	n := 0
	for len(p) > 0 {
		k := min(len(p), bgzfBlockInput-len(w.buf))
		w.buf = append(w.buf, p[:k]...)
		p = p[k:]
		n += k
		if len(w.buf) == bgzfBlockInput {
			if err := w.flushBlock(); err != nil {
				return n, err
			}
		}
	}
	return n, nil
}

// flushBlock hands the buffered input to a compressor goroutine and writes
// finished blocks, keeping at most threads blocks in flight.
func (w *bgzfWriter) flushBlock() error {
	if len(w.buf) == 0 {
		return nil
	}
	var b *bgzfBlock
	if n := len(w.free); n > 0 {
		b = w.free[n-1]
		w.free = w.free[:n-1]
	} else {
		b = &bgzfBlock{in: make([]byte, 0, bgzfBlockInput)}
	}
	b.in, w.buf = w.buf, b.in[:0]
	b.done = make(chan struct{})
	b.err = nil
	w.pending = append(w.pending, b)
	go func() {
		b.err = b.compress(w.level)
		close(b.done)
	}()
	for len(w.pending) >= w.threads {
		if err := w.writeOldest(); err != nil {
			return err
		}
	}
	return nil
}

func (w *bgzfWriter) writeOldest() error {
	b := w.pending[0]
	w.pending = w.pending[1:]
	<-b.done
	if w.err == nil {
		if b.err != nil {
			w.err = b.err
		} else if _, err := w.dst.Write(b.out.Bytes()); err != nil {
			w.err = fmt.Errorf("bgzf: %w", err)
		}
	}
	w.free = append(w.free, b)
	return w.err
}

// compress deflates b.in into one BGZF member in b.out, falling back to
// stored blocks if deflate would overflow the 64 KiB member limit.
func (b *bgzfBlock) compress(level int) error {
	if err := b.deflate(level); err != nil {
		return err
	}
	if b.out.Len() > bgzfMaxBlock {
		if err := b.deflate(flate.NoCompression); err != nil {
			return err
		}
		if b.out.Len() > bgzfMaxBlock {
			return errors.New("bgzf: block does not fit in 64 KiB even stored")
		}
	}
	out := b.out.Bytes()
	binary.LittleEndian.PutUint16(out[16:], uint16(len(out)-1))
	return nil
}

// deflate writes header, deflate stream of b.in at level, and trailer to
// b.out. The writer for the configured level is kept and reused.
func (b *bgzfBlock) deflate(level int) error {
	b.out.Reset()
	b.out.Write([]byte{0x1f, 0x8b, 8, 4, 0, 0, 0, 0, 0, 0xff, 6, 0, 'B', 'C', 2, 0, 0, 0})
	fw := b.fw
	if fw == nil || b.level != level {
		var err error
		if fw, err = flate.NewWriter(&b.out, level); err != nil {
			return fmt.Errorf("bgzf: %w", err)
		}
		if b.fw == nil {
			b.fw, b.level = fw, level
		}
	} else {
		fw.Reset(&b.out)
	}
	if _, err := fw.Write(b.in); err != nil {
		return fmt.Errorf("bgzf: %w", err)
	}
	if err := fw.Close(); err != nil {
		return fmt.Errorf("bgzf: %w", err)
	}
	var tr [8]byte
	binary.LittleEndian.PutUint32(tr[:], crc32.ChecksumIEEE(b.in))
	binary.LittleEndian.PutUint32(tr[4:], uint32(len(b.in)))
	b.out.Write(tr[:])
	return nil
}

// Close compresses the buffered input, waits for all blocks and writes the
// EOF marker.
func (w *bgzfWriter) Close() error {
	if w.closed {
		return w.err
	}
	if w.err == nil {
		w.flushBlock()
	}
	for len(w.pending) > 0 {
		w.writeOldest()
	}
	w.closed = true
	if w.err != nil {
		return w.err
	}
	if _, err := w.dst.Write(bgzfEOF); err != nil {
		w.err = fmt.Errorf("bgzf: %w", err)
	}
	return w.err
}

// abort waits for the compressor goroutines and discards their output.
func (w *bgzfWriter) abort() {
	for _, b := range w.pending {
		<-b.done
	}
	w.pending = nil
	w.closed = true
	if w.err == nil {
		w.err = errors.New("bgzf: aborted")
	}
}
