package report

import (
	"image"
	"image/color"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"
)

// discs draws a scatter's points without offering their glyph boxes:
// gonum's Plot.Draw asks every GlyphBoxer for one box per point four times
// a canvas, to pad the axes so that no disc is clipped, and only the
// outermost boxes count. edgeBoxes gives those (the same padding, so the
// same figure) from four points. On a PNG canvas the discs and rings are
// stamped straight into the image (stampGlyphs): the vector path of each
// one through the rasterizer was most of a scatter figure's time.
type discs struct {
	s   *plotter.Scatter
	svg *svgDiscs // where the SVG canvas's discs go (nil: gonum draws them)
}

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
	switch vc := v.(type) {
	case *vgimg.Canvas:
		if img, ok := vc.Image().(*image.RGBA); ok {
			trX, trY := p.Transforms(&c)
			stampGlyphs(img, vc.DPI(), d.s.XYs, trX, trY, d.s.GlyphStyle)
			return
		}
	case *vgsvg.Canvas:
		if d.svg != nil && d.s.GlyphStyleFunc == nil {
			trX, trY := p.Transforms(&c)
			pts := make([]vg.Point, len(d.s.XYs))
			for i, xy := range d.s.XYs {
				pts[i] = vg.Point{X: trX(xy.X), Y: trY(xy.Y)}
			}
			if d.svg.draw(c, d.s.GlyphStyle, pts) {
				return
			}
		}
	}
	d.s.Plot(c, p)
}

// stampGlyphs draws a filled disc (draw.CircleGlyph) or a ring of 0.5 pt
// (draw.RingGlyph, as gonum strokes it) of the style's radius and colour
// at each point, over what is there, anti-aliased by each pixel's
// distance from the edge. Positions map as vgimg's canvas maps them: x
// and y in points times dpi/72, y from the bottom of the image. The
// coverage masks are made once per sixteenth of a pixel of the centre's
// position (256 of them) and blended straight into the pixels.
func stampGlyphs(img *image.RGBA, dpi float64, pts plotter.XYs, trX, trY func(float64) vg.Length, sty draw.GlyphStyle) {
	r := sty.Radius.Dots(dpi)
	_, ring := sty.Shape.(draw.RingGlyph)
	half := vg.Points(0.5).Dots(dpi) / 2 // half the ring's line width
	reach := r + 1
	if ring {
		reach += half
	}
	size := int(math.Ceil(2*reach)) + 2
	const sub = 16
	var masks [sub * sub][]uint8
	mask := func(fx, fy int) []uint8 {
		m := masks[fy*sub+fx]
		if m != nil {
			return m
		}
		m = make([]uint8, size*size)
		// The centre sits at (reach + fx/sub, reach + fy/sub) from the
		// mask's corner.
		cx, cy := reach+float64(fx)/sub, reach+float64(fy)/sub
		for j := 0; j < size; j++ {
			dy := float64(j) + 0.5 - cy
			for i := 0; i < size; i++ {
				dx := float64(i) + 0.5 - cx
				d := math.Sqrt(dx*dx + dy*dy)
				a := r + 0.5 - d
				if ring {
					a = half + 0.5 - math.Abs(d-r)
				}
				m[j*size+i] = uint8(math.Min(1, math.Max(0, a))*255 + 0.5)
			}
		}
		masks[fy*sub+fx] = m
		return m
	}
	col := sty.Color
	if col == nil {
		col = color.Black
	}
	sr, sg, sb, sa := col.RGBA() // premultiplied, 16 bits
	height := float64(img.Bounds().Dy())
	b := img.Bounds()
	for _, pt := range pts {
		px := trX(pt.X).Dots(dpi) - reach
		py := height - trY(pt.Y).Dots(dpi) - reach
		if math.IsNaN(px) || math.IsNaN(py) || math.IsInf(px, 0) || math.IsInf(py, 0) {
			continue
		}
		// The corner to the nearest sixteenth of a pixel: whole pixels and
		// the mask of the remaining sixteenths.
		qx, qy := int(math.Floor(px*sub+0.5)), int(math.Floor(py*sub+0.5))
		x0, y0 := qx>>4, qy>>4 // sub = 16: floor division
		m := mask(qx&(sub-1), qy&(sub-1))
		for j := 0; j < size; j++ {
			y := y0 + j
			if y < b.Min.Y || y >= b.Max.Y {
				continue
			}
			for i := 0; i < size; i++ {
				x := x0 + i
				a := uint32(m[j*size+i])
				if a == 0 || x < b.Min.X || x >= b.Max.X {
					continue
				}
				// Porter-Duff over, as image/draw's DrawMask with a uniform
				// source: dst = src*a + dst*(1 - sa*a).
				a *= 0x101
				o := img.PixOffset(x, y)
				p := img.Pix[o : o+4 : o+4]
				inv := 0xffff - sa*a/0xffff
				p[0] = uint8((uint32(p[0])*0x101*inv + sr*a) / 0xffff >> 8)
				p[1] = uint8((uint32(p[1])*0x101*inv + sg*a) / 0xffff >> 8)
				p[2] = uint8((uint32(p[2])*0x101*inv + sb*a) / 0xffff >> 8)
				p[3] = uint8((uint32(p[3])*0x101*inv + sa*a) / 0xffff >> 8)
			}
		}
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
