package randsvd

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"sync"

	"github.com/clinal/clinal/matrixio"
)

// Rescale chooses how Project treats model markers absent from a sample.
type Rescale string

const (
	// RescaleMass divides each score by the loading mass present (default).
	RescaleMass Rescale = "mass"
	// RescaleNone sets absent markers to 0 without rescaling, as the fit did.
	RescaleNone Rescale = "none"
)

// ShrinkageMethod chooses the correction of projected scores.
type ShrinkageMethod string

const (
	// ShrinkLee2010 uses the asymptotic factors of Lee, Zou & Wright 2010.
	ShrinkLee2010 ShrinkageMethod = "lee2010"
	// ShrinkNone applies no correction (corrected scores equal raw ones).
	ShrinkNone ShrinkageMethod = "none"
)

// ProjectOptions configure Project and ProjectPath.
type ProjectOptions struct {
	// KeepAmbiguous keeps strand-ambiguous markers (alleles A/T or C/G),
	// matched as written. By default they are dropped, since a strand flip
	// cannot be told apart from a REF/ALT swap there.
	KeepAmbiguous bool
	// Complement also matches single-base markers whose alleles are the
	// complements of the model's (typed on the other strand).
	Complement bool
	// MaxAlleleMismatch is the largest fraction of the markers found at a
	// model position whose alleles disagree with the model before the input
	// is refused as another genome build or allele coding (default 0.5;
	// set 1 to never refuse).
	MaxAlleleMismatch float64
	// Rescale chooses the treatment of absent markers (default RescaleMass).
	Rescale Rescale
	// Shrinkage chooses the correction (default ShrinkLee2010).
	Shrinkage ShrinkageMethod
	// EffectiveMarkers, when > 0, replaces the model's marker count in the
	// shrinkage estimate (markers in linkage disequilibrium count for less
	// than one independent marker each).
	EffectiveMarkers float64
	// Threads is the number of compute goroutines (default 1); results do
	// not depend on it.
	Threads int

	// For ProjectPath with a VCF input:
	Field   string    // FORMAT field imported, GT (default) or DS
	Stdin   io.Reader // read for the input name "-"
	TempDir string    // where the temporary store goes (default os.TempDir())
}

// MatchSummary counts how the input's markers met the model's.
type MatchSummary struct {
	ModelMarkers int `json:"model_markers"`
	InputMarkers int `json:"input_markers"`
	// Used markers: Same + Swapped (complement matches included in both).
	Used int `json:"used"`
	// Same: the input's ALT is the model's counted allele.
	Same int `json:"same_orientation"`
	// Swapped: REF and ALT swapped; genotypes are counted as 2 - g.
	Swapped int `json:"ref_alt_swapped"`
	// Complement: matched after complementing the input's alleles (only
	// with ProjectOptions.Complement); included in Same or Swapped.
	Complement int `json:"strand_complemented"`
	// Monomorphic: input markers without an ALT allele (VCF ALT '.')
	// matched by their REF; included in Same or Swapped.
	Monomorphic int `json:"input_monomorphic"`
	// Ambiguous: the model's alleles are A/T or C/G; dropped unless
	// KeepAmbiguous (then they are also in Used).
	Ambiguous        int  `json:"strand_ambiguous"`
	AmbiguousDropped bool `json:"strand_ambiguous_dropped"`
	// AlleleMismatch: a model marker at this chromosome and position, but
	// with other alleles; dropped.
	AlleleMismatch int `json:"allele_mismatch"`
	// Duplicate: a second input marker for a model marker already used.
	Duplicate int `json:"duplicate"`
	// NotInModel: no model marker at this chromosome and position.
	NotInModel int `json:"not_in_model"`
	// ModelAbsent: model markers the input does not provide (after drops).
	ModelAbsent int `json:"model_markers_absent"`
}

