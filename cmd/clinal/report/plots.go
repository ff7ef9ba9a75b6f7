package report

import (
	"bytes"
	"fmt"
	"image"
	"image/color"
	"math"
	"sort"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"
)

// Plot sizes (points) and the PNG resolution.
const (
	scatterW, scatterH = 4.4 * vg.Inch, 3.6 * vg.Inch
	screeW, screeH     = 4.8 * vg.Inch, 3.4 * vg.Inch
	histW, histH       = 5.2 * vg.Inch, 3.2 * vg.Inch
	pngDPI             = 144
	markRadius         = vg.Millimeter // disc radius of a sample
	swatchSide         = 7             // legend square, points
)

// figure is one rendered plot: its SVG (for inline use and the .svg copy)
// and PNG bytes.
type figure struct {
	Key     string // file-name part: scree, pc12, pc34, ...
	Title   string
	Caption string
	SVG     []byte
	PNG     []byte
}

// render draws with fn onto an SVG and a PNG canvas of the given size.
func render(w, h vg.Length, fn func(dc draw.Canvas)) (svg, png []byte, err error) {
	defer func() {
		// gonum's canvases panic on impossible geometry; report it.
		if r := recover(); r != nil {
			err = fmt.Errorf("plot: %v", r)
		}
	}()
	sc := vgsvg.New(w, h)
	paint(sc, w, h, fn)
	var sb bytes.Buffer
	if _, err := sc.WriteTo(&sb); err != nil {
		return nil, nil, fmt.Errorf("svg: %w", err)
	}
	// The image starts white (UseBackgroundColor); a white rectangle
	// rasterized over it changed no pixel and took a tenth of a figure's
	// time.
	ic := vgimg.NewWith(vgimg.UseWH(w, h), vgimg.UseDPI(pngDPI), vgimg.UseBackgroundColor(color.White))
	fn(draw.New(ic))
	var pb bytes.Buffer
	if img, ok := ic.Image().(*image.RGBA); ok {
		err = writePNG(&pb, img)
	} else {
		_, err = (vgimg.PngCanvas{Canvas: ic}).WriteTo(&pb)
	}
	if err != nil {
		return nil, nil, fmt.Errorf("png: %w", err)
	}
	return sb.Bytes(), pb.Bytes(), nil
}

// paint fills the canvas white and draws on it with fn. The plots leave
// their own background out (newPlot): this fill is the only one.
func paint(c vg.CanvasSizer, w, h vg.Length, fn func(dc draw.Canvas)) {
	dc := draw.New(c)
	dc.SetColor(color.White)
	dc.Fill(dc.Rectangle.Path())
	fn(dc)
}

// newPlot is plot.New without a background fill of its own: the canvas is
// white already (render), and on the PNG canvas the fill was a full
// rectangle through the rasterizer for no change of pixel.
func newPlot() *plot.Plot {
	p := plot.New()
	p.BackgroundColor = nil
	return p
}

// sans sets every text of p to the sans-serif face, easier to read small.
func sans(p *plot.Plot) {
	for _, f := range []*plot.Axis{&p.X, &p.Y} {
		f.Label.TextStyle.Font.Variant = "Sans"
		f.Tick.Label.Font.Variant = "Sans"
	}
	p.Title.TextStyle.Font.Variant = "Sans"
	p.Legend.TextStyle.Font.Variant = "Sans"
}

// groupSet assigns each sample a legend entry.
type groupSet struct {
	names []string // legend order; empty when no sample has a label
	of    []int    // per sample: index into names (0 when names is empty)
}

