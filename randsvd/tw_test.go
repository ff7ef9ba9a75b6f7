package randsvd

import (
	"errors"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"sort"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/integrate/quad"
	"gonum.org/v1/gonum/mat"
)

// twNeedPython returns the path of /usr/bin/python3 with scipy, or skips the
// test when it is absent (fails instead under CLINAL_REQUIRE_REFS=1, as CI
// sets it).
func twNeedPython(t *testing.T) string {
	t.Helper()
	const py = "/usr/bin/python3"
	if err := exec.Command(py, "-c", "import scipy.special").Run(); err != nil {
		if os.Getenv("CLINAL_REQUIRE_REFS") == "1" {
			t.Fatalf("%s with scipy not usable and CLINAL_REQUIRE_REFS=1 (install Debian python3-scipy): %v", py, err)
		}
		t.Skipf("%s with scipy not usable (install Debian python3-scipy): %v", py, err)
	}
	return py
}

// twIntegrate is composite Gauss-Legendre quadrature of f on [a, b].
func twIntegrate(f func(float64) float64, a, b float64, panels, order int) float64 {
	x, w := legendreRule(order, 0, 1)
	h := (b - a) / float64(panels)
	var sum float64
	for p := 0; p < panels; p++ {
		for i := range x {
			sum += h * w[i] * f(a+h*(float64(p)+x[i]))
		}
	}
	return sum
}

func twClose(got, want, tol float64) bool { return math.Abs(got-want) <= tol }

func TestAiryClosedForms(t *testing.T) {
	// Standard closed forms (DLMF 9.2.3, 9.2.4) through math.Gamma, and the
	// digits quoted in the task brief (from memory).
	ai0 := 1 / (math.Cbrt(9) * math.Gamma(2.0/3))
	aip0 := -1 / (math.Cbrt(3) * math.Gamma(1.0/3))
	ai, aip := airy(0)
	tests := []struct {
		name      string
		got, want float64
		tol       float64
	}{
		{"Ai(0) closed form", ai, ai0, 2e-16},
		{"Ai'(0) closed form", aip, aip0, 2e-16},
		{"Ai(0) digits, from memory", ai, 0.355028053887817, 1e-15},
		{"Ai'(0) digits, from memory", aip, -0.258819403792807, 1e-15},
	}
	for _, tc := range tests {
		if !twClose(tc.got, tc.want, tc.tol) {
			t.Errorf("%s: got %.17g, want %.17g", tc.name, tc.got, tc.want)
		}
	}
}

// airyRay evaluates Ai and Ai' by the integral along the rays arg t = ±pi/3
// of the Airy integral (1/2 pi i) int exp(t^3/3 - x t) dt (DLMF 9.5.4 with
// the contour straightened), an independent method for moderate |x|:
//
//	Ai(x) = (1/pi) int_0^inf exp(-r^3/3 - x r/2) sin(pi/3 - sqrt(3) x r/2) dr.
func airyRay(x float64) (ai, aip float64) {
	c := math.Sqrt(3) / 2
	ai = twIntegrate(func(r float64) float64 {
		return math.Exp(-r*r*r/3-x*r/2) * math.Sin(math.Pi/3-c*x*r)
	}, 0, 9, 12, 30) / math.Pi
	aip = twIntegrate(func(r float64) float64 {
		e := math.Exp(-r*r*r/3 - x*r/2)
		return e * (-r/2*math.Sin(math.Pi/3-c*x*r) - c*r*math.Cos(math.Pi/3-c*x*r))
	}, 0, 9, 12, 30) / math.Pi
	return ai, aip
}

// airyPosAsymptotic is the large-x expansion DLMF 9.7.5-9.7.6,
// Ai(x) ~ exp(-zeta)/(2 sqrt(pi) x^(1/4)) sum (-1)^k u_k zeta^-k, summed to
// its smallest term.
func airyPosAsymptotic(x float64) (ai, aip float64) {
	zeta := 2.0 / 3 * x * math.Sqrt(x)
	u, zp := 1.0, 1.0
	var su, sv float64
	last := math.Inf(1)
	for k := 0; k < 60; k++ {
		if k > 0 {
			fk := float64(k)
			u *= (6*fk - 5) * (6*fk - 3) * (6*fk - 1) / ((2*fk - 1) * 216 * fk)
			zp /= -zeta
		}
		v := u
		if k > 0 {
			v = -(6*float64(k) + 1) / (6*float64(k) - 1) * u
		}
		if math.Abs(u*zp) > last {
			break
		}
		last = math.Abs(u * zp)
		su += u * zp
		sv += v * zp
	}
	x4 := math.Sqrt(math.Sqrt(x))
	e := math.Exp(-zeta) / (2 * math.Sqrt(math.Pi))
	return e / x4 * su, -e * x4 * sv
}

