// Package synth generates seeded, reproducible synthetic genotype cohorts
// with population structure, admixture, missing calls and optional blocks of
// linkage disequilibrium, for demos, tests and benchmarks of clinal.
//
// # Model
//
// Allele frequencies follow the Balding-Nichols model (Balding & Nichols
// 1995, "A method for quantifying differentiation between populations at
// multi-allelic loci and its implications for investigating identity and
// paternity", Genetica 96:3-12): at each marker an ancestral frequency p is
// drawn from Uniform(PMin, PMax) (or Beta(AncestralA, AncestralB)), and each
// population k draws its own frequency
//
//	p_k ~ Beta(p(1-F)/F, (1-p)(1-F)/F),   F = Fst,
//
// independently, so that E[p_k] = p and Var[p_k] = F p (1-p). Genotypes of a
// population's samples are Binomial(2, p_k): two independent alleles, so the
// population is in Hardy-Weinberg equilibrium.
//
// Admixed samples are mixtures: sample i draws ancestry proportions q_i from
// a symmetric Dirichlet(AdmixAlpha) over the populations (AdmixAlpha = 1,
// the default, is uniform over the simplex) once, and at each marker its
// alleles are Bernoulli(sum_k q_ik p_k).
//
// # Missing calls
//
// Each call is missing with probability Missing, independently. A fraction
// PoorSamples of the samples (chosen at random, at least one when the
// fraction is positive) are "poor" samples whose calls are missing with the
// higher probability PoorMissing, so that sample call-rate QC has something
// to remove.
//
// # Linkage disequilibrium
//
// With LDBlock = B > 1, markers come in blocks of B consecutive markers on
// one chromosome that share one Balding-Nichols draw (p, p_k). On each
// haplotype the block's first marker carries a Bernoulli(f) allele (f the
// sample's frequency); every later marker of the block copies that allele
// with probability 1-LDNoise and draws a fresh Bernoulli(f) allele
// otherwise. Every marker thus keeps the Balding-Nichols marginal, while the
// allele correlation is 1-e between the first marker and another and (1-e)^2
// between two later ones (e = LDNoise), within a population; markers of
// different blocks are independent. The ALT allele of each later marker is
// the copied allele or its complement with probability 1/2 each, so blocks
// mix positive and negative correlations.
//
// # Markers and samples
//
// Markers are spread over chromosomes "1".."Chromosomes" in equal numbers of
// blocks, at positions 5 kb apart plus a jitter of up to 4 kb (consecutive
// spacings between 1 and 9 kb; all proportionally closer when a chromosome
// would exceed 250 Mb, so dense cohorts look like imputed data), with IDs "mrk000001"... in file order and
// REF/ALT a random pair of distinct bases with transitions twice as likely
// as transversions (a Ts/Tv ratio of 2, common practice for human SNPs, no
// source). Samples are grouped by population in order, then the admixed
// ones; IDs are the population name, a dash and a 1-based number
// ("isle3-0042", "mixed-0007").
//
// # Reproducibility
//
// Every block of markers draws from its own PCG stream (O'Neill 2014, PCG
// family; math/rand/v2) seeded from (Seed, block index), and sample-level
// draws from a stream of their own, so the output is identical for any
// number of threads and a marker's genotypes do not depend on the markers
// generated before it.
package synth

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strconv"

	"github.com/clinal/clinal/matrixio"
)

// AdmixedGroup is the group label (and ID prefix) of admixed samples.
const AdmixedGroup = "mixed"

// Config describes a synthetic cohort. The zero value is not valid; start
// from DefaultConfig.
type Config struct {
	Samples     int // N, all samples, admixed included
	Markers     int // M
	Populations int // K source populations

	// PopSizes optionally gives the number of non-admixed samples of each
	// population (length Populations, sum Samples minus the admixed ones);
	// nil splits them equally, the first populations taking the remainder.
	PopSizes []int
	// PopNames optionally names the populations (length Populations);
	// nil gives isle1..isle(K-1) and "mainland" (just "mainland" for K = 1).
	PopNames []string

	Fst float64 // Balding-Nichols F, in [0, 1)

	// PMin and PMax bound the Uniform ancestral frequency distribution.
	PMin, PMax float64
	// AncestralA and AncestralB, when both positive, draw ancestral
	// frequencies from Beta(AncestralA, AncestralB) instead.
	AncestralA, AncestralB float64

	Admixed    float64 // fraction of samples that are admixed, in [0, 1]
	AdmixAlpha float64 // symmetric Dirichlet concentration of ancestry proportions

	Missing     float64 // per-call missing probability, in [0, 1)
	PoorSamples float64 // fraction of samples with a high missing rate, in [0, 1]
	PoorMissing float64 // per-call missing probability of those samples, in [0, 1)

	LDBlock int     // markers per LD block; 0 or 1: independent markers
	LDNoise float64 // probability that a marker of a block does not copy its first marker

	Chromosomes int // chromosomes "1".."Chromosomes", at most 22
	Seed        uint64
}

