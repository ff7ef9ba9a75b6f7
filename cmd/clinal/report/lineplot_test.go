package report

import (
	"bytes"
	"os"
	"path/filepath"
	"testing"
)

// TestLinePlot reads a benchmark plot back from its SVG: one disc per
// measured point (plus one per legend entry), the 1-2-5 labels of the
// logarithmic axis inside its range, and both files written.
func TestLinePlot(t *testing.T) {
	base := filepath.Join(t.TempDir(), "time-vs-markers")
	lp := &LinePlot{Title: "t", XLabel: "markers", YLabel: "s", LogX: true, LogY: true, Series: []Series{
		{Name: "1000 samples", X: []float64{10000, 20000, 40000}, Y: []float64{0.4, 0.8, 1.7}, Model: []float64{0.45, 0.8, 1.6}},
		{Name: "2000 samples", X: []float64{10000, 20000, 40000}, Y: []float64{0.7, 1.5, 3.1}},
	}}
	if err := WriteLinePlot(base, lp); err != nil {
		t.Fatal(err)
	}
	s := readShapes(t, base+".svg")
	if len(s.marks) != 6+2 {
		t.Errorf("%d discs, want 6 points and 2 legend thumbnails", len(s.marks))
	}
	labels := map[string]bool{}
	for _, tx := range s.texts {
		labels[tx.s] = true
	}
	// Axis ranges: x [10000/1.25, 40000*1.25], y [0.4/1.25, 3.1*1.25].
	for _, want := range []string{"10000", "20000", "0.5", "1", "2", "1000 samples", "2000 samples"} {
		if !labels[want] {
			t.Errorf("no label %q among %v", want, labels)
		}
	}
	if labels["100000"] || labels["0.2"] {
		t.Errorf("labels outside the axis range: %v", labels)
	}
	b, err := os.ReadFile(base + ".png")
	if err != nil || !bytes.HasPrefix(b, []byte("\x89PNG\r\n\x1a\n")) {
		t.Errorf("%s.png: missing or not a PNG (%v)", base, err)
	}
}