// Projection holds the scores of the input's samples on the model's PCs.
// Matrices are row-major, one row of K values per sample in input order.
type Projection struct {
	Samples   []string
	K         int
	Raw       []float64 // scores before the shrinkage correction
	Corrected []float64 // Raw divided by Shrinkage.Factors
	Present   []int     // model markers with a call, per sample
	Overlap   []float64 // Present / model markers, per sample
	Mass      []float64 // loading mass present, per sample and PC (1 = all)
	Rescale   Rescale
	Match     MatchSummary
	Shrinkage Shrinkage
	// Import summarizes the VCF import when ProjectPath read a VCF.
	Import *matrixio.ImportSummary
}

// Shrinkage holds the per-PC correction factors of projected scores.
//
// Model (Lee, Zou & Wright 2010, Ann. Stat. 38:3605; formulas below from
// memory of that paper and of Baik & Silverstein 2006, J. Multivar. Anal.
// 97:1382, and checked by simulation in the tests): markers are the
// variables and samples the observations, so the aspect ratio is gamma =
// M / n with n = N - 1 (one degree of freedom goes to centring). The M x M
// sample covariance S = Z Z^T / n has the nonzero eigenvalues (M/n)
// lambda_k of K; in units of the noise variance sigma^2 they are d_k. A
// population spike ell > 1 + sqrt(gamma) shows in the sample at d = ell (1
// + gamma/(ell - 1)), and a sample at or below the edge (1 + sqrt(gamma))^2
// carries no recoverable axis. For a spike, the scores of samples outside
// the fit have a standard deviation smaller than the fitted scores by the
// factor
//
//	rho = (ell - 1) / (ell - 1 + gamma)  (= ell / d).
//
// sigma^2 solves trace(S) = sigma^2 (M + sum_spikes (ell_k - 1)), the
// expected trace of the spiked covariance, by fixed-point iteration.
type Shrinkage struct {
	Method        string  `json:"method"`
	Markers       float64 `json:"markers"`        // M used in gamma
	DOF           int     `json:"samples_dof"`    // n = N - 1
	Gamma         float64 `json:"gamma"`          // M / n
	NoiseVariance float64 `json:"noise_variance"` // sigma^2
	// EdgeEigenvalue is the eigenvalue of K at the detection edge,
	// (n/M) sigma^2 (1 + sqrt(gamma))^2.
	EdgeEigenvalue  float64   `json:"edge_eigenvalue"`
	SampleSpike     []float64 `json:"sample_spike"`     // d_k
	PopulationSpike []float64 `json:"population_spike"` // ell_k; 0 at or below the edge
	Factors         []float64 `json:"factors"`          // rho_k; 1 where not corrected
	Corrected       []bool    `json:"corrected"`
}

// LeeShrinkage estimates the shrinkage factors of projected scores for the
// eigenvalues of K = Z^T Z / M of a fit on samples samples and markers
// markers (see Shrinkage for the model), with trace the trace of K. PCs at
// or below the edge get factor 1 and Corrected false.
func LeeShrinkage(eigenvalues []float64, trace float64, samples int, markers float64) Shrinkage {
	k := len(eigenvalues)
	sh := Shrinkage{Method: string(ShrinkLee2010), Markers: markers, DOF: samples - 1,
		SampleSpike: make([]float64, k), PopulationSpike: make([]float64, k),
		Factors: make([]float64, k), Corrected: make([]bool, k)}
	for j := range sh.Factors {
		sh.Factors[j] = 1
	}
	n := float64(samples - 1)
	if !(n >= 1) || !(markers > 0) || !(trace > 0) {
		return sh
	}
	g := markers / n
	sh.Gamma = g
	edge := (1 + math.Sqrt(g)) * (1 + math.Sqrt(g))
	trS := markers * trace / n
	sigma2 := trS / markers
	for it := 0; it < 200; it++ {
		excess := 0.0
		for _, lam := range eigenvalues {
			d := markers / n * lam / sigma2
			if ell, ok := popSpike(d, g, edge); ok {
				excess += ell - 1
			}
		}
		next := trS / (markers + excess)
		done := math.Abs(next-sigma2) <= 1e-15*sigma2
		sigma2 = next
		if done {
			break
		}
	}
	sh.NoiseVariance = sigma2
	sh.EdgeEigenvalue = n / markers * sigma2 * edge
	for j, lam := range eigenvalues {
		d := markers / n * lam / sigma2
		sh.SampleSpike[j] = d
		if ell, ok := popSpike(d, g, edge); ok {
			sh.PopulationSpike[j] = ell
			sh.Factors[j] = (ell - 1) / (ell - 1 + g)
			sh.Corrected[j] = true
		}
	}
	return sh
}