// DefaultConfig returns the invented demo scenario: a registry of five
// island populations of the fictional Meridian Archipelago and their
// mainland source (Fst 0.05), 10% admixed individuals, 1% missing calls and
// 1% poor samples with 15% missing calls, 2,000 samples by 20,000 markers on
// three chromosomes.
func DefaultConfig() Config {
	return Config{
		Samples:     2000,
		Markers:     20000,
		Populations: 6,
		Fst:         0.05,
		PMin:        0.05,
		PMax:        0.95,
		Admixed:     0.10,
		AdmixAlpha:  1,
		Missing:     0.01,
		PoorSamples: 0.01,
		PoorMissing: 0.15,
		LDBlock:     0,
		LDNoise:     0.05,
		Chromosomes: 3,
		Seed:        1,
	}
}

// MaxPopulations bounds Config.Populations.
const MaxPopulations = 1000

// MaxChromosomes bounds Config.Chromosomes (the human autosomes).
const MaxChromosomes = 22

// Cohort is a validated configuration with its sample-level draws made:
// sample IDs and groups, ancestry proportions, poor samples. Its markers
// are generated on demand by Generate, which may be called any number of
// times and always yields the same data. A Cohort is safe for concurrent
// use.
type Cohort struct {
	cfg      Config
	names    []string // population names
	samples  []string
	groups   []string
	popStart []int // samples of population k: [popStart[k], popStart[k+1])
	nAdmixed int   // admixed samples: [popStart[K], Samples)
	ancestry []float64
	poor     []int // poor samples, increasing

	block      int   // markers per block (>= 1)
	nBlocks    int   // ceil(Markers / block)
	chromStart []int // blocks of chromosome c: [chromStart[c], chromStart[c+1])
	chromNames []string
	slot       int // bp between marker slots
	jitter     int // positions are uniform in [slot start, slot start + jitter)
	idWidth    int

	// batchMarkers overrides the markers per batch (0: about 1 MiB of
	// genotypes); tests set it small to exercise many batches.
	batchMarkers int
}

func inUnit(x float64, closed bool) bool {
	if closed {
		return x >= 0 && x <= 1
	}
	return x >= 0 && x < 1
}

// validate checks the configuration; its errors name the offending field.
func (cfg *Config) validate() error {
	switch {
	case cfg.Samples < 1 || cfg.Samples > matrixio.MaxSamples:
		return fmt.Errorf("samples %d out of range 1..%d", cfg.Samples, matrixio.MaxSamples)
	case cfg.Markers < 1 || uint64(cfg.Markers) > matrixio.MaxMarkers:
		return fmt.Errorf("markers %d out of range 1..%d", cfg.Markers, uint64(matrixio.MaxMarkers))
	case cfg.Populations < 1 || cfg.Populations > MaxPopulations:
		return fmt.Errorf("populations %d out of range 1..%d", cfg.Populations, MaxPopulations)
	case !inUnit(cfg.Fst, false):
		return fmt.Errorf("fst %v out of range [0, 1)", cfg.Fst)
	case !inUnit(cfg.Admixed, true):
		return fmt.Errorf("admixed fraction %v out of range [0, 1]", cfg.Admixed)
	case cfg.Admixed > 0 && cfg.Populations < 2:
		return fmt.Errorf("admixed samples need at least 2 populations (have %d)", cfg.Populations)
	case cfg.Admixed > 0 && !(cfg.AdmixAlpha > 0 && !math.IsInf(cfg.AdmixAlpha, 0)):
		return fmt.Errorf("admixture Dirichlet alpha %v must be positive", cfg.AdmixAlpha)
	case !inUnit(cfg.Missing, false):
		return fmt.Errorf("missing rate %v out of range [0, 1)", cfg.Missing)
	case !inUnit(cfg.PoorSamples, true):
		return fmt.Errorf("poor-sample fraction %v out of range [0, 1]", cfg.PoorSamples)
	case !inUnit(cfg.PoorMissing, false):
		return fmt.Errorf("poor-sample missing rate %v out of range [0, 1)", cfg.PoorMissing)
	case cfg.LDBlock < 0:
		return fmt.Errorf("LD block size %d is negative", cfg.LDBlock)
	case !inUnit(cfg.LDNoise, true):
		return fmt.Errorf("LD noise %v out of range [0, 1]", cfg.LDNoise)
	case cfg.Chromosomes < 1 || cfg.Chromosomes > MaxChromosomes:
		return fmt.Errorf("chromosomes %d out of range 1..%d", cfg.Chromosomes, MaxChromosomes)
	}
	if cfg.AncestralA > 0 || cfg.AncestralB > 0 {
		if !(cfg.AncestralA > 0 && cfg.AncestralB > 0) || math.IsInf(cfg.AncestralA+cfg.AncestralB, 0) {
			return fmt.Errorf("ancestral Beta(%v, %v) needs two positive finite parameters", cfg.AncestralA, cfg.AncestralB)
		}
	} else if !(cfg.PMin >= 0 && cfg.PMin < cfg.PMax && cfg.PMax <= 1) {
		return fmt.Errorf("ancestral frequency range [%v, %v] must satisfy 0 <= min < max <= 1", cfg.PMin, cfg.PMax)
	}
	if cfg.PopSizes != nil && len(cfg.PopSizes) != cfg.Populations {
		return fmt.Errorf("%d population sizes for %d populations", len(cfg.PopSizes), cfg.Populations)
	}
	if cfg.PopNames != nil {
		if len(cfg.PopNames) != cfg.Populations {
			return fmt.Errorf("%d population names for %d populations", len(cfg.PopNames), cfg.Populations)
		}
		seen := map[string]bool{AdmixedGroup: true}
		for _, n := range cfg.PopNames {
			if err := matrixio.ValidateID("population name", n); err != nil {
				return err
			}
			if seen[n] {
				return fmt.Errorf("population name %q used twice (or reserved)", n)
			}
			seen[n] = true
		}
	}
	return nil
}