// makeGroups sorts the distinct non-empty labels naturally (isle2 before
// isle10) and puts unlabelled samples last.
func makeGroups(labels []string, n int) groupSet {
	gs := groupSet{of: make([]int, n)}
	if len(labels) != n {
		return gs
	}
	seen := map[string]bool{}
	unl := false
	for _, g := range labels {
		if g == "" {
			unl = true
		} else if !seen[g] {
			seen[g] = true
			gs.names = append(gs.names, g)
		}
	}
	if len(gs.names) == 0 {
		return gs
	}
	sort.Slice(gs.names, func(i, j int) bool { return naturalLess(gs.names[i], gs.names[j]) })
	if unl {
		gs.names = append(gs.names, UnlabelledName)
	}
	idx := make(map[string]int, len(gs.names))
	for i, g := range gs.names {
		idx[g] = i
	}
	for i, g := range labels {
		if g == "" {
			g = UnlabelledName
		}
		gs.of[i] = idx[g]
	}
	return gs
}

// style returns the colour and hollowness of legend entry i.
func (gs groupSet) style(i int) (color.Color, bool) {
	if len(gs.names) == 0 {
		return palette[1], false
	}
	if gs.names[i] == UnlabelledName && i == len(gs.names)-1 {
		return Unlabelled(), false
	}
	return palette[i%len(palette)], i >= len(palette)
}

// naturalLess orders strings with digit runs compared as numbers.
func naturalLess(a, b string) bool {
	for a != "" && b != "" {
		da, db := digits(a), digits(b)
		if da > 0 && db > 0 {
			na, _ := strconv.ParseUint(a[:da], 10, 64)
			nb, _ := strconv.ParseUint(b[:db], 10, 64)
			if na != nb {
				return na < nb
			}
			a, b = a[da:], b[db:]
			continue
		}
		if a[0] != b[0] {
			return a[0] < b[0]
		}
		a, b = a[1:], b[1:]
	}
	return len(a) < len(b)
}

func digits(s string) int {
	n := 0
	for n < len(s) && n < 18 && s[n] >= '0' && s[n] <= '9' {
		n++
	}
	return n
}

// swatch is a legend thumbnail: a filled (or outlined) square, so that
// the only discs in a scatter plot are the samples.
type swatch struct {
	c      color.Color
	hollow bool
}

func (s swatch) Thumbnail(c *draw.Canvas) {
	ctr := c.Center()
	h := vg.Length(swatchSide) / 2
	r := vg.Rectangle{Min: vg.Point{X: ctr.X - h, Y: ctr.Y - h}, Max: vg.Point{X: ctr.X + h, Y: ctr.Y + h}}
	if s.hollow {
		c.StrokeLines(draw.LineStyle{Color: s.c, Width: vg.Points(1.2)},
			[]vg.Point{r.Min, {X: r.Max.X, Y: r.Min.Y}, r.Max, {X: r.Min.X, Y: r.Max.Y}, r.Min})
		return
	}
	c.SetColor(s.c)
	c.Fill(r.Path())
}

// pcLabel is the axis label of PC j (0-based): "PC1 (12.34%)" with the
// share 100*eigenvalue/trace, the same number as spectrum.tsv's
// variance_fraction times 100.
func pcLabel(in *PCAInput, j int) string {
	if j < len(in.Eigenvalues) && in.Trace > 0 && !math.IsNaN(in.Trace) {
		return fmt.Sprintf("PC%d (%.2f%%)", j+1, 100*in.Eigenvalues[j]/in.Trace)
	}
	return fmt.Sprintf("PC%d", j+1)
}

// paddedRange returns [lo, hi] widened by 5% of the span on each side (a
// unit interval around a constant).
func paddedRange(v []float64) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, x := range v {
		if !math.IsNaN(x) && !math.IsInf(x, 0) {
			lo, hi = math.Min(lo, x), math.Max(hi, x)
		}
	}
	if lo > hi {
		return -1, 1
	}
	pad := 0.05 * (hi - lo)
	if pad == 0 {
		pad = math.Max(math.Abs(lo)*0.05, 0.5)
	}
	return lo - pad, hi + pad
}

