// Command gen writes a synthetic BGZF VCF for the import benchmark: N
// invented samples (isle<k>-<nnnn>, the Meridian Archipelago scenario) and
// M biallelic markers with Hardy-Weinberg genotypes at allele frequencies
// drawn uniformly from [0.02, 0.5], and 1% missing calls. It uses clinal's
// own VCF writer, so the file is what `clinal export` produces.
package main

import (
	"flag"
	"fmt"
	"math/rand/v2"
	"os"

	"github.com/clinal/clinal/matrixio"
)

func main() {
	n := flag.Int("samples", 5000, "number of samples")
	m := flag.Int("markers", 50000, "number of markers")
	seed := flag.Uint64("seed", 1, "random seed")
	threads := flag.Int("threads", 2, "compression threads")
	out := flag.String("o", "bench.vcf.gz", "output file")
	flag.Parse()
	if err := run(*out, *n, *m, *seed, *threads); err != nil {
		fmt.Fprintln(os.Stderr, "gen:", err)
		os.Exit(1)
	}
}

func run(out string, n, m int, seed uint64, threads int) error {
	samples := make([]string, n)
	for i := range samples {
		samples[i] = fmt.Sprintf("isle%d-%04d", i%5+1, i/5+1)
	}
	w, err := matrixio.CreateVCF(out, samples, matrixio.VCFWriterOptions{Source: "benchmarks/import/gen", Threads: threads})
	if err != nil {
		return err
	}
	rng := rand.New(rand.NewPCG(seed, 0x5eed))
	g := make([]byte, n)
	const chroms = 22
	for j := 0; j < m; j++ {
		p := 0.02 + 0.48*rng.Float64()
		q0, q1 := (1-p)*(1-p), 1-p*p // cumulative HWE probabilities
		for i := range g {
			u := rng.Float64()
			switch {
			case u < 0.01:
				g[i] = matrixio.Missing
			case u < 0.01+0.99*q0:
				g[i] = 0
			case u < 0.01+0.99*q1:
				g[i] = 1
			default:
				g[i] = 2
			}
		}
		c := j * chroms / m
		mk := matrixio.Marker{Chrom: fmt.Sprint(c + 1), Pos: int64(1000 + 997*(j-c*m/chroms)), ID: fmt.Sprintf("snp%d", j+1), Ref: "A", Alt: "G"}
		if err := w.Write(mk, g); err != nil {
			w.Abort()
			return err
		}
	}
	return w.Close()
}
