package randsvd

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"path/filepath"
	"strings"
	"testing"

	"github.com/clinal/clinal/matrixio"
	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"
)

// prjData is a small cohort held in memory: sample IDs, markers and the
// genotype codes (marker-major; 0, 1, 2 ALT copies or matrixio.Missing).
type prjData struct {
	samples []string
	markers []matrixio.Marker
	geno    [][]byte
}

// prjConfig describes a simulated cohort: pops populations of equal size
// whose allele frequencies are Balding-Nichols (1995) Beta draws around an
// ancestral Uniform(0.05, 0.95) frequency, plus far samples drawn from
// frequencies independent of the ancestral ones (Uniform(0.05, 0.95)),
// placed at the store indices farAt.
type prjConfig struct {
	n, m, pops int
	fst, miss  float64
	farAt      []int
	ambiguous  int // every ambiguous-th marker has alleles A/T or C/G (0: none)
	seed       uint64
}

// prjSimulate draws a cohort (beta draws from gonum's distuv.Beta).
func prjSimulate(c prjConfig) prjData {
	r := rand.New(rand.NewPCG(c.seed, 0x70726f6a))
	far := map[int]bool{}
	for _, i := range c.farAt {
		far[i] = true
	}
	d := prjData{samples: make([]string, c.n)}
	for i := range d.samples {
		d.samples[i] = fmt.Sprintf("isle%d-%04d", 1+i*c.pops/c.n, i)
		if far[i] {
			d.samples[i] = fmt.Sprintf("mainland-%04d", i)
		}
	}
	pairs := [][2]string{{"A", "G"}, {"C", "T"}, {"G", "A"}, {"T", "C"}, {"A", "C"}, {"G", "T"}}
	amb := [][2]string{{"A", "T"}, {"C", "G"}}
	fr := make([]float64, c.pops)
	for j := 0; j < c.m; j++ {
		p := 0.05 + 0.9*r.Float64()
		for k := range fr {
			fr[k] = p
			if c.fst > 0 {
				a := p * (1 - c.fst) / c.fst
				b := (1 - p) * (1 - c.fst) / c.fst
				fr[k] = distuv.Beta{Alpha: a, Beta: b, Src: r}.Rand()
			}
		}
		q := 0.05 + 0.9*r.Float64() // the far population's frequency
		g := make([]byte, c.n)
		for i := range g {
			f := fr[i*c.pops/c.n]
			if far[i] {
				f = q
			}
			v := byte(0)
			if r.Float64() < f {
				v++
			}
			if r.Float64() < f {
				v++
			}
			if r.Float64() < c.miss {
				v = matrixio.Missing
			}
			g[i] = v
		}
		al := pairs[j%len(pairs)]
		if c.ambiguous > 0 && j%c.ambiguous == c.ambiguous-1 {
			al = amb[(j/c.ambiguous)%2]
		}
		d.markers = append(d.markers, matrixio.Marker{Chrom: "1", Pos: int64(1000 + 37*j), ID: fmt.Sprintf("mk%d", j), Ref: al[0], Alt: al[1]})
		d.geno = append(d.geno, g)
	}
	return d
}