// New validates cfg and makes the sample-level draws.
func New(cfg Config) (*Cohort, error) {
	if err := cfg.validate(); err != nil {
		return nil, fmt.Errorf("synthetic cohort: %w", err)
	}
	cfg.PopSizes = append([]int(nil), cfg.PopSizes...)
	cfg.PopNames = append([]string(nil), cfg.PopNames...)
	K := cfg.Populations
	c := &Cohort{cfg: cfg}

	c.nAdmixed = int(math.Round(cfg.Admixed * float64(cfg.Samples)))
	pure := cfg.Samples - c.nAdmixed
	sizes := cfg.PopSizes
	if len(sizes) == 0 {
		sizes = make([]int, K)
		for k := range sizes {
			sizes[k] = pure / K
			if k < pure%K {
				sizes[k]++
			}
		}
		if pure > 0 && pure < K {
			return nil, fmt.Errorf("synthetic cohort: %d non-admixed samples cannot fill %d populations", pure, K)
		}
	}
	sum := 0
	for k, n := range sizes {
		if n < 0 {
			return nil, fmt.Errorf("synthetic cohort: population %d has %d samples", k+1, n)
		}
		sum += n
	}
	if sum != pure {
		return nil, fmt.Errorf("synthetic cohort: population sizes sum to %d, want %d (samples %d minus %d admixed)",
			sum, pure, cfg.Samples, c.nAdmixed)
	}

	c.names = cfg.PopNames
	if len(c.names) == 0 {
		c.names = DefaultPopNames(K)
	}

	// Sample IDs and groups.
	c.samples = make([]string, 0, cfg.Samples)
	c.groups = make([]string, 0, cfg.Samples)
	c.popStart = make([]int, K+1)
	add := func(group string, n int) {
		w := max(4, len(strconv.Itoa(n)))
		for i := 1; i <= n; i++ {
			c.samples = append(c.samples, fmt.Sprintf("%s-%0*d", group, w, i))
			c.groups = append(c.groups, group)
		}
	}
	for k := range K {
		c.popStart[k] = len(c.samples)
		add(c.names[k], sizes[k])
	}
	c.popStart[K] = len(c.samples)
	add(AdmixedGroup, c.nAdmixed)

	// Sample-level draws, from their own stream: ancestry, then poor samples.
	var pcg rand.PCG
	seedStream(&pcg, cfg.Seed, tagSamples, 0)
	r := rand.New(&pcg)
	c.ancestry = make([]float64, c.nAdmixed*K)
	for i := range c.nAdmixed {
		dirichlet(r, cfg.AdmixAlpha, c.ancestry[i*K:(i+1)*K])
	}
	if cfg.PoorSamples > 0 {
		np := max(1, int(math.Round(cfg.PoorSamples*float64(cfg.Samples))))
		// Partial Fisher-Yates shuffle: the first np of a random permutation.
		perm := make([]int, cfg.Samples)
		for i := range perm {
			perm[i] = i
		}
		for i := range np {
			j := i + r.IntN(cfg.Samples-i)
			perm[i], perm[j] = perm[j], perm[i]
		}
		c.poor = perm[:np:np]
		slices.Sort(c.poor)
	}

	// Blocks and chromosomes.
	c.block = max(1, cfg.LDBlock)
	c.nBlocks = (cfg.Markers + c.block - 1) / c.block
	if cfg.Chromosomes > c.nBlocks {
		return nil, fmt.Errorf("synthetic cohort: %d chromosomes need at least as many marker blocks (have %d)", cfg.Chromosomes, c.nBlocks)
	}
	c.chromStart = make([]int, cfg.Chromosomes+1)
	for ch := range c.chromStart {
		c.chromStart[ch] = ch * c.nBlocks / cfg.Chromosomes
	}
	maxBlocks := 0
	for ch := range cfg.Chromosomes {
		maxBlocks = max(maxBlocks, c.chromStart[ch+1]-c.chromStart[ch])
	}
	c.slot = min(posSlot, max(1, maxChromLen/(maxBlocks*c.block)))
	c.jitter = c.slot * 4 / 5
	c.chromNames = make([]string, cfg.Chromosomes)
	for ch := range c.chromNames {
		c.chromNames[ch] = strconv.Itoa(ch + 1)
	}
	c.idWidth = max(6, len(strconv.Itoa(cfg.Markers)))
	return c, nil
}

