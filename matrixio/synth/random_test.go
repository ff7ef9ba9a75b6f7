package synth

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// requireRef returns the path of an external reference tool, skipping the
// test when it is absent, or failing it when CLINAL_REQUIRE_REFS=1 (CI).
func requireRef(t *testing.T, name string) string {
	t.Helper()
	p, err := exec.LookPath(name)
	if err != nil {
		if os.Getenv("CLINAL_REQUIRE_REFS") == "1" {
			t.Fatalf("reference tool %s is required (CLINAL_REQUIRE_REFS=1) but not found: %v", name, err)
		}
		t.Skipf("reference tool %s not found; skipping (set CLINAL_REQUIRE_REFS=1 to make this a failure)", name)
	}
	return p
}

// scipy runs a Python program with Debian's python3 (numpy, scipy) and
// returns its standard output, trimmed. Absent python3 or scipy skips the
// test (fails it under CLINAL_REQUIRE_REFS=1).
func scipy(t *testing.T, program string, args ...string) string {
	t.Helper()
	py := requireRef(t, "/usr/bin/python3")
	if err := exec.Command(py, "-c", "import numpy, scipy.stats").Run(); err != nil {
		if os.Getenv("CLINAL_REQUIRE_REFS") == "1" {
			t.Fatalf("python3 with numpy and scipy is required (CLINAL_REQUIRE_REFS=1): %v", err)
		}
		t.Skipf("python3 numpy/scipy not importable (%v); skipping", err)
	}
	out, err := exec.Command(py, append([]string{"-c", program}, args...)...).CombinedOutput()
	if err != nil {
		t.Fatalf("python3: %v\n%s", err, out)
	}
	return strings.TrimSpace(string(out))
}

// scipyOptional is scipyFloats for a confirmation the rest of a test does
// not depend on: without python3 and scipy (and CLINAL_REQUIRE_REFS unset)
// it logs that the confirmation is skipped and returns false.
func scipyOptional(t *testing.T, program string, args ...string) ([]float64, bool) {
	t.Helper()
	if os.Getenv("CLINAL_REQUIRE_REFS") != "1" {
		if err := exec.Command("/usr/bin/python3", "-c", "import numpy, scipy.stats").Run(); err != nil {
			t.Logf("python3 numpy/scipy not available (%v): reference confirmation skipped", err)
			return nil, false
		}
	}
	return scipyFloats(t, program, args...), true
}

func scipyFloats(t *testing.T, program string, args ...string) []float64 {
	t.Helper()
	var v []float64
	for _, f := range strings.Fields(scipy(t, program, args...)) {
		x, err := strconv.ParseFloat(f, 64)
		if err != nil {
			t.Fatalf("python3 output %q: %v", f, err)
		}
		v = append(v, x)
	}
	return v
}

func testRand(seed uint64) *rand.Rand {
	var pcg rand.PCG
	seedStream(&pcg, seed, 99, 0)
	return rand.New(&pcg)
}

// meanVar returns the mean, the unbiased variance and the standard errors
// of both (the variance's from the sample fourth central moment,
// SE^2 = (m4 - s^4)/n, common practice, no source).
func meanVar(x []float64) (mean, v, seMean, seVar float64) {
	n := float64(len(x))
	for _, a := range x {
		mean += a
	}
	mean /= n
	var m2, m4 float64
	for _, a := range x {
		d := (a - mean) * (a - mean)
		m2 += d
		m4 += d * d
	}
	v = m2 / (n - 1)
	m4 /= n
	return mean, v, math.Sqrt(v / n), math.Sqrt(math.Max(m4-v*v, 0) / n)
}