// popSpike inverts d = ell (1 + gamma/(ell - 1)) for ell > 1 + sqrt(gamma):
// ell^2 - (d + 1 - gamma) ell + d = 0, larger root. ok is false at or
// below the edge.
func popSpike(d, gamma, edge float64) (float64, bool) {
	if !(d > edge) {
		return 0, false
	}
	b := d + 1 - gamma
	disc := b*b - 4*d
	if disc < 0 {
		disc = 0
	}
	return (b + math.Sqrt(disc)) / 2, true
}

// noShrinkage is the Shrinkage of ShrinkNone.
func noShrinkage(k int) Shrinkage {
	sh := Shrinkage{Method: string(ShrinkNone), Factors: make([]float64, k), Corrected: make([]bool, k),
		SampleSpike: make([]float64, k), PopulationSpike: make([]float64, k)}
	for j := range sh.Factors {
		sh.Factors[j] = 1
	}
	return sh
}

// markerKey locates a marker: normalized chromosome and position.
type markerKey struct {
	chrom string
	pos   int64
}

// NormalizeChrom maps chromosome names that differ only by convention to
// one form: a leading "chr" (any case) is dropped, letters are upper-cased
// and "M" becomes "MT", so "chr1", "Chr1" and "1" match, as do "chrX" and
// "X", "chrM" and "MT".
func NormalizeChrom(c string) string {
	if len(c) > 3 && strings.EqualFold(c[:3], "chr") {
		c = c[3:]
	}
	c = strings.ToUpper(c)
	if c == "M" {
		c = "MT"
	}
	return c
}

// ambiguousPair reports whether alleles a, b are A/T or C/G (a strand flip
// gives the same pair).
func ambiguousPair(a, b string) bool {
	if len(a) != 1 || len(b) != 1 {
		return false
	}
	return complementBase(a[0]) == b[0]
}

// complementBase returns the complementary base (upper case), or 0.
func complementBase(c byte) byte {
	switch c {
	case 'A':
		return 'T'
	case 'T':
		return 'A'
	case 'C':
		return 'G'
	case 'G':
		return 'C'
	}
	return 0
}

// complementSNP complements a single-base allele; ok is false otherwise.
func complementSNP(a string) (string, bool) {
	if len(a) != 1 || complementBase(a[0]) == 0 {
		return "", false
	}
	return string(complementBase(a[0])), true
}

// inputMatch is the model marker an input marker stands for.
type inputMatch struct {
	model int  // model marker index, -1 when dropped
	flip  bool // count 2 - g
}

