package report

import (
	"bytes"
	"image"
	"image/color"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"
)

// TestStampGlyphsMatchGonum draws the same scatter of discs and of rings
// twice on a PNG canvas: with gonum's own glyphs (vector paths through its
// rasterizer, the reference library) and with discs' stamps. The images
// may differ only in the anti-aliasing of the edges: no channel of any
// pixel by more than 48 of 255, and by at most 1 of 255 on average (a
// glyph misplaced or of another size differs by far more; measured: 27
// and 28 of 255 at most, 0.09 and 0.23 on average).
func TestStampGlyphsMatchGonum(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	pts := make(plotter.XYs, 400)
	for i := range pts {
		pts[i] = plotter.XY{X: r.NormFloat64(), Y: r.NormFloat64()}
	}
	for _, shape := range []draw.GlyphDrawer{draw.CircleGlyph{}, draw.RingGlyph{}} {
		draws := func(stamp bool) *image.RGBA {
			p := plot.New()
			s, err := plotter.NewScatter(pts)
			if err != nil {
				t.Fatal(err)
			}
			s.GlyphStyle = draw.GlyphStyle{Color: color.NRGBA{0x20, 0x60, 0xc0, 0xff}, Radius: markRadius, Shape: shape}
			if stamp {
				p.Add(discs{s: s})
			} else {
				p.Add(s)
			}
			p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = -4, 4, -4, 4
			ic := vgimg.NewWith(vgimg.UseWH(4*vg.Inch, 3*vg.Inch), vgimg.UseDPI(pngDPI), vgimg.UseBackgroundColor(color.White))
			p.Draw(draw.New(ic))
			return ic.Image().(*image.RGBA)
		}
		ref, got := draws(false), draws(true)
		worst, sum := 0, 0
		for i := range ref.Pix {
			d := int(ref.Pix[i]) - int(got.Pix[i])
			d = max(d, -d)
			worst = max(worst, d)
			sum += d
		}
		mean := float64(sum) / float64(len(ref.Pix))
		if worst > 48 || mean > 1 {
			t.Errorf("%T: pixels differ from gonum's by up to %d of 255, %.3f on average (want at most 48 and 1)", shape, worst, mean)
		}
		t.Logf("%T: pixels differ from gonum's by up to %d of 255, %.3f on average", shape, worst, mean)
	}
}

// TestSVGDiscsMatchGonum: the SVG discs clinal writes itself (svgDiscs)
// are gonum's own output byte for byte (the reference is gonum's vgsvg
// drawing the same plotter.Scatter): filled discs and rings, several
// groups in drawing order, points on the canvas edge and beyond it (which
// gonum leaves out), groups wholly outside (a disc group, then a ring
// group: gonum draws nothing for them), a group with no points, and a line
// drawn after them all.
func TestSVGDiscsMatchGonum(t *testing.T) {
	type group struct {
		shape draw.GlyphDrawer
		col   color.Color
		n     int
		span  float64
		edge  bool // add points on the corner and beyond the canvas
		away  bool // only points beyond the canvas
	}
	groups := []group{
		{draw.CircleGlyph{}, color.NRGBA{0x4B, 0x0F, 0xE1, 0xFF}, 400, 3, true, false},
		{draw.RingGlyph{}, Unlabelled(), 200, 5, false, false}, // partly beyond the axes
		{draw.CircleGlyph{}, color.NRGBA{0xE1, 0x6A, 0x0F, 0xFF}, 300, 2, true, false},
		{draw.CircleGlyph{}, color.NRGBA{0x10, 0x80, 0x10, 0xFF}, 0, 1, false, true},
		{draw.RingGlyph{}, color.NRGBA{0x80, 0x10, 0x10, 0xFF}, 0, 1, false, true},
		{draw.CircleGlyph{}, color.NRGBA{0x10, 0x10, 0x80, 0xFF}, 0, 1, false, false},
	}
	draws := func(fast bool) []byte {
		p := plot.New()
		var sd svgDiscs
		rr := rand.New(rand.NewPCG(8, 2))
		for _, g := range groups {
			pts := make(plotter.XYs, g.n)
			for i := range pts {
				pts[i] = plotter.XY{X: g.span * rr.NormFloat64(), Y: g.span * rr.NormFloat64()}
			}
			if g.edge {
				pts = append(pts, plotter.XY{X: 4, Y: -4}, plotter.XY{X: 40, Y: 0})
			}
			if g.away {
				pts = append(pts, plotter.XY{X: 40, Y: 40}, plotter.XY{X: -40, Y: 3})
			}
			s := &plotter.Scatter{XYs: pts}
			s.GlyphStyle = draw.GlyphStyle{Color: g.col, Radius: markRadius, Shape: g.shape}
			d := discs{s: s}
			if fast {
				d.svg = &sd
			}
			p.Add(d)
		}
		p.Add(plotter.NewFunction(func(x float64) float64 { return x / 2 }))
		p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = -4, 4, -4, 4
		sc := vgsvg.New(4*vg.Inch, 3*vg.Inch)
		p.Draw(draw.New(sc))
		var b bytes.Buffer
		if _, err := sc.WriteTo(&b); err != nil {
			t.Fatal(err)
		}
		out, err := sd.fill(b.Bytes())
		if err != nil {
			t.Fatal(err)
		}
		return out
	}
	want, got := draws(false), draws(true)
	if !bytes.Equal(got, want) {
		i := 0
		for i < len(got) && i < len(want) && got[i] == want[i] {
			i++
		}
		lo := max(0, i-80)
		t.Fatalf("SVG differs from gonum's at byte %d:\n got %q\nwant %q", i, got[lo:min(len(got), i+80)], want[lo:min(len(want), i+80)])
	}
	if n := bytes.Count(got, []byte("<path")); n < 500 {
		t.Errorf("%d paths: the discs were not drawn", n)
	}
	if bytes.Contains(got, []byte("NaN")) {
		t.Error("a placeholder is left in the SVG")
	}
	// An SVG with fewer placeholders than drawn groups is refused.
	sd := svgDiscs{blocks: [][]byte{[]byte("a"), []byte("b")}}
	if _, err := sd.fill([]byte(svgPlaceholder + " />\n")); err == nil {
		t.Error("fill accepted 1 placeholder for 2 groups")
	}
}
