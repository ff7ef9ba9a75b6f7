package qc

import (
	"context"
	"fmt"
	"math"
	"runtime"
	"time"

	"golang.org/x/sync/errgroup"

	"github.com/clinal/clinal/matrixio"
)

// Reason says why a sample or marker was removed: the first filter, in the
// order applied, that it failed. Kept means it passed them all.
type Reason uint8

// Reasons, in the order the filters are applied (samples first, then
// markers).
const (
	Kept              Reason = iota
	NotInKeepList            // sample not named by --keep-samples
	InDropList               // sample named by --drop-samples
	LowSampleCallRate        // sample call rate below the threshold
	OtherChromosome          // marker on a chromosome not selected
	InExcludedRegion         // marker inside an --exclude-regions interval
	LowMarkerCallRate        // marker call rate (over kept samples) below the threshold
	Monomorphic              // one allele only (or a constant value) over the kept samples
	LowMAF                   // minor allele frequency below the threshold
	FailedHWE                // HWE exact p below the threshold
	LDPruned                 // removed by LD pruning
	numReasons
)

var reasonNames = [numReasons]string{".", "keep-list", "drop-list", "call-rate", "chromosome", "region",
	"call-rate", "monomorphic", "maf", "hwe", "ld"}

// String returns the name written in the why columns ("." for Kept).
func (r Reason) String() string {
	if r < numReasons {
		return reasonNames[r]
	}
	return fmt.Sprintf("reason(%d)", uint8(r))
}

// sampleReasons and markerReasons list the filters in the order applied.
var (
	sampleReasons = []Reason{NotInKeepList, InDropList, LowSampleCallRate}
	markerReasons = []Reason{OtherChromosome, InExcludedRegion, LowMarkerCallRate, Monomorphic, LowMAF, FailedHWE, LDPruned}
)

// Selection is the outcome of QC: which samples and markers enter PCA, and
// the per-marker counts over the kept samples.
type Selection struct {
	SampleKept []bool            // len N
	MarkerKept []bool            // len M
	Counts     []matrixio.Counts // len M, over kept samples (do not modify)
	SampleWhy  []Reason          // len N: first filter that removed the sample, or Kept
	MarkerWhy  []Reason          // len M: first filter that removed the marker, or Kept
	// SampleCallRate is each sample's call rate over all markers of the
	// store (from the stored per-sample missing counts).
	SampleCallRate []float64
	// HWEP is each marker's HWE exact p-value over the kept samples (NaN
	// for float stores and markers without calls, and with
	// Options.FilterHWEOnly where the HWE filter does not read it).
	HWEP   []float64
	Report *Report
}

// NumKeptSamples returns the number of kept samples.
func (s *Selection) NumKeptSamples() int { return countTrue(s.SampleKept) }

// NumKeptMarkers returns the number of kept markers.
func (s *Selection) NumKeptMarkers() int { return countTrue(s.MarkerKept) }

func countTrue(b []bool) int {
	n := 0
	for _, v := range b {
		if v {
			n++
		}
	}
	return n
}

// Report summarizes a QC run; it is written as PREFIX.qc.json.
type Report struct {
	Format  string    `json:"format"`
	Store   StoreInfo `json:"store"`
	Options Options   `json:"thresholds"`
	Inputs  Inputs    `json:"inputs"`
	// Samples and Markers count what each filter removed, in order.
	Samples FilterCounts `json:"samples"`
	Markers FilterCounts `json:"markers"`
	// CountsRecomputed is true when samples were removed, so the marker
	// counts were recomputed over the kept samples in a pass.
	CountsRecomputed bool     `json:"counts_recomputed"`
	Passes           int      `json:"passes"` // passes over the store's chunks
	LD               *LDStats `json:"ld,omitempty"`
	Warnings         []string `json:"warnings"`
	Seconds          float64  `json:"seconds"`
}

