package synth

import (
	"bufio"
	"context"
	"crypto/sha256"
	"errors"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/clinal/clinal/matrixio"
)

// small returns a quick configuration for tests.
func small(mod func(*Config)) Config {
	cfg := DefaultConfig()
	cfg.Samples, cfg.Markers = 300, 400
	if mod != nil {
		mod(&cfg)
	}
	return cfg
}

func mustNew(t *testing.T, cfg Config) *Cohort {
	t.Helper()
	c, err := New(cfg)
	if err != nil {
		t.Fatalf("New: %v", err)
	}
	return c
}

// collect generates the whole cohort into memory (tests only: the sizes
// here are small).
func collect(t *testing.T, c *Cohort, threads int) ([]matrixio.Marker, [][]byte) {
	t.Helper()
	var ms []matrixio.Marker
	var gs [][]byte
	err := c.Generate(context.Background(), threads, func(m matrixio.Marker, g []byte) error {
		ms = append(ms, m)
		gs = append(gs, slices.Clone(g))
		return nil
	})
	if err != nil {
		t.Fatalf("Generate: %v", err)
	}
	if len(ms) != c.NumMarkers() {
		t.Fatalf("Generate emitted %d markers, want %d", len(ms), c.NumMarkers())
	}
	return ms, gs
}

// digest hashes everything Generate emits.
func digest(t *testing.T, c *Cohort, threads int) [32]byte {
	t.Helper()
	h := sha256.New()
	err := c.Generate(context.Background(), threads, func(m matrixio.Marker, g []byte) error {
		fmt.Fprintf(h, "%s\t%d\t%s\t%s\t%s\n", m.Chrom, m.Pos, m.ID, m.Ref, m.Alt)
		h.Write(g)
		return nil
	})
	if err != nil {
		t.Fatalf("Generate: %v", err)
	}
	var d [32]byte
	copy(d[:], h.Sum(nil))
	return d
}

// TestDeterminism: the output depends on the seed only, never on the
// number of threads or on the batching; another seed gives another cohort.
// (Reproducibility is this package's contract, see the package doc.)
func TestDeterminism(t *testing.T) {
	cases := []struct {
		name string
		cfg  Config
	}{
		{"default-small", small(nil)},
		{"odd-samples-ld", small(func(c *Config) { c.Samples, c.LDBlock, c.Markers = 257, 7, 501 })},
		{"one-population-no-missing", small(func(c *Config) {
			c.Populations, c.Admixed, c.Missing, c.PoorSamples = 1, 0, 0, 0
		})},
		{"beta-ancestral", small(func(c *Config) { c.AncestralA, c.AncestralB, c.Fst = 0.5, 0.5, 0.3 })},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			c := mustNew(t, tc.cfg)
			c.batchMarkers = 16 // many batches, so the workers really interleave
			want := digest(t, c, 1)
			for _, threads := range []int{2, 3, 8} {
				if got := digest(t, c, threads); got != want {
					t.Errorf("threads=%d: output differs from threads=1", threads)
				}
			}
			c2 := mustNew(t, tc.cfg)
			if got := digest(t, c2, 2); got != want {
				t.Errorf("default batching: output differs from 16-marker batches")
			}
			other := tc.cfg
			other.Seed++
			if got := digest(t, mustNew(t, other), 2); got == want {
				t.Errorf("seed %d and %d give identical output", tc.cfg.Seed, other.Seed)
			}
		})
	}
}

