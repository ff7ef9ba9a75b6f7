package randsvd_test

import (
	"fmt"

	"github.com/clinal/clinal/randsvd"
)

// The Tracy-Widom (beta = 1) distribution function at its published 95%
// point (Johnstone 2001, Table 1; from memory), and the quantile back.
func ExampleTW1CDF() {
	fmt.Printf("F1(0.9793) = %.4f\n", randsvd.TW1CDF(0.9793))
	fmt.Printf("1 - F1(3)  = %.3e\n", randsvd.TW1Survival(3))
	fmt.Printf("q(0.99)    = %.4f\n", randsvd.TW1Quantile(0.99))
	// Output:
	// F1(0.9793) = 0.9500
	// 1 - F1(3)  = 1.707e-03
	// q(0.99)    = 2.0234
}

// Testing the leading eigenvalues of a cohort's K = Z^T Z / M: 500 samples
// of the invented Meridian Archipelago registry on 20000 markers, with
// trace(K) and trace(K^2) from the engine. Two axes are real; the third
// and fourth eigenvalues sit at the Marchenko-Pastur edge. The p-values of
// the first two underflow to 0.
func ExampleTracyWidom() {
	res, err := randsvd.TracyWidom(randsvd.TWInput{
		Eigenvalues: []float64{9.8, 4.1, 1.31, 1.305},
		Trace:       500,
		TraceSq:     600.15,
		Samples:     500,
		Markers:     20000,
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	for i, r := range res {
		fmt.Printf("PC%d  x = %7.2f  p = %.2g  n' = %.0f\n", i+1, r.Statistic, r.P, r.EffectiveMarkers)
	}
	fmt.Println("significant:", randsvd.SignificantCount(res, 0.05))
	fmt.Printf("null edge: %.4f\n", randsvd.MPUpperEdge(500, 20000))
	// Output:
	// PC1  x =  668.26  p = 0  n' = 2532
	// PC2  x =  622.20  p = 0  n' = 11176
	// PC3  x =   -0.22  p = 0.21  n' = 20002
	// PC4  x =   -1.24  p = 0.49  n' = 20082
	// significant: 2
	// null edge: 1.3412
}

// The null spectrum of K for 500 samples and 20000 markers spreads over
// the Marchenko-Pastur support.
func ExampleMPUpperEdge() {
	fmt.Printf("[%.4f, %.4f]\n", randsvd.MPLowerEdge(500, 20000), randsvd.MPUpperEdge(500, 20000))
	fmt.Printf("density at 1: %.4f\n", randsvd.MPDensity(1, 500, 20000))
	// Output:
	// [0.7088, 1.3412]
	// density at 1: 2.0069
}