func TestAiryAgainstSecondMethods(t *testing.T) {
	type method func(float64) (float64, float64)
	tests := []struct {
		name     string
		got, ref method
		xs       []float64
		rel      bool // relative rather than absolute tolerance
		tol      float64
	}{
		// The ray integral has O(1) terms, so compare absolutely.
		{"Taylor vs ray integral", airy, airyRay, []float64{-4, -2.5, -1, -0.3, 0, 0.4, 1}, false, 1e-14},
		{"Bessel K vs ray integral", airy, airyRay, []float64{1.2, 2, 3, 4}, false, 1e-14},
		// Forward Taylor stepping is stable for a short distance only.
		{"Bessel K vs Taylor", airyBessel, airyStepped, []float64{1, 1.3, 1.7, 2}, true, 1e-13},
		{"Bessel K vs asymptotic", airyBessel, airyPosAsymptotic, []float64{10, 12, 16, 25, 60}, true, 3e-14},
		{"asymptotic vs Taylor (x < 0)", airyNegAsymptotic, airyStepped, []float64{-12, -13.7, -18, -25, -40}, false, 1e-13},
	}
	for _, tc := range tests {
		for _, x := range tc.xs {
			a, d := tc.got(x)
			ra, rd := tc.ref(x)
			ea, ed := math.Abs(a-ra), math.Abs(d-rd)
			if tc.rel {
				ea /= math.Abs(ra)
				ed /= math.Abs(rd)
			}
			if ea > tc.tol || ed > tc.tol {
				t.Errorf("%s at x=%g: Ai %.17g vs %.17g, Ai' %.17g vs %.17g (errors %.2g, %.2g > %g)",
					tc.name, x, a, ra, d, rd, ea, ed, tc.tol)
			}
		}
	}
}

func TestAiryAgainstScipy(t *testing.T) {
	py := twNeedPython(t)
	var xs []float64
	for x := -30.0; x <= 60; x += 0.37 {
		xs = append(xs, x)
	}
	var arg strings.Builder
	for _, x := range xs {
		arg.WriteString(strconv.FormatFloat(x, 'g', 17, 64) + " ")
	}
	// scipy.special.airy (Cephes; Debian python3-scipy) is the reference.
	script := "import sys\nfrom scipy.special import airy\nfor s in sys.argv[1].split():\n    a,ap,b,bp=airy(float(s)); print(repr(a), repr(ap))\n"
	out, err := exec.Command(py, "-c", script, arg.String()).Output()
	if err != nil {
		t.Fatalf("scipy: %v", err)
	}
	lines := strings.Split(strings.TrimSpace(string(out)), "\n")
	if len(lines) != len(xs) {
		t.Fatalf("scipy returned %d lines for %d points", len(lines), len(xs))
	}
	for i, x := range xs {
		f := strings.Fields(lines[i])
		ra, _ := strconv.ParseFloat(f[0], 64)
		rd, _ := strconv.ParseFloat(f[1], 64)
		a, d := airy(x)
		// Absolute 2e-14 where the functions oscillate (x < 0), relative
		// 2e-13 where they decay (Cephes' own accuracy is about 1e-14).
		scaleA, scaleD := math.Max(math.Abs(ra), 1e-300), math.Max(math.Abs(rd), 1e-300)
		if x < 0 {
			scaleA, scaleD = 100, 100
		}
		if math.Abs(a-ra)/scaleA > 2e-13 || math.Abs(d-rd)/scaleD > 2e-13 {
			t.Errorf("x=%g: Ai %.17g, scipy %.17g; Ai' %.17g, scipy %.17g", x, a, ra, d, rd)
		}
	}
}

