package synth

import (
	"math"
	"math/rand/v2"
)

// Stream tags keep the random streams of different purposes apart: the
// stream of block b is never the stream of sample-level draws, whatever the
// seed.
const (
	tagSamples uint64 = 0x5a3c_96e1_0f0f_1234
	tagBlocks  uint64 = 0xc2b2_ae3d_27d4_eb4f
)

// mix64 is the finalizer of SplitMix64 (Steele, Lea & Flood 2014, "Fast
// splittable pseudorandom number generators", OOPSLA): a bijection on
// uint64 that spreads nearby inputs over the whole range.
func mix64(z uint64) uint64 {
	z += 0x9e3779b97f4a7c15
	z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9
	z = (z ^ (z >> 27)) * 0x94d049bb133111eb
	return z ^ (z >> 31)
}

// seedStream seeds pcg with the stream (seed, tag, idx). The map from
// (seed, idx) to the two PCG seed words is injective for a fixed tag (the
// first word determines seed, the second then determines idx), so distinct
// markers blocks never share a stream.
func seedStream(pcg *rand.PCG, seed, tag, idx uint64) {
	s1 := mix64(seed ^ tag)
	s2 := mix64(idx ^ mix64(s1))
	pcg.Seed(s1, s2)
}

// threshold32 returns t such that a uniform 32-bit integer u satisfies
// u < t with probability p (to 2^-32): p = 1 gives 2^32, always true.
func threshold32(p float64) uint64 {
	if !(p > 0) {
		return 0
	}
	if p >= 1 {
		return 1 << 32
	}
	return uint64(p*(1<<32) + 0.5)
}

// logGamma returns the logarithm of a Gamma(shape, 1) variate, shape > 0,
// by Marsaglia & Tsang 2000 ("A simple method for generating gamma
// variables", ACM TOMS 26:363). For shape < 1 it uses their boost
// Gamma(a) = Gamma(a+1) * U^(1/a), kept in logs so that tiny shapes (large
// Fst) do not underflow to zero.
func logGamma(r *rand.Rand, shape float64) float64 {
	boost := 0.0
	if shape < 1 {
		u := 1 - r.Float64() // (0, 1]
		boost = math.Log(u) / shape
		shape++
	}
	d := shape - 1.0/3
	c := 1 / math.Sqrt(9*d)
	for {
		x := r.NormFloat64()
		v := 1 + c*x
		if v <= 0 {
			continue
		}
		v = v * v * v
		u := 1 - r.Float64()
		x2 := x * x
		if u < 1-0.0331*x2*x2 || math.Log(u) < 0.5*x2+d*(1-v+math.Log(v)) {
			return math.Log(d*v) + boost
		}
	}
}

// betaVariate draws from Beta(a, b), a, b > 0, as X/(X+Y) with X ~ Gamma(a)
// and Y ~ Gamma(b) independent (the standard construction; e.g. Devroye
// 1986, Non-Uniform Random Variate Generation, ch. IX.4), computed from the
// logarithms as 1/(1+exp(log Y - log X)).
func betaVariate(r *rand.Rand, a, b float64) float64 {
	lx := logGamma(r, a)
	ly := logGamma(r, b)
	return 1 / (1 + math.Exp(ly-lx))
}

// balding draws a population allele frequency given the ancestral frequency
// p under the Balding-Nichols model (Balding & Nichols 1995, Genetica 96:3):
// Beta(p(1-F)/F, (1-p)(1-F)/F), whose mean is p and variance F p (1-p).
// F = 0 returns p itself (no drift); p at 0 or 1 stays there.
func balding(r *rand.Rand, p, fst float64) float64 {
	if fst == 0 || p <= 0 || p >= 1 {
		return p
	}
	s := (1 - fst) / fst
	return betaVariate(r, p*s, (1-p)*s)
}

// dirichlet fills q with a draw from the symmetric Dirichlet(alpha, ...,
// alpha) distribution as normalized Gamma(alpha) variates (the standard
// construction; Devroye 1986, ch. XI.4), in logs to survive small alpha.
func dirichlet(r *rand.Rand, alpha float64, q []float64) {
	mx := math.Inf(-1)
	for k := range q {
		q[k] = logGamma(r, alpha)
		mx = max(mx, q[k])
	}
	sum := 0.0
	for k := range q {
		q[k] = math.Exp(q[k] - mx)
		sum += q[k]
	}
	for k := range q {
		q[k] /= sum
	}
}
