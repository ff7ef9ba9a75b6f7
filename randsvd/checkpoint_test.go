package randsvd

import (
	"context"
	"encoding/binary"
	"errors"
	"fmt"
	"hash/crc32"
	"math"
	"os"
	"path/filepath"
	"slices"
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

// TestResumeAfterRefinement resumes from the checkpoint of every pass of
// two solves and must get the uninterrupted numbers bit for bit (the
// product's rule of resumable runs; no outside source):
//   - a tolerance below the fast passes' floor: the solve refines the K
//     wanted pairs, finds them not yet converged, makes the other columns'
//     images exact (one pass of width L-K) and goes on with exact passes;
//     its result is held to that tolerance;
//   - two passes at most: the second is a closing pass (the last one
//     allowed), right after the start pass, on a basis of b columns.
func TestResumeAfterRefinement(t *testing.T) {
	st, _ := testCohort(t, 150, 800, 3, 0.05, 0.01, 21, 64)
	op, err := NewOperator(st, OperatorOptions{Threads: 2})
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name string
		opt  SolveOptions
	}{
		{"past the fast floor", SolveOptions{K: 2, Seed: 3, Tol: 1e-9, MaxPasses: 20}},
		{"closing pass after the start pass", SolveOptions{K: 2, Seed: 3, MaxPasses: 2}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			opt := tc.opt
			dir := t.TempDir()
			var widths, bases []int
			o1 := opt
			o1.Checkpoint = func(s *State) error {
				widths, bases = append(widths, s.refineWidth()), append(bases, s.L)
				return WriteCheckpoint(filepath.Join(dir, fmt.Sprintf("%d.ckpt", s.Pass)), "k", s)
			}
			full, err := Solve(context.Background(), op, o1)
			if err != nil {
				t.Fatal(err)
			}
			l := full.BlockSize
			narrow := slices.Index(widths, opt.K)
			switch tc.opt.MaxPasses {
			case 2:
				w := closingWidth(opt.K, l, full.KrylovBlock)
				if full.Passes != 2 || widths[1] != w || bases[1] != w || bases[0] != full.KrylovBlock {
					t.Fatalf("passes %d, refinement widths %v, bases %v: want a closing pass of %d columns at pass 2 after a start block of %d", full.Passes, widths, bases, w, full.KrylovBlock)
				}
			default:
				if narrow < 0 || narrow+1 >= len(widths) || widths[narrow+1] != l {
					t.Fatalf("refinement widths per pass %v: want a refinement of %d columns, then one of all %d", widths, opt.K, l)
				}
				if full.StopReason != "converged" {
					t.Fatalf("stop %s after %d passes", full.StopReason, full.Passes)
				}
				for j, r := range full.Residuals {
					if r > opt.Tol*full.Eigenvalues[j] {
						t.Errorf("PC%d: residual %g above tol x eigenvalue", j+1, r)
					}
				}
			}
			resumeEveryPass(t, op, opt, dir, full)
		})
	}
}