func TestLegendreRule(t *testing.T) {
	for _, m := range []int{1, 2, 5, 17, 40, 80} {
		x, w := legendreRule(m, -1, 3)
		// gonum's fixed Legendre rule as the reference library.
		// gonum returns the nodes in descending order.
		rx, rw := make([]float64, m), make([]float64, m)
		quad.Legendre{}.FixedLocations(rx, rw, -1, 3)
		for i := range x {
			j := m - 1 - i
			if !twClose(x[i], rx[j], 1e-13) || !twClose(w[i], rw[j], 1e-13) {
				t.Errorf("m=%d node %d: (%.17g, %.17g), gonum (%.17g, %.17g)", m, i, x[i], w[i], rx[j], rw[j])
			}
		}
		// Exact for polynomials of degree <= 2m-1 (defining property):
		// int_-1^3 t^k dt = (3^(k+1) - (-1)^(k+1))/(k+1).
		for k := 0; k <= 2*m-1 && k <= 40; k++ {
			var got float64
			for i := range x {
				got += w[i] * math.Pow(x[i], float64(k))
			}
			want := (math.Pow(3, float64(k+1)) - math.Pow(-1, float64(k+1))) / float64(k+1)
			if math.Abs(got-want) > 1e-13*math.Abs(want) {
				t.Errorf("m=%d degree %d: %.17g, want %.17g", m, k, got, want)
			}
		}
	}
}

func TestTW1ConvergesInOrder(t *testing.T) {
	// Bornemann 2010: the Nystrom determinant converges exponentially in the
	// number of nodes; orders 40 and 80 must agree to 1e-12 (the task brief).
	for _, s := range []float64{-12, -8, -5, -3, -2, -1, 0, 0.5, 1, 2, 4, 6, 9} {
		a, b := TW1CDFOrder(s, 40), TW1CDFOrder(s, 80)
		if !twClose(a, b, 1e-12) {
			t.Errorf("F1(%g): order 40 %.17g, order 80 %.17g", s, a, b)
		}
	}
}

func TestTW1Quantiles(t *testing.T) {
	tests := []struct {
		p, want float64
	}{
		// Tracy-Widom beta=1 quantiles, from memory (tables of Tracy &
		// Widom 1996 and Johnstone 2001, as quoted in references.md).
		{0.90, 0.4501},
		{0.95, 0.9793},
		{0.99, 2.0234},
	}
	for _, tc := range tests {
		q := TW1Quantile(tc.p)
		if !twClose(q, tc.want, 1e-4) {
			t.Errorf("TW1 %.2f quantile %.8f, published %.4f", tc.p, q, tc.want)
		}
		// Our own high-accuracy check: the quantile solves F1 = p at
		// quadrature order 80 too.
		if f := TW1CDFOrder(q, 80); !twClose(f, tc.p, 1e-12) {
			t.Errorf("F1(%.12f) at order 80 = %.17g, want %g", q, f, tc.p)
		}
	}
	// Round trip in both tails, where the survival function carries the
	// upper quantiles (no source: consistency).
	for _, p := range []float64{1e-9, 1e-4, 0.2, 0.5, 0.8, 1 - 1e-6} {
		q := TW1Quantile(p)
		if p > 0.5 {
			if s := TW1Survival(q); math.Abs(s-(1-p)) > 1e-10*(1-p) {
				t.Errorf("1-F1(TW1Quantile(%g)) = %.17g, want %g", p, s, 1-p)
			}
		} else if f := TW1CDF(q); math.Abs(f-p) > 1e-16+1e-12*p { // F1 is accurate to ~1e-18 absolute in the lower tail
			t.Errorf("F1(TW1Quantile(%g)) = %.17g", p, f)
		}
	}
}

func TestTW1Moments(t *testing.T) {
	// E X = int_0^inf (1-F1) - int_-inf^0 F1, E X^2 = int_0^inf 2s (1-F1)
	// + int_-inf^0 2|s| F1; the tails beyond [-10, 16] are below 1e-17.
	mean := twIntegrate(TW1Survival, 0, 16, 4, 20) - twIntegrate(TW1CDF, -10, 0, 4, 20)
	m2 := twIntegrate(func(s float64) float64 { return 2 * s * TW1Survival(s) }, 0, 16, 4, 20) +
		twIntegrate(func(s float64) float64 { return -2 * s * TW1CDF(s) }, -10, 0, 4, 20)
	sd := math.Sqrt(m2 - mean*mean)
	// Second route through the density: int s f1(s) ds and int f1 = 1.
	meanPDF := twIntegrate(func(s float64) float64 { return s * TW1PDF(s) }, -10, 16, 8, 20)
	mass := twIntegrate(TW1PDF, -10, 16, 8, 20)
	tests := []struct {
		name      string
		got, want float64
		tol       float64
	}{
		{"mean vs published -1.2065 (from memory)", mean, -1.2065, 1e-4},
		{"sd vs published 1.2680 (from memory)", sd, 1.2680, 1e-4},
		// Bornemann 2010, Table 9 (from memory): mean -1.2065335745820,
		// variance 1.6077810345810.
		{"mean vs Bornemann 2010 (from memory)", mean, -1.2065335745820, 1e-11},
		{"variance vs Bornemann 2010 (from memory)", m2 - mean*mean, 1.6077810345810, 1e-11},
		{"mean through the density", meanPDF, mean, 1e-12},
		{"density integrates to 1", mass, 1, 1e-12},
	}
	for _, tc := range tests {
		if !twClose(tc.got, tc.want, tc.tol) {
			t.Errorf("%s: got %.15f, want %.15f", tc.name, tc.got, tc.want)
		}
	}
}

