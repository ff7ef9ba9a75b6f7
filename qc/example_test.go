package qc_test

import (
	"fmt"

	"github.com/clinal/clinal/qc"
)

// The exact test on genotype counts: 40 AA, 9 AB, 1 BB. The p-value
// agrees with Debian r-cran-genetics HWE.exact (0.45985622690851602) and
// bcftools +fill-tags (0.459856).
func ExampleHWEExact() {
	fmt.Printf("%.6f\n", qc.HWEExact(40, 9, 1, false))
	fmt.Printf("%.6f\n", qc.HWEExact(25, 50, 25, false))
	// Output:
	// 0.459856
	// 1.000000
}

func ExampleParseChromosomes() {
	cs, err := qc.ParseChromosomes("1-22,X")
	if err != nil {
		panic(err)
	}
	for _, c := range []string{"chr1", "22", "chrX", "Y", "MT"} {
		fmt.Println(c, cs.Contains(c))
	}
	// Output:
	// chr1 true
	// 22 true
	// chrX true
	// Y false
	// MT false
}

func ExampleParseWindow() {
	for _, s := range []string{"500kb", "1mb", "200"} {
		w, _ := qc.ParseWindow(s)
		fmt.Printf("%s: %d bp, %d markers\n", s, w.BP, w.Markers)
	}
	// Output:
	// 500kb: 500000 bp, 0 markers
	// 1mb: 1000000 bp, 0 markers
	// 200: 0 bp, 200 markers
}
