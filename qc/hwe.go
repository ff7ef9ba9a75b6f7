package qc

import "math"

// tieTol is the relative tolerance under which two configurations of the
// HWE null distribution count as equally likely. Their probabilities are
// products of exact integer ratios computed in float64, whose relative
// error stays far below 1e-9 for any cohort size, so mathematically equal
// probabilities are recognised as ties and unequal ones (which differ by at
// least about 1/n^2 relative near the mode) are not, for n up to 10^4 and
// in practice well beyond.
const tieTol = 1e-9

// HWEExact returns the p-value of the exact test of Hardy-Weinberg
// equilibrium for one biallelic marker with genotype counts homRef, het and
// homAlt (Wigginton, Cutler & Abecasis 2005, Am J Hum Genet 76:887). Under
// the null, given the allele counts, the number of heterozygotes h has the
// distribution
//
//	P(h) = n! / (n_AA! h! n_BB!) * 2^h * n_A! n_B! / (2n)!
//
// and the p-value is the total probability of the configurations no more
// likely than the one observed (ties, to a relative 1e-9, included). With
// midP it is the mid-p value of Graffelman & Moreno 2013 (Stat Appl Genet
// Mol Biol 12:433; the definition from memory): the same sum minus half the
// probability of the observed configuration, which corrects the exact
// test's conservativeness.
//
// The terms are computed, as in the paper, by the recurrence between
// neighbouring heterozygote counts,
//
//	P(h+2) / P(h) = 4 n_AA(h) n_BB(h) / ((h+1)(h+2)),
//
// starting from the observed configuration (probability 1 in its own
// units) and walking outwards, with one rescaling by 10^-250 should the
// terms toward the mode grow past 10^250; a second one means the p-value is
// below 10^-400 and it returns 0. The walk stops once the rest of a tail
// (bounded geometrically, the ratios decreasing away from the mode) is
// below 10^-18 of the sums, so the cost grows like the square root of the
// number of samples and nothing overflows for any n. The result is clamped
// to [0, 1]. It is NaN when no genotype is counted, and 1 for a monomorphic
// marker (0.5 with midP).
func HWEExact(homRef, het, homAlt int, midP bool) float64 {
	if homRef < 0 || het < 0 || homAlt < 0 {
		return math.NaN()
	}
	n := homRef + het + homAlt
	if n == 0 {
		return math.NaN()
	}
	rare := min(2*homRef+het, 2*homAlt+het)
	common := 2*n - rare
	// ratio returns P(h + 2*dir) / P(h), or 0 when h + 2*dir is outside
	// the support 0..rare (same parity as rare).
	ratio := func(h, dir int) float64 {
		if dir > 0 {
			if h+2 > rare {
				return 0
			}
			hr, hc := float64((rare-h)/2), float64((common-h)/2)
			return 4 * hr * hc / (float64(h+1) * float64(h+2))
		}
		if h < 2 {
			return 0
		}
		hr, hc := float64((rare-h)/2+1), float64((common-h)/2+1)
		return float64(h) * float64(h-1) / (4 * hr * hc)
	}
	obs := het
	// The mode lies toward the direction in which the terms grow.
	toward, out := 1, -1
	if ratio(obs, 1) <= 1 && ratio(obs, -1) > 1 {
		toward, out = -1, 1
	}

	// Outward tail: the observed term and the ones beyond it, all no
	// more likely than it (the distribution is log-concave).
	const negligible = 1e-18
	a := 1.0 // in units of P(obs)
	t, h := 1.0, obs
	for {
		r := ratio(h, out)
		if r == 0 {
			break
		}
		t *= r
		h += 2 * out
		a += t
		if r2 := ratio(h, out); r2 < 1 && t*r2/(1-r2) < negligible*a {
			break
		}
	}

	// Toward the mode and past it: every term counts in the total; those
	// no more likely than the observed one count in the p-value too.
	const big = 1e250
	var sTow, b float64 // sTow in units of P(obs)*scale, b in units of P(obs)
	scale := 1.0
	t, h = 1.0, obs
	for {
		r := ratio(h, toward)
		if r == 0 {
			break
		}
		t *= r
		h += 2 * toward
		if t > big {
			if scale != 1 {
				return 0 // the p-value is below 1e-400
			}
			scale, t, sTow = 1/big, t/big, sTow/big
		}
		sTow += t
		u := t // in units of P(obs)
		if scale != 1 {
			u = t * big // may be +Inf, which is simply more likely
		}
		if u <= 1+tieTol {
			b += u
			if r2 := ratio(h, toward); r2 < 1 && u*r2/(1-r2) < negligible*(a+b) {
				break
			}
		}
	}
	num := a + b
	if midP {
		num -= 0.5
	}
	var p float64
	if scale == 1 {
		p = num / (a + sTow)
	} else {
		p = (num / big) / (a/big + sTow)
	}
	return math.Min(1, math.Max(0, p))
}
