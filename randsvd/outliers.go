package randsvd

import (
	"context"
	"errors"
	"fmt"
	"math"
	"sync"

	"github.com/clinal/clinal/matrixio"
)

// OutlierOptions configure RemoveOutliers. Zero fields take the defaults.
type OutlierOptions struct {
	// SD is the threshold in standard deviations (default 6).
	SD float64
	// Rounds is the largest number of removal rounds (default 5).
	Rounds int
	// PCs is the number of top PCs checked (default 10; at most the K of
	// the PCA).
	PCs int
}

// Outlier is a sample removed by RemoveOutliers.
type Outlier struct {
	Sample int     `json:"sample"` // store index
	Round  int     `json:"round"`  // removal round, from 1
	PC     int     `json:"pc"`     // first PC (from 1) on which it was beyond the threshold
	Z      float64 `json:"z"`      // its signed distance from the mean on that PC, in SDs
}

// Default outlier settings: 6 standard deviations on the top 10 PCs, up to
// 5 rounds, the settings of Price et al. 2006 (Nat. Genet. 38:904) as
// recalled (from memory): far enough out that a normal sample of a cohort
// of a million is not flagged on ten roughly Gaussian axes (the chance of
// |z| > 6 is 2e-9 per axis), yet a sample from an unrepresented population
// stands out by far more.
const (
	DefaultOutlierSD     = 6.0
	DefaultOutlierRounds = 5
	DefaultOutlierPCs    = 10
)

// RemoveOutliers runs PCA and removes outlier samples iteratively (Price
// et al. 2006, Nat. Genet. 38:904; Patterson, Price & Reich 2006, PLoS
// Genet. 2:e190): in each round, on each of the top oo.PCs PCs, the mean
// and standard deviation of the kept samples' scores are computed and every
// sample farther than oo.SD standard deviations from the mean on any of
// them is removed; then the marker counts over the remaining samples are
// recomputed (one pass, CountKept), so allele frequencies and scales are
// theirs, and PCA is run again. It stops when a round removes nobody or
// after oo.Rounds removal rounds; the axes returned are always those of a
// PCA of the samples left, so up to oo.Rounds+1 PCAs run.
//
// popt is as for RunPCA: its SampleKept, MarkerKept and Counts describe the
// starting selection (Counts over the samples of SampleKept), and QC
// filters decided on them are not revisited; markers that become
// monomorphic among the remaining samples drop out (Operator.Dropped).
// Checkpoint and Resume apply to the first round only (later rounds work
// on other selections);
// the Tracy-Widom test (popt.TW) runs once, on the final axes.
//
// The removed samples get scores by projection onto the final axes
// (ProjectStoreSamples): projected maps a removed sample's store index to
// its K scores, on the scale of res.Scores, so a covariate file can cover
// every sample. Results are deterministic for a given popt.Seed.
func RemoveOutliers(ctx context.Context, st *matrixio.Store, popt PCAOptions, oo OutlierOptions) (res *PCAResult, op *Operator, removed []Outlier, projected map[int][]float64, err error) {
	if oo.SD == 0 {
		oo.SD = DefaultOutlierSD
	}
	if oo.Rounds == 0 {
		oo.Rounds = DefaultOutlierRounds
	}
	if oo.PCs == 0 {
		oo.PCs = DefaultOutlierPCs
	}
	if !(oo.SD > 0) || oo.Rounds < 0 || oo.PCs < 0 {
		return nil, nil, nil, nil, matrixio.BadInput("outlier removal: SD %v, rounds %d, PCs %d: want SD > 0 and non-negative counts", oo.SD, oo.Rounds, oo.PCs)
	}
	n := st.NumSamples()
	keep := make([]bool, n)
	for i := range keep {
		keep[i] = popt.SampleKept == nil || popt.SampleKept[i]
	}
	counts := popt.Counts
	for round := 1; ; round++ {
		p := popt
		p.SampleKept, p.Counts, p.Checkpoint, p.Resume = keep, counts, nil, nil
		if round == 1 {
			// The first round works on the caller's selection: it may
			// checkpoint and resume like a plain RunPCA.
			p.Checkpoint, p.Resume = popt.Checkpoint, popt.Resume
		}
		p.TW = "off" // only the final axes are tested, below
		res, op, err = RunPCA(ctx, st, p)
		if err != nil {
			if round > 1 {
				err = fmt.Errorf("PCA after outlier round %d: %w", round-1, err)
			}
			return nil, nil, nil, nil, err
		}
		if round > oo.Rounds {
			break
		}
		flagged := flagOutliers(res, min(oo.PCs, len(res.Eigenvalues)), oo.SD)
		if len(flagged) == 0 {
			break
		}
		res.Close() // this round's axes are not the final ones
		left := len(res.Samples) - len(flagged)
		if left < len(res.Eigenvalues)+1 {
			res.Close()
			return nil, nil, nil, nil, matrixio.BadInput("outlier round %d would leave %d of %d samples, too few for %d PCs (raise the SD threshold)",
				round, left, len(res.Samples), len(res.Eigenvalues))
		}
		for _, f := range flagged {
			f.Round = round
			keep[f.Sample] = false
			removed = append(removed, f)
		}
		counts, err = CountKept(ctx, st, keep, popt.Threads)
		if err != nil {
			return nil, nil, nil, nil, err
		}
	}
	if popt.TW != "off" {
		// The Tracy-Widom test of the final axes, as RunPCA would have run
		// it (exact trace(K^2) costs N/32 passes, so not in every round).
		if err := tracyWidom(ctx, op, popt, res); err != nil {
			res.Close()
			return nil, nil, nil, nil, err
		}
	}
	if len(removed) > 0 {
		p := popt
		p.SampleKept, p.Counts = keep, counts
		idx := make([]int, len(removed))
		for i, r := range removed {
			idx[i] = r.Sample
		}
		projected, err = ProjectStoreSamples(ctx, st, res, p, idx)
		if err != nil {
			res.Close()
			return nil, nil, nil, nil, err
		}
	}
	return res, op, removed, projected, nil
}

