package randsvd

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"path/filepath"
	"slices"
	"testing"

	"github.com/clinal/clinal/matrixio"
	"gonum.org/v1/gonum/mat"
)

// testCohort writes a store of n samples x m markers drawn from pops
// populations whose allele frequencies differ by about fst (Balding &
// Nichols 1995 style Beta draws), with missing calls at rate miss, and
// returns the store and the genotype codes (marker-major) for the dense
// reference.
func testCohort(t testing.TB, n, m, pops int, fst, miss float64, seed uint64, chunk int) (*matrixio.Store, [][]byte) {
	t.Helper()
	return testCohortFreq(t, n, m, pops, fst, miss, seed, chunk, func(r *rand.Rand) float64 { return 0.05 + 0.9*r.Float64() })
}

// testCohortFreq is testCohort with the ancestral allele frequency of each
// marker drawn by freq.
func testCohortFreq(t testing.TB, n, m, pops int, fst, miss float64, seed uint64, chunk int, freq func(*rand.Rand) float64) (*matrixio.Store, [][]byte) {
	t.Helper()
	r := rand.New(rand.NewPCG(seed, 7))
	samples := make([]string, n)
	for i := range samples {
		samples[i] = "s" + itoa(i)
	}
	path := filepath.Join(t.TempDir(), "c.clinal")
	w, err := matrixio.Create(path, samples, matrixio.WriterOptions{ChunkMarkers: chunk, Threads: 2})
	if err != nil {
		t.Fatal(err)
	}
	geno := make([][]byte, m)
	for j := 0; j < m; j++ {
		p := freq(r)
		g := make([]byte, n)
		fr := make([]float64, pops)
		for k := range fr {
			fr[k] = p
			if fst > 0 {
				fr[k] = betaDraw(r, p*(1-fst)/fst, (1-p)*(1-fst)/fst)
			}
		}
		for i := range g {
			q := fr[i*pops/n]
			v := byte(0)
			if r.Float64() < q {
				v++
			}
			if r.Float64() < q {
				v++
			}
			if r.Float64() < miss {
				v = matrixio.Missing
			}
			g[i] = v
		}
		geno[j] = g
		if err := w.AddGenotypes(matrixio.Marker{Chrom: "1", Pos: int64(j + 1), ID: "m" + itoa(j), Ref: "A", Alt: "G"}, g); err != nil {
			t.Fatal(err)
		}
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	st, err := matrixio.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { st.Close() })
	return st, geno
}

func itoa(i int) string {
	const d = "0123456789"
	if i == 0 {
		return "0"
	}
	var b []byte
	for i > 0 {
		b = append([]byte{d[i%10]}, b...)
		i /= 10
	}
	return string(b)
}

// betaDraw samples Beta(a, b) from two Gamma draws (Marsaglia & Tsang 2000).
func betaDraw(r *rand.Rand, a, b float64) float64 {
	x, y := gammaDraw(r, a), gammaDraw(r, b)
	return x / (x + y)
}

func gammaDraw(r *rand.Rand, a float64) float64 {
	if a < 1 {
		return gammaDraw(r, a+1) * math.Pow(r.Float64(), 1/a)
	}
	d := a - 1.0/3
	c := 1 / math.Sqrt(9*d)
	for {
		x := r.NormFloat64()
		v := 1 + c*x
		if v <= 0 {
			continue
		}
		v = v * v * v
		u := r.Float64()
		if math.Log(u) < 0.5*x*x+d-d*v+d*math.Log(v) {
			return d * v
		}
	}
}

// denseK builds K = Z^T Z / M with gonum from denseZ (the reference the
// operator must match).
func denseK(geno [][]byte, n int) *mat.SymDense {
	z := denseZ(geno, n)
	m, _ := z.Dims()
	k := mat.NewSymDense(n, nil)
	k.SymOuterK(1/float64(m), z.T())
	return k
}

type denseOp struct{ k *mat.SymDense }