// TestResumeAroundClosingPasses resumes from the checkpoint of every pass
// of a solve with closing passes that did not end the run (wrong guesses,
// forced here at passes 3 and 4 through SolveOptions.closeAt; predictLast
// makes them rarely) and one that did, and must get the uninterrupted
// numbers bit for bit (the product's rule of resumable runs; no outside
// source). The structured pairs must still match gonum's EigenSym of the
// dense K (reference library) to 1e-8 relative.
func TestResumeAroundClosingPasses(t *testing.T) {
	const n = 300
	st, geno := testCohort(t, n, 3000, 3, 0.05, 0.01, 11, 64)
	op, err := NewOperator(st, OperatorOptions{Threads: 2})
	if err != nil {
		t.Fatal(err)
	}
	opt := SolveOptions{K: 10, Seed: 1, BulkEdge: MPUpperEdgeScaled(op.Trace(), op.Dim(), op.Markers()),
		closeAt: func(pass int) bool { return pass == 3 || pass == 4 || pass >= 7 }}
	dir := t.TempDir()
	var states []*State
	o1 := opt
	o1.Checkpoint = func(s *State) error {
		states = append(states, s)
		return WriteCheckpoint(filepath.Join(dir, fmt.Sprintf("%d.ckpt", s.Pass)), "k", s)
	}
	full, err := Solve(context.Background(), op, o1)
	if err != nil {
		t.Fatal(err)
	}
	// A closing pass that went on leaves a fast state whose fast-pass
	// count did not grow; one that ended the run an exact state whose
	// basis is the closing pass's input.
	w := closingWidth(opt.K, full.BlockSize, full.KrylovBlock)
	var went []int
	for p := 1; p < len(states); p++ {
		if states[p].Fast && states[p].FastPasses == states[p-1].FastPasses {
			went = append(went, states[p].Pass)
		}
	}
	last := states[len(states)-1]
	if len(went) < 2 || !slices.Equal(went[:2], []int{3, 4}) || last.Fast || last.refineWidth() != w || last.Pass < 7 || len(full.Basis) != op.Dim()*w {
		t.Fatalf("closing passes that went on %v (want 3, 4, ...); last state (pass %d) fast %v with a basis of %d (want %d)", went, last.Pass, last.Fast, last.refineWidth(), w)
	}
	kd := denseK(geno, n)
	var es mat.EigenSym
	if !es.Factorize(kd, true) {
		t.Fatal("EigenSym failed")
	}
	vals := es.Values(nil)
	for j := 0; j < 2; j++ { // the two structured PCs of three populations
		if rel := math.Abs(full.Eigenvalues[j]-vals[n-1-j]) / vals[n-1-j]; rel > 1e-8 {
			t.Errorf("PC%d: eigenvalue %v, EigenSym %v (rel %g)", j+1, full.Eigenvalues[j], vals[n-1-j], rel)
		}
	}
	resumeEveryPass(t, op, opt, dir, full)
}

