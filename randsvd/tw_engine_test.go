package randsvd

import (
	"context"
	"math"
	"testing"
)

// TestTWThroughEngine runs the whole engine (store, operator, solver,
// exact trace(K^2), Tracy-Widom) on simulated cohorts. Null cohorts (one
// population): the top eigenvalue is significant at alpha = 0.05 in a
// fraction of 200 seeds inside the central 99.9% interval of
// Binomial(200, 0.05), [2, 21] (exact binomial probabilities, computed
// below). Structured cohorts with K = 3 and 4 populations at Fst 0.05
// (far above the detection threshold for these sizes, Patterson et al.
// 2006): exactly K - 1 significant PCs.
func TestTWThroughEngine(t *testing.T) {
	if testing.Short() {
		t.Skip("200 seeds")
	}
	lo, hi := binomInterval(200, 0.05, 0.001)
	if lo != 2 || hi != 21 {
		t.Fatalf("binomial interval [%d, %d], want [2, 21]", lo, hi)
	}
	sig := 0
	for seed := uint64(0); seed < 200; seed++ {
		st, _ := testCohort(t, 100, 1000, 1, 0, 0, 1000+seed, 256)
		res, _, err := RunPCA(context.Background(), st, PCAOptions{K: 2, Seed: seed, Threads: 1, TW: "exact"})
		if err != nil {
			t.Fatal(err)
		}
		if res.TW[0].P < 0.05 {
			sig++
		}
	}
	t.Logf("null: top eigenvalue significant in %d of 200 seeds (interval [%d, %d])", sig, lo, hi)
	if sig < lo || sig > hi {
		t.Errorf("null: %d of 200 significant at 0.05, outside [%d, %d]", sig, lo, hi)
	}
	for _, pops := range []int{3, 4} {
		for seed := uint64(0); seed < 3; seed++ {
			st, _ := testCohort(t, 240, 3000, pops, 0.05, 0.01, 77+seed, 256)
			res, _, err := RunPCA(context.Background(), st, PCAOptions{K: 6, Seed: seed, Threads: 2, TW: "exact"})
			if err != nil {
				t.Fatal(err)
			}
			if got := SignificantCount(res.TW, 0.05); got != pops-1 {
				t.Errorf("%d populations, seed %d: %d significant PCs, want %d (p %v)", pops, seed, got, pops-1, twPs(res.TW))
			}
		}
	}
}

func twPs(r []TWResult) []float64 {
	p := make([]float64, len(r))
	for i := range r {
		p[i] = r[i].P
	}
	return p
}

// binomInterval returns the central interval of Binomial(n, p) holding at
// least 1 - alpha of its mass, from exact probabilities.
func binomInterval(n int, p, alpha float64) (int, int) {
	pmf := make([]float64, n+1)
	for k := 0; k <= n; k++ {
		lg, _ := math.Lgamma(float64(n + 1))
		a, _ := math.Lgamma(float64(k + 1))
		b, _ := math.Lgamma(float64(n - k + 1))
		pmf[k] = math.Exp(lg - a - b + float64(k)*math.Log(p) + float64(n-k)*math.Log(1-p))
	}
	lo, hi := 0, n
	var cum float64
	for lo = 0; cum+pmf[lo] <= alpha/2; lo++ {
		cum += pmf[lo]
	}
	cum = 0
	for hi = n; cum+pmf[hi] <= alpha/2; hi-- {
		cum += pmf[hi]
	}
	return lo, hi
}
