package report

import (
	"bytes"
	"fmt"
	"math"
	"strconv"

	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgsvg"
)

// On an SVG canvas gonum writes each disc as a path of its own through
// fmt (three Fprintf calls, a style built by string concatenation and an
// Sprintf of the colour per disc): half of a scatter figure's time. The
// discs write the same elements themselves, byte for byte (the path data
// of vgsvg's circle, %.5g numbers formatted by strconv as fmt does, the
// element's style taken from one disc drawn by gonum), into a batch; a
// placeholder path marks their place in gonum's output and svgDiscs.fill
// puts them there once the SVG is written. TestSVGDiscsMatchGonum holds
// whole figures to gonum's own bytes.

// svgPlaceholder is the path data of the placeholder (a move to NaN:
// nothing a figure draws, since the scatters leave out NaN points).
const svgPlaceholder = `<path d="MNaN,NaNZ"`

// svgDiscs collects the disc elements of one SVG figure, in drawing order.
type svgDiscs struct{ blocks [][]byte }

// draw writes the discs of sty at pts (canvas points) that c contains, as
// gonum's draw.Canvas.DrawGlyph would, and leaves a placeholder on the
// canvas. It reports false, having drawn nothing, for glyphs other than
// circles and rings.
func (s *svgDiscs) draw(c draw.Canvas, sty draw.GlyphStyle, pts []vg.Point) bool {
	_, disc := sty.Shape.(draw.CircleGlyph)
	_, ring := sty.Shape.(draw.RingGlyph)
	if !disc && !ring {
		return false
	}
	// The element's text around its path data: one disc drawn by gonum on
	// a scratch canvas, with the same style.
	scratch := vgsvg.New(10, 10)
	sc := draw.New(scratch)
	sc.DrawGlyphNoClip(sty, vg.Point{X: 5, Y: 5})
	var sb bytes.Buffer
	if _, err := scratch.WriteTo(&sb); err != nil {
		return false
	}
	one := sb.Bytes()
	start := bytes.LastIndex(one, []byte(`<path d="`))
	if start < 0 {
		return false
	}
	dStart := start + len(`<path d="`)
	dEnd := bytes.IndexByte(one[dStart:], '"')
	if dEnd < 0 {
		return false
	}
	dEnd += dStart
	end := bytes.IndexByte(one[dEnd:], '\n')
	if end < 0 {
		return false
	}
	head, tail := one[start:dStart], one[dEnd:dEnd+end+1]
	var out []byte
	r := sty.Radius.Points()
	rs := strconv.AppendFloat(nil, r, 'g', 5, 64)
	drawn := false
	for _, pt := range pts {
		if !c.Contains(pt) {
			continue
		}
		drawn = true
		out = append(out, head...)
		out = appendCirclePath(out, pt.X.Points(), pt.Y.Points(), r, rs)
		out = append(out, tail...)
	}
	if drawn {
		// The canvas state gonum's glyphs leave behind.
		c.SetColor(sty.Color)
		if ring {
			c.SetLineStyle(draw.LineStyle{Color: sty.Color, Width: vg.Points(0.5)})
		}
	}
	s.blocks = append(s.blocks, out)
	var p vg.Path
	p.Move(vg.Point{X: vg.Length(math.NaN()), Y: vg.Length(math.NaN())})
	p.Close()
	c.Fill(p)
	return true
}

// The sines and cosines of vgsvg's circle, whose two arcs end at angles
// 0 + 0.5*(2 pi) and 0 + 2 pi from a start of 0 (the same arithmetic).
var (
	arcSin0, arcCos0 = math.Sincos(0 + 0.5*(2*math.Pi))
	arcSin1, arcCos1 = math.Sincos(0 + 2*math.Pi)
)

// appendCirclePath appends vgsvg's path data for a circle glyph of radius
// r (rs formatted) at (x, y): the move to (x+r, y), then two half-circle
// arcs (vgsvg's circle, the same arithmetic in the same order).
func appendCirclePath(b []byte, x, y, r float64, rs []byte) []byte {
	b = append(b, 'M')
	b = appendG5(b, x+r)
	b = append(b, ',')
	b = appendG5(b, y)
	for _, e := range [2][2]float64{{x + r*arcCos0, y + r*arcSin0}, {x + r*arcCos1, y + r*arcSin1}} {
		b = append(b, 'A')
		b = append(b, rs...)
		b = append(b, ',')
		b = append(b, rs...)
		b = append(b, " 0 1 1 "...)
		b = appendG5(b, e[0])
		b = append(b, ',')
		b = appendG5(b, e[1])
	}
	return append(b, 'Z')
}

// appendG5 is fmt's %.5g (vgsvg's precision) of a finite v.
func appendG5(b []byte, v float64) []byte { return strconv.AppendFloat(b, v, 'g', 5, 64) }

// fill puts the collected elements in place of the placeholders of svg,
// in order. Each draw left one placeholder; a count that differs means
// the SVG is not what the discs drew on, and is an error.
func (s *svgDiscs) fill(svg []byte) ([]byte, error) {
	if len(s.blocks) == 0 {
		return svg, nil
	}
	if n := bytes.Count(svg, []byte(svgPlaceholder)); n != len(s.blocks) {
		return nil, fmt.Errorf("svg discs: %d placeholders for %d groups", n, len(s.blocks))
	}
	size := len(svg)
	for _, b := range s.blocks {
		size += len(b)
	}
	out := make([]byte, 0, size)
	rest := svg
	for _, blk := range s.blocks {
		i := bytes.Index(rest, []byte(svgPlaceholder))
		j := bytes.IndexByte(rest[i:], '\n')
		if j < 0 {
			return nil, fmt.Errorf("svg discs: unterminated placeholder")
		}
		out = append(out, rest[:i]...)
		out = append(out, blk...)
		rest = rest[i+j+1:]
	}
	s.blocks = nil
	return append(out, rest...), nil
}
