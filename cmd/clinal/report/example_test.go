package report_test

import (
	"fmt"
	"os"
	"path/filepath"

	"github.com/clinal/clinal/cmd/clinal/report"
)

// ExampleWritePCAReport writes a report for four samples of two invented
// islands and lists the files: the plot copies, then the page.
func ExampleWritePCAReport() {
	dir, _ := os.MkdirTemp("", "report")
	defer os.RemoveAll(dir)
	in := &report.PCAInput{
		Title:       "Meridian Archipelago (simulated)",
		SampleIDs:   []string{"isle1-0001", "isle1-0002", "isle2-0001", "isle2-0002"},
		Groups:      []string{"isle1", "isle1", "isle2", "isle2"},
		Scores:      [][]float64{{0.5, 0.1}, {0.4, -0.2}, {-0.5, 0.3}, {-0.4, -0.2}},
		Eigenvalues: []float64{2.1, 1.2},
		Residuals:   []float64{1e-8, 3e-8},
		Converged:   []bool{true, true},
		Trace:       4,
		MPEdge:      1.9,
		Passes:      3, StopReason: "converged",
		Samples: 4, Markers: 1000, K: 2,
	}
	files, err := report.WritePCAReport(filepath.Join(dir, "meridian.report.html"), in)
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, f := range files {
		fmt.Println(filepath.Base(f))
	}
	// Output:
	// meridian.report.pc12.svg
	// meridian.report.pc12.png
	// meridian.report.scree.svg
	// meridian.report.scree.png
	// meridian.report.html
}