// scatterFigure plots PC a against PC b (0-based) for the samples in
// show, coloured by group, with the legend in a strip to the right.
func scatterFigure(in *PCAInput, gs groupSet, show []int, a, b int, key string) (*figure, error) {
	p := newPlot()
	sans(p)
	p.Title.Text = fmt.Sprintf("PC%d vs PC%d", a+1, b+1)
	p.X.Label.Text = pcLabel(in, a)
	p.Y.Label.Text = pcLabel(in, b)
	ngroups := max(1, len(gs.names))
	pts := make([]plotter.XYs, ngroups)
	xs, ys := make([]float64, 0, len(show)), make([]float64, 0, len(show))
	for _, i := range show {
		x, y := in.Scores[i][a], in.Scores[i][b]
		if math.IsNaN(x) || math.IsNaN(y) || math.IsInf(x, 0) || math.IsInf(y, 0) {
			continue
		}
		g := gs.of[i]
		pts[g] = append(pts[g], plotter.XY{X: x, Y: y})
		xs, ys = append(xs, x), append(ys, y)
	}
	var sd svgDiscs
	leg := plot.NewLegend()
	leg.TextStyle.Font.Variant = "Sans"
	leg.Top, leg.Left = true, true
	leg.Padding = vg.Points(3)
	for g := range ngroups {
		col, hollow := gs.style(g)
		if len(pts[g]) > 0 {
			s, err := plotter.NewScatter(pts[g])
			if err != nil {
				return nil, fmt.Errorf("scatter %s: %w", key, err)
			}
			s.GlyphStyle = draw.GlyphStyle{Color: col, Radius: markRadius, Shape: draw.CircleGlyph{}}
			if hollow {
				s.GlyphStyle.Shape = draw.RingGlyph{}
			}
			p.Add(discs{s: s, svg: &sd})
		}
		if len(gs.names) > 0 {
			leg.Add(fmt.Sprintf("%s (%d)", gs.names[g], len(pts[g])), swatch{c: col, hollow: hollow})
		}
	}
	p.Add(extremes(xs, ys, draw.GlyphStyle{Radius: markRadius, Shape: draw.CircleGlyph{}}))
	p.X.Min, p.X.Max = paddedRange(xs)
	p.Y.Min, p.Y.Max = paddedRange(ys)
	legW := vg.Length(0)
	if len(gs.names) > 0 {
		for _, n := range gs.names {
			legW = max(legW, leg.TextStyle.Width(n+" (0000000)"))
		}
		legW += leg.ThumbnailWidth + 12
	}
	svg, png, err := render(scatterW+legW, scatterH, func(dc draw.Canvas) {
		p.Draw(draw.Crop(dc, 0, -legW, 0, 0))
		if legW > 0 {
			lc := draw.Crop(dc, scatterW+4, 0, 0, -p.Title.TextStyle.Height(p.Title.Text)-8)
			leg.Draw(lc)
		}
	})
	if err != nil {
		return nil, fmt.Errorf("scatter %s: %w", key, err)
	}
	if svg, err = sd.fill(svg); err != nil {
		return nil, fmt.Errorf("scatter %s: %w", key, err)
	}
	return &figure{Key: key, Title: p.Title.Text, SVG: svg, PNG: png}, nil
}

