package main

import (
	"context"
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"runtime"

	"github.com/clinal/clinal/matrixio"
	"github.com/clinal/clinal/matrixio/synth"
)

// runDemo runs the whole job on the invented Meridian Archipelago cohort:
// simulate a VCF, import it, QC and PCA, and print where the outputs are.
func runDemo(ctx context.Context, e *env, args []string) error {
	fs := flag.NewFlagSet("demo", flag.ContinueOnError)
	out := fs.String("o", "clinal-demo", "output directory")
	samples := fs.Int("samples", 1200, "samples to simulate")
	markers := fs.Int("markers", 12000, "markers to simulate")
	seed := fs.Uint64("seed", 1, "random seed")
	threads := fs.Int("threads", runtime.NumCPU(), "threads")
	pos, err := parseArgs(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 0 {
		return usage("demo: unexpected argument %q", pos[0])
	}
	if err := os.MkdirAll(*out, 0o755); err != nil {
		return fmt.Errorf("demo: %w", err)
	}
	cfg := synth.DefaultConfig()
	cfg.Samples, cfg.Markers, cfg.Seed = *samples, *markers, *seed
	cohort, err := synth.New(cfg)
	if err != nil {
		return usage("demo: %v", err)
	}
	vcf := filepath.Join(*out, "meridian.vcf.gz")
	if err := cohort.WriteVCF(ctx, vcf, *threads); err != nil {
		return err
	}
	labels := filepath.Join(*out, "meridian.labels.tsv")
	if err := cohort.WriteLabels(labels); err != nil {
		return err
	}
	fmt.Fprintf(e.stdout, "demo: simulated %d samples x %d markers of the invented Meridian Archipelago registry (%d island/mainland populations, %.0f%% admixed, Fst %.2f) -> %s\n",
		cfg.Samples, cfg.Markers, cfg.Populations, 100*cfg.Admixed, cfg.Fst, vcf)
	store := filepath.Join(*out, "meridian.clinal")
	sum, err := matrixio.ImportVCF(ctx, []string{vcf}, store, matrixio.ImportOptions{Threads: *threads})
	if err != nil {
		return err
	}
	fmt.Fprintf(e.stdout, "demo: imported %d markers (%d records) into %s\n", sum.Markers, sum.Records, store)
	// Every pca default, as `clinal pca` would take them.
	o := &pcaOptions{k: 10}
	pfs := flag.NewFlagSet("pca", flag.ContinueOnError)
	pcaFlags(pfs, o)
	if err := pfs.Parse(nil); err != nil {
		return err
	}
	o.out, o.seed, o.threads, o.labels = filepath.Join(*out, "meridian"), *seed, *threads, labels
	res, err := doPCA(ctx, e, store, o)
	if err != nil {
		return err
	}
	fmt.Fprintln(e.stdout, "demo: outputs:")
	for _, f := range append([]string{vcf, labels, store}, res.files...) {
		fmt.Fprintf(e.stdout, "  %s\n", f)
	}
	fmt.Fprintf(e.stdout, "demo: report (open in a browser): %s\n", o.out+".report.html")
	return nil
}