// flagOutliers returns the samples of res beyond sd standard deviations
// from the mean on any of the first pcs PCs, in store order, each with the
// first such PC. The standard deviation is the sample one (n - 1).
func flagOutliers(res *PCAResult, pcs int, sd float64) []Outlier {
	nk := len(res.Samples)
	mean := make([]float64, pcs)
	dev := make([]float64, pcs)
	for q := 0; q < pcs; q++ {
		var s float64
		for r := 0; r < nk; r++ {
			s += res.Scores.At(r, q)
		}
		mu := s / float64(nk)
		var ss float64
		for r := 0; r < nk; r++ {
			d := res.Scores.At(r, q) - mu
			ss += d * d
		}
		mean[q], dev[q] = mu, math.Sqrt(ss/float64(nk-1))
	}
	var out []Outlier
	for r := 0; r < nk; r++ {
		for q := 0; q < pcs; q++ {
			if !(dev[q] > 0) {
				continue
			}
			z := (res.Scores.At(r, q) - mean[q]) / dev[q]
			if math.Abs(z) > sd {
				out = append(out, Outlier{Sample: res.Samples[r], PC: q + 1, Z: z})
				break
			}
		}
	}
	return out
}

// ProjectStoreSamples places samples of the store (store indices) on the
// axes of res, a PCA run with the options popt (its MarkerKept, Counts,
// SampleKept and Scaling: the standardization of the fit). Each sample's
// standardized vector z, with missing calls set to 0 as in the fit, gives
//
//	score_k = z . Z u_k / (M lambda_k),
//
// the same as Project's formula with the fit's loadings v_k = Z u_k /
// sqrt(M lambda_k) and no rescaling; for a sample of the fit it is its own
// score. It costs one pass: an operator over the fit's samples and the
// requested ones, standardized by the fit's counts, applied to the scores
// with zero rows for the requested samples, gives Z^T Z U / M on every row.
func ProjectStoreSamples(ctx context.Context, st *matrixio.Store, res *PCAResult, popt PCAOptions, samples []int) (map[int][]float64, error) {
	n := st.NumSamples()
	fit := make([]bool, n)
	for _, i := range res.Samples {
		fit[i] = true
	}
	sel := append([]bool(nil), fit...)
	for _, i := range samples {
		if i < 0 || i >= n {
			return nil, fmt.Errorf("project samples: store index %d out of range [0,%d)", i, n)
		}
		sel[i] = true
	}
	counts := popt.Counts
	if counts == nil {
		if len(res.Samples) != n {
			return nil, errors.New("project samples: the fit dropped samples but no counts over its samples were given")
		}
		counts = st.Counts()
	}
	op, err := NewOperator(st, OperatorOptions{SampleKept: sel, MarkerKept: popt.MarkerKept, Counts: counts,
		ForeignCounts: true, Scaling: popt.Scaling, Threads: popt.Threads})
	if err != nil {
		return nil, err
	}
	if op.Markers() != res.Markers {
		return nil, fmt.Errorf("project samples: %d markers in the operator, %d in the fit (options differ from the fit's)", op.Markers(), res.Markers)
	}
	k := len(res.Eigenvalues)
	rows := op.KeptSamples()
	row := make(map[int]int, len(res.Samples))
	for r, i := range res.Samples {
		row[i] = r
	}
	x := make([]float64, len(rows)*k)
	for r, i := range rows {
		if fr, ok := row[i]; ok {
			copy(x[r*k:(r+1)*k], res.Scores.RawRowView(fr))
		}
	}
	y := make([]float64, len(x))
	if err := op.Apply(ctx, x, y, k); err != nil {
		return nil, err
	}
	at := make(map[int]int, len(rows))
	for r, i := range rows {
		at[i] = r
	}
	out := make(map[int][]float64, len(samples))
	for _, i := range samples {
		r := at[i]
		s := make([]float64, k)
		for q := range s {
			s[q] = y[r*k+q] / res.Eigenvalues[q]
		}
		out[i] = s
	}
	return out, nil
}

