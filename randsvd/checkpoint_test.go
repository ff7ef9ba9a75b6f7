package randsvd

import (
	"context"
	"errors"
	"path/filepath"
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