// tw1Painleve computes F1 on a grid by the original Tracy-Widom 1996
// representation, an independent method: q the Hastings-McLeod solution of
// the Painleve II equation d2q/ds2 = s q + 2 q^3 with q ~ Ai(s) as s -> inf, and
//
//	F1(s) = exp(-(1/2) int_s^inf q dx) F2(s)^(1/2),
//	F2(s) = exp(-int_s^inf (x - s) q(x)^2 dx),
//
// integrated from s = 12 (where q = Ai to 1e-40) downwards by classical RK4
// with step 2^-10. It returns F1 at the integers from 6 down to lo.
func tw1Painleve(lo int) map[int]float64 {
	const s0 = 12.0
	q, dq := airy(s0)
	tail := twIntegrate(func(x float64) float64 { a, _ := airy(x); return a }, s0, s0+30, 6, 20)
	// y = (q, q', int_s q, int_s q^2, int_s x q^2)
	y := [5]float64{q, dq, tail, 0, 0}
	f := func(s float64, y [5]float64) [5]float64 {
		return [5]float64{y[1], s*y[0] + 2*y[0]*y[0]*y[0], -y[0], -y[0] * y[0], -s * y[0] * y[0]}
	}
	const per = 1024
	h := -1.0 / per
	out := map[int]float64{}
	for step := 0; ; step++ {
		s := s0 + float64(step)*h
		if step%per == 0 && s <= 6 {
			out[int(math.Round(s))] = math.Exp(-0.5 * (y[2] + y[4] - s*y[3]))
			if int(math.Round(s)) <= lo {
				return out
			}
		}
		k1 := f(s, y)
		var t2, t3, t4 [5]float64
		for i := range y {
			t2[i] = y[i] + h/2*k1[i]
		}
		k2 := f(s+h/2, t2)
		for i := range y {
			t3[i] = y[i] + h/2*k2[i]
		}
		k3 := f(s+h/2, t3)
		for i := range y {
			t4[i] = y[i] + h*k3[i]
		}
		k4 := f(s+h, t4)
		for i := range y {
			y[i] += h / 6 * (k1[i] + 2*k2[i] + 2*k3[i] + k4[i])
		}
	}
}

func TestTW1AgainstPainleve(t *testing.T) {
	ref := tw1Painleve(-6)
	for s := 6; s >= -6; s-- {
		got := TW1CDF(float64(s))
		// The Painleve route is limited by RK4 (1e-10 absolute) and by the
		// instability of the Hastings-McLeod solution towards s -> -inf.
		if math.Abs(got-ref[s]) > 1e-10 && math.Abs(got-ref[s]) > 1e-5*ref[s] {
			t.Errorf("F1(%d): Fredholm %.15g, Painleve II %.15g", s, got, ref[s])
		}
	}
}

func TestTW1SurvivalAndDensity(t *testing.T) {
	// 1 - F1 from the eigenvalues agrees with 1 - det from the LU.
	for _, s := range []float64{-6, -3, -1, 0, 1, 3} {
		if a, b := TW1Survival(s), 1-TW1CDF(s); !twClose(a, b, 1e-14) {
			t.Errorf("s=%g: survival %.17g, 1-F1 %.17g", s, a, b)
		}
	}
	// Far in the upper tail 1 - F1(s) = tr A_s (1 + O(tr A_s)) by the
	// Fredholm expansion (standard, no source), with tr A_s =
	// (1/2) int_s^inf Ai(x) dx computed here by plain quadrature.
	for _, s := range []float64{6, 8, 12, 20, 40} {
		trA := 0.5 * twIntegrate(func(x float64) float64 { a, _ := airy(x); return a }, s, s+30, 12, 20)
		got := TW1Survival(s)
		if math.Abs(got-trA) > (3*trA+1e-13)*trA {
			t.Errorf("1-F1(%g) = %.17g, tr A = %.17g", s, got, trA)
		}
	}
	// Density against a central difference of the CDF (error ~1e-9).
	for _, s := range []float64{-4, -2, -1.27, 0, 1, 3} {
		const h = 1e-4
		fd := (TW1CDF(s+h) - TW1CDF(s-h)) / (2 * h)
		if pdf := TW1PDF(s); !twClose(pdf, fd, 1e-9) {
			t.Errorf("f1(%g) = %.15g, difference quotient %.15g", s, pdf, fd)
		}
	}
}