// CountKept recounts every marker's calls over the samples with keep[i]
// true, in one pass over the store (threads goroutines), as the store's
// writer counts them over all samples: for hard calls the numbers of 0, 1,
// 2 and missing; for float stores also the sum and sum of squares of the
// non-missing values and their counts rounded to 0, 1, 2. Sums run in
// sample order, so results do not depend on threads.
func CountKept(ctx context.Context, st *matrixio.Store, keep []bool, threads int) ([]matrixio.Counts, error) {
	n, m := st.NumSamples(), st.NumMarkers()
	if len(keep) != n {
		return nil, fmt.Errorf("count kept: mask of %d for %d samples", len(keep), n)
	}
	threads = max(1, threads)
	var idx []int
	for i, k := range keep {
		if k {
			idx = append(idx, i)
		}
	}
	out := make([]matrixio.Counts, m)
	rb := st.RowBytes()
	isFloat := st.Codec() == matrixio.CodecFloat32
	err := st.Stream(ctx, st.AllChunks(), threads, func(c *matrixio.Chunk) error {
		if err := ctx.Err(); err != nil {
			return err
		}
		var wg sync.WaitGroup
		for t := 0; t < threads; t++ {
			wg.Add(1)
			go func(t int) {
				defer wg.Done()
				for j := t; j < c.N; j += threads {
					row := c.Raw[j*rb : (j+1)*rb]
					if isFloat {
						out[c.First+j] = countFloatRow(row, idx)
					} else {
						out[c.First+j] = countCodeRow(row, idx)
					}
				}
			}(t)
		}
		wg.Wait()
		return nil
	})
	if err != nil {
		if errors.Is(err, context.Canceled) || errors.Is(err, context.DeadlineExceeded) {
			return nil, err
		}
		return nil, fmt.Errorf("count kept samples in %s: %w", st.Path(), err)
	}
	return out, nil
}

func countCodeRow(row []byte, idx []int) matrixio.Counts {
	var n [4]uint32
	for _, i := range idx {
		n[(row[i>>2]>>(2*uint(i&3)))&3]++
	}
	return matrixio.Counts{HomRef: n[0], Het: n[1], HomAlt: n[2], Missing: n[3]}
}

func countFloatRow(row []byte, idx []int) matrixio.Counts {
	var c matrixio.Counts
	for _, i := range idx {
		c.AddFloat(math.Float32frombits(uint32(row[4*i]) | uint32(row[4*i+1])<<8 | uint32(row[4*i+2])<<16 | uint32(row[4*i+3])<<24))
	}
	return c
}
