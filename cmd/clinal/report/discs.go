package report

import (
	"image"
	"image/color"
	imgdraw "image/draw"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
)

// discs draws a scatter's points without offering their glyph boxes:
// gonum's Plot.Draw asks every GlyphBoxer for one box per point four times
// a canvas, to pad the axes so that no disc is clipped, and only the
// outermost boxes count. edgeBoxes gives those (the same padding, so the
// same figure) from four points. On a PNG canvas the discs and rings are
// stamped straight into the image (stampGlyphs): the vector path of each
// one through the rasterizer was most of a scatter figure's time.
type discs struct{ s *plotter.Scatter }

func (d discs) Plot(c draw.Canvas, p *plot.Plot) {
	// gonum wraps the canvas in draw.Canvas values (its padding does).
	v := c.Canvas
	for {
		w, ok := v.(draw.Canvas)
		if !ok {
			break
		}
		v = w.Canvas
	}
	if ic, ok := v.(*vgimg.Canvas); ok {
		if img, ok := ic.Image().(*image.RGBA); ok {
			trX, trY := p.Transforms(&c)
			stampGlyphs(img, ic.DPI(), d.s.XYs, trX, trY, d.s.GlyphStyle)
			return
		}
	}
	d.s.Plot(c, p)
}

// stampGlyphs draws a filled disc (draw.CircleGlyph) or a ring of 0.5 pt
// (draw.RingGlyph, as gonum strokes it) of the style's radius and colour
// at each point, over what is there, anti-aliased by each pixel's
// distance from the edge. Positions map as vgimg's canvas maps them: x
// and y in points times dpi/72, y from the bottom of the image.
func stampGlyphs(img *image.RGBA, dpi float64, pts plotter.XYs, trX, trY func(float64) vg.Length, sty draw.GlyphStyle) {
	r := sty.Radius.Dots(dpi)
	_, ring := sty.Shape.(draw.RingGlyph)
	half := vg.Points(0.5).Dots(dpi) / 2 // half the ring's line width
	reach := r + 1
	if ring {
		reach += half
	}
	size := int(math.Ceil(2*reach)) + 2
	mask := image.NewAlpha(image.Rect(0, 0, size, size))
	src := image.NewUniform(sty.Color)
	if sty.Color == nil {
		src = image.NewUniform(color.Black)
	}
	height := float64(img.Bounds().Dy())
	for _, pt := range pts {
		cx := trX(pt.X).Dots(dpi)
		cy := height - trY(pt.Y).Dots(dpi)
		if math.IsNaN(cx) || math.IsNaN(cy) || math.IsInf(cx, 0) || math.IsInf(cy, 0) {
			continue
		}
		x0, y0 := int(math.Floor(cx-reach)), int(math.Floor(cy-reach))
		for j := 0; j < size; j++ {
			dy := float64(y0+j) + 0.5 - cy
			for i := 0; i < size; i++ {
				dx := float64(x0+i) + 0.5 - cx
				d := math.Sqrt(dx*dx + dy*dy)
				var a float64
				if ring {
					a = half + 0.5 - math.Abs(d-r)
				} else {
					a = r + 0.5 - d
				}
				a = math.Min(1, math.Max(0, a))
				mask.Pix[j*mask.Stride+i] = uint8(a*255 + 0.5)
			}
		}
		rect := image.Rect(x0, y0, x0+size, y0+size)
		imgdraw.DrawMask(img, rect, src, image.Point{}, mask, image.Point{}, imgdraw.Over)
	}
}

// edgeBoxes is the glyph boxes of the leftmost, rightmost, lowest and
// highest points of a scatter whose glyphs all have the same size (the
// style's rectangle); it draws nothing.
type edgeBoxes struct {
	pts   plotter.XYs
	style draw.GlyphStyle
}

func (edgeBoxes) Plot(draw.Canvas, *plot.Plot) {}

func (e edgeBoxes) GlyphBoxes(p *plot.Plot) []plot.GlyphBox {
	out := make([]plot.GlyphBox, len(e.pts))
	for i, pt := range e.pts {
		out[i] = plot.GlyphBox{X: p.X.Norm(pt.X), Y: p.Y.Norm(pt.Y), Rectangle: e.style.Rectangle()}
	}
	return out
}

// extremes is the edgeBoxes of the points (xs[i], ys[i]).
func extremes(xs, ys []float64, style draw.GlyphStyle) edgeBoxes {
	e := edgeBoxes{style: style}
	if len(xs) == 0 {
		return e
	}
	lo, hi, bot, top := 0, 0, 0, 0
	for i := range xs {
		if xs[i] < xs[lo] {
			lo = i
		}
		if xs[i] > xs[hi] {
			hi = i
		}
		if ys[i] < ys[bot] {
			bot = i
		}
		if ys[i] > ys[top] {
			top = i
		}
	}
	for _, i := range [4]int{lo, hi, bot, top} {
		e.pts = append(e.pts, plotter.XY{X: xs[i], Y: ys[i]})
	}
	return e
}
