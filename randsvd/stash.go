package randsvd

import (
	"bufio"
	"context"
	"encoding/binary"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
)

// A stash keeps, on disk, the marker-side products W = Z C that the
// closing or refinement pass of Solve computes anyway (the first half of
// an Operator pass, one row per kept marker of the w values of its input
// C: the wanted pairs' U_K, with the next Krylov block for a closing
// pass).
// The final sample vectors are U times a small rotation R (Rayleigh-Ritz
// on span U, then signs: Result.Basis and Rotation), so the loadings
// Z u_k = (Z U) R_k follow
// from the stash with no further pass over the store. Without it (a
// resumed run, a cluster run, a failed write) Loadings computes Z U in a
// half pass, with the same kernels, so the numbers are the same.
//
// The rows take M * w * 8 bytes of disk (w the pass's width: closingWidth,
// or K for a refinement), not memory, in a file that has no
// name (O_TMPFILE on Linux; elsewhere one unlinked as soon as it is made),
// so nothing is left behind by a crash. A capture that fails, or that a
// later pass makes stale, gives its disk back at once (discard).
type stash struct {
	op   *Operator
	f    *os.File
	bw   *bufio.Writer
	l    int
	rows int
	err  error // first write error: the stash is unusable
	pass int   // solver pass whose input the rows are Z times; 0: none
	// During a capture a goroutine encodes and writes the blocks, so the
	// pass does not wait on it: rows go over in one of two buffers.
	full, free chan []float64
	done       chan error
}

// newStash makes an unlinked temporary file in dir ("" is the system's
// temporary directory).
func newStash(op *Operator, dir string) (*stash, error) {
	f, err := openUnnamed(dir)
	if err != nil {
		// A named temporary (".partial", as every temporary of clinal),
		// unlinked at once where the system allows it; Close removes it
		// on the others.
		if f, err = os.CreateTemp(dir, ".clinal-stash-*.partial"); err != nil {
			return nil, fmt.Errorf("loadings stash: %w", err)
		}
		os.Remove(f.Name())
	}
	return &stash{op: op, f: f, bw: bufio.NewWriterSize(f, 1<<16)}, nil
}

// reset starts a new capture of rows of l values.
func (s *stash) reset(l int) {
	s.l, s.rows, s.pass, s.err = l, 0, 0, nil
	if _, err := s.f.Seek(0, io.SeekStart); err != nil {
		s.err = err
		return
	}
	if err := s.f.Truncate(0); err != nil {
		s.err = err
		return
	}
	s.bw.Reset(s.f)
	s.full, s.free, s.done = make(chan []float64, 2), make(chan []float64, 2), make(chan error, 1)
	s.free <- nil
	s.free <- nil
	go func() {
		var err error
		var b []byte
		for rows := range s.full {
			if err == nil {
				b = b[:0]
				for _, v := range rows {
					b = binary.LittleEndian.AppendUint64(b, math.Float64bits(v))
				}
				_, err = s.bw.Write(b)
			}
			s.free <- rows
		}
		if err == nil {
			err = s.bw.Flush()
		}
		s.done <- err
	}()
}

// write appends nb rows of w (stride lp, l values each).
func (s *stash) write(w []float64, nb, lp int) {
	if s.err != nil {
		return
	}
	rows := (<-s.free)[:0]
	for q := 0; q < nb; q++ {
		rows = append(rows, w[q*lp:q*lp+s.l]...)
	}
	s.full <- rows
	s.rows += nb
}

// finish ends a capture; a failed one is discarded.
func (s *stash) finish() {
	if s.full == nil {
		return
	}
	close(s.full)
	if err := <-s.done; err != nil && s.err == nil {
		s.err = fmt.Errorf("loadings stash: %w", err)
	}
	s.full, s.free, s.done = nil, nil, nil
	if s.err != nil {
		s.discard()
	}
}

// discard empties the file (its disk goes back now, not at Close) and
// marks the stash unusable.
func (s *stash) discard() {
	s.pass = 0
	if s.f != nil {
		s.f.Truncate(0)
	}
}

// usable says whether the stash holds, for op, Z times the basis of the
// solver's last pass, l columns: the refinement's width, the rows of
// Result.Rotation (Solve clears pass otherwise).
func (s *stash) usable(op *Operator, l int) bool {
	return s != nil && s.f != nil && s.err == nil && s.op == op && s.pass > 0 && s.l == l && s.rows == op.NumKeptMarkers()
}

// each streams the stashed rows of Z U to fn, in kept marker order.
func (s *stash) each(ctx context.Context, fn func(ord int, w []float64) error) error {
	if _, err := s.f.Seek(0, io.SeekStart); err != nil {
		return fmt.Errorf("loadings stash: %w", err)
	}
	br := bufio.NewReaderSize(s.f, 1<<16)
	b := make([]byte, 8*s.l)
	w := make([]float64, s.l)
	for ord := 0; ord < s.rows; ord++ {
		if ord%4096 == 0 {
			if err := ctx.Err(); err != nil {
				return err
			}
		}
		if _, err := io.ReadFull(br, b); err != nil {
			return fmt.Errorf("loadings stash: row %d: %w", ord, err)
		}
		for c := range w {
			w[c] = math.Float64frombits(binary.LittleEndian.Uint64(b[8*c:]))
		}
		if err := fn(ord, w); err != nil {
			return err
		}
	}
	return nil
}

// Close releases the file.
func (s *stash) Close() error {
	if s == nil || s.f == nil {
		return nil
	}
	err := s.f.Close()
	if _, e := os.Lstat(s.f.Name()); e == nil && filepath.Ext(s.f.Name()) == ".partial" {
		os.Remove(s.f.Name()) // where it could not be unlinked while open
	}
	s.f = nil
	return err
}

// capturer is implemented by Operator: an application that also stashes
// W = Z X.
type capturer interface {
	applyCapture(ctx context.Context, x, y []float64, l int, s *stash) error
}
