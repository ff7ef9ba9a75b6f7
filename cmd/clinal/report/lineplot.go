package report

import (
	"fmt"
	"io"
	"math"
	"os"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/clinal/clinal/matrixio"
)

// Series is one line of a line plot: measured points (discs joined by a
// line) and, optionally, a model's values at the same X drawn dashed in
// the same colour.
type Series struct {
	Name  string
	X, Y  []float64
	Model []float64 // nil: no model line
}

// LinePlot describes a plot of several series, such as benchmark results
// against dataset size.
type LinePlot struct {
	Title, XLabel, YLabel string
	LogX, LogY            bool
	Series                []Series
}

// WriteLinePlot writes the plot as BASE.svg and BASE.png, atomically; if
// the second write fails the first file is removed.
func WriteLinePlot(base string, lp *LinePlot) error {
	p := newPlot()
	sans(p)
	p.Title.Text = lp.Title
	p.X.Label.Text = lp.XLabel
	p.Y.Label.Text = lp.YLabel
	if lp.LogX {
		p.X.Scale, p.X.Tick.Marker = plot.LogScale{}, ticks125{}
	}
	if lp.LogY {
		p.Y.Scale, p.Y.Tick.Marker = plot.LogScale{}, ticks125{}
	}
	// Bottom right: cost curves rise to the right, so that corner is the
	// emptiest.
	p.Legend.Top, p.Legend.Left = false, false
	var xs, ys []float64
	for i, s := range lp.Series {
		if len(s.X) != len(s.Y) || (s.Model != nil && len(s.Model) != len(s.X)) {
			return fmt.Errorf("plot %s: series %q: %d x, %d y, %d model values", base, s.Name, len(s.X), len(s.Y), len(s.Model))
		}
		col := palette[i%len(palette)]
		pts := make(plotter.XYs, len(s.X))
		for j := range s.X {
			pts[j] = plotter.XY{X: s.X[j], Y: s.Y[j]}
		}
		l, sc, err := plotter.NewLinePoints(pts)
		if err != nil {
			return fmt.Errorf("plot %s: series %q: %w", base, s.Name, err)
		}
		l.Color = col
		sc.GlyphStyle = draw.GlyphStyle{Color: col, Radius: markRadius * 1.2, Shape: draw.CircleGlyph{}}
		p.Add(l, sc)
		p.Legend.Add(s.Name, l, sc)
		xs, ys = append(xs, s.X...), append(ys, s.Y...)
		if s.Model != nil {
			mp := make(plotter.XYs, len(s.X))
			for j := range s.X {
				mp[j] = plotter.XY{X: s.X[j], Y: s.Model[j]}
			}
			ml, err := plotter.NewLine(mp)
			if err != nil {
				return fmt.Errorf("plot %s: series %q model: %w", base, s.Name, err)
			}
			ml.Color = col
			ml.Dashes = []vg.Length{vg.Points(5), vg.Points(3)}
			p.Add(ml)
			ys = append(ys, s.Model...)
		}
	}
	if len(xs) == 0 {
		return fmt.Errorf("plot %s: no data", base)
	}
	p.X.Min, p.X.Max = logPad(xs, lp.LogX)
	p.Y.Min, p.Y.Max = logPad(ys, lp.LogY)
	if !lp.LogY {
		p.Y.Min = math.Min(0, p.Y.Min)
	}
	svg, png, err := render(screeW, screeH*1.1, func(dc draw.Canvas) { p.Draw(dc) })
	if err != nil {
		return fmt.Errorf("plot %s: %w", base, err)
	}
	if err := matrixio.WriteFileAtomic(base+".svg", func(w io.Writer) error { _, err := w.Write(svg); return err }); err != nil {
		return err
	}
	if err := matrixio.WriteFileAtomic(base+".png", func(w io.Writer) error { _, err := w.Write(png); return err }); err != nil {
		os.Remove(base + ".svg")
		return err
	}
	return nil
}

// logPad returns a range around v with margins: 5% of the span on a
// linear axis, a factor of 1.25 on a logarithmic one.
func logPad(v []float64, log bool) (lo, hi float64) {
	if !log {
		return paddedRange(v)
	}
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, x := range v {
		if x > 0 {
			lo, hi = math.Min(lo, x), math.Max(hi, x)
		}
	}
	if lo > hi {
		return 1, 10
	}
	return lo / 1.25, hi * 1.25
}

// ticks125 marks a logarithmic axis at 1, 2 and 5 times the powers of
// ten (labelled) and the other integer multiples (minor), so that a range
// of less than a decade still has labels.
type ticks125 struct{}

func (ticks125) Ticks(lo, hi float64) []plot.Tick {
	if !(lo > 0) || !(hi > lo) {
		return nil
	}
	var t []plot.Tick
	for e := math.Floor(math.Log10(lo)); e <= math.Ceil(math.Log10(hi)); e++ {
		p := math.Pow(10, e)
		for m := 1; m <= 9; m++ {
			v := float64(m) * p
			if v < lo || v > hi {
				continue
			}
			lab := ""
			if m == 1 || m == 2 || m == 5 {
				lab = strconv.FormatFloat(v, 'g', -1, 64)
			}
			t = append(t, plot.Tick{Value: v, Label: lab})
		}
	}
	return t
}
