package main

import (
	"context"
	"flag"
	"fmt"
	"os"
	"strings"
	"time"

	"github.com/clinal/clinal/matrixio"
	"github.com/clinal/clinal/matrixio/synth"
)

// simulateOptions are the parsed flags of clinal simulate.
type simulateOptions struct {
	out, labels string
	vcf         bool
	threads     int
	cfg         synth.Config
}

// simulateOutputs maps the output extensions simulate accepts to whether
// they are VCF.
var simulateOutputs = []struct {
	ext string
	vcf bool
}{{".clinal", false}, {".vcf.gz", true}}

func parseSimulate(args []string) (*simulateOptions, error) {
	o := &simulateOptions{cfg: synth.DefaultConfig()}
	c := &o.cfg
	fs := flag.NewFlagSet("simulate", flag.ContinueOnError)
	fs.StringVar(&o.out, "o", "", "output: OUT.clinal (store) or OUT.vcf.gz (BGZF VCF); labels go to OUT.labels.tsv")
	fs.IntVar(&c.Samples, "samples", c.Samples, "samples, admixed included")
	fs.IntVar(&c.Markers, "markers", c.Markers, "markers")
	fs.IntVar(&c.Populations, "populations", c.Populations, "source populations (isle1..isleK-1 and mainland)")
	fs.Float64Var(&c.Fst, "fst", c.Fst, "Balding-Nichols Fst of each population from the ancestral frequencies, in [0, 1)")
	fs.Float64Var(&c.Admixed, "admixed", c.Admixed, "fraction of admixed samples (Dirichlet(1) mixtures of the populations; default 0 with one population)")
	fs.Float64Var(&c.Missing, "missing", c.Missing, "per-call missing rate")
	fs.Float64Var(&c.PoorSamples, "poor-samples", c.PoorSamples,
		fmt.Sprintf("fraction of samples with %g%% missing calls (for sample QC to remove)", 100*c.PoorMissing))
	fs.IntVar(&c.LDBlock, "ld-block", c.LDBlock, "markers per LD block (0: independent markers)")
	fs.Float64Var(&c.LDNoise, "ld-noise", c.LDNoise, "within an LD block, probability that a marker's allele is redrawn rather than copied")
	fs.IntVar(&c.Chromosomes, "chromosomes", c.Chromosomes, "chromosomes 1..C")
	fs.Uint64Var(&c.Seed, "seed", c.Seed, "random seed (the output depends on it only, not on --threads)")
	fs.IntVar(&o.threads, "threads", 2, "generating and compressing goroutines")
	pos, err := parseArgs(fs, args)
	if err != nil {
		return nil, err
	}
	admixedSet := false
	fs.Visit(func(f *flag.Flag) { admixedSet = admixedSet || f.Name == "admixed" })
	if c.Populations == 1 && !admixedSet {
		c.Admixed = 0 // nothing to mix: the default fraction needs two populations
	}
	if len(pos) > 0 {
		return nil, usage("simulate: unexpected argument %q (clinal simulate -o OUT.clinal [flags])", pos[0])
	}
	if o.out == "" {
		return nil, usage("simulate: -o OUT.clinal or -o OUT.vcf.gz is required")
	}
	if err := matrixio.CheckOutputPath(o.out); err != nil {
		return nil, fmt.Errorf("simulate: -o: %w", err)
	}
	if o.threads < 1 {
		return nil, usage("simulate: --threads %d: want at least 1", o.threads)
	}
	for _, x := range simulateOutputs {
		if base, ok := strings.CutSuffix(o.out, x.ext); ok && base != "" && !strings.HasSuffix(base, "/") {
			o.vcf, o.labels = x.vcf, base+".labels.tsv"
			return o, nil
		}
	}
	return nil, usage("simulate: -o %s: unknown output type (want a name ending in .clinal or .vcf.gz)", o.out)
}

// runSimulate: clinal simulate -o OUT(.clinal|.vcf.gz) [flags]. It writes
// the cohort and then its labels; if the labels cannot be written the
// cohort file is removed, so a failed run leaves neither.
func runSimulate(ctx context.Context, e *env, args []string) error {
	o, err := parseSimulate(args)
	if err != nil {
		return err
	}
	c, err := synth.New(o.cfg)
	if err != nil {
		return usage("simulate: %v", err)
	}
	t0 := time.Now()
	write, kind := c.WriteStore, "store"
	if o.vcf {
		write, kind = c.WriteVCF, "BGZF VCF"
	}
	if err := write(ctx, o.out, o.threads); err != nil {
		return err
	}
	if err := c.WriteLabels(o.labels); err != nil {
		os.Remove(o.out)
		return err
	}
	cfg := c.Config()
	ld := "independent markers"
	if cfg.LDBlock > 1 {
		ld = fmt.Sprintf("LD blocks of %d", cfg.LDBlock)
	}
	fmt.Fprintf(e.stdout, "Simulated %d samples x %d markers (%d populations, Fst %g, %g%% admixed, %g%% missing calls, %s, seed %d) into %s (%s) and %s in %.1f s.\n",
		cfg.Samples, cfg.Markers, cfg.Populations, cfg.Fst, 100*cfg.Admixed, 100*cfg.Missing, ld, cfg.Seed,
		o.out, kind, o.labels, time.Since(t0).Seconds())
	return nil
}
