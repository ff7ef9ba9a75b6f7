package randsvd

import (
	"context"
	"encoding/binary"
	"errors"
	"hash/crc32"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// TestResumeGivesSameResult stops a solve after 3 passes (as a kill would:
// the checkpoint of the last completed pass is on disk), resumes from the
// checkpoint file, and requires bit-identical eigenpairs to an
// uninterrupted run (determinism is a design requirement, no outside
// source).
func TestResumeGivesSameResult(t *testing.T) {
	st, _ := testCohort(t, 150, 800, 3, 0.05, 0.01, 21, 64)
	op, err := NewOperator(st, OperatorOptions{Threads: 2})
	if err != nil {
		t.Fatal(err)
	}
	opt := SolveOptions{K: 4, Seed: 3, Tol: 1e-10, MaxPasses: 9, BulkEdge: 1.5, VarTol: 1e-9}
	full, err := Solve(context.Background(), op, opt)
	if err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(t.TempDir(), "x.ckpt")
	stop := errors.New("killed")
	o2 := opt
	o2.Checkpoint = func(s *State) error {
		if err := WriteCheckpoint(path, "key-1", s); err != nil {
			return err
		}
		if s.Pass == 3 {
			return stop
		}
		return nil
	}
	if _, err := Solve(context.Background(), op, o2); !errors.Is(err, stop) {
		t.Fatalf("interrupted solve: %v", err)
	}
	if _, err := ReadCheckpoint(path, "key-2"); !errors.Is(err, ErrCheckpointMismatch) {
		t.Fatalf("other key: %v, want mismatch", err)
	}
	s, err := ReadCheckpoint(path, "key-1")
	if err != nil || s == nil || s.Pass != 3 {
		t.Fatalf("read checkpoint: %v %+v", err, s)
	}
	o3 := opt
	o3.Resume = s
	res, err := Solve(context.Background(), op, o3)
	if err != nil {
		t.Fatal(err)
	}
	if res.Passes != full.Passes {
		t.Errorf("passes %d, uninterrupted %d", res.Passes, full.Passes)
	}
	for j := range full.Eigenvalues {
		if res.Eigenvalues[j] != full.Eigenvalues[j] {
			t.Errorf("eigenvalue %d: %v resumed, %v uninterrupted", j, res.Eigenvalues[j], full.Eigenvalues[j])
		}
	}
	a, b := res.Vectors.RawMatrix().Data, full.Vectors.RawMatrix().Data
	for i := range a {
		if a[i] != b[i] {
			t.Fatalf("vector entry %d differs after resume", i)
		}
	}
}

// TestCheckpointRefinementBasis writes the state of every pass of a solve
// that ends on a refinement pass and reads the last one back: the basis
// and rotation Loadings needs must survive bit for bit (a resumed run
// computes the same loadings from them; determinism, no outside source).
func TestCheckpointRefinementBasis(t *testing.T) {
	st, _ := testCohort(t, 150, 800, 3, 0.05, 0.01, 22, 64)
	op, err := NewOperator(st, OperatorOptions{Threads: 2})
	if err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(t.TempDir(), "x.ckpt")
	var last *State
	res, err := Solve(context.Background(), op, SolveOptions{K: 4, Seed: 3, BulkEdge: 1.5,
		Checkpoint: func(s *State) error { last = s; return WriteCheckpoint(path, "k", s) }})
	if err != nil {
		t.Fatal(err)
	}
	if res.Basis == nil || last.RefineIn == nil {
		t.Fatalf("the solve did not end on a refinement pass (stop %s, %d passes, %d fast)", res.StopReason, res.Passes, res.FastPasses)
	}
	back, err := ReadCheckpoint(path, "k")
	if err != nil {
		t.Fatal(err)
	}
	for name, p := range map[string][2][]float64{"RefineIn": {last.RefineIn, back.RefineIn}, "Rot": {last.Rot, back.Rot}, "U": {last.U, back.U}} {
		if len(p[0]) != len(p[1]) {
			t.Fatalf("%s: %d values written, %d read", name, len(p[0]), len(p[1]))
		}
		for i := range p[0] {
			if p[0][i] != p[1][i] {
				t.Fatalf("%s[%d]: %v written, %v read", name, i, p[0][i], p[1][i])
			}
		}
	}
	// Resuming from it stops at once with the same basis and rotation.
	again, err := Solve(context.Background(), op, SolveOptions{K: 4, Seed: 3, BulkEdge: 1.5, Resume: back})
	if err != nil {
		t.Fatal(err)
	}
	if again.Passes != res.Passes || !mat.Equal(again.Rotation, res.Rotation) || !mat.Equal(again.Vectors, res.Vectors) {
		t.Errorf("resumed: %d passes (want %d), rotation or vectors differ", again.Passes, res.Passes)
	}
}

// TestCheckpointVersions reads checkpoints in the layouts of versions 1
// (no fast-pass fields) and 2 (no refinement fields), made from a version
// 3 file by dropping those fields, and rejects a file whose refinement
// flag disagrees with its size (format defined in checkpoint.go; no
// outside source).
func TestCheckpointVersions(t *testing.T) {
	st := &State{Pass: 4, L: 2, N: 3, U: []float64{1, 2, 3, 4, 5, 6}, AU: []float64{6, 5, 4, 3, 2, 1},
		Theta: []float64{9, 8}, TraceSqEst: 7, PrevCaptured: 17, History: [][]float64{{0.5}}, Fast: true, FastPasses: 3}
	path := filepath.Join(t.TempDir(), "c.ckpt")
	if err := WriteCheckpoint(path, "k", st); err != nil {
		t.Fatal(err)
	}
	v3, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	body := v3[:len(v3)-4]
	// The tail of a version 3 file without a basis: fast flag, fast
	// passes, refinement flag (8 bytes each).
	remake := func(ver uint64, drop int) []byte {
		b := append([]byte(nil), body[:len(body)-drop]...)
		binary.LittleEndian.PutUint64(b[8:], ver)
		return binary.LittleEndian.AppendUint32(b, crc32.Checksum(b, crc32.MakeTable(crc32.Castagnoli)))
	}
	// A refinement flag of 1 with no basis after it.
	bad := append([]byte(nil), body...)
	binary.LittleEndian.PutUint64(bad[len(bad)-8:], 1)
	bad = binary.LittleEndian.AppendUint32(bad, crc32.Checksum(bad, crc32.MakeTable(crc32.Castagnoli)))
	cases := []struct {
		name       string
		file       []byte
		fast       bool
		fastPasses int
		err        string
	}{
		{"version 3", v3, true, 3, ""},
		{"version 2", remake(2, 8), true, 3, ""},
		{"version 1", remake(1, 24), false, 0, ""},
		{"refinement flag without basis", bad, false, 0, "bad refinement field"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			if err := os.WriteFile(path, tc.file, 0o644); err != nil {
				t.Fatal(err)
			}
			got, err := ReadCheckpoint(path, "k")
			if tc.err != "" {
				if err == nil || !strings.Contains(err.Error(), tc.err) {
					t.Fatalf("error %v, want %q", err, tc.err)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			if got.Pass != 4 || got.Fast != tc.fast || got.FastPasses != tc.fastPasses || got.RefineIn != nil ||
				got.TraceSqEst != 7 || got.PrevCaptured != 17 || got.U[5] != 6 || got.AU[0] != 6 || got.Theta[1] != 8 || got.History[0][0] != 0.5 {
				t.Errorf("read back %+v", got)
			}
		})
	}
}