func TestTW1EdgeCases(t *testing.T) {
	tests := []struct {
		name      string
		got, want float64
	}{
		{"F1(-inf)", TW1CDF(math.Inf(-1)), 0},
		{"F1(-50)", TW1CDF(-50), 0},
		{"F1(+inf)", TW1CDF(math.Inf(1)), 1},
		{"F1(200)", TW1CDF(200), 1},
		{"1-F1(-inf)", TW1Survival(math.Inf(-1)), 1},
		{"1-F1(+inf)", TW1Survival(math.Inf(1)), 0},
		{"f1(-50)", TW1PDF(-50), 0},
	}
	for _, tc := range tests {
		if tc.got != tc.want {
			t.Errorf("%s = %v, want %v", tc.name, tc.got, tc.want)
		}
	}
	for _, v := range []float64{TW1CDF(math.NaN()), TW1Survival(math.NaN()), TW1PDF(math.NaN()),
		TW1Quantile(0), TW1Quantile(1), TW1Quantile(-0.1), TW1Quantile(math.NaN())} {
		if !math.IsNaN(v) {
			t.Errorf("got %v, want NaN", v)
		}
	}
	// Monotone over a grid, including the deep lower tail where the order grows.
	prev := -1.0
	for s := -30.0; s <= 12; s += 0.25 {
		f := TW1CDF(s)
		if f < prev-1e-15 {
			t.Errorf("F1 decreases at s=%g: %g after %g", s, f, prev)
		}
		prev = f
	}
	defer func() {
		if recover() == nil {
			t.Error("TW1CDFOrder(0, 0) did not panic")
		}
	}()
	TW1CDFOrder(0, 0)
}

// twSpectrum simulates n samples x m markers of genotypes, with allele
// frequencies drawn independently for each of pops equal-sized populations
// (pops = 1: no structure), standardizes them as Patterson et al. 2006
// (z = (g - 2p)/sqrt(2p(1-p)), p estimated, monomorphic markers redrawn),
// and returns all eigenvalues of K = Z^T Z / M in descending order from
// gonum's EigenSym (the reference library), with trace(K) and trace(K^2)
// from the entries of K.
func twSpectrum(n, m, pops int, seed uint64) (vals []float64, tr, tr2 float64) {
	r := rand.New(rand.NewPCG(seed, 0x7457))
	z := mat.NewDense(m, n, nil)
	row := make([]float64, n)
	freq := make([]float64, pops)
	for j := 0; j < m; j++ {
		for {
			for k := range freq {
				freq[k] = 0.05 + 0.9*r.Float64()
				if pops == 1 {
					freq[k] = 0.05 + 0.45*r.Float64()
				}
			}
			var sum float64
			for i := range row {
				p := freq[i*pops/n]
				g := 0.0
				if r.Float64() < p {
					g++
				}
				if r.Float64() < p {
					g++
				}
				row[i] = g
				sum += g
			}
			ph := sum / float64(2*n)
			if ph > 0 && ph < 1 {
				sd := math.Sqrt(2 * ph * (1 - ph))
				for i := range row {
					row[i] = (row[i] - 2*ph) / sd
				}
				break
			}
		}
		z.SetRow(j, row)
	}
	var k mat.SymDense
	k.SymOuterK(1/float64(m), z.T())
	for i := 0; i < n; i++ {
		tr += k.At(i, i)
		for l := 0; l < n; l++ {
			tr2 += k.At(i, l) * k.At(i, l)
		}
	}
	var e mat.EigenSym
	if !e.Factorize(&k, false) {
		panic("EigenSym failed")
	}
	vals = e.Values(nil)
	sort.Sort(sort.Reverse(sort.Float64Slice(vals)))
	return vals, tr, tr2
}

// twBinomialInterval returns the central interval [lo, hi] of
// Binomial(n, p) holding at least 1 - 2*tail of the mass, from the exact
// probability mass function.
func twBinomialInterval(n int, p, tail float64) (lo, hi int) {
	pmf := func(k int) float64 {
		lg := func(x int) float64 { v, _ := math.Lgamma(float64(x + 1)); return v }
		return math.Exp(lg(n) - lg(k) - lg(n-k) + float64(k)*math.Log(p) + float64(n-k)*math.Log1p(-p))
	}
	var c float64
	for lo = 0; c+pmf(lo) <= tail; lo++ {
		c += pmf(lo)
	}
	c = 0
	for hi = n; c+pmf(hi) <= tail; hi-- {
		c += pmf(hi)
	}
	return lo, hi
}

