package main

import (
	"context"
	"flag"
	"fmt"
	"runtime"
	"strings"

	"github.com/clinal/clinal/matrixio"
	"github.com/clinal/clinal/qc"
)

// filterFlagNames are the flags addFilterFlags registers.
var filterFlagNames = []string{"min-sample-call-rate", "min-marker-call-rate", "min-maf", "min-hwe-p", "hwe-midp",
	"chromosomes", "keep-samples", "drop-samples", "exclude-regions", "ld-r2", "ld-window", "ld-step", "ld-memory"}

// addFilterFlags registers the shared filter flags of design.md (used by
// clinal qc and clinal pca) on fs, writing into o, with the defaults of
// qc.DefaultOptions. It does not register --threads or --qc, which the
// calling command owns.
func addFilterFlags(fs *flag.FlagSet, o *qc.Options) {
	d := qc.DefaultOptions()
	fs.Float64Var(&o.MinSampleCallRate, "min-sample-call-rate", d.MinSampleCallRate, "drop samples whose call rate (over all markers) is below this (0: off)")
	fs.Float64Var(&o.MinMarkerCallRate, "min-marker-call-rate", d.MinMarkerCallRate, "drop markers whose call rate over the kept samples is below this (0: off)")
	fs.Float64Var(&o.MinMAF, "min-maf", d.MinMAF, "drop markers with minor allele frequency below this (0: off; monomorphic markers always go)")
	fs.Float64Var(&o.MinHWEP, "min-hwe-p", d.MinHWEP, "drop markers whose Hardy-Weinberg exact p is below this (0: off)")
	fs.BoolVar(&o.HWEMidP, "hwe-midp", d.HWEMidP, "use the mid-p variant of the HWE exact test")
	fs.StringVar(&o.Chromosomes, "chromosomes", d.Chromosomes, "chromosomes to use: list of names and ranges (1-22,X), autosomes, sex or all")
	fs.StringVar(&o.KeepSamples, "keep-samples", "", "file of sample IDs to keep (one per line)")
	fs.StringVar(&o.DropSamples, "drop-samples", "", "file of sample IDs to drop (one per line)")
	fs.StringVar(&o.ExcludeRegions, "exclude-regions", "", "BED file of regions whose markers are dropped (e.g. long-range LD)")
	fs.Float64Var(&o.LDR2, "ld-r2", d.LDR2, "LD pruning: drop one marker of each pair with r^2 above this (0: no pruning)")
	fs.StringVar(&o.LDWindow, "ld-window", d.LDWindow, "LD window: a span (500kb, 1mb, 250000bp) or a marker count (200)")
	fs.IntVar(&o.LDStep, "ld-step", d.LDStep, "LD window step, in markers")
	fs.Var((*byteSize)(&o.LDMemory), "ld-memory", "memory for one LD window (one per thread), e.g. 1GiB (default 512MiB)")
}

// filterFlagsSet returns the filter flags given explicitly on fs.
func filterFlagsSet(fs *flag.FlagSet) []string {
	var set []string
	fs.Visit(func(f *flag.Flag) {
		for _, n := range filterFlagNames {
			if f.Name == n {
				set = append(set, "--"+n)
			}
		}
	})
	return set
}

// qcSelection returns the selection for a command that runs a PCA (pca,
// the cluster driver): the saved outputs of a finished clinal qc run when
// prefix is set (an error if filter flags were also given on fs, which may
// be nil), else a fresh qc.Run with opt, computing HWE p-values only where
// the filter reads them (none of these commands writes them).
func qcSelection(ctx context.Context, fs *flag.FlagSet, st *matrixio.Store, opt qc.Options, prefix string) (*qc.Selection, error) {
	if prefix == "" {
		opt.FilterHWEOnly = true
		return qc.Run(ctx, st, opt)
	}
	if fs != nil {
		if set := filterFlagsSet(fs); len(set) > 0 {
			return nil, usage("--qc %s reuses a finished QC run; it cannot be combined with %s", prefix, strings.Join(set, ", "))
		}
	}
	return qc.Load(prefix, st)
}

// runQC: clinal qc STORE -o PREFIX [filters]
func runQC(ctx context.Context, e *env, args []string) error {
	fs := flag.NewFlagSet("qc", flag.ContinueOnError)
	var o qc.Options
	out := fs.String("o", "", "output prefix: PREFIX.qc.json, PREFIX.sample-stats.tsv, PREFIX.marker-stats.tsv.gz, PREFIX.kept-samples.txt, PREFIX.kept-markers.txt")
	addFilterFlags(fs, &o)
	threads := fs.Int("threads", runtime.NumCPU(), "goroutines (results do not depend on it)")
	pos, err := parseArgs(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 1 {
		return usage("qc: want exactly one STORE argument, got %d", len(pos))
	}
	if *out == "" {
		return usage("qc: -o PREFIX is required")
	}
	if err := matrixio.CheckOutputPrefix(*out); err != nil {
		return fmt.Errorf("qc: -o: %w", err)
	}
	if *threads < 1 {
		return usage("qc: --threads %d: must be at least 1", *threads)
	}
	o.Threads = *threads
	if err := o.Validate(); err != nil {
		return err
	}
	st, err := matrixio.Open(pos[0])
	if err != nil {
		return err
	}
	defer st.Close()
	sel, err := qc.Run(ctx, st, o)
	if err != nil {
		return err
	}
	if err := sel.Write(*out, st); err != nil {
		return err
	}
	for _, w := range sel.Report.Warnings {
		fmt.Fprintf(e.stderr, "clinal qc: warning: %s\n", w)
	}
	rep := sel.Report
	fmt.Fprintf(e.stdout, "Kept %d of %d samples (removed: %s) and %d of %d markers (removed: %s); %d pass(es) over the store, %.1f s. Wrote %s.*\n",
		rep.Samples.Kept, rep.Samples.Input, steps(rep.Samples.Removed),
		rep.Markers.Kept, rep.Markers.Input, steps(rep.Markers.Removed),
		rep.Passes, rep.Seconds, *out)
	return nil
}

func steps(s []qc.FilterStep) string {
	parts := make([]string, len(s))
	for i, x := range s {
		parts[i] = fmt.Sprintf("%s %d", x.Filter, x.Removed)
	}
	return strings.Join(parts, ", ")
}