func (d denseOp) Dim() int { return d.k.SymmetricDim() }
func (d denseOp) Apply(_ context.Context, x, y []float64, l int) error {
	n := d.Dim()
	var out mat.Dense
	out.Mul(d.k, mat.NewDense(n, l, x))
	copy(y, out.RawMatrix().Data)
	return nil
}

// TestOperatorMatchesDense checks one pass of the store operator against
// the dense float64 K from gonum (the reference library), for 1 and 3
// threads, and that the results are bit-identical across thread counts.
func TestOperatorMatchesDense(t *testing.T) {
	st, geno := testCohort(t, 203, 517, 3, 0.05, 0.02, 1, 64)
	ref := denseOp{denseK(geno, 203)}
	l := 7
	r := rand.New(rand.NewPCG(3, 4))
	x := make([]float64, 203*l)
	for i := range x {
		x[i] = r.NormFloat64()
	}
	want := make([]float64, len(x))
	ref.Apply(context.Background(), x, want, l)
	var first, firstFast []float64
	for _, th := range []int{1, 3} {
		op, err := NewOperator(st, OperatorOptions{Threads: th})
		if err != nil {
			t.Fatal(err)
		}
		got := make([]float64, len(x))
		if err := op.Apply(context.Background(), x, got, l); err != nil {
			t.Fatal(err)
		}
		for i := range got {
			if d := math.Abs(got[i] - want[i]); d > 1e-12*(1+math.Abs(want[i])) {
				t.Fatalf("threads %d: y[%d] = %v, dense %v", th, i, got[i], want[i])
			}
		}
		if first == nil {
			first = got
		} else {
			for i := range got {
				if got[i] != first[i] {
					t.Fatalf("threads %d: y[%d] differs bitwise from threads 1", th, i)
				}
			}
		}
		// A fast pass (float32 tables, fast.go) agrees with the dense
		// float64 K X (gonum, denseK) to 1e-6 in norm: the float32 unit
		// roundoff is 2^-24, about 6e-8 (IEEE 754 binary32; common
		// practice, no source), and fast.go's policy promises about 1e-7.
		// It is also bit for bit the same across thread counts.
		fast := make([]float64, len(x))
		if err := op.ApplyFast(context.Background(), x, fast, l); err != nil {
			t.Fatal(err)
		}
		var dn, wn float64
		for i := range fast {
			dn += (fast[i] - want[i]) * (fast[i] - want[i])
			wn += want[i] * want[i]
		}
		if rel := math.Sqrt(dn / wn); rel > 1e-6 || rel == 0 {
			t.Errorf("threads %d: fast pass relative error %g, want in (0, 1e-6]", th, rel)
		} else {
			t.Logf("threads %d: fast pass relative error %.2g", th, rel)
		}
		if firstFast == nil {
			firstFast = fast
		} else {
			for i := range fast {
				if fast[i] != firstFast[i] {
					t.Fatalf("threads %d: fast y[%d] differs bitwise from threads 1", th, i)
				}
			}
		}
		// Trace: exact, equal to the dense trace.
		if d := math.Abs(op.Trace() - mat.Trace(ref.k)); d > 1e-10*mat.Trace(ref.k) {
			t.Errorf("trace %v, dense %v", op.Trace(), mat.Trace(ref.k))
		}
	}
}

