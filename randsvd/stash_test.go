package randsvd

import (
	"context"
	"math"
	"testing"

	"github.com/clinal/clinal/matrixio"
	"gonum.org/v1/gonum/mat"
)

// denseZ is the Patterson et al. 2006 standardized matrix (markers x
// samples, missing calls 0, monomorphic markers dropped) built with gonum
// from the genotype codes, as denseK.
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
			if u := res.stash.usable(op, res.BlockSize); u != tc.wantStash {
				t.Fatalf("stash usable %v, want %v", u, tc.wantStash)
			}
			if op.NumKeptMarkers() != m {
				t.Fatalf("%d kept markers, dense reference has %d", op.NumKeptMarkers(), m)
			}
			var ref mat.Dense
			ref.Mul(z, res.Scores)
			seen := 0
			var worst, top float64
			err = Loadings(context.Background(), op, res, func(ord int, v []float64) error {
				if ord != seen {
					t.Fatalf("row %d came as ordinal %d", seen, ord)
				}
				seen++
				got[tc.name] = append(got[tc.name], v...)
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
			if seen != m {
				t.Fatalf("%d loadings rows, want %d", seen, m)
			}
			// Float64 sums of 240 terms, reassociated: 1e-12 of the
			// largest loading (common practice, no source).
			if worst > 1e-12*top {
				t.Errorf("loadings differ from gonum's Z u / sqrt(M lambda) by %g (largest %g)", worst, top)
			}
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