// matchMarkers pairs the input markers with the model's by chromosome,
// position and alleles (see MatchSummary for the categories).
func matchMarkers(model *matrixio.PCAModel, in []matrixio.Marker, opt *ProjectOptions) ([]inputMatch, MatchSummary, error) {
	sum := MatchSummary{ModelMarkers: len(model.Markers), InputMarkers: len(in), AmbiguousDropped: !opt.KeepAmbiguous}
	// Positions hold one model marker, rarely more (split multi-allelic
	// records): first index per key, further ones chained.
	first := make(map[markerKey]int32, len(model.Markers))
	next := make([]int32, len(model.Markers))
	other := make([]string, len(model.Markers))
	counted := make([]string, len(model.Markers))
	for j, m := range model.Markers {
		counted[j] = strings.ToUpper(model.Counted[j])
		if strings.EqualFold(model.Counted[j], m.Alt) {
			other[j] = strings.ToUpper(m.Ref)
		} else {
			other[j] = strings.ToUpper(m.Alt)
		}
		k := markerKey{NormalizeChrom(m.Chrom), m.Pos}
		next[j] = -1
		if f, ok := first[k]; ok {
			// Append at the end of the chain, keeping file order.
			for next[f] >= 0 {
				f = next[f]
			}
			next[f] = int32(j)
		} else {
			first[k] = int32(j)
		}
	}
	used := make([]bool, len(model.Markers))
	out := make([]inputMatch, len(in))
	for i, m := range in {
		out[i].model = -1
		f, ok := first[markerKey{NormalizeChrom(m.Chrom), m.Pos}]
		if !ok {
			sum.NotInModel++
			continue
		}
		ref, alt := strings.ToUpper(m.Ref), strings.ToUpper(m.Alt)
		cref, okr := complementSNP(ref)
		calt, oka := complementSNP(alt)
		found, flip, comp, mono := -1, false, false, false
		for c := f; c >= 0 && found < 0; c = next[c] {
			switch {
			case alt == counted[c] && ref == other[c]:
				found, flip = int(c), false
			case ref == counted[c] && alt == other[c]:
				found, flip = int(c), true
			case alt == "." && ref == other[c]:
				// Monomorphic in the input (VCF ALT '.'): every call is
				// REF/REF, zero copies of the counted allele.
				found, flip, mono = int(c), false, true
			case alt == "." && ref == counted[c]:
				found, flip, mono = int(c), true, true
			case opt.Complement && okr && oka && calt == counted[c] && cref == other[c]:
				found, flip, comp = int(c), false, true
			case opt.Complement && okr && oka && cref == counted[c] && calt == other[c]:
				found, flip, comp = int(c), true, true
			}
		}
		if found < 0 {
			sum.AlleleMismatch++
			continue
		}
		if used[found] {
			sum.Duplicate++
			continue
		}
		used[found] = true
		if ambiguousPair(counted[found], other[found]) {
			sum.Ambiguous++
			if !opt.KeepAmbiguous {
				continue
			}
		}
		out[i] = inputMatch{model: found, flip: flip}
		sum.Used++
		if flip {
			sum.Swapped++
		} else {
			sum.Same++
		}
		if comp {
			sum.Complement++
		}
		if mono {
			sum.Monomorphic++
		}
	}
	sum.ModelAbsent = sum.ModelMarkers - sum.Used
	common := sum.Used + sum.AlleleMismatch // markers at a model position, less duplicates
	if !opt.KeepAmbiguous {
		common += sum.Ambiguous
	}
	switch {
	case sum.Used == 0 && sum.AlleleMismatch > 0:
		return nil, sum, matrixio.BadInput("no usable marker: %d input markers sit at model positions but their alleles never match the model's "+
			"(another genome build or allele coding?)", sum.AlleleMismatch)
	case sum.Used == 0 && sum.Ambiguous > 0:
		return nil, sum, matrixio.BadInput("no usable marker: the only %d markers in common with the model are strand-ambiguous (A/T, C/G) "+
			"and were dropped (keep them if both sets are on the same strand)", sum.Ambiguous)
	case sum.Used == 0:
		return nil, sum, matrixio.BadInput("no markers in common with the model (by chromosome and position): model chromosomes %s, input %s",
			chromSample(model.Markers), chromSample(in))
	case common > 0 && float64(sum.AlleleMismatch) > opt.MaxAlleleMismatch*float64(common):
		return nil, sum, matrixio.BadInput("alleles disagree with the model at %d of %d markers in common (more than %g): another genome build or allele coding?",
			sum.AlleleMismatch, common, opt.MaxAlleleMismatch)
	}
	return out, sum, nil
}

// chromSample lists up to three distinct chromosome names, for messages.
func chromSample(ms []matrixio.Marker) string {
	var names []string
	seen := map[string]bool{}
	for _, m := range ms {
		if !seen[m.Chrom] {
			seen[m.Chrom] = true
			names = append(names, fmt.Sprintf("%q", m.Chrom))
			if len(names) == 3 {
				names = append(names, "...")
				break
			}
		}
	}
	if len(names) == 0 {
		return "(none)"
	}
	return strings.Join(names, ", ")
}