// TestOperatorManySegments is TestOperatorMatchesDense at sample counts
// with many segments and the second product's other splits, for rows of
// 32 columns (ranges of 4,096 samples, secondRange), of 20 (ranges of
// 8,192) and of 8 (ranges of 16,384, the longest): 9,003 samples (18
// segments, not a multiple of four: one sample job per thread, each in
// ranges of at most secondRange samples: three at 32 columns, two at 20),
// 5,001 at 20 columns, 3,001 at 32 and 16,003 at 8 (10, 6 and 32
// segments: the block's marker tiles in two parts, secondParts). Exact
// and fast passes for 1, 2, 3 and 7 threads must be bit-identical, and
// agree with K X computed as Z^T (Z X) / M from gonum's dense products of
// denseZ (the dense K itself would take 650 MB), exact to 1e-12 and fast
// to 1e-6 in norm (float32 unit roundoff 6e-8; common practice, no
// source).
func TestOperatorManySegments(t *testing.T) {
	for _, tc := range []struct{ n, l, parts int }{{9003, 30, 1}, {9003, 20, 1}, {5001, 20, 2}, {3001, 30, 2}, {16003, 8, 2}} {
		t.Run(fmt.Sprintf("n=%d/l=%d", tc.n, tc.l), func(t *testing.T) {
			if p := secondParts(tc.n, (tc.l+3)&^3); p != tc.parts {
				t.Fatalf("secondParts(%d, %d) = %d, the test wants %d", tc.n, tc.l, p, tc.parts)
			}
			operatorManySegments(t, tc.n, tc.l)
		})
	}
}

func operatorManySegments(t *testing.T, n, l int) {
	const m = 203
	st, geno := testCohort(t, n, m, 3, 0.05, 0.02, 5, 37)
	z := denseZ(geno, n)
	mk, _ := z.Dims()
	r := rand.New(rand.NewPCG(5, 6))
	x := make([]float64, n*l)
	for i := range x {
		x[i] = r.NormFloat64()
	}
	var zx, ref mat.Dense
	zx.Mul(z, mat.NewDense(n, l, x))
	ref.Mul(z.T(), &zx)
	ref.Scale(1/float64(mk), &ref)
	want := ref.RawMatrix().Data
	relErr := func(got []float64) float64 {
		var dn, wn float64
		for i := range got {
			dn += (got[i] - want[i]) * (got[i] - want[i])
			wn += want[i] * want[i]
		}
		return math.Sqrt(dn / wn)
	}
	var first, firstFast []float64
	for _, th := range []int{1, 2, 3, 7} {
		op, err := NewOperator(st, OperatorOptions{Threads: th})
		if err != nil {
			t.Fatal(err)
		}
		if len(op.segs)-1 < 6 {
			t.Fatalf("%d segments: the test wants many", len(op.segs)-1)
		}
		got := make([]float64, len(x))
		fast := make([]float64, len(x))
		if err := op.Apply(context.Background(), x, got, l); err != nil {
			t.Fatal(err)
		}
		if err := op.ApplyFast(context.Background(), x, fast, l); err != nil {
			t.Fatal(err)
		}
		if e := relErr(got); e > 1e-12 {
			t.Errorf("threads %d: exact pass relative error %g, want <= 1e-12", th, e)
		}
		if e := relErr(fast); e > 1e-6 || e == 0 {
			t.Errorf("threads %d: fast pass relative error %g, want in (0, 1e-6]", th, e)
		}
		if first == nil {
			first, firstFast = got, fast
			continue
		}
		for i := range got {
			if got[i] != first[i] || fast[i] != firstFast[i] {
				t.Fatalf("threads %d: y[%d] differs bitwise from threads 1 (exact %v vs %v, fast %v vs %v)", th, i, got[i], first[i], fast[i], firstFast[i])
			}
		}
	}
}