func TestTracyWidomNullCalibration(t *testing.T) {
	if testing.Short() {
		t.Skip("null calibration simulates 200 cohorts")
	}
	const (
		n, m, seeds = 100, 1000, 200
		alpha       = 0.05
	)
	// Under the null the top eigenvalue is called at level alpha with
	// probability alpha, so the count over 200 seeds is Binomial(200, 0.05);
	// accept its central 99.9% interval (exact pmf): [2, 21].
	lo, hi := twBinomialInterval(seeds, alpha, 0.0005)
	var called int
	var effSum float64
	stats := make([]float64, 0, seeds)
	for seed := 0; seed < seeds; seed++ {
		vals, tr, tr2 := twSpectrum(n, m, 1, uint64(seed))
		res, err := TracyWidom(TWInput{Eigenvalues: vals[:1], Trace: tr, TraceSq: tr2, Samples: n, Markers: m})
		if err != nil {
			t.Fatal(err)
		}
		if res[0].P < alpha {
			called++
		}
		effSum += res[0].EffectiveMarkers
		stats = append(stats, res[0].Statistic)
	}
	t.Logf("null: %d of %d seeds significant at %g (accepted [%d, %d])", called, seeds, alpha, lo, hi)
	if called < lo || called > hi {
		t.Errorf("null: top eigenvalue significant in %d of %d seeds, outside the 99.9%% binomial interval [%d, %d]",
			called, seeds, lo, hi)
	}
	// The moment estimator n' recovers the true marker count for unlinked
	// markers (simulation truth: m = 1000) to a few percent.
	if eff := effSum / seeds / m; eff < 0.95 || eff > 1.05 {
		t.Errorf("null: mean n'/M = %.4f, want within 5%% of 1", eff)
	}
	// Kolmogorov-Smirnov distance of the statistics to F1: the asymptotic
	// 99.9% critical value of sqrt(n) D is 1.9495 (Kolmogorov's limit law,
	// common practice, no source; finite-N bias of the TW approximation at
	// N = 100 is well inside it).
	sort.Float64s(stats)
	var d float64
	for i, x := range stats {
		f := TW1CDF(x)
		d = math.Max(d, math.Max(math.Abs(float64(i+1)/seeds-f), math.Abs(f-float64(i)/seeds)))
	}
	if crit := 1.9495 / math.Sqrt(seeds); d > crit {
		t.Errorf("null: KS distance of TW statistics to F1 is %.3f > %.3f", d, crit)
	}
}

func TestTracyWidomStructured(t *testing.T) {
	// Three populations with independent allele frequencies in [0.05, 0.95]
	// (far above any detection threshold): K-1 = 2 axes are real.
	const seeds = 10
	var twoCalled int
	for seed := 0; seed < seeds; seed++ {
		vals, tr, tr2 := twSpectrum(90, 1000, 3, uint64(1000+seed))
		res, err := TracyWidom(TWInput{Eigenvalues: vals[:5], Trace: tr, TraceSq: tr2, Samples: 90, Markers: 1000})
		if err != nil {
			t.Fatal(err)
		}
		for i := 0; i < 2; i++ {
			if !(res[i].P < 1e-6) {
				t.Errorf("seed %d: eigenvalue %d (%.3f) p = %g, want < 1e-6", seed, i+1, vals[i], res[i].P)
			}
		}
		if SignificantCount(res, 0.05) == 2 {
			twoCalled++
		}
	}
	// Each remaining eigenvalue is a null one: the third is called with
	// probability ~5%, so 8 of 10 is a loose floor (P(fewer) < 1% if
	// calibrated).
	if twoCalled < 8 {
		t.Errorf("structured: exactly 2 significant axes in %d of %d seeds, want >= 8", twoCalled, seeds)
	}
}