// DefaultPopNames returns the default population names for k populations:
// isle1..isle(k-1) and "mainland", the source population, last.
func DefaultPopNames(k int) []string {
	names := make([]string, k)
	for i := range k - 1 {
		names[i] = "isle" + strconv.Itoa(i+1)
	}
	names[k-1] = "mainland"
	return names
}

// Config returns the cohort's configuration.
func (c *Cohort) Config() Config {
	cfg := c.cfg
	cfg.PopSizes = append([]int(nil), cfg.PopSizes...)
	cfg.PopNames = append([]string(nil), cfg.PopNames...)
	return cfg
}

// NumSamples returns N.
func (c *Cohort) NumSamples() int { return c.cfg.Samples }

// NumMarkers returns M.
func (c *Cohort) NumMarkers() int { return c.cfg.Markers }

// Samples returns the sample IDs in output order (a copy).
func (c *Cohort) Samples() []string { return append([]string(nil), c.samples...) }

// Labels returns the group of each sample in output order (a copy): its
// population name, or AdmixedGroup.
func (c *Cohort) Labels() []string { return append([]string(nil), c.groups...) }

// PopulationNames returns the population names in order (a copy).
func (c *Cohort) PopulationNames() []string { return append([]string(nil), c.names...) }

// Ancestry returns sample i's ancestry proportions over the populations: a
// Dirichlet draw for an admixed sample, one-hot for the others.
func (c *Cohort) Ancestry(i int) []float64 {
	K := c.cfg.Populations
	q := make([]float64, K)
	if a := i - c.popStart[K]; a >= 0 {
		copy(q, c.ancestry[a*K:(a+1)*K])
		return q
	}
	for k := range K {
		if i < c.popStart[k+1] {
			q[k] = 1
			break
		}
	}
	return q
}

// PoorSamples returns the indices of the samples with the high missing
// rate, increasing (a copy).
func (c *Cohort) PoorSamples() []int { return append([]int(nil), c.poor...) }

// Params returns the configuration as key-value text, for recording in an
// output's header.
func (c *Cohort) Params() map[string]string {
	f := func(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
	cfg := c.cfg
	p := map[string]string{
		"model":        "balding-nichols-1995",
		"samples":      strconv.Itoa(cfg.Samples),
		"markers":      strconv.Itoa(cfg.Markers),
		"populations":  strconv.Itoa(cfg.Populations),
		"fst":          f(cfg.Fst),
		"admixed":      f(cfg.Admixed),
		"admix_alpha":  f(cfg.AdmixAlpha),
		"missing":      f(cfg.Missing),
		"poor_samples": f(cfg.PoorSamples),
		"poor_missing": f(cfg.PoorMissing),
		"ld_block":     strconv.Itoa(cfg.LDBlock),
		"ld_noise":     f(cfg.LDNoise),
		"chromosomes":  strconv.Itoa(cfg.Chromosomes),
		"seed":         strconv.FormatUint(cfg.Seed, 10),
	}
	if cfg.AncestralA > 0 {
		p["ancestral"] = "beta(" + f(cfg.AncestralA) + "," + f(cfg.AncestralB) + ")"
	} else {
		p["ancestral"] = "uniform(" + f(cfg.PMin) + "," + f(cfg.PMax) + ")"
	}
	return p
}