// TestConfigErrors: invalid configurations are refused with an error that
// names what is wrong.
func TestConfigErrors(t *testing.T) {
	cases := []struct {
		name string
		mod  func(*Config)
		want string
	}{
		{"negative-samples", func(c *Config) { c.Samples = -5 }, "samples -5"},
		{"zero-markers", func(c *Config) { c.Markers = 0 }, "markers 0"},
		{"fst-one", func(c *Config) { c.Fst = 1 }, "fst 1"},
		{"fst-nan", func(c *Config) { c.Fst = math.NaN() }, "fst NaN"},
		{"fst-negative", func(c *Config) { c.Fst = -0.1 }, "fst -0.1"},
		{"admixed-one-pop", func(c *Config) { c.Populations = 1 }, "at least 2 populations"},
		{"admixed-over-one", func(c *Config) { c.Admixed = 1.5 }, "admixed fraction 1.5"},
		{"missing-one", func(c *Config) { c.Missing = 1 }, "missing rate 1"},
		{"poor-missing-one", func(c *Config) { c.PoorMissing = 1 }, "poor-sample missing rate 1"},
		{"ld-negative", func(c *Config) { c.LDBlock = -1 }, "LD block size -1"},
		{"ld-noise", func(c *Config) { c.LDNoise = 2 }, "LD noise 2"},
		{"chromosomes-zero", func(c *Config) { c.Chromosomes = 0 }, "chromosomes 0"},
		{"chromosomes-23", func(c *Config) { c.Chromosomes = 23 }, "chromosomes 23"},
		{"chromosomes-over-blocks", func(c *Config) { c.Markers, c.Chromosomes = 2, 3 }, "3 chromosomes"},
		{"populations-over-samples", func(c *Config) { c.Samples, c.Populations, c.Admixed = 4, 6, 0 }, "cannot fill 6 populations"},
		{"pop-sizes-sum", func(c *Config) { c.PopSizes = []int{1, 2, 3, 4, 5, 6} }, "sum to 21"},
		{"pop-sizes-len", func(c *Config) { c.PopSizes = []int{1} }, "1 population sizes"},
		{"pmin-over-pmax", func(c *Config) { c.PMin, c.PMax = 0.6, 0.4 }, "0 <= min < max <= 1"},
		{"beta-one-param", func(c *Config) { c.AncestralA = 2 }, "two positive"},
		{"dup-pop-name", func(c *Config) { c.PopNames = []string{"a", "b", "c", "d", "e", "a"} }, `"a" used twice`},
		{"reserved-pop-name", func(c *Config) { c.PopNames = []string{"a", "b", "c", "d", "e", "mixed"} }, `"mixed" used twice`},
		{"alpha-zero", func(c *Config) { c.AdmixAlpha = 0 }, "alpha 0"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			_, err := New(small(tc.mod))
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Fatalf("New: error %v, want one containing %q", err, tc.want)
			}
		})
	}
}

// TestSamples checks the invented scenario's samples (design.md: five
// islands of the Meridian Archipelago plus a mainland source, admixed
// individuals, IDs like isle3-0042) and the group split documented on
// Config.
func TestSamples(t *testing.T) {
	cases := []struct {
		name      string
		cfg       Config
		groups    map[string]int
		poor      int
		someIDs   []string
		firstLast [2]string
	}{
		{"default", DefaultConfig(),
			map[string]int{"isle1": 300, "isle2": 300, "isle3": 300, "isle4": 300, "isle5": 300, "mainland": 300, "mixed": 200},
			20, []string{"isle3-0042", "mainland-0300", "mixed-0007"}, [2]string{"isle1-0001", "mixed-0200"}},
		{"uneven", small(func(c *Config) { c.Samples, c.Populations, c.Admixed, c.PoorSamples = 23, 3, 0.1, 0.1 }),
			map[string]int{"isle1": 7, "isle2": 7, "mainland": 7, "mixed": 2},
			2, []string{"isle2-0007"}, [2]string{"isle1-0001", "mixed-0002"}},
		{"sizes-names", small(func(c *Config) {
			c.Samples, c.Populations, c.Admixed, c.PoorSamples = 12000, 2, 0, 0
			c.PopSizes, c.PopNames = []int{10500, 1500}, []string{"north", "south"}
		}), map[string]int{"north": 10500, "south": 1500}, 0, []string{"north-10500", "south-1500"}, [2]string{"north-00001", "south-1500"}},
		{"one-population", small(func(c *Config) { c.Populations, c.Admixed = 1, 0 }),
			map[string]int{"mainland": 300}, 3, nil, [2]string{"mainland-0001", "mainland-0300"}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			c := mustNew(t, tc.cfg)
			ids, groups := c.Samples(), c.Labels()
			if len(ids) != tc.cfg.Samples || len(groups) != tc.cfg.Samples {
				t.Fatalf("%d IDs and %d labels for %d samples", len(ids), len(groups), tc.cfg.Samples)
			}
			count := map[string]int{}
			seen := map[string]bool{}
			for i, id := range ids {
				count[groups[i]]++
				if !strings.HasPrefix(id, groups[i]+"-") {
					t.Errorf("sample %d: ID %q not prefixed by its group %q", i, id, groups[i])
				}
				if seen[id] {
					t.Errorf("duplicate ID %q", id)
				}
				seen[id] = true
				q := c.Ancestry(i)
				sum := 0.0
				for _, v := range q {
					sum += v
				}
				if math.Abs(sum-1) > 1e-12 {
					t.Errorf("sample %s: ancestry sums to %v", id, sum)
				}
			}
			if fmt.Sprint(count) != fmt.Sprint(tc.groups) {
				t.Errorf("group sizes %v, want %v", count, tc.groups)
			}
			for _, id := range tc.someIDs {
				if !seen[id] {
					t.Errorf("no sample %q", id)
				}
			}
			if got := [2]string{ids[0], ids[len(ids)-1]}; got != tc.firstLast {
				t.Errorf("first and last IDs %v, want %v", got, tc.firstLast)
			}
			if got := len(c.PoorSamples()); got != tc.poor {
				t.Errorf("%d poor samples, want %d", got, tc.poor)
			}
		})
	}
}

