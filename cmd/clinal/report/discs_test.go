package report

import (
	"image"
	"image/color"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
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
				p.Add(discs{s})
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