// StoreInfo identifies the store QC ran on.
type StoreInfo struct {
	Path         string `json:"path"`
	Bytes        int64  `json:"bytes"`
	Samples      int    `json:"samples"`
	Markers      int    `json:"markers"`
	Codec        string `json:"codec"`
	Fingerprint  string `json:"fingerprint"`
	SampleSHA256 string `json:"sample_ids_sha256"`
	MarkerSHA256 string `json:"marker_table_sha256"`
}

// Inputs describe the list and region files read.
type Inputs struct {
	KeepSamples    *SampleList `json:"keep_samples,omitempty"`
	DropSamples    *SampleList `json:"drop_samples,omitempty"`
	ExcludeRegions *Regions    `json:"exclude_regions,omitempty"`
}

// FilterCounts are the input count, what each filter removed in the order
// applied, and what was kept.
type FilterCounts struct {
	Input   int          `json:"input"`
	Removed []FilterStep `json:"removed"`
	Kept    int          `json:"kept"`
}

// FilterStep is one filter's count.
type FilterStep struct {
	Filter  string `json:"filter"`
	Removed int    `json:"removed"`
}

// LDStats describe the LD pruning.
type LDStats struct {
	Window           string `json:"window"` // as parsed: NNNbp or a marker count
	Step             int    `json:"step"`
	MaxWindowMarkers int    `json:"max_window_markers"` // from the memory bound
	Candidates       int    `json:"candidates"`         // markers that reached LD pruning
	PairsTested      int64  `json:"pairs_tested"`
	WindowsTruncated int64  `json:"windows_truncated"` // windows cut to MaxWindowMarkers
}