// TestMarkers checks the marker layout documented in the package comment:
// chromosomes 1..C in order, in whole LD blocks; positions increasing,
// 1-9 kb apart; IDs mrk000001...; REF != ALT in ACGT with transitions twice
// as frequent as transversions (Ts/Tv = 2, common practice for human SNPs,
// no source).
func TestMarkers(t *testing.T) {
	cases := []struct {
		name string
		cfg  Config
	}{
		{"independent", small(func(c *Config) { c.Markers, c.Chromosomes, c.Samples = 12000, 5, 20 })},
		{"ld-blocks", small(func(c *Config) { c.Markers, c.Chromosomes, c.LDBlock, c.Samples = 12001, 3, 8, 20 })},
		{"dense", small(func(c *Config) {
			c.Markers, c.Chromosomes, c.LDBlock, c.Samples, c.Populations, c.Admixed = 120000, 1, 3, 4, 1, 0
		})},
	}
	isTransition := map[string]bool{"AG": true, "GA": true, "CT": true, "TC": true}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			c := mustNew(t, tc.cfg)
			ms, _ := collect(t, c, 2)
			B := max(1, tc.cfg.LDBlock)
			// Slots: 5 kb, or closer so a chromosome stays within 250 Mb.
			if want := min(5000, maxChromLen/(tc.cfg.Markers/tc.cfg.Chromosomes+B)); c.slot != want {
				t.Errorf("slot %d bp, want %d", c.slot, want)
			}
			ts := 0
			perChrom := map[string]int{}
			for j, m := range ms {
				if want := fmt.Sprintf("mrk%06d", j+1); m.ID != want {
					t.Fatalf("marker %d: ID %q, want %q", j, m.ID, want)
				}
				if m.Ref == m.Alt || !strings.Contains("ACGT", m.Ref) || !strings.Contains("ACGT", m.Alt) || len(m.Ref) != 1 || len(m.Alt) != 1 {
					t.Fatalf("marker %s: REF %q ALT %q", m.ID, m.Ref, m.Alt)
				}
				if isTransition[m.Ref+m.Alt] {
					ts++
				}
				perChrom[m.Chrom]++
				if j == 0 || ms[j-1].Chrom != m.Chrom {
					if m.Pos < 1 || m.Pos > int64(c.jitter) {
						t.Errorf("marker %s: first position of chromosome %s is %d", m.ID, m.Chrom, m.Pos)
					}
					if j > 0 {
						a, _ := strconv.Atoi(ms[j-1].Chrom)
						b, _ := strconv.Atoi(m.Chrom)
						if b != a+1 {
							t.Errorf("chromosome %s follows %s", m.Chrom, ms[j-1].Chrom)
						}
						if j%B != 0 {
							t.Errorf("chromosome %s starts inside an LD block (marker %d, block %d)", m.Chrom, j, B)
						}
					}
					continue
				}
				if d := m.Pos - ms[j-1].Pos; d < int64(c.slot-c.jitter) || d > int64(c.slot+c.jitter) {
					t.Errorf("marker %s: %d bp after the previous one, want %d..%d", m.ID, d, c.slot-c.jitter, c.slot+c.jitter)
				}
				if m.Pos > maxChromLen {
					t.Fatalf("marker %s: position %d beyond %d", m.ID, m.Pos, maxChromLen)
				}
			}
			if ms[0].Chrom != "1" || ms[len(ms)-1].Chrom != strconv.Itoa(tc.cfg.Chromosomes) || len(perChrom) != tc.cfg.Chromosomes {
				t.Errorf("chromosomes %v, want 1..%d", perChrom, tc.cfg.Chromosomes)
			}
			for ch, n := range perChrom {
				if want := tc.cfg.Markers / tc.cfg.Chromosomes; n < want-B || n > want+B {
					t.Errorf("chromosome %s: %d markers, want %d within a block", ch, n, want)
				}
			}
			// Transition fraction 2/3: binomial SD sqrt(2/9/M), 5 SD.
			frac := float64(ts) / float64(len(ms))
			if sd := math.Sqrt(2.0 / 9 / float64(len(ms))); math.Abs(frac-2.0/3) > 5*sd {
				t.Errorf("transition fraction %v (Ts/Tv %v), want 2/3 (Ts/Tv 2) within %v", frac, frac/(1-frac), 5*sd)
			}
		})
	}
}