func TestTracyWidomFormulas(t *testing.T) {
	// Johnstone 2001 centring and scaling with n markers and dimension
	// p = N-1, written out here from the paper's formulas; an eigenvalue
	// placed at mu + x sigma must give statistic x and p = 1 - F1(x).
	const n, N = 5000, 201
	p := float64(N - 1)
	a := math.Sqrt(n-1) + math.Sqrt(p)
	mu := a * a / n
	sigma := a / n * math.Pow(1/math.Sqrt(n-1)+1/math.Sqrt(p), 1.0/3)
	trace := 180.0 // arbitrary scale: the statistic is scale free
	for _, x := range []float64{-2, 0, 0.9793, 3} {
		l := (mu + x*sigma) * trace / p
		res, err := TracyWidom(TWInput{Eigenvalues: []float64{l}, Trace: trace, Samples: N, Markers: n})
		if err != nil {
			t.Fatal(err)
		}
		if !twClose(res[0].Statistic, x, 1e-10) || !twClose(res[0].P, TW1Survival(x), 1e-14) || res[0].EffectiveMarkers != n {
			t.Errorf("x=%g: got %+v", x, res[0])
		}
	}
	// Scale invariance: K -> c K leaves every result unchanged.
	vals, tr, tr2 := twSpectrum(60, 400, 2, 3)
	base, err := TracyWidom(TWInput{Eigenvalues: vals[:4], Trace: tr, TraceSq: tr2, Samples: 60, Markers: 400})
	if err != nil {
		t.Fatal(err)
	}
	const c = 37.5
	scaled := make([]float64, 4)
	for i := range scaled {
		scaled[i] = c * vals[i]
	}
	res, err := TracyWidom(TWInput{Eigenvalues: scaled, Trace: c * tr, TraceSq: c * c * tr2, Samples: 60, Markers: 400})
	if err != nil {
		t.Fatal(err)
	}
	for i := range res {
		if !twClose(res[i].Statistic, base[i].Statistic, 1e-9) || !twClose(res[i].EffectiveMarkers, base[i].EffectiveMarkers, 1e-6) {
			t.Errorf("eigenvalue %d: scaled %+v, base %+v", i+1, res[i], base[i])
		}
	}
	// A trace of K^2 smaller than the squares already removed makes n'
	// meaningless: NaN fields, and the count stops there.
	res, err = TracyWidom(TWInput{Eigenvalues: []float64{5, 4}, Trace: 50, TraceSq: 30, Samples: 50, Markers: 400})
	if err != nil {
		t.Fatal(err)
	}
	if !math.IsNaN(res[1].Statistic) || !math.IsNaN(res[1].P) || SignificantCount(res, 0.05) > 1 {
		t.Errorf("inconsistent TraceSq: got %+v", res)
	}
}

func TestTracyWidomBadInput(t *testing.T) {
	good := TWInput{Eigenvalues: []float64{3, 2, 1}, Trace: 20, TraceSq: 40, Samples: 20, Markers: 100}
	tests := []struct {
		name string
		edit func(*TWInput)
	}{
		{"two samples", func(in *TWInput) { in.Samples = 2; in.Eigenvalues = []float64{1} }},
		{"more eigenvalues than N-1", func(in *TWInput) { in.Samples = 3 }},
		{"zero trace", func(in *TWInput) { in.Trace = 0 }},
		{"NaN trace", func(in *TWInput) { in.Trace = math.NaN() }},
		{"no TraceSq, no markers", func(in *TWInput) { in.TraceSq = 0; in.Markers = 0 }},
		{"ascending", func(in *TWInput) { in.Eigenvalues = []float64{1, 2, 3} }},
		{"negative", func(in *TWInput) { in.Eigenvalues = []float64{3, 2, -1} }},
		{"NaN eigenvalue", func(in *TWInput) { in.Eigenvalues = []float64{3, math.NaN(), 1} }},
		{"sum above trace", func(in *TWInput) { in.Trace = 5 }},
	}
	if _, err := TracyWidom(good); err != nil {
		t.Fatalf("good input: %v", err)
	}
	for _, tc := range tests {
		in := good
		in.Eigenvalues = append([]float64(nil), good.Eigenvalues...)
		tc.edit(&in)
		_, err := TracyWidom(in)
		if !errors.Is(err, ErrTWInput) {
			t.Errorf("%s: error %v, want ErrTWInput", tc.name, err)
		}
	}
}

func TestSignificantCount(t *testing.T) {
	r := func(ps ...float64) []TWResult {
		out := make([]TWResult, len(ps))
		for i, p := range ps {
			out[i].P = p
		}
		return out
	}
	tests := []struct {
		name string
		res  []TWResult
		want int
	}{
		{"empty", nil, 0},
		{"none", r(0.2, 0.01), 0},
		{"leading run", r(1e-9, 0.01, 0.3, 0.001), 2},
		{"all", r(0.01, 0.02), 2},
		{"boundary is not significant", r(0.05), 0},
		{"NaN stops", r(0.01, math.NaN(), 0.01), 1},
	}
	for _, tc := range tests {
		if got := SignificantCount(tc.res, 0.05); got != tc.want {
			t.Errorf("%s: %d, want %d", tc.name, got, tc.want)
		}
	}
}