// prjWrite writes d as a store; keepMarker (nil: all) selects markers, and
// edit (nil: none) may change a marker and its genotypes (a copy) first.
func prjWrite(t testing.TB, path string, d prjData, chunk int, keepMarker func(j int) bool,
	edit func(j int, m *matrixio.Marker, g []byte)) *matrixio.Store {
	t.Helper()
	w, err := matrixio.Create(path, d.samples, matrixio.WriterOptions{ChunkMarkers: chunk})
	if err != nil {
		t.Fatal(err)
	}
	g := make([]byte, len(d.samples))
	for j, m := range d.markers {
		if keepMarker != nil && !keepMarker(j) {
			continue
		}
		copy(g, d.geno[j])
		if edit != nil {
			edit(j, &m, g)
		}
		if err := w.AddGenotypes(m, g); err != nil {
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
	return st
}

// prjFit runs PCA on st (samples with keep false left out; nil keeps all)
// to a tight tolerance and writes the model files that clinal pca writes
// (loadings, spectrum, report with the fields the reader needs) under a
// prefix in dir, through matrixio's own writers.
func prjFit(t testing.TB, dir string, st *matrixio.Store, k int, keep []bool) (string, *PCAResult, *Operator) {
	t.Helper()
	ctx := context.Background()
	// VarTol tiny: every PC, noise ones included, runs to Tol (no bulk stop);
	// TW off: not needed here.
	popt := PCAOptions{K: k, Tol: 1e-11, VarTol: 1e-300, MaxPasses: 300, Seed: 5, Threads: 2, SampleKept: keep, TW: "off"}
	if keep != nil {
		c, err := CountKept(ctx, st, keep, 2)
		if err != nil {
			t.Fatal(err)
		}
		popt.Counts = c
	}
	res, op, err := RunPCA(ctx, st, popt)
	if err != nil {
		t.Fatal(err)
	}
	prefix := filepath.Join(dir, "model")
	lw, err := matrixio.CreateLoadings(prefix+matrixio.ModelLoadingsSuffix, k)
	if err != nil {
		t.Fatal(err)
	}
	kept := op.KeptMarkers()
	center, inv := op.Standardization()
	err = Loadings(ctx, op, res, func(ord int, v []float64) error {
		return lw.Write(st.Markers()[kept[ord]], center[ord]/2, 1/inv[ord], v)
	})
	if err != nil {
		t.Fatal(err)
	}
	if err := lw.Close(); err != nil {
		t.Fatal(err)
	}
	rows := make([]matrixio.SpectrumRow, k)
	for j := range rows {
		rows[j] = matrixio.SpectrumRow{Eigenvalue: res.Eigenvalues[j], VarianceFraction: res.Eigenvalues[j] / res.Trace,
			Residual: res.Residuals[j], Converged: res.Converged[j], TWStatistic: math.NaN(), TWP: math.NaN()}
	}
	if err := matrixio.WriteSpectrum(prefix+matrixio.ModelSpectrumSuffix, rows); err != nil {
		t.Fatal(err)
	}
	rep := map[string]any{"eigenvalues": res.Eigenvalues, "markers_used": res.Markers, "samples_used": len(res.Samples),
		"k": k, "trace": res.Trace, "scaling": "patterson"}
	if err := matrixio.WriteJSON(prefix+matrixio.ModelReportSuffix, rep); err != nil {
		t.Fatal(err)
	}
	return prefix, res, op
}

func prjModel(t testing.TB, prefix string) *matrixio.PCAModel {
	t.Helper()
	m, err := matrixio.ReadPCAModel(prefix)
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// prjDense computes the projection of every sample of d onto the model
// with gonum dense products, straight from the definition (the reference
// the streaming code must match): z_ij = (g'_ij - 2 p_j)/s_j over the
// markers matched by ID (g' = 2 - g when the model counts the REF allele of
// d's marker), missing -> 0, scores = Z^T V / sqrt(M lambda), and with
// mass rescaling divided by the loading mass of the called markers.
func prjDense(d prjData, model *matrixio.PCAModel, rescale bool) *mat.Dense {
	byID := map[string]int{}
	for j, m := range model.Markers {
		byID[m.ID] = j
	}
	n, k := len(d.samples), model.K
	z := mat.NewDense(len(d.markers), n, nil)
	v := mat.NewDense(len(d.markers), k, nil)
	called := mat.NewDense(len(d.markers), n, nil)
	for j, m := range d.markers {
		mj, ok := byID[m.ID]
		if !ok {
			continue
		}
		flip := model.Counted[mj] == m.Ref
		for i, c := range d.geno[j] {
			if c == matrixio.Missing {
				continue
			}
			x := float64(c)
			if flip {
				x = 2 - x
			}
			z.Set(j, i, (x-2*model.Freq[mj])/model.Scale[mj])
			called.Set(j, i, 1)
		}
		for q := 0; q < k; q++ {
			v.Set(j, q, model.Loading(mj)[q])
		}
	}
	var s mat.Dense
	s.Mul(z.T(), v)
	var v2 mat.Dense
	v2.MulElem(v, v)
	var mass mat.Dense
	mass.Mul(called.T(), &v2)
	for i := 0; i < n; i++ {
		for q := 0; q < k; q++ {
			x := s.At(i, q) / math.Sqrt(float64(model.MarkersUsed)*model.Eigenvalues[q])
			if rescale {
				x /= mass.At(i, q)
			}
			s.Set(i, q, x)
		}
	}
	return &s
}

func prjMaxDiff(a []float64, k int, b func(i, q int) float64) float64 {
	var w float64
	for i := 0; i < len(a)/k; i++ {
		for q := 0; q < k; q++ {
			w = math.Max(w, math.Abs(a[i*k+q]-b(i, q)))
		}
	}
	return w
}

// TestProjectReproducesFit projects the training store onto its own
// model. Expected: the fitted scores (the covariates), because score_k =
// (K u_k)_i / lambda_k = u_ik for an eigenpair (algebra of the
// definitions); the fit stops at relative residual 1e-11, so 1e-10 bounds
// the difference. With missing calls the fit's convention (RescaleNone)
// reproduces the scores; mass rescaling is checked against the dense gonum
// computation of its definition instead.
func TestProjectReproducesFit(t *testing.T) {
	cases := []struct {
		name    string
		miss    float64
		rescale Rescale
		threads int
	}{
		{"complete/mass", 0, RescaleMass, 1},
		{"complete/mass/3-threads", 0, RescaleMass, 3},
		{"missing/none", 0.03, RescaleNone, 2},
		{"missing/mass", 0.03, RescaleMass, 2},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			dir := t.TempDir()
			d := prjSimulate(prjConfig{n: 230, m: 1500, pops: 3, fst: 0.03, miss: c.miss, seed: 3})
			st := prjWrite(t, filepath.Join(dir, "fit.clinal"), d, 64, nil, nil)
			prefix, res, _ := prjFit(t, dir, st, 2, nil)
			model := prjModel(t, prefix)
			pr, err := Project(context.Background(), model, st, ProjectOptions{Rescale: c.rescale, Threads: c.threads})
			if err != nil {
				t.Fatal(err)
			}
			if pr.Match.Used != 1500 || pr.Match.Same != 1500 || pr.Match.ModelAbsent != 0 {
				t.Errorf("match %+v, want all 1500 markers used as they are", pr.Match)
			}
			if c.miss == 0 || c.rescale == RescaleNone {
				// K u / lambda - u = r / lambda for the residual r of the
				// pair, so each PC's difference is at most ||r|| / lambda.
				for q := 0; q < 2; q++ {
					if !res.Converged[q] {
						t.Fatalf("PC%d did not converge (residual %g)", q+1, res.Residuals[q])
					}
					var w float64
					for i := range pr.Samples {
						w = math.Max(w, math.Abs(pr.Raw[i*2+q]-res.Scores.At(i, q)))
					}
					if w > 1e-10 || w > res.Residuals[q]/res.Eigenvalues[q]+1e-13 {
						t.Errorf("PC%d: projected scores differ from the fitted ones by %g, want <= 1e-10 and <= residual/lambda = %g",
							q+1, w, res.Residuals[q]/res.Eigenvalues[q])
					}
				}
			}
			want := prjDense(d, model, c.rescale == RescaleMass)
			if w := prjMaxDiff(pr.Raw, 2, want.At); w > 1e-12 {
				t.Errorf("streamed projection differs from the dense gonum one by %g, want <= 1e-12", w)
			}
			for i, o := range pr.Overlap {
				calls := 0
				for j := range d.geno {
					if d.geno[j][i] != matrixio.Missing {
						calls++
					}
				}
				if pr.Present[i] != calls || o != float64(calls)/1500 {
					t.Fatalf("sample %d: present %d overlap %g, want %d calls (%g)", i, pr.Present[i], o, calls, float64(calls)/1500)
				}
			}
		})
	}
}

// TestProjectAlleleHandling builds variants of a training store and
// projects each onto the same model. Expected values follow from the
// definitions: swapping REF and ALT (and g -> 2 - g) or renaming
// chromosome 1 to chr1 changes nothing (scores equal to 1e-12); dropping
// every other marker gives overlap exactly 0.5 and loading mass about 0.5;
// complemented alleles match only with Complement.
func TestProjectAlleleHandling(t *testing.T) {
	dir := t.TempDir()
	d := prjSimulate(prjConfig{n: 240, m: 2000, pops: 3, fst: 0.04, seed: 9})
	st := prjWrite(t, filepath.Join(dir, "fit.clinal"), d, 100, nil, nil)
	prefix, res, _ := prjFit(t, dir, st, 2, nil)
	model := prjModel(t, prefix)
	swap := func(j int, m *matrixio.Marker, g []byte) {
		m.Ref, m.Alt = m.Alt, m.Ref
		for i, c := range g {
			if c != matrixio.Missing {
				g[i] = 2 - c
			}
		}
	}
	comp := func(j int, m *matrixio.Marker, g []byte) {
		a, _ := complementSNP(m.Ref)
		b, _ := complementSNP(m.Alt)
		m.Ref, m.Alt = a, b
	}
	cases := []struct {
		name   string
		keep   func(j int) bool
		edit   func(j int, m *matrixio.Marker, g []byte)
		opt    ProjectOptions
		want   MatchSummary
		maxDev float64 // complete overlap: largest |score - fitted score|, relative to the score's RMS
		errSub string
	}{
		{name: "identity", want: MatchSummary{Used: 2000, Same: 2000}, maxDev: 1e-9},
		{name: "swap-all", edit: swap, want: MatchSummary{Used: 2000, Swapped: 2000}, maxDev: 1e-9},
		{name: "swap-odd", edit: func(j int, m *matrixio.Marker, g []byte) {
			if j%2 == 1 {
				swap(j, m, g)
			}
		}, want: MatchSummary{Used: 2000, Same: 1000, Swapped: 1000}, maxDev: 1e-9},
		{name: "chr-prefix", edit: func(j int, m *matrixio.Marker, g []byte) { m.Chrom = "chr1" },
			want: MatchSummary{Used: 2000, Same: 2000}, maxDev: 1e-9},
		{name: "complement-on", edit: comp, opt: ProjectOptions{Complement: true},
			want: MatchSummary{Used: 2000, Same: 2000, Complement: 2000}, maxDev: 1e-9},
		{name: "complement-off", edit: comp, errSub: "never match"},
		// Input monomorphic at every fourth marker (ALT '.', REF/REF
		// calls), half of them with the model's counted allele as REF:
		// matched by REF; scores change (other data), so not compared.
		{name: "alt-dot", edit: func(j int, m *matrixio.Marker, g []byte) {
			if j%4 == 0 {
				if j%8 == 0 {
					m.Ref = m.Alt
				}
				m.Alt = "."
				for i := range g {
					g[i] = 0
				}
			}
		}, want: MatchSummary{Used: 2000, Same: 1750, Swapped: 250, Monomorphic: 500}, maxDev: math.Inf(1)},
		// Partial overlap: see prjPartialRMS for the expected deviation.
		{name: "half", keep: func(j int) bool { return j%2 == 0 }, want: MatchSummary{Used: 1000, Same: 1000, ModelAbsent: 1000}},
		{name: "extra-markers", edit: func(j int, m *matrixio.Marker, g []byte) {
			if j%4 == 0 {
				m.Pos++ // not in the model
			}
		}, want: MatchSummary{Used: 1500, Same: 1500, NotInModel: 500, ModelAbsent: 500}},
		{name: "no-common", edit: func(j int, m *matrixio.Marker, g []byte) { m.Chrom = "7" }, errSub: "no markers in common"},
		{name: "alleles-never-match", edit: func(j int, m *matrixio.Marker, g []byte) { m.Ref, m.Alt = "AC", "A" },
			errSub: "never match"},
		{name: "alleles-mostly-wrong", edit: func(j int, m *matrixio.Marker, g []byte) {
			if j%5 != 0 {
				m.Ref, m.Alt = "AC", "A"
			}
		}, errSub: "disagree"},
		{name: "alleles-mostly-wrong-allowed", edit: func(j int, m *matrixio.Marker, g []byte) {
			if j%5 != 0 {
				m.Ref, m.Alt = "AC", "A"
			}
		}, opt: ProjectOptions{MaxAlleleMismatch: 1}, want: MatchSummary{Used: 400, Same: 400, AlleleMismatch: 1600, ModelAbsent: 1600}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			in := prjWrite(t, filepath.Join(t.TempDir(), "in.clinal"), d, 77, c.keep, c.edit)
			pr, err := Project(context.Background(), model, in, c.opt)
			if c.errSub != "" {
				if err == nil || !matrixio.IsBadInput(err) || !strings.Contains(err.Error(), c.errSub) {
					t.Fatalf("error %v, want a bad-input error containing %q", err, c.errSub)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			c.want.ModelMarkers, c.want.InputMarkers, c.want.AmbiguousDropped = 2000, in.NumMarkers(), true
			if pr.Match != c.want {
				t.Errorf("match\n got %+v\nwant %+v", pr.Match, c.want)
			}
			wantOverlap := float64(c.want.Used) / 2000
			for q := 0; q < 2; q++ {
				var rms, dev, ss float64
				for i := range pr.Samples {
					f := res.Scores.At(i, q)
					rms += f * f
					dev = math.Max(dev, math.Abs(pr.Raw[i*2+q]-f))
					ss += (pr.Raw[i*2+q] - f) * (pr.Raw[i*2+q] - f)
				}
				rel := math.Sqrt(ss / rms)
				rms = math.Sqrt(rms / float64(len(pr.Samples)))
				if wantOverlap == 1 {
					if dev > c.maxDev*rms {
						t.Errorf("PC%d: scores differ from the fitted ones by up to %.3g of their RMS, want <= %g", q+1, dev/rms, c.maxDev)
					}
				} else {
					pred := prjPartialRMS(wantOverlap, len(pr.Samples), 2000, res.Eigenvalues[q])
					t.Logf("PC%d: relative RMS deviation %.4f, predicted %.4f", q+1, rel, pred)
					if rel < pred/1.5 || rel > 1.5*pred {
						t.Errorf("PC%d: relative RMS deviation from the fitted scores %.4f, want %.4f within a factor 1.5", q+1, rel, pred)
					}
				}
				for i := range pr.Samples {
					if pr.Overlap[i] != wantOverlap {
						t.Fatalf("sample %d: overlap %g, want %g", i, pr.Overlap[i], wantOverlap)
					}
					// Random halves of unit-norm loadings hold about half
					// the mass: within 0.1 of the overlap here.
					if m := pr.Mass[i*2+q]; math.Abs(m-wantOverlap) > 0.1 {
						t.Fatalf("sample %d PC%d: loading mass %g, want about %g", i, q+1, m, wantOverlap)
					}
				}
			}
		})
	}
}

// prjPartialRMS is the expected RMS deviation of mass-rescaled scores of
// training samples over a random fraction f of the M model markers from
// their fitted scores, relative to the scores' RMS 1/sqrt(N). A training
// sample is z = sum_l a_l v_l + e with e orthogonal to every loading over
// all markers; over a random subset S, sum_S e_j v_jk no longer vanishes:
// with per-marker residual variance about 1 (standardized markers, common
// practice), its variance is f (1 - f) (sampling without replacement),
// divided by the mass f squared and by M lambda_k:
//
//	RMS deviation / RMS score = sqrt(N (1 - f) / (f M lambda_k)).
//
// (Derivation here; cross terms between PCs add little when lambda_k are
// large.)
func prjPartialRMS(f float64, n, m int, lambda float64) float64 {
	return math.Sqrt(float64(n) * (1 - f) / (f * float64(m) * lambda))
}

// TestProjectAmbiguous checks strand-ambiguous markers (A/T, C/G): dropped
// and counted by default, used with KeepAmbiguous (then the projection of
// the training store is exact again, to 1e-10 as in
// TestProjectReproducesFit).
func TestProjectAmbiguous(t *testing.T) {
	dir := t.TempDir()
	d := prjSimulate(prjConfig{n: 200, m: 1600, pops: 2, fst: 0.05, ambiguous: 8, seed: 4})
	st := prjWrite(t, filepath.Join(dir, "fit.clinal"), d, 100, nil, nil)
	prefix, res, _ := prjFit(t, dir, st, 1, nil)
	model := prjModel(t, prefix)
	for _, keep := range []bool{false, true} {
		pr, err := Project(context.Background(), model, st, ProjectOptions{KeepAmbiguous: keep})
		if err != nil {
			t.Fatal(err)
		}
		used := 1400
		if keep {
			used = 1600
		}
		want := MatchSummary{ModelMarkers: 1600, InputMarkers: 1600, Used: used, Same: used, Ambiguous: 200,
			AmbiguousDropped: !keep, ModelAbsent: 1600 - used}
		if pr.Match != want {
			t.Errorf("keep %v: match\n got %+v\nwant %+v", keep, pr.Match, want)
		}
		if keep {
			if w := prjMaxDiff(pr.Raw, 1, res.Scores.At); w > 1e-10 {
				t.Errorf("keep: scores differ from the fitted ones by %g, want <= 1e-10", w)
			}
		}
		if want := prjDense(prjData{d.samples, prjFilter(d.markers, keep), d.geno}, model, true); prjMaxDiff(pr.Raw, 1, want.At) > 1e-12 {
			t.Errorf("keep %v: streamed projection differs from the dense gonum one", keep)
		}
	}
}

// prjFilter renames the ambiguous markers (so the dense reference, which
// matches by ID, skips them) unless keep.
func prjFilter(ms []matrixio.Marker, keep bool) []matrixio.Marker {
	out := append([]matrixio.Marker(nil), ms...)
	if !keep {
		for j := range out {
			if ambiguousPair(out[j].Ref, out[j].Alt) {
				out[j].ID = "dropped"
			}
		}
	}
	return out
}

// TestProjectFloatAndVCF projects the same genotypes given as a dosage
// (float32) store and as a VCF (imported to a temporary store): the
// scores equal the hard-call store's (to 1e-12; dosages 0, 1, 2 are exact
// in float32).
func TestProjectFloatAndVCF(t *testing.T) {
	dir := t.TempDir()
	d := prjSimulate(prjConfig{n: 120, m: 800, pops: 2, fst: 0.05, miss: 0.02, seed: 8})
	st := prjWrite(t, filepath.Join(dir, "fit.clinal"), d, 50, nil, nil)
	prefix, _, _ := prjFit(t, dir, st, 2, nil)
	model := prjModel(t, prefix)
	base, err := Project(context.Background(), model, st, ProjectOptions{})
	if err != nil {
		t.Fatal(err)
	}
	// Dosage store.
	fp := filepath.Join(dir, "ds.clinal")
	w, err := matrixio.Create(fp, d.samples, matrixio.WriterOptions{Codec: matrixio.CodecFloat32, ChunkMarkers: 33})
	if err != nil {
		t.Fatal(err)
	}
	x := make([]float32, len(d.samples))
	for j, m := range d.markers {
		for i, c := range d.geno[j] {
			x[i] = float32(c)
			if c == matrixio.Missing {
				x[i] = float32(math.NaN())
			}
		}
		if err := w.AddFloats(m, x); err != nil {
			t.Fatal(err)
		}
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	// VCF.
	vp := filepath.Join(dir, "in.vcf.gz")
	vw, err := matrixio.CreateVCF(vp, d.samples, matrixio.VCFWriterOptions{})
	if err != nil {
		t.Fatal(err)
	}
	for j, m := range d.markers {
		if err := vw.Write(m, d.geno[j]); err != nil {
			t.Fatal(err)
		}
	}
	if err := vw.Close(); err != nil {
		t.Fatal(err)
	}
	for _, in := range []string{fp, vp} {
		pr, err := ProjectPath(context.Background(), model, in, ProjectOptions{TempDir: dir})
		if err != nil {
			t.Fatal(err)
		}
		if w := prjMaxDiff(pr.Raw, 2, func(i, q int) float64 { return base.Raw[i*2+q] }); w > 1e-12 {
			t.Errorf("%s: scores differ from the store's by %g", filepath.Base(in), w)
		}
		if (in == vp) != (pr.Import != nil) {
			t.Errorf("%s: import summary %v", filepath.Base(in), pr.Import)
		}
	}
	// The temporary store is gone.
	if left, _ := filepath.Glob(filepath.Join(dir, "clinal-project-*")); len(left) != 0 {
		t.Errorf("temporary files left: %v", left)
	}
}

// prjProcrustes maps the rows of a into the coordinates of b: the
// orthogonal Q and scale s minimizing ||s a Q - b||_F (Schoenemann 1966;
// Q = U V^T from the SVD of a^T b, s = trace(Sigma)/||a||^2), computed with
// gonum's SVD.
func prjProcrustes(a, b *mat.Dense) (q *mat.Dense, s float64) {
	var atb mat.Dense
	atb.Mul(a.T(), b)
	var svd mat.SVD
	if !svd.Factorize(&atb, mat.SVDFull) {
		panic("svd failed")
	}
	var u, v mat.Dense
	svd.UTo(&u)
	svd.VTo(&v)
	q = new(mat.Dense)
	q.Mul(&u, v.T())
	var tr float64
	for _, x := range svd.Values(nil) {
		tr += x
	}
	fa := mat.Norm(a, 2)
	return q, tr / (fa * fa)
}

// TestProjectShrinkageHeldOut is the empirical check of the shrinkage
// correction (the experiment of Lee, Zou & Wright 2010 and Zhang, Dey &
// Lee 2020): hold out 10% of a structured cohort, fit on the rest,
// project the held-out samples, and compare with their scores in a fit on
// everyone, mapped into the model's coordinates by the Procrustes
// rotation and scale estimated on the training samples alone (so nothing
// about the held-out ones is fitted). Expected: raw projected scores are
// shrunk (regression slope on the truth below 0.93, about the predicted
// factor), corrected ones have slope 1 within 0.05 and RMS error below 5%
// of the truth's RMS (the issue's target), better than raw ones.
func TestProjectShrinkageHeldOut(t *testing.T) {
	for _, seed := range []uint64{21, 22} {
		t.Run(fmt.Sprint(seed), func(t *testing.T) {
			dir := t.TempDir()
			const n, m, k = 500, 5000, 2
			d := prjSimulate(prjConfig{n: n, m: m, pops: 3, fst: 0.01, seed: seed})
			st := prjWrite(t, filepath.Join(dir, "all.clinal"), d, 250, nil, nil)
			keep := make([]bool, n)
			var train, held []int
			for i := range keep {
				keep[i] = i%10 != 3
				if keep[i] {
					train = append(train, i)
				} else {
					held = append(held, i)
				}
			}
			prefix, fitRes, _ := prjFit(t, dir, st, k, keep)
			model := prjModel(t, prefix)
			pr, err := Project(context.Background(), model, st, ProjectOptions{Threads: 2})
			if err != nil {
				t.Fatal(err)
			}
			full, _, err := RunPCA(context.Background(), st, PCAOptions{K: k, Tol: 1e-10, MaxPasses: 200, Seed: 5})
			if err != nil {
				t.Fatal(err)
			}
			a := mat.NewDense(len(train), k, nil)
			b := mat.NewDense(len(train), k, nil)
			for r, i := range train {
				for q := 0; q < k; q++ {
					a.Set(r, q, full.Scores.At(i, q))
					b.Set(r, q, fitRes.Scores.At(r, q))
				}
			}
			rot, s := prjProcrustes(a, b)
			ah := mat.NewDense(len(held), k, nil)
			for r, i := range held {
				for q := 0; q < k; q++ {
					ah.Set(r, q, full.Scores.At(i, q))
				}
			}
			var truth mat.Dense
			truth.Mul(ah, rot)
			truth.Scale(s, &truth)
			for q := 0; q < k; q++ {
				if !pr.Shrinkage.Corrected[q] {
					t.Fatalf("PC%d not above the edge: %+v", q+1, pr.Shrinkage)
				}
				var tt, pt, ct, pe, ce float64
				for r, i := range held {
					x := truth.At(r, q)
					p, c := pr.Raw[i*k+q], pr.Corrected[i*k+q]
					tt += x * x
					pt += p * x
					ct += c * x
					pe += (p - x) * (p - x)
					ce += (c - x) * (c - x)
				}
				rawSlope, corSlope := pt/tt, ct/tt
				rawRMS, corRMS := math.Sqrt(pe/tt), math.Sqrt(ce/tt)
				t.Logf("PC%d: factor %.4f; slope raw %.4f corrected %.4f; relative RMS raw %.4f corrected %.4f",
					q+1, pr.Shrinkage.Factors[q], rawSlope, corSlope, rawRMS, corRMS)
				if rawSlope > 0.93 {
					t.Errorf("PC%d: raw slope %.4f shows no shrinkage (want < 0.93)", q+1, rawSlope)
				}
				if math.Abs(corSlope-1) > 0.05 {
					t.Errorf("PC%d: corrected slope %.4f, want 1 +- 0.05", q+1, corSlope)
				}
				if !(corRMS < 0.05 && corRMS < rawRMS) {
					t.Errorf("PC%d: corrected relative RMS %.4f, want < 0.05 and below raw %.4f", q+1, corRMS, rawRMS)
				}
			}
		})
	}
}

// TestLeeShrinkageGaussianSpikes checks the formulas of LeeShrinkage (from
// memory of Baik & Silverstein 2006 and Lee, Zou & Wright 2010) by
// simulation on the spiked Gaussian model they describe: M variables, N
// training and N new observations z = sum_k sqrt(ell_k - 1) w_k e_k + noise,
// eigenpairs of K = Z^T Z / M by gonum's EigenSym. Expected: the estimated
// noise variance is 1, the estimated population spikes are the true ell_k,
// and the factor equals both the formula at the true ell_k and the
// observed ratio of standard deviations of new and training scores, each
// within the stated tolerance (finite-size error of order 1/sqrt(N)).
func TestLeeShrinkageGaussianSpikes(t *testing.T) {
	cases := []struct {
		n, m  int
		spike []float64
	}{
		{400, 1200, []float64{13, 7}},  // gamma 3
		{300, 2400, []float64{41, 25}}, // gamma 8
	}
	for _, c := range cases {
		t.Run(fmt.Sprintf("N%d-M%d", c.n, c.m), func(t *testing.T) {
			r := rand.New(rand.NewPCG(uint64(c.n), uint64(c.m)))
			draw := func() *mat.Dense {
				z := mat.NewDense(c.m, c.n, nil)
				for i := 0; i < c.n; i++ {
					for j := 0; j < c.m; j++ {
						z.Set(j, i, r.NormFloat64())
					}
					for q, ell := range c.spike {
						// Spike axis q: marker q (any orthonormal axes would do).
						z.Set(q, i, z.At(q, i)*math.Sqrt(ell))
					}
				}
				return z
			}
			z, znew := draw(), draw()
			var kk mat.SymDense
			kk.SymOuterK(1/float64(c.m), z.T())
			var es mat.EigenSym
			if !es.Factorize(&kk, true) {
				t.Fatal("eigen failed")
			}
			vals := es.Values(nil)
			var vecs mat.Dense
			es.VectorsTo(&vecs)
			ns := len(c.spike)
			eig := make([]float64, ns)
			var trace float64
			for _, v := range vals {
				trace += v
			}
			for q := 0; q < ns; q++ {
				eig[q] = vals[c.n-1-q]
			}
			sh := LeeShrinkage(eig, trace, c.n+1, float64(c.m)) // no centring here: n = N
			if math.Abs(sh.NoiseVariance-1) > 0.02 {
				t.Errorf("noise variance %.4f, want 1 +- 0.02", sh.NoiseVariance)
			}
			for q, ell := range c.spike {
				g := float64(c.m) / float64(c.n)
				rho := (ell - 1) / (ell - 1 + g)
				// Observed: SD of new scores over SD of training scores.
				u := mat.Col(nil, c.n-1-q, &vecs)
				var zu mat.VecDense
				zu.MulVec(z, mat.NewVecDense(c.n, u))
				var pn mat.VecDense
				pn.MulVec(znew.T(), &zu)
				var ss float64
				for i := 0; i < c.n; i++ {
					p := pn.AtVec(i) / (float64(c.m) * eig[q])
					ss += p * p
				}
				obs := math.Sqrt(ss) // training scores: unit norm
				t.Logf("spike %g: estimated %.3f; factor %.4f, at true spike %.4f, observed %.4f",
					ell, sh.PopulationSpike[q], sh.Factors[q], rho, obs)
				if !sh.Corrected[q] || math.Abs(sh.PopulationSpike[q]-ell) > 0.15*(ell-1) {
					t.Errorf("spike %g: estimated %.3f (corrected %v), want within 15%% of ell-1", ell, sh.PopulationSpike[q], sh.Corrected[q])
				}
				if math.Abs(sh.Factors[q]-rho) > 0.05 || math.Abs(obs-rho) > 0.06 {
					t.Errorf("spike %g: factor %.4f, observed ratio %.4f, want both near %.4f", ell, sh.Factors[q], obs, rho)
				}
			}
		})
	}
}

// TestLeeShrinkageEdge checks LeeShrinkage at hand-computed points with
// gamma = M/n = 4 (n = N - 1 = 1000, M = 4000), where the edge is d = (1 +
// sqrt 4)^2 = 9, i.e. lambda = 9 n/M = 2.25. Below it nothing is corrected
// (factor 1). Just above it the spike is near the threshold 1 + sqrt(gamma)
// = 3 and the factor near 1/(1 + sqrt(gamma)) = 1/3 (the new scores are
// then noise of variance 1 against fitted ones of variance 9). At d = 36
// (lambda = 9, trace chosen so that sigma^2 = 1 is the fixed point: trace =
// n (M + ell - 1)/M) the quadratic ell^2 - 33 ell + 36 = 0 gives ell =
// (33 + sqrt(945))/2 = 31.870434 and rho = (ell - 1)/(ell + 3) = 0.885290
// (hand computation from the formulas of Shrinkage).
func TestLeeShrinkageEdge(t *testing.T) {
	const n, m = 1001, 4000
	ell36 := (33 + math.Sqrt(945)) / 2
	cases := []struct {
		lam, trace        float64
		corrected         bool
		factor, factorTol float64
		spike, spikeTol   float64
	}{
		{2.25 * 0.99, 1000, false, 1, 0, 0, 0},
		{2.25 * 1.0001, 1000, true, 1.0 / 3, 0.03, 3, 0.15},
		{9, 1000 * (m + ell36 - 1) / m, true, 0.885290, 1e-5, 31.870434, 1e-5},
	}
	for _, c := range cases {
		sh := LeeShrinkage([]float64{c.lam}, c.trace, n, m)
		if sh.Corrected[0] != c.corrected || math.Abs(sh.Factors[0]-c.factor) > c.factorTol ||
			math.Abs(sh.PopulationSpike[0]-c.spike) > c.spikeTol {
			t.Errorf("lambda %g: corrected %v factor %.6f spike %.6f, want %v %.6f +- %g, %.6f +- %g", c.lam, sh.Corrected[0],
				sh.Factors[0], sh.PopulationSpike[0], c.corrected, c.factor, c.factorTol, c.spike, c.spikeTol)
		}
		// Identity rho = ell / d of the model (algebra).
		if c.corrected {
			if d := sh.PopulationSpike[0] / sh.SampleSpike[0]; math.Abs(d-sh.Factors[0]) > 1e-12 {
				t.Errorf("lambda %g: ell/d = %g, factor %g", c.lam, d, sh.Factors[0])
			}
		}
	}
}

func TestNormalizeChrom(t *testing.T) {
	// Naming conventions in use for the same chromosomes (common practice, no source).
	for _, c := range []struct{ in, want string }{
		{"1", "1"}, {"chr1", "1"}, {"Chr1", "1"}, {"CHR22", "22"}, {"chrX", "X"}, {"x", "X"},
		{"chrM", "MT"}, {"MT", "MT"}, {"chr", "CHR"}, {"scaffold_7", "SCAFFOLD_7"},
	} {
		if got := NormalizeChrom(c.in); got != c.want {
			t.Errorf("NormalizeChrom(%q) = %q, want %q", c.in, got, c.want)
		}
	}
}

func TestProjectCancel(t *testing.T) {
	dir := t.TempDir()
	d := prjSimulate(prjConfig{n: 60, m: 300, pops: 2, fst: 0.05, seed: 1})
	st := prjWrite(t, filepath.Join(dir, "fit.clinal"), d, 10, nil, nil)
	prefix, _, _ := prjFit(t, dir, st, 1, nil)
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := Project(ctx, prjModel(t, prefix), st, ProjectOptions{}); !errors.Is(err, context.Canceled) {
		t.Errorf("error %v, want context.Canceled", err)
	}
}

// The shrinkage factors for a fit of 1001 samples on 4000 markers (gamma
// = 4) with one strong PC (sample spike 36 noise units) and one at the
// noise edge: the first is corrected by 1/0.8853 (the hand computation of
// TestLeeShrinkageEdge), the second is left alone.
func ExampleLeeShrinkage() {
	ell := (33 + math.Sqrt(945)) / 2
	trace := 1000 * (4000 + ell - 1) / 4000 // noise variance 1 with this spike
	sh := LeeShrinkage([]float64{9, 2.2}, trace, 1001, 4000)
	for k := range sh.Factors {
		fmt.Printf("PC%d: sample spike %.2f, population spike %.2f, factor %.4f, corrected %v\n",
			k+1, sh.SampleSpike[k], sh.PopulationSpike[k], sh.Factors[k], sh.Corrected[k])
	}
	// Output:
	// PC1: sample spike 36.00, population spike 31.87, factor 0.8853, corrected true
	// PC2: sample spike 8.80, population spike 0.00, factor 1.0000, corrected false
}