// popFreqs returns, for marker genotypes g, the ALT allele count and the
// number of called alleles in each population (admixed samples excluded).
func popFreqs(c *Cohort, g []byte, alt, n []float64) {
	for k := range c.cfg.Populations {
		alt[k], n[k] = 0, 0
		for _, v := range g[c.popStart[k]:c.popStart[k+1]] {
			if v != matrixio.Missing {
				alt[k] += float64(v)
				n[k] += 2
			}
		}
	}
}

// TestHudsonFst estimates Fst from the genotypes with Hudson's estimator in
// the ratio-of-averages form (Bhatia, Patterson, Sankararaman & Price 2013,
// Genome Res 23:1514, eq. 10): for a pair of populations with sample ALT
// frequencies p1, p2 from n1, n2 alleles,
//
//	N = (p1-p2)^2 - p1(1-p1)/(n1-1) - p2(1-p2)/(n2-1),  D = p1(1-p2) + p2(1-p1),
//
// Fst = sum N / sum D over markers. Under Balding & Nichols (1995) the
// population frequencies are independent given p with E = p and Var =
// F p (1-p), so E[N] = 2 F p(1-p) and E[D] = 2 p(1-p): the estimate tends to
// the configured F whatever the ancestral distribution. The tolerance,
// 12% of F plus 0.002, is at least 5.8 standard deviations of the estimate
// at these sizes (measured over 30 seeds when this test was written; the
// means were within 0.5% of F).
func TestHudsonFst(t *testing.T) {
	cases := []struct {
		name string
		mod  func(*Config)
	}{
		{"K2-F0.01", func(c *Config) { c.Populations, c.Fst = 2, 0.01 }},
		{"K3-F0.05", func(c *Config) { c.Populations, c.Fst = 3, 0.05 }},
		{"K6-F0.05-default", func(c *Config) {}},
		{"K4-F0.2", func(c *Config) { c.Populations, c.Fst = 4, 0.2 }},
		{"K3-F0.5", func(c *Config) { c.Populations, c.Fst = 3, 0.5 }},
		{"K3-F0.1-beta-ancestral", func(c *Config) { c.Populations, c.Fst, c.AncestralA, c.AncestralB = 3, 0.1, 0.3, 0.7 }},
		{"K2-F0.1-ld", func(c *Config) { c.Populations, c.Fst, c.LDBlock, c.Markers = 2, 0.1, 5, 20000 }},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			cfg := small(func(c *Config) { c.Samples, c.Markers, c.Admixed = 600, 4000, 0.1 })
			tc.mod(&cfg)
			c := mustNew(t, cfg)
			K := cfg.Populations
			num := make([]float64, K*K)
			den := make([]float64, K*K)
			alt, n := make([]float64, K), make([]float64, K)
			err := c.Generate(context.Background(), 2, func(_ matrixio.Marker, g []byte) error {
				popFreqs(c, g, alt, n)
				for a := range K {
					for b := a + 1; b < K; b++ {
						p1, p2 := alt[a]/n[a], alt[b]/n[b]
						num[a*K+b] += (p1-p2)*(p1-p2) - p1*(1-p1)/(n[a]-1) - p2*(1-p2)/(n[b]-1)
						den[a*K+b] += p1*(1-p2) + p2*(1-p1)
					}
				}
				return nil
			})
			if err != nil {
				t.Fatal(err)
			}
			mean, pairs := 0.0, 0
			for a := range K {
				for b := a + 1; b < K; b++ {
					mean += num[a*K+b] / den[a*K+b]
					pairs++
				}
			}
			mean /= float64(pairs)
			if tol := 0.12*cfg.Fst + 0.002; math.Abs(mean-cfg.Fst) > tol {
				t.Errorf("Hudson Fst %.4f, want %v within %.4f", mean, cfg.Fst, tol)
			}
			t.Logf("Hudson Fst %.4f for F = %v", mean, cfg.Fst)
		})
	}
}

