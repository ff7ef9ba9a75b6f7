package randsvd

import (
	"context"
	"math"
	"testing"

	"github.com/clinal/clinal/matrixio"
	"gonum.org/v1/gonum/mat"
)

// denseZ is the Patterson et al. 2006 standardized matrix (markers x
// samples, missing calls 0, monomorphic markers dropped) built in float64
// directly from the genotype codes: the reference of denseK and of the
// loadings tests.
func denseZ(geno [][]byte, n int) *mat.Dense {
	var rows [][]float64
	for _, g := range geno {
		var s, c float64
		for _, v := range g {
			if v != matrixio.Missing {
				s += float64(v)
				c++
			}
		}
		p := s / (2 * c)
		sd := math.Sqrt(2 * p * (1 - p))
		if !(sd > 1e-12) {
			continue
		}
		r := make([]float64, n)
		for i, v := range g {
			if v != matrixio.Missing {
				r[i] = (float64(v) - 2*p) / sd
			}
		}
		rows = append(rows, r)
	}
	z := mat.NewDense(len(rows), n, nil)
	for j, r := range rows {
		z.SetRow(j, r)
	}
	return z
}

// TestLoadingsAgainstDense checks the marker loadings v_k = Z u_k /
// sqrt(M lambda_k) of Loadings against the product computed by gonum from
// the dense standardized matrix and the run's own scores (the definition),
// whether Z times the refinement basis comes from the stash or from a half
// pass (these two must agree bit for bit: a resumed run has no stash), and
// for a run of exact passes, which has no refinement basis.
func TestLoadingsAgainstDense(t *testing.T) {
	st, geno := testCohort(t, 240, 1500, 3, 0.05, 0.02, 21, 100)
	z := denseZ(geno, 240)
	m, _ := z.Dims()
	cases := []struct {
		name      string
		stash     bool
		exact     bool
		wantStash bool
	}{
		{"fast passes, stash", true, false, true},
		{"fast passes, half pass", false, false, false},
		{"exact passes (no refinement pass)", true, true, false},
	}
	got := map[string][]float64{}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			opt := PCAOptions{K: 4, Seed: 3, Threads: 2, TW: "off", ExactPasses: tc.exact}
			if tc.stash {
				opt.LoadingsStash = t.TempDir()
			}
			res, op, err := RunPCA(context.Background(), st, opt)
			if err != nil {
				t.Fatal(err)
			}
			if (res.Rotation != nil) == tc.exact {
				t.Fatalf("rotation %v with exact passes %v (stop %s after %d passes, %d fast)", res.Rotation != nil, tc.exact, res.StopReason, res.Passes, res.FastPasses)
			}
			if u := res.stash.usable(op, rotationRows(res)); u != tc.wantStash {
				t.Fatalf("stash usable %v, want %v", u, tc.wantStash)
			}
			if op.NumKeptMarkers() != m {
				t.Fatalf("%d kept markers, dense reference has %d", op.NumKeptMarkers(), m)
			}
			got[tc.name] = loadingsVsDense(t, op, res, z)
			if res.stash != nil {
				t.Error("Loadings left the stash open")
			}
		})
	}
	a, b := got[cases[0].name], got[cases[1].name]
	if len(a) != len(b) {
		t.Fatalf("%d and %d loadings", len(a), len(b))
	}
	for i := range a {
		if a[i] != b[i] {
			t.Fatalf("loading %d: %v from the stash, %v from a half pass", i, a[i], b[i])
		}
	}
}

