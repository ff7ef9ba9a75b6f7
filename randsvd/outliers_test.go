package randsvd

import (
	"context"
	"fmt"
	"math"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/clinal/clinal/matrixio"
	"gonum.org/v1/gonum/mat"
)

// olCounts counts the codes of marker j over the kept samples straight
// from the genotype codes (the reference for CountKept).
func olCounts(g []byte, keep []bool) matrixio.Counts {
	var n [4]uint32
	for i, c := range g {
		if keep[i] {
			n[c]++
		}
	}
	return matrixio.Counts{HomRef: n[0], Het: n[1], HomAlt: n[2], Missing: n[3]}
}

// TestCountKept compares CountKept with counts made here from the codes
// (hard calls) and from the values (dosages: sums in sample order, rounded
// dosages), for several masks and thread counts. With every sample kept
// the result must equal the writer's stored counts exactly.
func TestCountKept(t *testing.T) {
	dir := t.TempDir()
	d := prjSimulate(prjConfig{n: 77, m: 150, pops: 2, fst: 0.05, miss: 0.05, seed: 2})
	st := prjWrite(t, filepath.Join(dir, "g.clinal"), d, 16, nil, nil)
	fst, vals := prjWriteFloats(t, filepath.Join(dir, "f.clinal"), d, func(i int) float32 {
		// Dosage-like values: the code plus a sample-dependent offset.
		return float32(i%5)*0.1 - 0.2
	})
	defer fst.Close()
	masks := map[string]func(i int) bool{
		"all":   func(int) bool { return true },
		"odd":   func(i int) bool { return i%2 == 1 },
		"first": func(i int) bool { return i < 10 },
		"none":  func(int) bool { return false },
	}
	for name, f := range masks {
		keep := make([]bool, len(d.samples))
		for i := range keep {
			keep[i] = f(i)
		}
		for _, th := range []int{1, 3} {
			got, err := CountKept(context.Background(), st, keep, th)
			if err != nil {
				t.Fatal(err)
			}
			for j, g := range d.geno {
				if want := olCounts(g, keep); got[j] != want {
					t.Fatalf("%s/%d threads: marker %d counts %+v, want %+v", name, th, j, got[j], want)
				}
			}
			if name == "all" && !slices.Equal(got, st.Counts()) {
				t.Errorf("all kept: counts differ from the store's")
			}
			fg, err := CountKept(context.Background(), fst, keep, th)
			if err != nil {
				t.Fatal(err)
			}
			for j, x := range vals {
				var want matrixio.Counts
				for i, v := range x {
					if !keep[i] {
						continue
					}
					if v != v {
						want.Missing++
						continue
					}
					want.Sum += float64(v)
					want.SumSq += float64(v) * float64(v)
					switch r := math.Round(float64(v)); {
					case r <= 0:
						want.HomRef++
					case r == 1:
						want.Het++
					default:
						want.HomAlt++
					}
				}
				if fg[j] != want {
					t.Fatalf("%s/%d threads: float marker %d counts %+v, want %+v", name, th, j, fg[j], want)
				}
			}
			if name == "all" && !slices.Equal(fg, fst.Counts()) {
				t.Errorf("all kept: float counts differ from the store's")
			}
		}
	}
	if _, err := CountKept(context.Background(), st, make([]bool, 3), 1); err == nil {
		t.Error("mask of the wrong length accepted")
	}
}

// olDenseProjection is the reference for the scores of removed samples:
// standardize every sample with the counts of the kept ones (computed
// here), Z the kept markers x all samples with missing -> 0, and score_k =
// z_i . (Z_kept u_k) / (M lambda_k) (the definition in Loadings), with
// gonum dense products.
func olDenseProjection(d prjData, keep []bool, res *PCAResult) *mat.Dense {
	n := len(d.samples)
	var rows [][]float64
	for _, g := range d.geno {
		c := olCounts(g, keep)
		called := float64(c.Called())
		if called == 0 {
			continue
		}
		p := (float64(c.Het) + 2*float64(c.HomAlt)) / (2 * called)
		sd := math.Sqrt(2 * p * (1 - p))
		if !(sd > 1e-12) {
			continue
		}
		row := make([]float64, n)
		for i, v := range g {
			if v != matrixio.Missing {
				row[i] = (float64(v) - 2*p) / sd
			}
		}
		rows = append(rows, row)
	}
	m := len(rows)
	z := mat.NewDense(m, n, nil)
	for j, r := range rows {
		z.SetRow(j, r)
	}
	k := len(res.Eigenvalues)
	u := mat.NewDense(n, k, nil) // zero rows for removed samples
	for r, i := range res.Samples {
		u.SetRow(i, res.Scores.RawRowView(r))
	}
	var w, s mat.Dense
	w.Mul(z, u)
	s.Mul(z.T(), &w)
	for q := 0; q < k; q++ {
		for i := 0; i < n; i++ {
			s.Set(i, q, s.At(i, q)/(float64(m)*res.Eigenvalues[q]))
		}
	}
	return &s
}