// projMarker is one used input marker within its chunk.
type projMarker struct {
	off   int        // row within the chunk
	model int        // model marker
	tab   [3]float64 // geno2: z for codes 0, 1, 2
	flip  bool
	mu    float64 // float stores: z = (x' - mu) * inv, x' = x or 2 - x
	inv   float64
}

// Project computes the scores of the samples of st on the model's PCs,
// raw and corrected for shrinkage (see Projection for the outputs). The
// input's markers are matched to the model's by chromosome (NormalizeChrom),
// position and alleles (see MatchSummary); input that shares no usable
// marker with the model, or whose alleles disagree at more than
// MaxAlleleMismatch of the shared positions, is a BadInput error. The store
// is streamed chunk by chunk; memory is the model, the marker plan and a
// few N x K blocks. Stores of hard calls (geno2) and of dosages (float32)
// are both accepted. Results do not depend on opt.Threads.
//
// # Scores
//
// The model holds, per marker j, the counted allele, its frequency p_j and
// scale s_j over the fit's samples, and the loadings v_jk = (Z u_k)_j /
// sqrt(M lambda_k), which have unit norm over the M model markers. A new
// sample with genotype g_j (copies of the counted allele) has z_j = (g_j -
// 2 p_j) / s_j and
//
//	score_k = sum_j z_j v_jk / sqrt(M lambda_k).
//
// For a sample of the fit, z is its column of Z and the sum is (K u_k)_i /
// lambda_k = u_ik: projection reproduces the fit's scores (covariates.tsv)
// exactly.
//
// # Markers the new sample lacks
//
// A model marker that the input does not have, or where the sample's call
// is missing, contributes z_j = 0, which pulls the score toward 0 in
// proportion to the loading mass that is absent. With RescaleMass (the
// default) the sum is divided, per sample and PC, by the loading mass of
// the markers present, m_ik = sum_{j present} v_jk^2 (which is 1 when all
// are present):
//
//	score_k = (sum_{j present} z_j v_jk) / (m_ik sqrt(M lambda_k)).
//
// Why: write a sample as z = sum_l a_l v_l + e, with a_l = sqrt(M
// lambda_l) score_l and e orthogonal to the loadings; then the sum over
// the present markers is sum_l a_l sum_{j present} v_jl v_jk plus noise.
// When the absent markers are not chosen by their loadings, the cross
// terms l != k are small next to the diagonal term a_k m_ik, so dividing
// by m_ik gives a_k without the pull toward 0. This is the diagonal of the
// least-squares fit of z on the loadings of the present markers, which
// would need a K x K system per sample (memory N K^2); the diagonal
// version needs N K numbers and one pass. Dividing by the fraction of
// markers present instead would be the same on average, but m_ik weighs
// each absent marker by how much it carries the PC, so losing markers that
// do not matter for a PC costs that PC nothing. The price of fewer markers
// is noise: for a fraction f of the markers, the scores of the fit's own
// samples move by about sqrt(N (1 - f) / (f M lambda_k)) of their RMS
// (derived and checked in the tests). RescaleNone keeps the fit's own
// convention (missing -> 0, no rescaling), under which a sample of the fit
// gets exactly its fitted score even with missing calls.
//
// # Shrinkage
//
// When the number of markers is not small next to the number of samples,
// the sample eigenvectors are noisy estimates of the population axes and
// the scores of samples outside the fit are shrunk toward 0 relative to the
// scores of samples inside it (Lee, Zou & Wright 2010, Ann. Stat. 38:3605).
// ShrinkLee2010 divides the projected scores of each PC above the noise
// edge by the asymptotic shrinkage factor of that paper, estimated from the
// spectrum; see LeeShrinkage. Zhang, Dey & Lee 2020 (Bioinformatics
// 36:3439) avoid the asymptotics by refitting with each new sample added
// (augmentation and Procrustes, from memory); that costs a PCA per sample
// and is not implemented here.
func Project(ctx context.Context, model *matrixio.PCAModel, st *matrixio.Store, opt ProjectOptions) (*Projection, error) {
	if opt.MaxAlleleMismatch <= 0 {
		opt.MaxAlleleMismatch = 0.5
	}
	if opt.Rescale == "" {
		opt.Rescale = RescaleMass
	}
	if opt.Shrinkage == "" {
		opt.Shrinkage = ShrinkLee2010
	}
	if opt.Threads < 1 {
		opt.Threads = 1
	}
	switch opt.Rescale {
	case RescaleMass, RescaleNone:
	default:
		return nil, matrixio.BadInput("rescale %q: want mass or none", opt.Rescale)
	}
	switch opt.Shrinkage {
	case ShrinkLee2010, ShrinkNone:
	default:
		return nil, matrixio.BadInput("shrinkage %q: want lee2010 or none", opt.Shrinkage)
	}
	k := model.K
	if k < 1 || len(model.Loadings) != len(model.Markers)*k || len(model.Eigenvalues) != k {
		return nil, fmt.Errorf("project: malformed model (%d PCs, %d markers, %d loadings)", k, len(model.Markers), len(model.Loadings))
	}
	matches, msum, err := matchMarkers(model, st.Markers(), &opt)
	if err != nil {
		return nil, fmt.Errorf("project %s onto %s: %w", st.Path(), model.Prefix, err)
	}
	n := st.NumSamples()
	isFloat := st.Codec() == matrixio.CodecFloat32

	// Chunk plan and the loading mass of the used markers.
	plan := map[int][]projMarker{}
	var chunks []int
	total := make([]float64, k)
	for j, mt := range matches {
		if mt.model < 0 {
			continue
		}
		c := st.ChunkOf(j)
		first, _ := st.ChunkSpan(c)
		p := projMarker{off: j - first, model: mt.model, flip: mt.flip}
		p.mu = 2 * model.Freq[mt.model]
		p.inv = 1 / model.Scale[mt.model]
		for g := 0; g < 3; g++ {
			x := float64(g)
			if mt.flip {
				x = 2 - x
			}
			p.tab[g] = (x - p.mu) / model.Scale[mt.model]
		}
		if _, ok := plan[c]; !ok {
			chunks = append(chunks, c)
		}
		plan[c] = append(plan[c], p)
		for q, v := range model.Loading(mt.model) {
			total[q] += v * v
		}
	}

	acc := make([]float64, n*k)      // sum_j z_ij v_jk over called markers
	missMass := make([]float64, n*k) // sum_j v_jk^2 over used markers with a missing call
	missing := make([]int, n)
	segs := projSegments(n, opt.Threads)
	rb := st.RowBytes()
	err = st.Stream(ctx, chunks, opt.Threads, func(c *matrixio.Chunk) error {
		if err := ctx.Err(); err != nil {
			return err
		}
		ms := plan[c.Index]
		var wg sync.WaitGroup
		for s := 0; s+1 < len(segs); s++ {
			wg.Add(1)
			go func(a, b int) {
				defer wg.Done()
				for _, p := range ms {
					row := c.Raw[p.off*rb : (p.off+1)*rb]
					v := model.Loading(p.model)
					for i := a; i < b; i++ {
						var z float64
						if isFloat {
							x := float64(math.Float32frombits(uint32(row[4*i]) | uint32(row[4*i+1])<<8 | uint32(row[4*i+2])<<16 | uint32(row[4*i+3])<<24))
							if x != x {
								projMissing(missMass[i*k:(i+1)*k], v)
								missing[i]++
								continue
							}
							if p.flip {
								x = 2 - x
							}
							z = (x - p.mu) * p.inv
						} else {
							code := (row[i>>2] >> (2 * uint(i&3))) & 3
							if code == matrixio.Missing {
								projMissing(missMass[i*k:(i+1)*k], v)
								missing[i]++
								continue
							}
							z = p.tab[code]
						}
						ai := acc[i*k : (i+1)*k]
						for q, vq := range v {
							ai[q] += z * vq
						}
					}
				}
			}(segs[s], segs[s+1])
		}
		wg.Wait()
		return nil
	})
	if err != nil {
		if errors.Is(err, context.Canceled) || errors.Is(err, context.DeadlineExceeded) {
			return nil, err
		}
		return nil, fmt.Errorf("project %s: %w", st.Path(), err)
	}

	pr := &Projection{Samples: st.Samples(), K: k, Raw: make([]float64, n*k), Corrected: make([]float64, n*k),
		Present: make([]int, n), Overlap: make([]float64, n), Mass: make([]float64, n*k),
		Rescale: opt.Rescale, Match: msum}
	if opt.Shrinkage == ShrinkLee2010 {
		m := float64(model.MarkersUsed)
		if opt.EffectiveMarkers > 0 {
			m = opt.EffectiveMarkers
		}
		pr.Shrinkage = LeeShrinkage(model.Eigenvalues, model.Trace, model.SamplesUsed, m)
	} else {
		pr.Shrinkage = noShrinkage(k)
	}
	norm := make([]float64, k)
	for q := range norm {
		norm[q] = 1 / math.Sqrt(float64(model.MarkersUsed)*model.Eigenvalues[q])
	}
	for i := 0; i < n; i++ {
		pr.Present[i] = msum.Used - missing[i]
		pr.Overlap[i] = float64(pr.Present[i]) / float64(len(model.Markers))
		for q := 0; q < k; q++ {
			mass := total[q] - missMass[i*k+q]
			pr.Mass[i*k+q] = mass
			s := acc[i*k+q] * norm[q]
			if opt.Rescale == RescaleMass {
				if mass > 1e-12 {
					s /= mass
				} else {
					s = math.NaN()
				}
			}
			pr.Raw[i*k+q] = s
			pr.Corrected[i*k+q] = s / pr.Shrinkage.Factors[q]
		}
	}
	return pr, nil
}