// TestSolveAgainstEigenSym compares the solver's eigenpairs with gonum's
// dense mat.EigenSym of K on structured and null cohorts.
func TestSolveAgainstEigenSym(t *testing.T) {
	cases := []struct {
		name       string
		n, m, pops int
		fst        float64
		seed       uint64
		sig        int // structured PCs (pops-1)
	}{
		{"structured-3pop", 300, 3000, 3, 0.05, 11, 2},
		{"structured-5pop", 250, 2000, 5, 0.08, 12, 4},
		{"null", 200, 1500, 1, 0, 13, 0},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			st, geno := testCohort(t, tc.n, tc.m, tc.pops, tc.fst, 0.01, tc.seed, 128)
			kd := denseK(geno, tc.n)
			var es mat.EigenSym
			if !es.Factorize(kd, true) {
				t.Fatal("EigenSym failed")
			}
			vals := es.Values(nil)
			var vecs mat.Dense
			es.VectorsTo(&vecs)
			op, err := NewOperator(st, OperatorOptions{Threads: 2})
			if err != nil {
				t.Fatal(err)
			}
			k := 10
			// A tight tolerance without the bulk stop, and the defaults of
			// clinal pca (tol 1e-6, the Marchenko-Pastur bulk stop) with
			// three solver seeds; fast passes then an exact finish in all.
			runs := []SolveOptions{{K: k, Seed: 5, Tol: 1e-7}}
			for _, seed := range []uint64{5, 6, 7} {
				runs = append(runs, SolveOptions{K: k, Seed: seed, BulkEdge: MPUpperEdgeScaled(op.Trace(), op.Dim(), op.Markers())})
			}
			for _, so := range runs {
				res, err := Solve(context.Background(), op, so)
				if err != nil {
					t.Fatal(err)
				}
				t.Logf("tol %g (0: the default 1e-6), bulk edge %.3f, seed %d: %d passes (%d fast), stop %s, rel residuals %.2g", so.Tol, so.BulkEdge, so.Seed, res.Passes, res.FastPasses, res.StopReason, res.History[len(res.History)-1])
				var capt, exact float64
				for j := 0; j < k; j++ {
					ev := vals[tc.n-1-j]
					exact += ev
					u := res.Vectors.ColView(j)
					var ku mat.VecDense
					ku.MulVec(kd, u)
					capt += mat.Dot(u, &ku)
					if j < tc.sig {
						if rel := math.Abs(res.Eigenvalues[j]-ev) / ev; rel > 1e-8 {
							t.Errorf("PC%d: eigenvalue %v, EigenSym %v (rel %g)", j+1, res.Eigenvalues[j], ev, rel)
						}
						ref := vecs.ColView(tc.n - 1 - j)
						c := math.Min(1, math.Abs(mat.Dot(u, ref)))
						if ang := math.Acos(c); ang > 1e-6 {
							t.Errorf("PC%d: angle to EigenSym vector %g rad", j+1, ang)
						}
					}
				}
				t.Logf("captured variance of the top %d: %.5f of exact", k, capt/exact)
				if capt/exact < 0.99 {
					t.Errorf("captured variance of top %d: %v of exact", k, capt/exact)
				}
			}
		})
	}
}

// TestExactTraceSq checks trace(K^2) computed through the operator against
// the dense K from gonum: sum of squared entries (the Frobenius norm).
func TestExactTraceSq(t *testing.T) {
	st, geno := testCohort(t, 97, 300, 2, 0.05, 0.02, 31, 32)
	kd := denseK(geno, 97)
	var want float64
	for i := 0; i < 97; i++ {
		for j := 0; j < 97; j++ {
			want += kd.At(i, j) * kd.At(i, j)
		}
	}
	op, err := NewOperator(st, OperatorOptions{Threads: 2})
	if err != nil {
		t.Fatal(err)
	}
	got, err := ExactTraceSq(context.Background(), op, 32)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(got-want) > 1e-12*want {
		t.Errorf("trace(K^2) %v, dense %v", got, want)
	}
}

// TestTW1TailAsymptote checks the far right tail used beyond s = 40
// against the Fredholm-determinant quadrature: the ratio tends to 1 as s
// grows (within 1% at s = 40) and the survival function stays finite and
// decreasing far out (s = 79, which once panicked, and beyond).
func TestTW1TailAsymptote(t *testing.T) {
	prev := 2.0
	for _, s := range []float64{10, 20, 30, 39.9} {
		r := TW1Survival(s) / tw1Tail(s)
		if math.Abs(r-1) > 0.35/math.Sqrt(s) {
			t.Errorf("s %v: quadrature / asymptote = %v", s, r)
		}
		if math.Abs(r-1) > prev {
			t.Errorf("s %v: ratio %v does not approach 1", s, r)
		}
		prev = math.Abs(r - 1)
	}
	for _, s := range []float64{41, 79.06, 150, 1e4} {
		p := TW1Survival(s)
		if !(p >= 0 && p < 1e-75) {
			t.Errorf("TW1Survival(%v) = %v", s, p)
		}
	}
}