// TestHardyWeinberg: within a population genotypes are Binomial(2, p_k), so
// the observed heterozygosity matches the Hardy-Weinberg expectation 2pq
// (Hardy 1908; Weinberg 1908), estimated without bias from 2n alleles as
// 2 p̂ q̂ 2n/(2n-1) (Nei 1978, Genetics 89:583). The pooled populations must
// instead show a heterozygote deficit (the Wahlund effect, Wahlund 1928):
// for K equal populations under Balding & Nichols (1995), E[2 p̄ q̄] =
// 2p(1-p)(1-F/K) and E[het] = 2p(1-p)(1-F), so the deficit is about
// F(K-1)/(K-F) (derived here from the model's moments); within 25%. This is
// also the negative control showing the HWE check can fail.
func TestHardyWeinberg(t *testing.T) {
	cases := []struct {
		name string
		mod  func(*Config)
	}{
		{"K3-F0.1-missing", func(c *Config) { c.Populations, c.Fst, c.Missing = 3, 0.1, 0.05 }},
		{"K6-default", func(c *Config) {}},
		{"K2-F0.3-ld", func(c *Config) { c.Populations, c.Fst, c.LDBlock = 2, 0.3, 4 }},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			cfg := small(func(c *Config) { c.Samples, c.Markers, c.Admixed = 1200, 3000, 0 })
			tc.mod(&cfg)
			c := mustNew(t, cfg)
			K := cfg.Populations
			obs, exp := make([]float64, K), make([]float64, K)
			var poolObs, poolExp float64
			err := c.Generate(context.Background(), 2, func(_ matrixio.Marker, g []byte) error {
				var het, alt, n float64
				for _, v := range g[:c.popStart[K]] {
					if v != matrixio.Missing {
						het += float64(v & 1)
						alt += float64(v)
						n++
					}
				}
				p := alt / (2 * n)
				poolObs += het
				poolExp += n * 2 * p * (1 - p) * 2 * n / (2*n - 1)
				for k := range K {
					var het, alt, n float64
					for _, v := range g[c.popStart[k]:c.popStart[k+1]] {
						if v == matrixio.Missing {
							continue
						}
						if v == 1 {
							het++
						}
						alt += float64(v)
						n++
					}
					p := alt / (2 * n)
					obs[k] += het
					exp[k] += n * 2 * p * (1 - p) * 2 * n / (2*n - 1)
				}
				return nil
			})
			if err != nil {
				t.Fatal(err)
			}
			for k := range K {
				// About 200 samples x 3000 markers: the ratio's SD is well
				// under 0.01; 0.03 is a loose bound.
				if r := obs[k] / exp[k]; math.Abs(r-1) > 0.03 {
					t.Errorf("population %s: observed/expected heterozygosity %.4f, want 1 within 0.03", c.names[k], r)
				}
			}
			F, Kf := cfg.Fst, float64(K)
			want := F * (Kf - 1) / (Kf - F)
			if d := 1 - poolObs/poolExp; math.Abs(d-want) > 0.25*want {
				t.Errorf("pooled heterozygote deficit %.4f, want %.4f within 25%%", d, want)
			} else {
				t.Logf("pooled heterozygote deficit %.4f (model %.4f)", d, want)
			}
		})
	}
}