// Run applies the filters of opt to the store and returns the selection.
// The order is fixed: samples first (keep list, drop list, call rate over
// the store's markers), then markers over the kept samples (chromosome,
// region, call rate, monomorphic, MAF, HWE), then LD pruning of the
// survivors. When samples were removed the stored marker counts do not
// describe the kept ones, so they are recomputed in one pass over the store
// (which also does the LD pruning); otherwise the stored counts are used
// and only LD pruning reads chunks (those holding candidates). Errors in
// options, lists or regions are BadInput and come before any pass.
func Run(ctx context.Context, st *matrixio.Store, opt Options) (*Selection, error) {
	t0 := time.Now()
	if err := opt.Validate(); err != nil {
		return nil, err
	}
	if opt.Chromosomes == "" {
		opt.Chromosomes = "autosomes"
	}
	if opt.LDStep == 0 {
		opt.LDStep = 1
	}
	if opt.LDMemory == 0 {
		opt.LDMemory = defaultLDMemory
	}
	chroms, _ := ParseChromosomes(opt.Chromosomes)
	threads := opt.Threads
	if threads <= 0 {
		threads = runtime.GOMAXPROCS(0)
	}
	N, M := st.NumSamples(), st.NumMarkers()
	sel := &Selection{
		SampleKept: make([]bool, N), MarkerKept: make([]bool, M),
		SampleWhy: make([]Reason, N), MarkerWhy: make([]Reason, M),
		SampleCallRate: make([]float64, N), HWEP: make([]float64, M),
	}
	rep := &Report{Format: reportFormat, Store: storeInfo(st), Options: opt, Warnings: []string{}}
	sel.Report = rep

	// Samples.
	if opt.KeepSamples != "" || opt.DropSamples != "" {
		index := make(map[string]int, N)
		for i, id := range st.Samples() {
			index[id] = i
		}
		if opt.KeepSamples != "" {
			hit := make([]bool, N)
			sl, err := readSampleList(ctx, opt.KeepSamples, "keep-samples", index, hit)
			if err != nil {
				return nil, err
			}
			rep.Inputs.KeepSamples = sl
			for i, h := range hit {
				if !h {
					sel.SampleWhy[i] = NotInKeepList
				}
			}
			if sl.Unknown > 0 {
				rep.Warnings = append(rep.Warnings, fmt.Sprintf("--keep-samples %s: %d of %d IDs are not samples of the store (first: %s)", sl.Path, sl.Unknown, sl.IDs, sl.FirstUnknown))
			}
		}
		if opt.DropSamples != "" {
			hit := make([]bool, N)
			sl, err := readSampleList(ctx, opt.DropSamples, "drop-samples", index, hit)
			if err != nil {
				return nil, err
			}
			rep.Inputs.DropSamples = sl
			for i, h := range hit {
				if h && sel.SampleWhy[i] == Kept {
					sel.SampleWhy[i] = InDropList
				}
			}
			if sl.Unknown > 0 {
				rep.Warnings = append(rep.Warnings, fmt.Sprintf("--drop-samples %s: %d of %d IDs are not samples of the store (first: %s)", sl.Path, sl.Unknown, sl.IDs, sl.FirstUnknown))
			}
		}
	}
	for i, miss := range st.SampleMissing() {
		cr := float64(M-int(miss)) / float64(M)
		sel.SampleCallRate[i] = cr
		if sel.SampleWhy[i] == Kept && cr < opt.MinSampleCallRate {
			sel.SampleWhy[i] = LowSampleCallRate
		}
	}
	var keptIdx []int
	for i, w := range sel.SampleWhy {
		if w == Kept {
			sel.SampleKept[i] = true
			keptIdx = append(keptIdx, i)
		}
	}
	if len(keptIdx) == 0 {
		rep.Warnings = append(rep.Warnings, "no sample passed the sample filters")
	}

	// Static marker filters: chromosome and region.
	var regions *Regions
	if opt.ExcludeRegions != "" {
		r, err := readBED(ctx, opt.ExcludeRegions)
		if err != nil {
			return nil, err
		}
		regions = r
		rep.Inputs.ExcludeRegions = r
	}
	present := map[string]bool{}
	prev, prevIn := "", false
	for j := range st.NumMarkers() {
		m := st.Marker(j)
		if j == 0 || m.Chrom != prev {
			prev = m.Chrom
			prevIn = chroms.Contains(m.Chrom)
			present[NormalizeChrom(m.Chrom)] = true
		}
		switch {
		case !prevIn:
			sel.MarkerWhy[j] = OtherChromosome
		case regions != nil && regions.Contains(m.Chrom, m.Pos):
			sel.MarkerWhy[j] = InExcludedRegion
		}
	}
	if miss := chroms.missing(present); len(miss) > 0 {
		rep.Warnings = append(rep.Warnings, fmt.Sprintf("--chromosomes: %v not in the store", miss))
	}

	f := &filters{opt: opt, nk: len(keptIdx), float: st.Codec() == matrixio.CodecFloat32}
	recount := len(keptIdx) < N
	rep.CountsRecomputed = recount
	if recount {
		sel.Counts = make([]matrixio.Counts, M)
	} else {
		sel.Counts = st.Counts()
		// Count-based filters need no pass: apply them now, in parallel.
		if err := parallelRanges(ctx, M, threads, func(a, b int) {
			for j := a; j < b; j++ {
				f.apply(sel, j)
			}
		}); err != nil {
			return nil, err
		}
	}
	var win Window
	if opt.LDR2 > 0 {
		win, _ = ParseWindow(opt.LDWindow)
	}
	if recount || opt.LDR2 > 0 {
		p := &pass{st: st, sel: sel, f: f, keptIdx: keptIdx, recount: recount, threads: threads,
			ld: opt.LDR2 > 0, win: win, r2: opt.LDR2, step: opt.LDStep, ldMemory: opt.LDMemory, layout: opt.layout}
		if err := p.run(ctx); err != nil {
			return nil, err
		}
		rep.Passes = 1
		if p.ld {
			rep.LD = &LDStats{Window: win.String(), Step: opt.LDStep, MaxWindowMarkers: p.maxWin,
				Candidates: p.candidates, PairsTested: p.pairs, WindowsTruncated: p.truncated}
			if p.truncated > 0 {
				rep.Warnings = append(rep.Warnings, fmt.Sprintf("LD pruning: %d windows held more than %d markers and were cut short (raise the LD memory bound)", p.truncated, p.maxWin))
			}
		}
	}

	for j, w := range sel.MarkerWhy {
		sel.MarkerKept[j] = w == Kept
	}
	rep.Samples = tally(sel.SampleWhy, sampleReasons)
	rep.Markers = tally(sel.MarkerWhy, markerReasons)
	if rep.Markers.Kept == 0 {
		rep.Warnings = append(rep.Warnings, "no marker passed the marker filters")
	}
	rep.Seconds = time.Since(t0).Seconds()
	return sel, nil
}