// TestRemoveOutliersPlanted plants a few samples of a far population
// (allele frequencies independent of the cohort's) into a structured
// cohort. Expected at the default settings (6 SD, 10 PCs, 5 rounds, as in
// Price et al. 2006): exactly the planted samples are removed, all in round
// 1 (one such sample sits about sqrt(N/n_far) ~ 10 SD out on its own PC),
// and nobody else in any round, on several seeds. The final PCA is the one
// of the remaining samples (same eigenvalues as a direct run with the mask
// and counts made here), and the removed samples' projected scores equal
// the dense gonum computation of their definition.
func TestRemoveOutliersPlanted(t *testing.T) {
	cases := []struct {
		seed  uint64
		pops  int
		farAt []int
	}{
		{1, 3, []int{17, 150, 290}},
		{2, 2, []int{5, 201}},
		{3, 4, []int{0, 99, 100, 250}},
		{4, 3, nil}, // no outliers: nobody removed
	}
	for _, c := range cases {
		t.Run(fmt.Sprint(c.seed), func(t *testing.T) {
			d := prjSimulate(prjConfig{n: 300, m: 2000, pops: c.pops, fst: 0.03, miss: 0.01, farAt: c.farAt, seed: c.seed})
			st := prjWrite(t, filepath.Join(t.TempDir(), "c.clinal"), d, 128, nil, nil)
			popt := PCAOptions{K: 10, Seed: 3, Threads: 2, TW: "off"}
			res, op, removed, proj, err := RemoveOutliers(context.Background(), st, popt, OutlierOptions{})
			if err != nil {
				t.Fatal(err)
			}
			var got []int
			for _, o := range removed {
				got = append(got, o.Sample)
				if o.Round != 1 || o.PC < 1 || o.PC > 10 || !(math.Abs(o.Z) > 6) {
					t.Errorf("outlier %+v: want round 1, PC in 1..10, |z| > 6", o)
				}
			}
			t.Logf("removed %+v", removed)
			if !slices.Equal(got, c.farAt) {
				t.Fatalf("removed %v (%+v), want the planted %v", got, removed, c.farAt)
			}
			keep := make([]bool, st.NumSamples())
			for i := range keep {
				keep[i] = !slices.Contains(c.farAt, i)
			}
			if !slices.Equal(res.Samples, op.KeptSamples()) || len(res.Samples) != 300-len(c.farAt) {
				t.Fatalf("final fit on %d samples, want %d", len(res.Samples), 300-len(c.farAt))
			}
			counts := make([]matrixio.Counts, len(d.geno))
			for j, g := range d.geno {
				counts[j] = olCounts(g, keep)
			}
			p := popt
			p.SampleKept, p.Counts = keep, counts
			direct, _, err := RunPCA(context.Background(), st, p)
			if err != nil {
				t.Fatal(err)
			}
			if !slices.Equal(direct.Eigenvalues, res.Eigenvalues) {
				t.Errorf("eigenvalues %v, direct fit without the outliers %v", res.Eigenvalues, direct.Eigenvalues)
			}
			if len(proj) != len(c.farAt) {
				t.Fatalf("%d projected samples, want %d", len(proj), len(c.farAt))
			}
			if len(c.farAt) == 0 {
				return
			}
			want := olDenseProjection(d, keep, res)
			for _, i := range c.farAt {
				for q, v := range proj[i] {
					if math.Abs(v-want.At(i, q)) > 1e-10*(1+math.Abs(want.At(i, q))) {
						t.Errorf("sample %d PC%d: projected %g, dense %g", i, q+1, v, want.At(i, q))
					}
				}
			}
			// The formula reproduces a kept sample's own score up to the
			// pair's residual: K u / lambda - u = r / lambda (algebra).
			again, err := ProjectStoreSamples(context.Background(), st, res, p, []int{res.Samples[0], res.Samples[7]})
			if err != nil {
				t.Fatal(err)
			}
			for _, r := range []int{0, 7} {
				for q := 0; q < 10; q++ {
					if d := math.Abs(again[res.Samples[r]][q] - res.Scores.At(r, q)); d > res.Residuals[q]/res.Eigenvalues[q]+1e-12 {
						t.Errorf("kept sample %d PC%d: projected %g, fitted %g", res.Samples[r], q+1, again[res.Samples[r]][q], res.Scores.At(r, q))
					}
				}
			}
		})
	}
}

