package randsvd

import (
	"context"
	"math"
	"math/rand/v2"
	"path/filepath"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// TestFloatOperatorMatchesDense checks a pass over a float (dosage) store,
// computed by the dense fmaRows kernels, against K X with K = Z^T Z / M
// formed by gonum's dense mat.Dense products from the same standardized
// values (dosage scaling: z = (x - mean)/sqrt(2p(1-p)), p = mean/2, missing
// as 0; the operator's documented convention), with a third of the
// samples dropped, for 1 and 3 threads: equal to 1e-12 relative, and bit
// for bit across thread counts.
func TestFloatOperatorMatchesDense(t *testing.T) {
	const n, m, l = 61, 90, 6
	d := prjSimulate(prjConfig{n: n, m: m, pops: 2, fst: 0.05, miss: 0.05, seed: 4})
	r := rand.New(rand.NewPCG(8, 8))
	offsets := make([]float32, n)
	for i := range offsets {
		offsets[i] = float32(r.Float64()*0.4 - 0.2)
	}
	st, vals := prjWriteFloats(t, filepath.Join(t.TempDir(), "f.clinal"), d, func(i int) float32 { return offsets[i] })
	defer st.Close()
	keep := make([]bool, n)
	var kept []int
	for i := range keep {
		keep[i] = i%3 != 0
		if keep[i] {
			kept = append(kept, i)
		}
	}
	counts, err := CountKept(context.Background(), st, keep, 1)
	if err != nil {
		t.Fatal(err)
	}
	// The dense reference: Z (markers x kept samples) from the values.
	nk := len(kept)
	var rows [][]float64
	for j := range vals {
		c := counts[j]
		called := float64(c.Called())
		mu := c.Sum / called
		p := mu / 2
		sd := math.Sqrt(2 * p * (1 - p))
		if called == 0 || !(sd > 1e-12) {
			continue
		}
		row := make([]float64, nk)
		for r, i := range kept {
			if v := vals[j][i]; v == v {
				row[r] = (float64(v) - mu) / sd
			}
		}
		rows = append(rows, row)
	}
	z := mat.NewDense(len(rows), nk, nil)
	for j, row := range rows {
		z.SetRow(j, row)
	}
	x := mat.NewDense(nk, l, nil)
	for i := 0; i < nk; i++ {
		for k := 0; k < l; k++ {
			x.Set(i, k, r.NormFloat64())
		}
	}
	var zx, want mat.Dense
	zx.Mul(z, x)
	want.Mul(z.T(), &zx)
	want.Scale(1/float64(len(rows)), &want)
	var first []float64
	for _, th := range []int{1, 3} {
		op, err := NewOperator(st, OperatorOptions{SampleKept: keep, Counts: counts, Threads: th})
		if err != nil {
			t.Fatal(err)
		}
		y := make([]float64, nk*l)
		if err := op.Apply(context.Background(), x.RawMatrix().Data, y, l); err != nil {
			t.Fatal(err)
		}
		wd := want.RawMatrix().Data
		for i := range y {
			if math.Abs(y[i]-wd[i]) > 1e-12*(1+math.Abs(wd[i])) {
				t.Fatalf("threads %d: y[%d] = %v, dense %v", th, i, y[i], wd[i])
			}
		}
		if first == nil {
			first = y
		} else {
			for i := range y {
				if y[i] != first[i] {
					t.Fatalf("threads %d: y[%d] differs bitwise from threads 1", th, i)
				}
			}
		}
	}
}