func TestMarchenkoPastur(t *testing.T) {
	edges := []struct {
		n, m     int
		up, down float64
	}{
		// (1 ± sqrt(N/M))^2 (Marchenko & Pastur 1967; references.md).
		{100, 400, 2.25, 0.25},
		{400, 100, 9, 1},
		{100, 100, 4, 0},
	}
	for _, e := range edges {
		if u, l := MPUpperEdge(e.n, e.m), MPLowerEdge(e.n, e.m); !twClose(u, e.up, 1e-15) || !twClose(l, e.down, 1e-15) {
			t.Errorf("N=%d M=%d: edges [%g, %g], want [%g, %g]", e.n, e.m, l, u, e.down, e.up)
		}
	}
	if !math.IsNaN(MPUpperEdge(0, 10)) || !math.IsNaN(MPDensity(1, 10, 0)) {
		t.Error("non-positive sizes must give NaN")
	}
	// Moments of the law with ratio gamma (standard, from memory): mass
	// min(1, 1/gamma) in the continuous part, mean 1, second moment 1+gamma.
	for _, e := range edges[:2] {
		g := float64(e.n) / float64(e.m)
		// Substitute x = a + (b-a) sin^2(theta) to remove the square-root endpoints.
		a, b := MPLowerEdge(e.n, e.m), MPUpperEdge(e.n, e.m)
		mom := func(k int) float64 {
			return twIntegrate(func(th float64) float64 {
				s := math.Sin(th)
				x := a + (b-a)*s*s
				return math.Pow(x, float64(k)) * MPDensity(x, e.n, e.m) * (b - a) * 2 * s * math.Cos(th)
			}, 0, math.Pi/2, 4, 30)
		}
		if got := mom(0); !twClose(got, math.Min(1, 1/g), 1e-12) {
			t.Errorf("gamma=%g: mass %.15f", g, got)
		}
		if got := mom(1); !twClose(got, 1, 1e-12) {
			t.Errorf("gamma=%g: mean %.15f", g, got)
		}
		if got := mom(2); !twClose(got, 1+g, 1e-12) {
			t.Errorf("gamma=%g: second moment %.15f, want %g", g, got, 1+g)
		}
	}
	// Against a simulated null spectrum (gonum EigenSym): the largest
	// eigenvalue lies within a few TW units of the edge (Johnstone's sigma in
	// K units is about 0.03 here), and the spectrum follows the law.
	const n, m = 150, 600
	vals, tr, tr2 := twSpectrum(n, m, 1, 42)
	edge := MPUpperEdge(n, m)
	if vals[0] < edge-0.2 || vals[0] > edge+0.2 {
		t.Errorf("null top eigenvalue %.4f, MP edge %.4f", vals[0], edge)
	}
	if mean := tr / n; !twClose(mean, 1, 0.01) {
		t.Errorf("null eigenvalue mean %.4f, want 1", mean)
	}
	if m2 := tr2 / n; !twClose(m2, 1+float64(n)/m, 0.05) {
		t.Errorf("null second moment %.4f, want %.4f", m2, 1+float64(n)/m)
	}
}

func TestTracyWidomTraceSqSensitivity(t *testing.T) {
	// The documented rule for TWInput.TraceSq: a relative error eps in
	// trace(K^2) moves the statistic by about -eps M / N^(1/3). It follows
	// from differentiating n' and Johnstone's mu, sigma for M >> N (derived
	// here, no source); checked on simulated null spectra to 15%.
	for _, c := range []struct{ n, m int }{{100, 1000}, {100, 10000}, {200, 20000}} {
		vals, tr, tr2 := twSpectrum(c.n, c.m, 1, 5)
		in := TWInput{Eigenvalues: vals[:1], Trace: tr, TraceSq: tr2, Samples: c.n, Markers: c.m}
		base, err := TracyWidom(in)
		if err != nil {
			t.Fatal(err)
		}
		const eps = 1e-4
		in.TraceSq *= 1 + eps
		pert, err := TracyWidom(in)
		if err != nil {
			t.Fatal(err)
		}
		got := (pert[0].Statistic - base[0].Statistic) / eps
		want := -float64(c.m) / math.Cbrt(float64(c.n-1))
		if math.Abs(got-want) > 0.15*math.Abs(want) {
			t.Errorf("N=%d M=%d: d statistic / d log TraceSq = %.1f, rule %.1f", c.n, c.m, got, want)
		}
	}
}