// TestBaldingNicholsMoments checks the population frequency draws against
// the moments of the model: E[p_k] = p and Var[p_k] = F p (1-p) (Balding &
// Nichols 1995, Genetica 96:3). The Beta parameterization behind them is
// confirmed independently with scipy.stats.beta's mean and variance.
func TestBaldingNicholsMoments(t *testing.T) {
	cases := []struct{ p, F float64 }{
		{0.5, 0.01}, {0.1, 0.05}, {0.8, 0.2}, {0.3, 0.5}, {0.05, 0.9},
	}
	var args []string
	for _, tc := range cases {
		s := (1 - tc.F) / tc.F
		args = append(args, fmt.Sprint(tc.p*s), fmt.Sprint((1-tc.p)*s))
	}
	ref, haveRef := scipyOptional(t, `import sys
from scipy import stats
a = list(map(float, sys.argv[1:]))
for i in range(0, len(a), 2):
    m, v = stats.beta(a[i], a[i+1]).stats('mv')
    print(float(m), float(v))`, args...)
	const n = 40000
	for i, tc := range cases {
		t.Run(fmt.Sprintf("p=%v/F=%v", tc.p, tc.F), func(t *testing.T) {
			wantVar := tc.F * tc.p * (1 - tc.p) // Balding & Nichols 1995
			if haveRef {
				if m, v := ref[2*i], ref[2*i+1]; math.Abs(m-tc.p) > 1e-12 || math.Abs(v-wantVar) > 1e-12 {
					t.Fatalf("scipy.stats.beta mean, var = %v, %v; want %v, %v", m, v, tc.p, wantVar)
				}
			}
			r := testRand(uint64(i + 1))
			x := make([]float64, n)
			for i := range x {
				x[i] = balding(r, tc.p, tc.F)
				if !(x[i] >= 0 && x[i] <= 1) {
					t.Fatalf("draw %d = %v outside [0, 1]", i, x[i])
				}
			}
			mean, v, seMean, seVar := meanVar(x)
			if math.Abs(mean-tc.p) > 5*seMean {
				t.Errorf("mean %v, want p = %v (5 SE = %v)", mean, tc.p, 5*seMean)
			}
			if math.Abs(v-wantVar) > 5*seVar {
				t.Errorf("variance %v, want F p (1-p) = %v (5 SE = %v)", v, wantVar, 5*seVar)
			}
		})
	}
	// No drift: F = 0 keeps p (model definition).
	if got := balding(testRand(1), 0.37, 0); got != 0.37 {
		t.Errorf("balding(p=0.37, F=0) = %v, want 0.37", got)
	}
}

// TestVariatesKS compares the Gamma and Beta samplers with the exact
// distributions in scipy.stats by a Kolmogorov-Smirnov test (fixed seeds, so
// the outcome is reproducible): a p-value below 1e-3 fails. The last cases
// test draws against deliberately wrong parameters and must be rejected, so
// the check is shown able to fail.
func TestVariatesKS(t *testing.T) {
	cases := []struct {
		dist     string
		a, b     float64 // drawn
		ta, tb   float64 // tested against
		rejected bool
	}{
		{"gamma", 0.3, 0, 0.3, 0, false},
		{"gamma", 1, 0, 1, 0, false},
		{"gamma", 7.5, 0, 7.5, 0, false},
		{"beta", 0.2, 0.6, 0.2, 0.6, false},
		{"beta", 2, 5, 2, 5, false},
		{"beta", 40, 9, 40, 9, false},
		{"beta", 2, 5, 2, 5.6, true},
		{"gamma", 7.5, 0, 8, 0, true},
	}
	const n = 5000
	dir := t.TempDir()
	var args []string
	for i, tc := range cases {
		r := testRand(uint64(1000 + i))
		var sb strings.Builder
		for range n {
			var x float64
			if tc.dist == "gamma" {
				x = math.Exp(logGamma(r, tc.a))
			} else {
				x = betaVariate(r, tc.a, tc.b)
			}
			sb.WriteString(strconv.FormatFloat(x, 'g', 17, 64))
			sb.WriteByte('\n')
		}
		path := filepath.Join(dir, fmt.Sprintf("x%d.txt", i))
		if err := os.WriteFile(path, []byte(sb.String()), 0o644); err != nil {
			t.Fatal(err)
		}
		args = append(args, path, tc.dist, fmt.Sprint(tc.ta), fmt.Sprint(tc.tb))
	}
	p := scipyFloats(t, `import sys, numpy
from scipy import stats
a = sys.argv[1:]
for i in range(0, len(a), 4):
    x = numpy.loadtxt(a[i])
    par = (float(a[i+2]),) if a[i+1] == "gamma" else (float(a[i+2]), float(a[i+3]))
    print(stats.kstest(x, a[i+1], args=par).pvalue)`, args...)
	for i, tc := range cases {
		if got := p[i] < 1e-3; got != tc.rejected {
			t.Errorf("%s(%v, %v) draws against scipy.stats.%s(%v, %v): KS p = %v, rejected %v, want %v",
				tc.dist, tc.a, tc.b, tc.dist, tc.ta, tc.tb, p[i], got, tc.rejected)
		}
	}
}