// screeFigure plots the eigenvalues against PC number with a dashed line
// at the Marchenko-Pastur upper edge (the largest eigenvalue expected from
// unstructured noise, design: null spectrum).
func screeFigure(in *PCAInput) (*figure, error) {
	p := newPlot()
	sans(p)
	p.Title.Text = "Scree plot"
	p.X.Label.Text = "PC"
	p.Y.Label.Text = "eigenvalue"
	k := len(in.Eigenvalues)
	xy := make(plotter.XYs, 0, k)
	top := 0.0
	for j, ev := range in.Eigenvalues {
		if math.IsNaN(ev) || math.IsInf(ev, 0) {
			continue
		}
		xy = append(xy, plotter.XY{X: float64(j + 1), Y: ev})
		top = math.Max(top, ev)
	}
	if len(xy) > 0 {
		l, s, err := plotter.NewLinePoints(xy)
		if err != nil {
			return nil, fmt.Errorf("scree: %w", err)
		}
		l.Color = palette[1]
		s.GlyphStyle = draw.GlyphStyle{Color: palette[1], Radius: markRadius * 1.2, Shape: draw.CircleGlyph{}}
		p.Add(l, s)
		p.Legend.Add("eigenvalue", l, s)
	}
	if in.MPEdge > 0 && !math.IsInf(in.MPEdge, 0) {
		edge, err := plotter.NewLine(plotter.XYs{{X: 0.5, Y: in.MPEdge}, {X: float64(k) + 0.5, Y: in.MPEdge}})
		if err != nil {
			return nil, fmt.Errorf("scree: %w", err)
		}
		edge.Color = palette[2]
		edge.Width = vg.Points(1.5)
		edge.Dashes = []vg.Length{vg.Points(6), vg.Points(3)}
		p.Add(edge)
		p.Legend.Add(fmt.Sprintf("Marchenko-Pastur edge %.4g", in.MPEdge), edge)
		top = math.Max(top, in.MPEdge)
	}
	// Legend text left-aligned from a fifth of the width: PC1, the highest
	// point, sits at the left, and a browser that substitutes a wider face
	// for the SVG's Liberation Sans only lengthens the text to the right.
	p.Legend.Top, p.Legend.Left = true, true
	p.Legend.XOffs = screeW * 0.2
	p.X.Min, p.X.Max = 0.5, float64(k)+0.5
	p.Y.Min, p.Y.Max = 0, top*1.2
	if top == 0 {
		p.Y.Max = 1
	}
	p.X.Tick.Marker = intTicks(k)
	svg, png, err := render(screeW, screeH, func(dc draw.Canvas) { p.Draw(dc) })
	if err != nil {
		return nil, fmt.Errorf("scree: %w", err)
	}
	return &figure{Key: "scree", Title: p.Title.Text, SVG: svg, PNG: png}, nil
}

// intTicks labels PC numbers 1..k, thinned to about ten labels.
func intTicks(k int) plot.Ticker {
	step := 1
	for k/step > 12 {
		switch {
		case step == 1:
			step = 2
		case step == 2:
			step = 5
		default:
			step *= 2
		}
	}
	var t plot.ConstantTicks
	for j := 1; j <= k; j++ {
		lab := ""
		if j == 1 || j%step == 0 {
			lab = strconv.Itoa(j)
		}
		t = append(t, plot.Tick{Value: float64(j), Label: lab})
	}
	return t
}

// histFigure draws a pre-binned histogram.
func histFigure(h *Histogram) (*figure, error) {
	p := newPlot()
	sans(p)
	p.Title.Text = h.Title
	p.X.Label.Text = h.XLabel
	p.Y.Label.Text = "count"
	nb := len(h.Counts)
	if nb == 0 || !(h.Max > h.Min) {
		return nil, fmt.Errorf("histogram %s: no bins", h.Name)
	}
	w := (h.Max - h.Min) / float64(nb)
	hist := &plotter.Histogram{Width: w, FillColor: palette[5], LineStyle: draw.LineStyle{Color: color.White, Width: vg.Points(0.5)}}
	top := 0.0
	for i, c := range h.Counts {
		lo := h.Min + float64(i)*w
		hist.Bins = append(hist.Bins, plotter.HistogramBin{Min: lo, Max: lo + w, Weight: float64(c)})
		top = math.Max(top, float64(c))
	}
	p.Add(hist)
	p.X.Min, p.X.Max = h.Min, h.Max
	p.Y.Min, p.Y.Max = 0, math.Max(1, top*1.05)
	svg, png, err := render(histW, histH, func(dc draw.Canvas) { p.Draw(dc) })
	if err != nil {
		return nil, fmt.Errorf("histogram %s: %w", h.Name, err)
	}
	return &figure{Key: h.Name, Title: h.Title, SVG: svg, PNG: png}, nil
}