// TestOperatorDroppedSamplesMissing: with a sample mask, markers whose kept
// samples are all called (their rows are not scanned for missing calls)
// while dropped samples have missing calls there, and markers with missing
// calls among the kept samples too. The operator over the kept samples must
// match the dense K of the kept columns from gonum (denseK), exact to 1e-12
// and fast to 1e-6 as in TestOperatorMatchesDense.
func TestOperatorDroppedSamplesMissing(t *testing.T) {
	n, m := 150, 240
	r := rand.New(rand.NewPCG(9, 9))
	keep := make([]bool, n)
	for i := range keep {
		keep[i] = i%5 != 0
	}
	ids := make([]string, n)
	for i := range ids {
		ids[i] = "s" + itoa(i)
	}
	path := filepath.Join(t.TempDir(), "d.clinal")
	w, err := matrixio.Create(path, ids, matrixio.WriterOptions{ChunkMarkers: 40})
	if err != nil {
		t.Fatal(err)
	}
	var kept [][]byte
	for j := 0; j < m; j++ {
		p := 0.1 + 0.8*r.Float64()
		g := make([]byte, n)
		for i := range g {
			for range 2 {
				if r.Float64() < p {
					g[i]++
				}
			}
			// Even markers: missing calls on dropped samples only.
			if (j%2 == 1 || !keep[i]) && r.Float64() < 0.1 {
				g[i] = matrixio.Missing
			}
		}
		if err := w.AddGenotypes(matrixio.Marker{Chrom: "1", Pos: int64(j + 1), ID: "m" + itoa(j), Ref: "A", Alt: "G"}, g); err != nil {
			t.Fatal(err)
		}
		var gk []byte
		for i, v := range g {
			if keep[i] {
				gk = append(gk, v)
			}
		}
		kept = append(kept, gk)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	st, err := matrixio.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer st.Close()
	counts, err := CountKept(context.Background(), st, keep, 2)
	if err != nil {
		t.Fatal(err)
	}
	nk := len(kept[0])
	ref := denseOp{denseK(kept, nk)}
	l := 5
	x := make([]float64, nk*l)
	for i := range x {
		x[i] = r.NormFloat64()
	}
	want := make([]float64, len(x))
	ref.Apply(context.Background(), x, want, l)
	op, err := NewOperator(st, OperatorOptions{Threads: 2, SampleKept: keep, Counts: counts})
	if err != nil {
		t.Fatal(err)
	}
	complete := 0
	for ord := range op.markers {
		if op.complete[ord/64]&(1<<(ord%64)) != 0 {
			complete++
		}
	}
	if complete != m/2 {
		t.Fatalf("%d markers without missing calls among the kept samples, want %d", complete, m/2)
	}
	for _, fast := range []bool{false, true} {
		got := make([]float64, len(x))
		if err := op.apply(context.Background(), x, got, l, fast); err != nil {
			t.Fatal(err)
		}
		var dn, wn, worst float64
		for i := range got {
			dn += (got[i] - want[i]) * (got[i] - want[i])
			wn += want[i] * want[i]
			worst = math.Max(worst, math.Abs(got[i]-want[i])/(1+math.Abs(want[i])))
		}
		if !fast && worst > 1e-12 {
			t.Errorf("exact pass: largest difference %g from the dense K", worst)
		}
		if rel := math.Sqrt(dn / wn); fast && rel > 1e-6 {
			t.Errorf("fast pass: relative error %g from the dense K", rel)
		}
	}
}

// TestStreamBuffers checks the default number of chunk buffers of a pass
// (streamBuffers): one per thread and one more, plus up to two while a
// block's chunks and two more exceed that, and at most aheadBytes of
// buffers beyond the first count. The expected counts
// follow from that rule (the project's own, no outside source).
func TestStreamBuffers(t *testing.T) {
	for _, c := range []struct {
		name                    string
		threads, target, chunkM int
		chunkBytes              int64
		want                    int
	}{
		{"5,000 samples, 1 thread: 3 chunks a block", 1, 2048, 838, 2 << 20, 4},
		{"5,000 samples, 2 threads", 2, 2048, 838, 2 << 20, 5},
		{"many threads", 8, 2048, 838, 2 << 20, 9},
		{"two chunks a block, 2 threads", 2, 2048, 1024, 2 << 20, 4},
		{"chunks larger than a block", 1, 100, 1000, 2 << 20, 3},
		{"32,000 samples: 8 chunks a block", 2, 2048, 262, 4 << 20, 5},
		{"huge chunks: no room ahead", 2, 2048, 1, 1 << 30, 3},
	} {
		if got := streamBuffers(c.threads, c.target, c.chunkM, c.chunkBytes); got != c.want {
			t.Errorf("%s: streamBuffers(%d, %d, %d, %d) = %d, want %d", c.name, c.threads, c.target, c.chunkM, c.chunkBytes, got, c.want)
		}
	}
}

// TestSolveThreads runs the solver with its block products between passes
// (Rayleigh-Ritz) on 1, 2, 3
// and 8 goroutines. Expected: the same eigenvalues, residuals, vectors,
// and the refinement's basis and rotation (which the loadings use) to the
// bit (the product's rule: same seed and inputs, same numbers,
// whatever the thread count; no outside source).
func TestSolveThreads(t *testing.T) {
	st, _ := testCohort(t, 300, 3000, 3, 0.05, 0.01, 11, 128)
	op, err := NewOperator(st, OperatorOptions{Threads: 2})
	if err != nil {
		t.Fatal(err)
	}
	so := SolveOptions{K: 10, Seed: 5, BulkEdge: MPUpperEdgeScaled(op.Trace(), op.Dim(), op.Markers())}
	base, err := Solve(context.Background(), op, so)
	if err != nil {
		t.Fatal(err)
	}
	for _, th := range []int{2, 3, 8} {
		so.Threads = th
		res, err := Solve(context.Background(), op, so)
		if err != nil {
			t.Fatal(err)
		}
		sameRot := (res.Rotation == nil) == (base.Rotation == nil) && (res.Rotation == nil || mat.Equal(res.Rotation, base.Rotation))
		if !slices.Equal(res.Eigenvalues, base.Eigenvalues) || !slices.Equal(res.Residuals, base.Residuals) ||
			!mat.Equal(res.Vectors, base.Vectors) || res.Passes != base.Passes ||
			!slices.Equal(res.Basis, base.Basis) || !sameRot {
			t.Errorf("threads %d: results differ from one thread (passes %d vs %d, eigenvalues %v vs %v)",
				th, res.Passes, base.Passes, res.Eigenvalues, base.Eigenvalues)
		}
	}
}

// TestWorkspaceWidths applies one operator to blocks of changing widths,
// fast and exact passes mixed (as Solve does: l, its Krylov block, K), so
// each new width takes over the buffers of the last one, and compares
// every result bit for bit with a fresh operator's (whose buffers are
// new): reused buffers must not change a number (determinism, no outside
// source). 130 samples make the second product's extra marker parts
// (ypart) take part; some samples are dropped.
func TestWorkspaceWidths(t *testing.T) {
	st, _ := testCohort(t, 130, 700, 3, 0.05, 0.03, 31, 64)
	// Every seventh sample dropped: their rows of X must stay zero
	// whatever width came before.
	keep := make([]bool, st.NumSamples())
	for i := range keep {
		keep[i] = i%7 != 3
	}
	counts, err := CountKept(context.Background(), st, keep, 2)
	if err != nil {
		t.Fatal(err)
	}
	oo := OperatorOptions{Threads: 3, SampleKept: keep, Counts: counts}
	op, err := NewOperator(st, oo)
	if err != nil {
		t.Fatal(err)
	}
	n := op.Dim()
	r := rand.New(rand.NewPCG(4, 4))
	for i, c := range []struct {
		l    int
		fast bool
	}{{20, true}, {12, true}, {10, false}, {20, false}, {3, true}, {24, true}, {12, false}} {
		x := make([]float64, n*c.l)
		for j := range x {
			x[j] = r.NormFloat64()
		}
		fresh, err := NewOperator(st, oo)
		if err != nil {
			t.Fatal(err)
		}
		got, want := make([]float64, n*c.l), make([]float64, n*c.l)
		apply := func(o *Operator, y []float64) error {
			if c.fast {
				return o.ApplyFast(context.Background(), x, y, c.l)
			}
			return o.Apply(context.Background(), x, y, c.l)
		}
		if err := apply(op, got); err != nil {
			t.Fatal(err)
		}
		if err := apply(fresh, want); err != nil {
			t.Fatal(err)
		}
		if !slices.Equal(got, want) {
			t.Errorf("step %d (width %d, fast %v): reused buffers give other numbers than new ones", i, c.l, c.fast)
		}
	}
}

// TestStreamBuffersFloat checks PlanMemory's chunk buffers for a float
// (dosage) store, which a pass applies chunk by chunk, so a "block" is one
// chunk: 1 thread 2 + 1, 2 threads 3 + 0 (streamBuffers' rule, the
// project's own).
func TestStreamBuffersFloat(t *testing.T) {
	d := prjSimulate(prjConfig{n: 40, m: 100, pops: 2, fst: 0.05, miss: 0.02, seed: 5})
	st, _ := prjWriteFloats(t, filepath.Join(t.TempDir(), "f.clinal"), d, func(int) float32 { return 0 })
	defer st.Close()
	for _, c := range []struct{ threads, want int }{{1, 3}, {2, 3}, {4, 5}} {
		p, err := PlanMemory(st, 3, 0, c.threads, 0)
		if err != nil {
			t.Fatal(err)
		}
		if p.Buffers != c.want {
			t.Errorf("%d threads: %d chunk buffers, want %d", c.threads, p.Buffers, c.want)
		}
	}
}

// TestRayleighRitzHalves checks that rayleighRitz's U = sum_i B_i V_i and
// KU = sum_i KB_i V_i, formed over two halves of the rows, equal to the bit
// the same sums over whole matrices (gonum's products, in block order), for
// odd and tiny row counts. Expected: equal (gonum computes each element of
// a product alone; no outside source).
func TestRayleighRitzHalves(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 5))
	for _, n := range []int{1, 2, 3, 301} {
		for _, threads := range []int{1, 2} {
			widths := []int{4, 3}
			var b, kb []*mat.Dense
			for _, w := range widths {
				m1, m2 := mat.NewDense(n, w, nil), mat.NewDense(n, w, nil)
				for i := 0; i < n; i++ {
					for j := 0; j < w; j++ {
						m1.Set(i, j, r.NormFloat64())
						m2.Set(i, j, r.NormFloat64())
					}
				}
				b, kb = append(b, m1), append(kb, m2)
			}
			l := 5
			u, ku, _, v := rayleighRitz(b, kb, l, threads)
			for which, p := range []struct {
				got *mat.Dense
				src []*mat.Dense
			}{{u, b}, {ku, kb}} {
				want := mat.NewDense(n, l, nil)
				ro := 0
				for i, s := range p.src {
					var tm mat.Dense
					tm.Mul(s, v.Slice(ro, ro+widths[i], 0, l))
					want.Add(want, &tm)
					ro += widths[i]
				}
				if !mat.Equal(p.got, want) {
					t.Errorf("n %d, threads %d, product %d: halves differ from the whole", n, threads, which)
				}
			}
		}
	}
}