// resumeEveryPass resumes opt's solve from the checkpoint DIR/P.ckpt of
// every pass P of full (the uninterrupted result) and requires full's
// numbers bit for bit.
func resumeEveryPass(t *testing.T, op *Operator, opt SolveOptions, dir string, full *Result) {
	t.Helper()
	for p := 1; p <= full.Passes; p++ {
		s, err := ReadCheckpoint(filepath.Join(dir, fmt.Sprintf("%d.ckpt", p)), "k")
		if err != nil {
			t.Fatal(err)
		}
		o := opt
		o.Resume = s
		res, err := Solve(context.Background(), op, o)
		if err != nil {
			t.Fatalf("resume after pass %d: %v", p, err)
		}
		if res.Passes != full.Passes || res.FastPasses != full.FastPasses || res.StopReason != full.StopReason ||
			!slices.Equal(res.Eigenvalues, full.Eigenvalues) || !slices.Equal(res.Residuals, full.Residuals) ||
			!slices.Equal(res.Vectors.RawMatrix().Data, full.Vectors.RawMatrix().Data) || !slices.Equal(res.Basis, full.Basis) ||
			!slices.EqualFunc(res.History, full.History, slices.Equal[[]float64]) {
			t.Errorf("resumed after pass %d: %d passes (want %d), stop %s (want %s), or numbers differ", p, res.Passes, full.Passes, res.StopReason, full.StopReason)
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
	res, err := Solve(context.Background(), op, SolveOptions{K: 4, Seed: 3, BulkEdge: MPUpperEdgeScaled(op.Trace(), op.Dim(), op.Markers()),
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
	again, err := Solve(context.Background(), op, SolveOptions{K: 4, Seed: 3, BulkEdge: MPUpperEdgeScaled(op.Trace(), op.Dim(), op.Markers()), Resume: back})
	if err != nil {
		t.Fatal(err)
	}
	if again.Passes != res.Passes || !mat.Equal(again.Rotation, res.Rotation) || !mat.Equal(again.Vectors, res.Vectors) {
		t.Errorf("resumed: %d passes (want %d), rotation or vectors differ", again.Passes, res.Passes)
	}
}

// TestCheckpointVersions reads checkpoints in the layouts of versions 1
// (no fast-pass fields), 2 (no refinement fields) and 3 (a refinement flag,
// 1 meaning a basis of all l columns), made from a version 4 file by
// dropping or rewriting those fields, and version 4 files with a
// refinement of fewer columns; it rejects a file whose refinement field
// disagrees with its size or exceeds l, and one whose history is not one
// row per pass (format defined in checkpoint.go; no outside source).
func TestCheckpointVersions(t *testing.T) {
	st := &State{Pass: 4, L: 2, N: 3, U: []float64{1, 2, 3, 4, 5, 6}, AU: []float64{6, 5, 4, 3, 2, 1},
		Theta: []float64{9, 8}, TraceSqEst: 7, PrevCaptured: 17, History: [][]float64{{0.5}, {0.4}, {0.3}, {0.2}}, Fast: true, FastPasses: 3}
	path := filepath.Join(t.TempDir(), "c.ckpt")
	// A history of other than one row per pass (a file no solve writes).
	odd := *st
	odd.History = odd.History[:1]
	if err := WriteCheckpoint(path, "k", &odd); err != nil {
		t.Fatal(err)
	}
	oddFile, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if err := WriteCheckpoint(path, "k", st); err != nil {
		t.Fatal(err)
	}
	v4, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	body := v4[:len(v4)-4]
	seal := func(b []byte) []byte {
		return binary.LittleEndian.AppendUint32(b, crc32.Checksum(b, crc32.MakeTable(crc32.Castagnoli)))
	}
	// The tail of a file without a basis: fast flag, fast passes,
	// refinement field (8 bytes each).
	remake := func(ver uint64, drop int) []byte {
		b := append([]byte(nil), body[:len(body)-drop]...)
		binary.LittleEndian.PutUint64(b[8:], ver)
		return seal(b)
	}
	// withBasis sets the refinement field to field and appends w values
	// per sample and a w x w rotation (values 100, 101, ...).
	withBasis := func(ver, field uint64, w int) []byte {
		b := append([]byte(nil), body...)
		binary.LittleEndian.PutUint64(b[8:], ver)
		binary.LittleEndian.PutUint64(b[len(b)-8:], field)
		for i := 0; i < 3*w+w*w; i++ {
			b = binary.LittleEndian.AppendUint64(b, math.Float64bits(float64(100+i)))
		}
		return seal(b)
	}
	noBasis := append([]byte(nil), body...)
	binary.LittleEndian.PutUint64(noBasis[len(noBasis)-8:], 1)
	cases := []struct {
		name       string
		file       []byte
		fast       bool
		fastPasses int
		width      int
		err        string
	}{
		{"version 4", v4, true, 3, 0, ""},
		{"version 4, wanted pairs refined", withBasis(4, 1, 1), true, 3, 1, ""},
		{"version 4, all refined", withBasis(4, 2, 2), true, 3, 2, ""},
		{"version 3", remake(3, 0), true, 3, 0, ""},
		{"version 3 with a basis", withBasis(3, 1, 2), true, 3, 2, ""},
		{"version 2", remake(2, 8), true, 3, 0, ""},
		{"version 1", remake(1, 24), false, 0, 0, ""},
		{"refinement field without basis", seal(noBasis), false, 0, 0, "bad refinement field"},
		{"refinement wider than l", withBasis(4, 3, 3), false, 0, 0, "bad refinement field"},
		{"version 3 flag of 2", withBasis(3, 2, 2), false, 0, 0, "bad refinement field"},
		{"one history row for 4 passes", oddFile, false, 0, 0, "sizes do not match"},
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
			if got.Pass != 4 || got.Fast != tc.fast || got.FastPasses != tc.fastPasses ||
				got.TraceSqEst != 7 || got.PrevCaptured != 17 || got.U[5] != 6 || got.AU[0] != 6 || got.Theta[1] != 8 || got.History[0][0] != 0.5 {
				t.Errorf("read back %+v", got)
			}
			w := tc.width
			if got.refineWidth() != w || len(got.RefineIn) != 3*w || len(got.Rot) != w*w {
				t.Fatalf("refinement width %d (basis %d, rotation %d values), want %d", got.refineWidth(), len(got.RefineIn), len(got.Rot), w)
			}
			if w > 0 && (got.RefineIn[0] != 100 || got.Rot[w*w-1] != float64(100+3*w+w*w-1)) {
				t.Errorf("basis %v, rotation %v", got.RefineIn, got.Rot)
			}
		})
	}
}
