package qc

import (
	"math"
	"strconv"
	"strings"

	"github.com/clinal/clinal/matrixio"
)

// Options are the QC thresholds and lists. The zero value of a threshold
// disables its filter; DefaultOptions returns the thresholds a practitioner
// expects (see the package documentation for the reasons). Monomorphic
// markers are always removed: they cannot be standardized.
type Options struct {
	MinSampleCallRate float64 `json:"min_sample_call_rate"`      // keep samples with call rate >= this
	MinMarkerCallRate float64 `json:"min_marker_call_rate"`      // keep markers with call rate >= this (over kept samples)
	MinMAF            float64 `json:"min_maf"`                   // keep markers with MAF >= this
	MinHWEP           float64 `json:"min_hwe_p"`                 // keep markers with HWE exact p >= this
	HWEMidP           bool    `json:"hwe_midp"`                  // use the mid-p variant of the HWE exact test
	Chromosomes       string  `json:"chromosomes"`               // comma list or ranges; "" means autosomes
	KeepSamples       string  `json:"keep_samples,omitempty"`    // file of sample IDs to keep
	DropSamples       string  `json:"drop_samples,omitempty"`    // file of sample IDs to drop
	ExcludeRegions    string  `json:"exclude_regions,omitempty"` // BED file of regions to drop
	LDR2              float64 `json:"ld_r2"`                     // prune pairs with r^2 > this; 0 disables pruning
	LDWindow          string  `json:"ld_window"`                 // "500kb", "1mb", "250000bp" or "200" (markers)
	LDStep            int     `json:"ld_step"`                   // window step in markers (0 means 1)
	// LDMemory bounds the bytes of genotype rows held in one LD window
	// (0: 512 MiB); one window is open per thread. A window holding more
	// markers than fit is cut short, and the report counts the windows so
	// cut.
	LDMemory int64 `json:"ld_memory,omitempty"`
	Threads  int   `json:"threads,omitempty"` // goroutines (0: GOMAXPROCS); results do not depend on it

	// FilterHWEOnly computes a marker's HWE p only where the HWE filter
	// reads it: markers the filters before it kept, with MinHWEP > 0; the
	// others get NaN. For callers that show no p (pca): the exact test was
	// most of the count-based filters' time.
	FilterHWEOnly bool `json:"-"`

	layout int // genotype row layout (tests force one; 0 chooses)
}

// DefaultOptions returns the thresholds clinal uses when none are given:
// sample call rate >= 0.95, marker call rate >= 0.98, MAF >= 0.01, HWE exact
// p >= 1e-6, autosomes only, LD pruning at r^2 > 0.2 within 500 kb, step 1.
// They are common practice, from no single source; doc.go gives the reasons.
func DefaultOptions() Options {
	return Options{
		MinSampleCallRate: 0.95,
		MinMarkerCallRate: 0.98,
		MinMAF:            0.01,
		MinHWEP:           1e-6,
		Chromosomes:       "autosomes",
		LDR2:              0.2,
		LDWindow:          "500kb",
		LDStep:            1,
	}
}

// Validate checks that every threshold is in range and every list parses
// (files are read by Run). Errors are BadInput and name the option as its
// command-line flag.
func (o *Options) Validate() error {
	check := func(name string, v, lo, hi float64) error {
		if math.IsNaN(v) || v < lo || v > hi {
			return matrixio.BadInput("--%s %v: must be between %v and %v", name, v, lo, hi)
		}
		return nil
	}
	for _, c := range []struct {
		name      string
		v, lo, hi float64
	}{
		{"min-sample-call-rate", o.MinSampleCallRate, 0, 1},
		{"min-marker-call-rate", o.MinMarkerCallRate, 0, 1},
		{"min-maf", o.MinMAF, 0, 0.5},
		{"min-hwe-p", o.MinHWEP, 0, 1},
		{"ld-r2", o.LDR2, 0, 1},
	} {
		if err := check(c.name, c.v, c.lo, c.hi); err != nil {
			return err
		}
	}
	if _, err := ParseChromosomes(o.Chromosomes); err != nil {
		return err
	}
	if o.LDR2 > 0 {
		if _, err := ParseWindow(o.LDWindow); err != nil {
			return err
		}
	}
	if o.LDStep < 0 {
		return matrixio.BadInput("--ld-step %d: must be at least 1", o.LDStep)
	}
	if o.LDMemory < 0 {
		return matrixio.BadInput("LD memory %d: must not be negative", o.LDMemory)
	}
	if o.Threads < 0 {
		return matrixio.BadInput("--threads %d: must not be negative", o.Threads)
	}
	return nil
}

// Window is an LD window: a span in base pairs, or a number of markers.
type Window struct {
	BP      int64 // window length in base pairs (0 when counted in markers)
	Markers int   // window length in markers (0 when measured in bp)
}

// String renders the window as ParseWindow reads it.
func (w Window) String() string {
	if w.BP > 0 {
		return strconv.FormatInt(w.BP, 10) + "bp"
	}
	return strconv.Itoa(w.Markers)
}

// ParseWindow reads an LD window: a number with a unit bp, kb or mb (case
// insensitive, "kbp" and "mbp" too; 1 kb = 1000 bp) is a span in base
// pairs; a plain integer is a number of markers.
func ParseWindow(s string) (Window, error) {
	t := strings.ToLower(strings.TrimSpace(s))
	bad := func() (Window, error) {
		return Window{}, matrixio.BadInput("--ld-window %q: want a span such as 500kb, 1mb, 250000bp or a marker count such as 200", s)
	}
	mult := int64(0)
	for _, u := range []struct {
		suffix string
		m      int64
	}{{"kbp", 1000}, {"mbp", 1000000}, {"kb", 1000}, {"mb", 1000000}, {"bp", 1}} {
		if strings.HasSuffix(t, u.suffix) {
			t, mult = strings.TrimSpace(strings.TrimSuffix(t, u.suffix)), u.m
			break
		}
	}
	if mult == 0 {
		n, err := strconv.Atoi(t)
		if err != nil || n < 2 {
			if err == nil {
				return Window{}, matrixio.BadInput("--ld-window %q: a window must hold at least 2 markers", s)
			}
			return bad()
		}
		return Window{Markers: n}, nil
	}
	v, err := strconv.ParseFloat(t, 64)
	if err != nil || math.IsNaN(v) || v <= 0 || v*float64(mult) > 1e12 {
		return bad()
	}
	bp := int64(math.Round(v * float64(mult)))
	if bp < 1 {
		return bad()
	}
	return Window{BP: bp}, nil
}