// TestSolveSmallCohorts: with fewer samples than the basis and a Krylov
// block (l + b), the extension blocks shrink to the samples the basis
// leaves and the basis ends up spanning them all, so every wanted pair is
// exact. The eigenvalues must match gonum's EigenSym of the dense K
// (reference library) to 1e-8 relative. Before, such runs failed with
// "block became rank deficient".
func TestSolveSmallCohorts(t *testing.T) {
	for _, tc := range []struct{ n, k int }{{12, 3}, {12, 10}, {15, 5}, {18, 10}, {25, 10}, {30, 10}} {
		t.Run(fmt.Sprintf("n=%d,k=%d", tc.n, tc.k), func(t *testing.T) {
			st, geno := testCohort(t, tc.n, 40*tc.n, 2, 0.05, 0.01, uint64(tc.n), 64)
			op, err := NewOperator(st, OperatorOptions{Threads: 2})
			if err != nil {
				t.Fatal(err)
			}
			res, err := Solve(context.Background(), op, SolveOptions{K: tc.k, Seed: 1, BulkEdge: MPUpperEdgeScaled(op.Trace(), op.Dim(), op.Markers())})
			if err != nil {
				t.Fatal(err)
			}
			var es mat.EigenSym
			if !es.Factorize(denseK(geno, tc.n), false) {
				t.Fatal("EigenSym failed")
			}
			vals := es.Values(nil)
			for j := 0; j < tc.k; j++ {
				want := vals[tc.n-1-j]
				if rel := math.Abs(res.Eigenvalues[j]-want) / want; rel > 1e-8 {
					t.Errorf("PC%d: eigenvalue %v, EigenSym %v (rel %g; %d passes, stop %s)", j+1, res.Eigenvalues[j], want, rel, res.Passes, res.StopReason)
				}
				// Exact pairs: residuals within the default tol (1e-6).
				if !res.Converged[j] || res.Residuals[j] > 1e-6*res.Eigenvalues[j] {
					t.Errorf("PC%d: residual %g for eigenvalue %g (converged %v; stop %s)", j+1, res.Residuals[j], res.Eigenvalues[j], res.Converged[j], res.StopReason)
				}
			}
		})
	}
}

