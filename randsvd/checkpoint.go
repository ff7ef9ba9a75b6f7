package randsvd

import (
	"bufio"
	"encoding/binary"
	"errors"
	"fmt"
	"hash/crc32"
	"io"
	"math"
	"os"

	"github.com/clinal/clinal/matrixio"
)

// Checkpoint files hold a solver State after a completed pass, so a run
// that was killed resumes where it stopped and gives the same numbers as
// an uninterrupted one. Layout (little endian): magic "CLNLCKPT", u64
// version, key (length-prefixed string identifying inputs and parameters),
// u64 pass, l, n, k-history rows and width, then U, AU, Theta, the history,
// TraceSqEst and PrevCaptured as float64, (version 2) u64 fast flag and
// fast passes, (version 4) u64 refinement width w (0: none) and, when it is
// not 0, RefineIn (n x w) and Rot (w x w), and a CRC32C of everything
// before it. Version 1 files (before fast passes) read as exact states,
// version 2 files as states without a refinement basis, version 3 files
// (a flag where 4 has w; 1 meant w = l) as refinements of all l columns.

var ckptMagic = [8]byte{'C', 'L', 'N', 'L', 'C', 'K', 'P', 'T'}

// ErrCheckpointMismatch says a checkpoint belongs to other inputs or
// parameters.
var ErrCheckpointMismatch = errors.New("checkpoint belongs to other inputs or parameters")

// WriteCheckpoint stores st under path atomically (temporary name, fsync,
// rename), tagged with key.
func WriteCheckpoint(path, key string, st *State) error {
	rw := st.refineWidth()
	if st.RefineIn != nil && (rw == 0 || rw > st.L) {
		return fmt.Errorf("checkpoint: refinement basis of %d and rotation of %d values for %d x %d", len(st.RefineIn), len(st.Rot), st.N, st.L)
	}
	hw := 0
	if len(st.History) > 0 {
		hw = len(st.History[0])
	}
	return matrixio.WriteFileAtomic(path, func(w io.Writer) error {
		h := crc32.New(crc32.MakeTable(crc32.Castagnoli))
		bw := bufio.NewWriterSize(io.MultiWriter(w, h), 1<<16)
		var b [8]byte
		put := func(v uint64) {
			binary.LittleEndian.PutUint64(b[:], v)
			bw.Write(b[:])
		}
		f := func(xs []float64) {
			for _, x := range xs {
				put(math.Float64bits(x))
			}
		}
		bw.Write(ckptMagic[:])
		put(4)
		put(uint64(len(key)))
		bw.WriteString(key)
		for _, v := range []int{st.Pass, st.L, st.N, len(st.History), hw} {
			put(uint64(v))
		}
		f(st.U)
		f(st.AU)
		f(st.Theta)
		for _, r := range st.History {
			f(r)
		}
		f([]float64{st.TraceSqEst, st.PrevCaptured})
		fast := uint64(0)
		if st.Fast {
			fast = 1
		}
		put(fast)
		put(uint64(st.FastPasses))
		if st.RefineIn != nil {
			put(uint64(rw))
			f(st.RefineIn)
			f(st.Rot)
		} else {
			put(0)
		}
		if err := bw.Flush(); err != nil {
			return err
		}
		binary.LittleEndian.PutUint32(b[:4], h.Sum32())
		_, err := w.Write(b[:4])
		return err
	})
}

// ReadCheckpoint loads a checkpoint written with the same key; a missing
// file returns (nil, nil), a different key ErrCheckpointMismatch. Sizes are
// checked against the file's length before anything is allocated.
func ReadCheckpoint(path, key string) (*State, error) {
	b, err := os.ReadFile(path)
	if errors.Is(err, os.ErrNotExist) {
		return nil, nil
	}
	if err != nil {
		return nil, fmt.Errorf("checkpoint %s: %w", path, err)
	}
	bad := func(what string) error { return fmt.Errorf("checkpoint %s: %s", path, what) }
	if len(b) < 8+8*7+4 || string(b[:8]) != string(ckptMagic[:]) {
		return nil, bad("not a checkpoint")
	}
	body := b[:len(b)-4]
	if crc32.Checksum(body, crc32.MakeTable(crc32.Castagnoli)) != binary.LittleEndian.Uint32(b[len(b)-4:]) {
		return nil, bad("checksum mismatch (incomplete or damaged)")
	}
	r := body[8:]
	get := func() uint64 {
		if len(r) < 8 {
			r = nil
			return 0
		}
		v := binary.LittleEndian.Uint64(r)
		r = r[8:]
		return v
	}
	ver := get()
	if ver < 1 || ver > 4 {
		return nil, bad("unknown version")
	}
	kl := get()
	if kl > uint64(len(r)) {
		return nil, bad("bad key length")
	}
	if string(r[:kl]) != key {
		return nil, ErrCheckpointMismatch
	}
	r = r[kl:]
	pass, l, n, hr, hw := get(), get(), get(), get(), get()
	// One history row of K >= 1 residuals per pass.
	if n == 0 || l == 0 || n > 1<<32 || l > 1<<16 || pass == 0 || pass > 1<<20 || hr != pass || hw == 0 || hw > 1<<16 {
		return nil, bad("sizes do not match the file")
	}
	need := (2*n*l + l + hr*hw + 2) * 8
	if ver >= 2 {
		need += 2 * 8 // fast flag and fast passes
	}
	// The refinement's width w: version 3 files hold a flag (1: w = l),
	// later ones w itself, just before the basis.
	w := uint64(0)
	if ver >= 3 {
		need += 8
		if need <= uint64(len(r)) {
			w = binary.LittleEndian.Uint64(r[need-8:])
		}
		if ver == 3 && w > 1 {
			return nil, bad("bad refinement field") // version 3 wrote a flag
		}
		if ver == 3 && w == 1 {
			w = l
		}
		if w > l {
			return nil, bad("bad refinement field")
		}
		need += (n*w + w*w) * 8
	}
	if uint64(len(r)) != need {
		if w > 0 {
			return nil, bad("bad refinement field")
		}
		return nil, bad("sizes do not match the file")
	}
	f := func(m uint64) []float64 {
		out := make([]float64, m)
		for i := range out {
			out[i] = math.Float64frombits(get())
		}
		return out
	}
	st := &State{Pass: int(pass), L: int(l), N: int(n)}
	st.U = f(n * l)
	st.AU = f(n * l)
	st.Theta = f(l)
	for i := uint64(0); i < hr; i++ {
		st.History = append(st.History, f(hw))
	}
	tail := f(2)
	st.TraceSqEst, st.PrevCaptured = tail[0], tail[1]
	if ver >= 2 {
		fast, fp := get(), get()
		if fast > 1 || fp > pass {
			return nil, bad("bad fast-pass fields")
		}
		st.Fast, st.FastPasses = fast == 1, int(fp)
	}
	if ver >= 3 {
		get() // the width, read above
		if w > 0 {
			st.RefineIn = f(n * w)
			st.Rot = f(w * w)
		}
	}
	return st, nil
}