// TestAdmixture: an admixed sample's alleles are Bernoulli(f_i), f_i =
// sum_k q_ik p_k, so its genotype has mean 2 f_i and variance 2 f_i (1-f_i)
// (binomial). With f_i from the sample frequencies of large pure
// populations, the mean squared residual over the binomial variance is near
// 1; the same statistic computed with another sample's ancestry (a negative
// control) is clearly larger, so the check can fail.
func TestAdmixture(t *testing.T) {
	cfg := small(func(c *Config) {
		c.Samples, c.Markers, c.Populations, c.Fst, c.Admixed, c.Missing, c.PoorSamples = 3300, 3000, 3, 0.3, 1.0/11, 0, 0
	})
	c := mustNew(t, cfg)
	K, A := cfg.Populations, c.nAdmixed
	alt, n := make([]float64, K), make([]float64, K)
	var res, resWrong, binVar float64
	err := c.Generate(context.Background(), 2, func(_ matrixio.Marker, g []byte) error {
		popFreqs(c, g, alt, n)
		for a := range A {
			f, fw := 0.0, 0.0
			q := c.ancestry[a*K : (a+1)*K]
			qw := c.ancestry[((a+1)%A)*K : ((a+1)%A+1)*K]
			for k := range K {
				f += q[k] * alt[k] / n[k]
				fw += qw[k] * alt[k] / n[k]
			}
			x := float64(g[c.popStart[K]+a])
			res += (x - 2*f) * (x - 2*f)
			resWrong += (x - 2*fw) * (x - 2*fw)
			binVar += 2 * f * (1 - f)
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	// The pure-population frequency estimates (1000 samples each) add
	// about 0.3% to the residual; 0.05 is a loose bound.
	if r := res / binVar; math.Abs(r-1) > 0.05 {
		t.Errorf("residual / binomial variance %.4f, want 1 within 0.05", r)
	}
	if r := resWrong / binVar; r < 1.1 {
		t.Errorf("negative control (another sample's ancestry): ratio %.4f, want > 1.1", r)
	}
}

// TestMissing: calls are missing at the configured rates (the model of the
// package comment): Missing for ordinary samples, PoorMissing for poor
// ones; overall rates within 5 binomial SDs; none at all with rates 0.
func TestMissing(t *testing.T) {
	cases := []struct {
		name       string
		rate, poor float64 // Missing, PoorMissing
		poorFrac   float64
	}{
		{"none", 0, 0, 0},
		{"none-with-poor-fraction", 0, 0, 0.1},
		{"default", 0.01, 0.15, 0.01},
		{"high", 0.2, 0.5, 0.05},
		{"poor-only", 0, 0.3, 0.05},
		{"rare", 0.0005, 0, 0},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			cfg := small(func(c *Config) {
				c.Samples, c.Markers, c.Missing, c.PoorMissing, c.PoorSamples = 1000, 1000, tc.rate, tc.poor, tc.poorFrac
			})
			c := mustNew(t, cfg)
			isPoor := make([]bool, cfg.Samples)
			for _, i := range c.PoorSamples() {
				isPoor[i] = true
			}
			var missOrd, missPoor, nOrd, nPoor float64
			err := c.Generate(context.Background(), 2, func(_ matrixio.Marker, g []byte) error {
				for i, v := range g {
					m := 0.0
					if v == matrixio.Missing {
						m = 1
					} else if v > 2 {
						return fmt.Errorf("genotype code %d", v)
					}
					if isPoor[i] {
						missPoor += m
						nPoor++
					} else {
						missOrd += m
						nOrd++
					}
				}
				return nil
			})
			if err != nil {
				t.Fatal(err)
			}
			check := func(what string, miss, n, p float64) {
				if n == 0 {
					return
				}
				if p == 0 {
					if miss != 0 {
						t.Errorf("%s samples: %v missing calls, want none", what, miss)
					}
					return
				}
				sd := math.Sqrt(p * (1 - p) / n)
				if got := miss / n; math.Abs(got-p) > 5*sd {
					t.Errorf("%s samples: missing rate %.5f, want %v within %.5f", what, got, p, 5*sd)
				}
			}
			check("ordinary", missOrd, nOrd, tc.rate)
			check("poor", missPoor, nPoor, max(tc.rate, tc.poor))
		})
	}
}

// TestLDBlocks: within a block of one population, the allele correlation is
// 1-e between the block's first marker and another and (1-e)^2 between two
// later markers (derived from the copying model of the package comment:
// Cov = P(copy) Var). Genotype r^2 equals the allele r^2 for sums of two
// independent haplotypes, so the expected mean r^2 over the block's pairs
// is [(B-1)(1-e)^2 + C(B-1,2)(1-e)^4] / C(B,2). Markers of different blocks
// are independent: their sample r^2 is about 1/n (n samples; from memory,
// e.g. Hill & Weir 1988), checked against 3/n.
func TestLDBlocks(t *testing.T) {
	cases := []struct {
		B int
		e float64
	}{{10, 0.1}, {5, 0.3}, {2, 0}, {4, 1}}
	for _, tc := range cases {
		t.Run(fmt.Sprintf("B=%d/e=%v", tc.B, tc.e), func(t *testing.T) {
			cfg := small(func(c *Config) {
				c.Samples, c.Markers, c.Populations, c.Admixed, c.Missing, c.PoorSamples = 1000, 3000, 1, 0, 0, 0
				c.LDBlock, c.LDNoise, c.Chromosomes = tc.B, tc.e, 1
			})
			ms, gs := collect(t, mustNew(t, cfg), 2)
			_ = ms
			B, e := float64(tc.B), tc.e
			want := ((B-1)*math.Pow(1-e, 2) + (B-1)*(B-2)/2*math.Pow(1-e, 4)) / (B * (B - 1) / 2)
			var within, between float64
			var nw, nb int
			for start := 0; start+tc.B <= len(gs); start += tc.B {
				for a := start; a < start+tc.B; a++ {
					for b := a + 1; b < start+tc.B; b++ {
						within += r2(gs[a], gs[b])
						nw++
					}
				}
				if next := start + tc.B; next < len(gs) {
					between += r2(gs[next-1], gs[next])
					nb++
				}
			}
			within /= float64(nw)
			between /= float64(nb)
			if math.Abs(within-want) > 0.03 {
				t.Errorf("mean r^2 within blocks %.4f, want %.4f within 0.03", within, want)
			}
			if n := float64(cfg.Samples); between > 3/n {
				t.Errorf("mean r^2 between neighbouring blocks %.5f, want about 1/n = %.5f (< 3/n)", between, 1/n)
			}
			t.Logf("r^2 within %.4f (model %.4f), between %.5f", within, want, between)
		})
	}
}

// r2 is the squared Pearson correlation of two genotype vectors without
// missing calls (0 when either is monomorphic).
func r2(x, y []byte) float64 {
	var sx, sy, sxx, syy, sxy float64
	for i := range x {
		a, b := float64(x[i]), float64(y[i])
		sx += a
		sy += b
		sxx += a * a
		syy += b * b
		sxy += a * b
	}
	n := float64(len(x))
	cov := sxy - sx*sy/n
	vx, vy := sxx-sx*sx/n, syy-sy*sy/n
	if vx <= 0 || vy <= 0 {
		return 0
	}
	return cov * cov / (vx * vy)
}

// TestWriteStore: the store written by WriteStore opens with
// matrixio.Open and holds exactly what Generate emits: samples, markers,
// the per-marker counts and per-sample missing counts (counted here from
// the emitted genotypes) and every genotype.
func TestWriteStore(t *testing.T) {
	cases := []struct {
		name    string
		cfg     Config
		threads int
	}{
		{"default-small", small(nil), 2},
		{"ld-odd", small(func(c *Config) { c.Samples, c.Markers, c.LDBlock = 101, 333, 6 }), 1},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			c := mustNew(t, tc.cfg)
			path := filepath.Join(t.TempDir(), "cohort.clinal")
			if err := c.WriteStore(context.Background(), path, tc.threads); err != nil {
				t.Fatalf("WriteStore: %v", err)
			}
			ms, gs := collect(t, c, 1)
			s, err := matrixio.Open(path)
			if err != nil {
				t.Fatalf("Open: %v", err)
			}
			defer s.Close()
			if !slices.Equal(s.Samples(), c.Samples()) {
				t.Fatalf("store samples differ from the cohort's")
			}
			if !slices.Equal(s.Markers(), ms) {
				t.Fatalf("store markers differ from the generated ones")
			}
			if got := s.Meta().Params["seed"]; got != strconv.FormatUint(tc.cfg.Seed, 10) {
				t.Errorf("header seed %q, want %d", got, tc.cfg.Seed)
			}
			sampleMiss := make([]uint32, c.NumSamples())
			for j, g := range gs {
				var cnt [4]uint32
				for i, v := range g {
					cnt[v]++
					if v == matrixio.Missing {
						sampleMiss[i]++
					}
				}
				want := matrixio.Counts{HomRef: cnt[0], Het: cnt[1], HomAlt: cnt[2], Missing: cnt[3]}
				if got := s.Counts()[j]; got != want {
					t.Fatalf("marker %d counts %+v, want %+v", j, got, want)
				}
			}
			if !slices.Equal(s.SampleMissing(), sampleMiss) {
				t.Errorf("per-sample missing counts differ")
			}
			err = s.Stream(context.Background(), s.AllChunks(), 2, func(ch *matrixio.Chunk) error {
				for j := range ch.N {
					row := ch.Row(j, s.RowBytes())
					for i, want := range gs[ch.First+j] {
						if got := row[i>>2] >> (2 * uint(i&3)) & 3; got != want {
							return fmt.Errorf("marker %d sample %d: stored %d, generated %d", ch.First+j, i, got, want)
						}
					}
				}
				return nil
			})
			if err != nil {
				t.Fatal(err)
			}
		})
	}
}