// TestClosingPassAfterStartBlock: with b = K (K a multiple of 4 from 12 up,
// the default oversampling) the basis after the start pass is exactly K
// wide, and a closing pass right after it (the last of two passes) has no
// columns of U past K. It must run, end on "max-passes" with float64
// pairs, and resume from its first pass bit for bit (the product's rules;
// no outside source). It panicked on a zero-width view before.
func TestClosingPassAfterStartBlock(t *testing.T) {
	st, _ := testCohort(t, 200, 2000, 3, 0.05, 0.01, 31, 64)
	op, err := NewOperator(st, OperatorOptions{Threads: 2})
	if err != nil {
		t.Fatal(err)
	}
	for _, k := range []int{12, 20} {
		t.Run(fmt.Sprintf("k=%d", k), func(t *testing.T) {
			opt := SolveOptions{K: k, Seed: 2, MaxPasses: 2}
			dir := t.TempDir()
			o1 := opt
			o1.Checkpoint = func(s *State) error {
				return WriteCheckpoint(filepath.Join(dir, fmt.Sprintf("%d.ckpt", s.Pass)), "k", s)
			}
			full, err := Solve(context.Background(), op, o1)
			if err != nil {
				t.Fatal(err)
			}
			if full.KrylovBlock != k || full.Passes != 2 || full.FastPasses != 1 || full.StopReason != "max-passes" || full.Rotation == nil {
				t.Fatalf("b %d, %d passes (%d fast), stop %s, rotation %v: want b = k, a closing second pass", full.KrylovBlock, full.Passes, full.FastPasses, full.StopReason, full.Rotation != nil)
			}
			resumeEveryPass(t, op, opt, dir, full)
		})
	}
}