// TestDirichletMoments checks ancestry draws against the moments of the
// symmetric Dirichlet(alpha) over K parts: E[q_k] = 1/K and Var[q_k] =
// (K-1)/(K^2 (K alpha + 1)) (from memory, e.g. Kotz, Balakrishnan & Johnson
// 2000, Continuous Multivariate Distributions, ch. 49; the formula is
// confirmed here with scipy.stats.dirichlet).
func TestDirichletMoments(t *testing.T) {
	cases := []struct {
		K     int
		alpha float64
	}{{2, 1}, {6, 1}, {6, 0.1}, {3, 5}}
	var args []string
	for _, tc := range cases {
		args = append(args, strconv.Itoa(tc.K), fmt.Sprint(tc.alpha))
	}
	ref, haveRef := scipyOptional(t, `import sys, numpy
from scipy import stats
a = sys.argv[1:]
for i in range(0, len(a), 2):
    print(stats.dirichlet(numpy.full(int(a[i]), float(a[i+1]))).var()[0])`, args...)
	const n = 30000
	for i, tc := range cases {
		t.Run(fmt.Sprintf("K=%d/alpha=%v", tc.K, tc.alpha), func(t *testing.T) {
			K := float64(tc.K)
			wantVar := (K - 1) / (K * K * (K*tc.alpha + 1))
			if haveRef && math.Abs(ref[i]-wantVar) > 1e-12 {
				t.Fatalf("scipy.stats.dirichlet variance %v, formula %v", ref[i], wantVar)
			}
			r := testRand(uint64(2000 + i))
			q := make([]float64, tc.K)
			x := make([]float64, n)
			for j := range x {
				dirichlet(r, tc.alpha, q)
				sum := 0.0
				for _, v := range q {
					if !(v >= 0 && v <= 1) {
						t.Fatalf("draw %d: proportion %v outside [0, 1]", j, v)
					}
					sum += v
				}
				if math.Abs(sum-1) > 1e-12 {
					t.Fatalf("draw %d: proportions sum to %v", j, sum)
				}
				x[j] = q[j%tc.K]
			}
			mean, v, seMean, seVar := meanVar(x)
			if math.Abs(mean-1/K) > 5*seMean {
				t.Errorf("mean %v, want 1/K = %v (5 SE = %v)", mean, 1/K, 5*seMean)
			}
			if math.Abs(v-wantVar) > 5*seVar {
				t.Errorf("variance %v, want %v (5 SE = %v)", v, wantVar, 5*seVar)
			}
		})
	}
}

// TestThreshold32 checks the probability encoded by a threshold: a uniform
// 32-bit integer falls below t with probability t/2^32 (exact by counting).
func TestThreshold32(t *testing.T) {
	cases := []struct {
		p    float64
		want uint64
	}{
		{0, 0}, {-1, 0}, {math.NaN(), 0}, {1, 1 << 32}, {2, 1 << 32},
		{0.5, 1 << 31}, {0.25, 1 << 30}, {1.0 / (1 << 32), 1},
	}
	for _, tc := range cases {
		if got := threshold32(tc.p); got != tc.want {
			t.Errorf("threshold32(%v) = %d, want %d", tc.p, got, tc.want)
		}
	}
	for _, x := range []uint64{0, 1, 1<<31 - 1, 1 << 31, 1<<32 - 1} {
		for _, th := range []uint64{0, 1, 1 << 31, 1 << 32} {
			if got, want := below(x, th) == 1, x < th; got != want {
				t.Errorf("below(%d, %d) = %v, want %v", x, th, got, want)
			}
		}
	}
}