// TestRemoveOutliersOptions: a threshold so low that it would empty the
// cohort is refused as bad input; Rounds bounds the removal rounds; a
// negative setting is refused.
func TestRemoveOutliersOptions(t *testing.T) {
	d := prjSimulate(prjConfig{n: 60, m: 400, pops: 2, fst: 0.03, seed: 5})
	st := prjWrite(t, filepath.Join(t.TempDir(), "c.clinal"), d, 64, nil, nil)
	popt := PCAOptions{K: 2, Seed: 1, TW: "off"}
	ctx := context.Background()
	// With SD 0.01 nearly every sample is beyond it on some PC.
	if _, _, _, _, err := RemoveOutliers(ctx, st, popt, OutlierOptions{SD: 0.01, PCs: 2}); err == nil || !matrixio.IsBadInput(err) ||
		!strings.Contains(err.Error(), "too few") {
		t.Errorf("SD 0.01: error %v, want bad input (too few samples left)", err)
	}
	// With the Tracy-Widom test on, it is run once, on the final axes: the
	// same numbers as a direct run on the samples left.
	tw := popt
	tw.TW = "exact"
	res, _, removed, _, err := RemoveOutliers(ctx, st, tw, OutlierOptions{SD: 2, Rounds: 2, PCs: 2})
	if err != nil {
		t.Fatal(err)
	}
	keep := make([]bool, st.NumSamples())
	for _, i := range res.Samples {
		keep[i] = true
	}
	tw.SampleKept = keep
	if tw.Counts, err = CountKept(ctx, st, keep, 1); err != nil {
		t.Fatal(err)
	}
	direct, _, err := RunPCA(ctx, st, tw)
	if err != nil {
		t.Fatal(err)
	}
	if got, want := fmt.Sprint(res.TW, res.TWMethod), fmt.Sprint(direct.TW, direct.TWMethod); got != want || res.TW == nil {
		t.Errorf("Tracy-Widom after outlier removal %s, direct run %s", got, want)
	}
	for _, o := range removed {
		if o.Round < 1 || o.Round > 2 || o.PC < 1 || o.PC > 2 || !(math.Abs(o.Z) > 2) {
			t.Errorf("outlier %+v: want round 1..2, PC 1..2, |z| > 2", o)
		}
	}
	if len(removed) == 0 {
		t.Error("SD 2 removed nobody in 60 samples (expected about 5% per PC)")
	}
	if _, _, _, _, err := RemoveOutliers(ctx, st, popt, OutlierOptions{Rounds: -1}); err == nil || !matrixio.IsBadInput(err) {
		t.Errorf("rounds -1: error %v, want bad input", err)
	}
}

// prjWriteFloats writes d as a float (dosage) store of 16-marker chunks at
// path: each call plus offset(i) for sample i, NaN for a missing call. It
// returns the open store and the values written.
func prjWriteFloats(t *testing.T, path string, d prjData, offset func(i int) float32) (*matrixio.Store, [][]float32) {
	t.Helper()
	w, err := matrixio.Create(path, d.samples, matrixio.WriterOptions{Codec: matrixio.CodecFloat32, ChunkMarkers: 16})
	if err != nil {
		t.Fatal(err)
	}
	vals := make([][]float32, len(d.geno))
	for j, g := range d.geno {
		vals[j] = make([]float32, len(g))
		for i, c := range g {
			vals[j][i] = float32(c) + offset(i)
			if c == matrixio.Missing {
				vals[j][i] = float32(math.NaN())
			}
		}
		if err := w.AddFloats(d.markers[j], vals[j]); err != nil {
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
	return st, vals
}