const (
	reportFormat    = "clinal-qc/1"
	defaultLDMemory = 512 << 20
)

// tally counts reasons in the order given.
func tally(why []Reason, order []Reason) FilterCounts {
	var n [numReasons]int
	for _, w := range why {
		n[w]++
	}
	fc := FilterCounts{Input: len(why), Kept: n[Kept], Removed: []FilterStep{}}
	for _, r := range order {
		fc.Removed = append(fc.Removed, FilterStep{Filter: r.String(), Removed: n[r]})
	}
	return fc
}

// filters applies the count-based marker filters.
type filters struct {
	opt   Options
	nk    int // kept samples
	float bool
}

// MarkerStats are the statistics of one marker over the kept samples.
type MarkerStats struct {
	CallRate float64 // called / kept samples
	AltFreq  float64 // ALT allele frequency over called genotypes (dosage mean / 2 for floats)
	MAF      float64 // min(AltFreq, 1 - AltFreq)
}

// Stats computes call rate and allele frequencies from counts over nk
// samples; for float stores the frequency is Sum / (2 * called).
func Stats(c matrixio.Counts, nk int, float bool) MarkerStats {
	called := float64(c.Called())
	s := MarkerStats{CallRate: math.NaN(), AltFreq: math.NaN(), MAF: math.NaN()}
	if nk > 0 {
		s.CallRate = called / float64(nk)
	}
	if called > 0 {
		if float {
			s.AltFreq = c.Sum / (2 * called)
		} else {
			s.AltFreq = c.AltFreq()
		}
		s.MAF = math.Min(s.AltFreq, 1-s.AltFreq)
	}
	return s
}

// apply computes marker j's HWE p-value (with FilterHWEOnly, only where
// the HWE filter reads it) and, for a marker that passed the static
// filters, its count-based reason.
func (f *filters) apply(sel *Selection, j int) {
	c := sel.Counts[j]
	sel.HWEP[j] = math.NaN()
	hweP := func() float64 {
		if math.IsNaN(sel.HWEP[j]) {
			sel.HWEP[j] = HWEExact(int(c.HomRef), int(c.Het), int(c.HomAlt), f.opt.HWEMidP)
		}
		return sel.HWEP[j]
	}
	if !f.float && !f.opt.FilterHWEOnly {
		hweP()
	}
	if sel.MarkerWhy[j] != Kept {
		return
	}
	s := Stats(c, f.nk, f.float)
	switch {
	case f.nk == 0 || s.CallRate < f.opt.MinMarkerCallRate:
		sel.MarkerWhy[j] = LowMarkerCallRate
	case c.Called() == 0 || s.MAF <= 0 || f.constant(c):
		sel.MarkerWhy[j] = Monomorphic
	case s.MAF < f.opt.MinMAF:
		sel.MarkerWhy[j] = LowMAF
	case !f.float && f.opt.MinHWEP > 0 && hweP() < f.opt.MinHWEP:
		sel.MarkerWhy[j] = FailedHWE
	}
}

// constant reports a float marker whose called values are all equal.
func (f *filters) constant(c matrixio.Counts) bool {
	if !f.float {
		return false
	}
	n := float64(c.Called())
	v := n*c.SumSq - c.Sum*c.Sum
	return v <= 1e-12*n*c.SumSq
}

// parallelRanges splits [0, n) into ranges run by up to threads goroutines.
func parallelRanges(ctx context.Context, n, threads int, fn func(a, b int)) error {
	const block = 1 << 14
	g, ctx := errgroup.WithContext(ctx)
	g.SetLimit(threads)
	for a := 0; a < n; a += block {
		b := min(n, a+block)
		g.Go(func() error {
			if err := ctx.Err(); err != nil {
				return err
			}
			fn(a, b)
			return nil
		})
	}
	return g.Wait()
}