// TestWriteVCF: the BGZF VCF written by WriteVCF, read back by bcftools
// (htslib, the reference implementation of VCF), holds the samples,
// markers and genotypes Generate emits.
func TestWriteVCF(t *testing.T) {
	bcftools := requireRef(t, "bcftools")
	cfg := small(func(c *Config) { c.Samples, c.Markers, c.LDBlock = 50, 120, 3 })
	c := mustNew(t, cfg)
	path := filepath.Join(t.TempDir(), "cohort.vcf.gz")
	if err := c.WriteVCF(context.Background(), path, 2); err != nil {
		t.Fatalf("WriteVCF: %v", err)
	}
	out, err := exec.Command(bcftools, "query", "-l", path).Output()
	if err != nil {
		t.Fatalf("bcftools query -l: %v", err)
	}
	if got := strings.Fields(string(out)); !slices.Equal(got, c.Samples()) {
		t.Fatalf("bcftools samples %v..., want %v...", got[:3], c.Samples()[:3])
	}
	cmd := exec.Command(bcftools, "query", "-f", `%CHROM\t%POS\t%ID\t%REF\t%ALT[\t%GT]\n`, path)
	var stderr strings.Builder
	cmd.Stderr = &stderr
	out, err = cmd.Output()
	if err != nil || stderr.Len() > 0 {
		t.Fatalf("bcftools query: %v: %s", err, stderr.String())
	}
	ms, gs := collect(t, c, 1)
	code := map[string]byte{"0/0": 0, "0/1": 1, "1/1": 2, "./.": matrixio.Missing}
	sc := bufio.NewScanner(strings.NewReader(string(out)))
	sc.Buffer(nil, 1<<20)
	j := 0
	for ; sc.Scan(); j++ {
		f := strings.Split(sc.Text(), "\t")
		if j >= len(ms) {
			t.Fatalf("bcftools reports more than %d records", len(ms))
		}
		m := ms[j]
		if want := []string{m.Chrom, strconv.FormatInt(m.Pos, 10), m.ID, m.Ref, m.Alt}; !slices.Equal(f[:5], want) {
			t.Fatalf("record %d: %v, want %v", j+1, f[:5], want)
		}
		for i, gt := range f[5:] {
			if v, ok := code[gt]; !ok || v != gs[j][i] {
				t.Fatalf("record %d sample %d: GT %q, generated %d", j+1, i, gt, gs[j][i])
			}
		}
	}
	if j != len(ms) {
		t.Fatalf("bcftools reports %d records, want %d", j, len(ms))
	}
}

