package randsvd

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// TestOrthonormalizeAgainst: a block orthonormalized against an
// orthonormal basis A is orthonormal and orthogonal to A to a few units of
// roundoff (the defining property; Giraud et al. 2005 and Barlow &
// Smoktunowicz 2013 bound the loss of orthogonality of Gram-Schmidt twice
// by O(eps)), also when two of its columns are nearly dependent (the
// residual block near convergence) and when a column lies in span A and
// must be replaced from the refill source. 1e-13 is about 500 units of
// roundoff (eps = 2.2e-16), far below what one pass of block Gram-Schmidt
// leaves at dependence 1e-8 (about 1e-8).
func TestOrthonormalizeAgainst(t *testing.T) {
	const n, na, nb = 500, 10, 6
	r := rand.New(rand.NewPCG(9, 9))
	gauss := func(rows, cols int) *mat.Dense {
		m := mat.NewDense(rows, cols, nil)
		for i := 0; i < rows; i++ {
			for j := 0; j < cols; j++ {
				m.Set(i, j, r.NormFloat64())
			}
		}
		return m
	}
	a := gauss(n, na)
	if err := orthonormalizeWith(a, nil, nil); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name  string
		delta float64 // column 3 = column 2 + delta * noise
		inA   bool    // column 4 lies in span A
	}{
		{"independent", 1, false},
		{"dependence 1e-4", 1e-4, false},
		{"dependence 1e-6", 1e-6, false},
		{"dependence 1e-8", 1e-8, false},
		{"dependence 1e-9", 1e-9, false},
		{"a column in span A", 1, true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			q := gauss(n, nb)
			for i := 0; i < n; i++ {
				q.Set(i, 3, q.At(i, 2)+tc.delta*r.NormFloat64())
			}
			if tc.inA {
				var c mat.VecDense
				c.MulVec(a, mat.NewVecDense(na, []float64{1, -2, 0.5, 0, 3, 0, 0, 1, 0, -1}))
				q.SetCol(4, c.RawVector().Data)
			}
			if err := orthonormalizeWith(q, nil, &orthOpts{against: a, refill: rand.New(rand.NewPCG(1, 2))}); err != nil {
				t.Fatal(err)
			}
			var atq, qtq mat.Dense
			atq.Mul(a.T(), q)
			qtq.Mul(q.T(), q)
			worst := func(m *mat.Dense, id bool) float64 {
				rows, cols := m.Dims()
				w := 0.0
				for i := 0; i < rows; i++ {
					for j := 0; j < cols; j++ {
						v := m.At(i, j)
						if id && i == j {
							v--
						}
						w = math.Max(w, math.Abs(v))
					}
				}
				return w
			}
			if w := worst(&atq, false); w > 1e-13 {
				t.Errorf("max |A^T Q| = %.3g, want <= 1e-13", w)
			}
			if w := worst(&qtq, true); w > 1e-13 {
				t.Errorf("max |Q^T Q - I| = %.3g, want <= 1e-13", w)
			}
		})
	}
}