func projMissing(dst, v []float64) {
	for q, x := range v {
		dst[q] += x * x
	}
}

// projSegments splits [0, n) into at most parts ranges of samples, of 64
// samples at least, with boundaries at multiples of 4 (whole bytes of a
// 2-bit row). Each range is one goroutine's: its samples' sums are its own,
// so the thread count never changes a number.
func projSegments(n, parts int) []int {
	parts = max(1, min(parts, (n+63)/64))
	out := []int{0}
	for p := 1; p < parts; p++ {
		b := (n * p / parts) &^ 3
		if b > out[len(out)-1] {
			out = append(out, b)
		}
	}
	return append(out, n)
}

// ProjectPath projects the samples of input, a .clinal store or a VCF
// (plain, gzip or BGZF; "-" reads opt.Stdin), onto the model. A VCF is
// imported to a temporary store under opt.TempDir first, removed before
// returning.
func ProjectPath(ctx context.Context, model *matrixio.PCAModel, input string, opt ProjectOptions) (*Projection, error) {
	if input != "-" {
		st, err := matrixio.Open(input)
		if err == nil {
			defer st.Close()
			return Project(ctx, model, st, opt)
		}
		if !errors.Is(err, matrixio.ErrNotStore) {
			return nil, err
		}
	}
	dir, err := os.MkdirTemp(opt.TempDir, "clinal-project-")
	if err != nil {
		return nil, fmt.Errorf("project: temporary store: %w", err)
	}
	defer os.RemoveAll(dir)
	tmp := filepath.Join(dir, "input.clinal")
	sum, err := matrixio.ImportVCF(ctx, []string{input}, tmp, matrixio.ImportOptions{Field: opt.Field, Threads: opt.Threads, Stdin: opt.Stdin})
	if err != nil {
		return nil, err
	}
	st, err := matrixio.Open(tmp)
	if err != nil {
		return nil, err
	}
	defer st.Close()
	pr, err := Project(ctx, model, st, opt)
	if err != nil {
		return nil, err
	}
	pr.Import = sum
	return pr, nil
}