// loadingsVsDense runs Loadings and checks every value against gonum's
// Z u_k / sqrt(M lambda_k) from the run's own scores, to 1e-12 of the
// largest (as TestLoadingsAgainstDense); it returns the values in order.
func loadingsVsDense(t *testing.T, op *Operator, res *PCAResult, z *mat.Dense) []float64 {
	t.Helper()
	m, _ := z.Dims()
	var ref mat.Dense
	ref.Mul(z, res.Scores)
	var got []float64
	var worst, top float64
	seen := 0
	err := Loadings(context.Background(), op, res, func(ord int, v []float64) error {
		if ord != seen {
			t.Fatalf("row %d came as ordinal %d", seen, ord)
		}
		seen++
		got = append(got, v...)
		for k, x := range v {
			want := ref.At(ord, k) / math.Sqrt(float64(m)*res.Eigenvalues[k])
			worst = math.Max(worst, math.Abs(x-want))
			top = math.Max(top, math.Abs(want))
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	if _, k := res.Scores.Dims(); seen != m || len(got) != m*k {
		t.Fatalf("%d loadings rows of %d values, want %d x %d", seen, len(got), m, k)
	}
	// Float64 sums of a few hundred terms, reassociated: 1e-12 of the
	// largest loading (common practice, no source).
	if worst > 1e-12*top {
		t.Errorf("loadings differ from gonum's Z u / sqrt(M lambda) by %g (largest %g)", worst, top)
	}
	return got
}

// TestLoadingsStashCases covers the ways a run's loadings can be made:
// after -k auto's Truncate (the rotation keeps the first k columns), a
// second call after the stash was used (a half pass over the basis, bit
// for bit the same), one and two threads (bit for bit), and a run whose
// refinement pass is followed by more float64 passes (a tol below the
// float32 floor: no rotation, the stash given back, a half pass over the
// scores). The
// reference is gonum's product, as above.
func TestLoadingsStashCases(t *testing.T) {
	st, geno := testCohort(t, 200, 1200, 3, 0.05, 0.02, 23, 100)
	z := denseZ(geno, 200)
	run := func(t *testing.T, opt PCAOptions) (*PCAResult, *Operator) {
		t.Helper()
		opt.Seed, opt.TW, opt.LoadingsStash = 4, "off", t.TempDir()
		if opt.Threads == 0 {
			opt.Threads = 2
		}
		res, op, err := RunPCA(context.Background(), st, opt)
		if err != nil {
			t.Fatal(err)
		}
		return res, op
	}
	same := func(t *testing.T, what string, a, b []float64) {
		t.Helper()
		if len(a) != len(b) {
			t.Fatalf("%s: %d and %d values", what, len(a), len(b))
		}
		for i := range a {
			if a[i] != b[i] {
				t.Fatalf("%s: value %d: %v and %v", what, i, a[i], b[i])
			}
		}
	}
	t.Run("truncated", func(t *testing.T) {
		res, op := run(t, PCAOptions{K: 5})
		res.Truncate(2)
		if _, c := res.Rotation.Dims(); c != 2 {
			t.Fatalf("rotation has %d columns after Truncate(2)", c)
		}
		loadingsVsDense(t, op, res, z)
	})
	t.Run("second call and threads", func(t *testing.T) {
		res, op := run(t, PCAOptions{K: 4})
		if !res.stash.usable(op, rotationRows(res)) {
			t.Fatal("no usable stash")
		}
		first := loadingsVsDense(t, op, res, z)
		second := loadingsVsDense(t, op, res, z) // the stash is gone: a half pass
		same(t, "stash then half pass", first, second)
		res1, op1 := run(t, PCAOptions{K: 4, Threads: 1})
		same(t, "1 and 2 threads", first, loadingsVsDense(t, op1, res1, z))
	})
	t.Run("passes after the refinement", func(t *testing.T) {
		// A tol below the fast passes' floor: the fast phase stops on the
		// bulk test, the refinement pass misses the tol, float64 passes
		// follow.
		res, op := run(t, PCAOptions{K: 4, Tol: 1e-10, MaxPasses: 14})
		if res.Passes <= res.FastPasses+1 {
			t.Fatalf("%d passes, %d fast, stop %s: want float64 passes after the refinement", res.Passes, res.FastPasses, res.StopReason)
		}
		if res.Rotation != nil || res.stash == nil || res.stash.pass != 0 {
			t.Fatalf("rotation %v, stash %+v: want none and a discarded stash", res.Rotation != nil, res.stash)
		}
		if fi, err := res.stash.f.Stat(); err != nil || fi.Size() != 0 {
			t.Errorf("discarded stash still holds %v bytes (%v)", fi.Size(), err)
		}
		loadingsVsDense(t, op, res, z)
	})
}

// rotationRows is the width of the basis the loadings of res are computed
// from (0 without a refinement).
func rotationRows(res *PCAResult) int {
	if res.Rotation == nil {
		return 0
	}
	return res.Rotation.RawMatrix().Rows
}
