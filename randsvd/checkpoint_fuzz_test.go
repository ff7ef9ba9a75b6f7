package randsvd

import (
	"os"
	"path/filepath"
	"testing"
)

// FuzzReadCheckpoint feeds ReadCheckpoint arbitrary files: it must return a
// state or an error, never panic or allocate beyond what the file's size
// allows (sizes are checked against the length first), and a state it
// returns must be self-consistent. Seeds: checkpoints written by this code
// (version 4) without a refinement basis, with one of all l columns and
// with one of fewer.
func FuzzReadCheckpoint(f *testing.F) {
	dir := f.TempDir()
	st := &State{Pass: 3, L: 2, N: 3, U: []float64{1, 2, 3, 4, 5, 6}, AU: []float64{6, 5, 4, 3, 2, 1},
		Theta: []float64{2, 1}, TraceSqEst: 4, PrevCaptured: 3, History: [][]float64{{0.1}, {0.01}, {0.001}}, Fast: true, FastPasses: 2}
	refined := *st
	refined.RefineIn, refined.Rot = []float64{1, 0, 0, 1, 0, 0}, []float64{0, 1, 1, 0}
	narrow := *st
	narrow.RefineIn, narrow.Rot = []float64{1, 0, 0}, []float64{1}
	for i, s := range []*State{st, &refined, &narrow} {
		p := filepath.Join(dir, "seed"+itoa(i))
		if err := WriteCheckpoint(p, "key", s); err != nil {
			f.Fatal(err)
		}
		b, err := os.ReadFile(p)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(b)
	}
	f.Fuzz(func(t *testing.T, b []byte) {
		p := filepath.Join(t.TempDir(), "c.ckpt")
		if err := os.WriteFile(p, b, 0o600); err != nil {
			t.Fatal(err)
		}
		s, err := ReadCheckpoint(p, "key")
		if err != nil || s == nil {
			return
		}
		if len(s.U) != s.N*s.L || len(s.AU) != s.N*s.L || len(s.Theta) != s.L || s.FastPasses > s.Pass {
			t.Fatalf("inconsistent state: n %d, l %d, U %d, AU %d, theta %d", s.N, s.L, len(s.U), len(s.AU), len(s.Theta))
		}
		if len(s.History) != s.Pass {
			t.Fatalf("%d history rows for pass %d", len(s.History), s.Pass)
		}
		if w := s.refineWidth(); s.RefineIn != nil && (w < 1 || w > s.L) {
			t.Fatalf("refinement basis %d and rotation %d for n %d, l %d", len(s.RefineIn), len(s.Rot), s.N, s.L)
		}
	})
}