// TestWriteLabels: the labels TSV has the header "sample_id<TAB>group" and
// one row per sample in order.
func TestWriteLabels(t *testing.T) {
	c := mustNew(t, small(nil))
	path := filepath.Join(t.TempDir(), "cohort.labels.tsv")
	if err := c.WriteLabels(path); err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSuffix(string(b), "\n"), "\n")
	if lines[0] != "sample_id\tgroup" {
		t.Fatalf("header %q", lines[0])
	}
	ids, groups := c.Samples(), c.Labels()
	if len(lines) != len(ids)+1 {
		t.Fatalf("%d rows, want %d", len(lines)-1, len(ids))
	}
	for i, l := range lines[1:] {
		if want := ids[i] + "\t" + groups[i]; l != want {
			t.Fatalf("row %d: %q, want %q", i+1, l, want)
		}
	}
}

// TestCancel: a cancelled context or an error from emit stops generation
// with that error, and a store or VCF being written is removed.
func TestCancel(t *testing.T) {
	c := mustNew(t, small(nil))
	c.batchMarkers = 8
	boom := errors.New("boom")
	for _, threads := range []int{1, 3} {
		n := 0
		err := c.Generate(context.Background(), threads, func(matrixio.Marker, []byte) error {
			if n++; n == 50 {
				return boom
			}
			return nil
		})
		if !errors.Is(err, boom) || n != 50 {
			t.Errorf("threads=%d: emit error: got %v after %d markers, want boom after 50", threads, err, n)
		}
		ctx, cancel := context.WithCancel(context.Background())
		n = 0
		err = c.Generate(ctx, threads, func(matrixio.Marker, []byte) error {
			if n++; n == 20 {
				cancel()
			}
			return nil
		})
		if !errors.Is(err, context.Canceled) {
			t.Errorf("threads=%d: cancelled: got %v, want context.Canceled", threads, err)
		}
		dir := t.TempDir()
		for _, name := range []string{"c.clinal", "c.vcf.gz"} {
			path := filepath.Join(dir, name)
			write := c.WriteStore
			if strings.HasSuffix(name, ".gz") {
				write = c.WriteVCF
			}
			if err := write(ctx, path, threads); !errors.Is(err, context.Canceled) {
				t.Errorf("threads=%d: %s with a cancelled context: %v", threads, name, err)
			}
		}
		if left, _ := os.ReadDir(dir); len(left) != 0 {
			t.Errorf("threads=%d: files left after cancellation: %v", threads, left)
		}
	}
}
