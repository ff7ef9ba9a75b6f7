package randsvd

import "math"

// Marchenko-Pastur law (Marchenko & Pastur 1967, Math. USSR Sbornik 1:457)
// for the null spectrum of K = Z^T Z / M, where Z is the M x N standardized
// genotype matrix (markers by samples, entries of mean 0 and variance 1) and
// N samples, M markers grow with N/M -> gamma. With no population structure
// and unlinked markers the eigenvalues of K then spread over
// [(1-sqrt(gamma))^2, (1+sqrt(gamma))^2] with mean 1 (trace(K) is about N),
// and the largest one sits at the upper edge up to Tracy-Widom fluctuations
// of order N^(-2/3) (Johnstone 2001). Eigenvalues well above MPUpperEdge
// are structure (or relatedness, or LD); the Tracy-Widom test in
// TracyWidom makes that precise.

// mpRatio returns gamma = samples/markers, or NaN for non-positive sizes.
func mpRatio(samples, markers int) float64 {
	if samples <= 0 || markers <= 0 {
		return math.NaN()
	}
	return float64(samples) / float64(markers)
}

// MPUpperEdge returns (1 + sqrt(N/M))^2, the upper edge of the
// Marchenko-Pastur support for the eigenvalues of K = Z^T Z / M with
// unit-variance entries (eigenvalue mean about 1). It returns NaN if either
// size is not positive.
func MPUpperEdge(samples, markers int) float64 {
	g := mpRatio(samples, markers)
	r := 1 + math.Sqrt(g)
	return r * r
}

// MPLowerEdge returns (1 - sqrt(N/M))^2, the lower edge of the
// Marchenko-Pastur support in the convention of MPUpperEdge. When N > M,
// K also has N - M zero eigenvalues below it.
func MPLowerEdge(samples, markers int) float64 {
	g := mpRatio(samples, markers)
	r := 1 - math.Sqrt(g)
	return r * r
}

// MPDensity returns the density of the continuous part of the
// Marchenko-Pastur law at x, in the convention of MPUpperEdge:
//
//	f(x) = sqrt((b - x)(x - a)) / (2 pi gamma x)  for a < x < b,
//
// with gamma = N/M and a, b the lower and upper edges, zero outside. For
// N <= M it integrates to 1; for N > M to M/N, the rest being a point mass
// at zero. It is meant for drawing the null curve under a spectrum
// histogram.
func MPDensity(x float64, samples, markers int) float64 {
	g := mpRatio(samples, markers)
	if math.IsNaN(g) || math.IsNaN(x) {
		return math.NaN()
	}
	a, b := MPLowerEdge(samples, markers), MPUpperEdge(samples, markers)
	if x <= a || x >= b {
		return 0
	}
	return math.Sqrt((b-x)*(x-a)) / (2 * math.Pi * g * x)
}
