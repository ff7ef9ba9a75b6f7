package report

import (
	"encoding/xml"
	"fmt"
	"io"
	"math"
	"regexp"
	"strconv"
	"strings"
)

// The tests read the plots back as a browser would: they parse the SVG
// markup (W3C SVG 1.1 path syntax) with encoding/xml and classify the
// shapes. gonum's vgsvg writes paths in a bottom-left origin under one
// flipping transform; coordinates below are in that frame (y grows up).

// mark is a full circle (a sample disc or ring): centre, radius, colour.
type mark struct {
	x, y, r float64
	color   string // "#RRGGBB" of the fill, or of the stroke for a ring
	hollow  bool
}

// rect is an axis-aligned rectangle path (legend swatches, histogram bars).
type rect struct {
	x0, y0, x1, y1 float64
	color          string
	hollow         bool
}

// seg is a two-point stroked line (axes, ticks, reference lines).
type seg struct {
	x0, y0, x1, y1 float64
	color          string
	dashed         bool
}

// svgText is a text element: its anchor (already in the y-up frame) and
// content.
type svgText struct {
	x, y float64
	s    string
}

type svgShapes struct {
	marks []mark
	rects []rect
	segs  []seg
	texts []svgText
}

var (
	num      = `(-?[0-9.]+(?:e[-+]?[0-9]+)?)`
	circleRE = regexp.MustCompile(`^M` + num + `,` + num + `A` + num + `,` + num + ` 0 1 1 ` + num + `,` + num +
		`A` + num + `,` + num + ` 0 1 1 ` + num + `,` + num + `Z?$`)
	rectRE = regexp.MustCompile(`^M` + num + `,` + num + `L` + num + `,` + num + `L` + num + `,` + num + `L` + num + `,` + num + `(?:L` + num + `,` + num + `)?Z?$`)
	segRE  = regexp.MustCompile(`^M` + num + `,` + num + `L` + num + `,` + num + `$`)
	colRE  = regexp.MustCompile(`(^|;)(fill|stroke):(#[0-9A-Fa-f]{6}|none)`)
)

func atof(s string) float64 {
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		panic(err)
	}
	return v
}

// parseSVG extracts the shapes of an SVG document or of an <svg> element
// serialized inside HTML (a browser's DOM dump).
func parseSVG(r io.Reader) (*svgShapes, error) {
	d := xml.NewDecoder(r)
	d.Strict = false
	d.AutoClose = xml.HTMLAutoClose
	d.Entity = xml.HTMLEntity
	out := &svgShapes{}
	var inText bool
	var cur svgText
	for {
		tok, err := d.Token()
		if err == io.EOF {
			return out, nil
		}
		if err != nil {
			return nil, err
		}
		switch t := tok.(type) {
		case xml.StartElement:
			attr := map[string]string{}
			for _, a := range t.Attr {
				attr[a.Name.Local] = a.Value
			}
			switch t.Name.Local {
			case "path":
				out.addPath(attr["d"], attr["style"])
			case "text":
				inText = true
				cur = svgText{x: atofOr(attr["x"]), y: -atofOr(attr["y"])} // text is drawn under scale(1, -1)
			}
		case xml.CharData:
			if inText {
				cur.s += string(t)
			}
		case xml.EndElement:
			if t.Name.Local == "text" && inText {
				cur.s = strings.TrimSpace(cur.s)
				out.texts = append(out.texts, cur)
				inText = false
			}
		}
	}
}

func atofOr(s string) float64 {
	v, err := strconv.ParseFloat(strings.TrimSpace(s), 64)
	if err != nil {
		return math.NaN()
	}
	return v
}

func (o *svgShapes) addPath(d, style string) {
	fill, stroke := "", ""
	for _, m := range colRE.FindAllStringSubmatch(style, -1) {
		if m[2] == "fill" {
			fill = strings.ToUpper(m[3])
		} else {
			stroke = strings.ToUpper(m[3])
		}
	}
	hollow := fill == "NONE" || fill == ""
	col := fill
	if hollow {
		col = stroke
	}
	if m := circleRE.FindStringSubmatch(d); m != nil {
		r := atof(m[3])
		o.marks = append(o.marks, mark{x: atof(m[1]) - r, y: atof(m[2]), r: r, color: col, hollow: hollow})
		return
	}
	if m := rectRE.FindStringSubmatch(d); m != nil {
		xs := []float64{atof(m[1]), atof(m[3]), atof(m[5]), atof(m[7])}
		ys := []float64{atof(m[2]), atof(m[4]), atof(m[6]), atof(m[8])}
		// Axis-aligned only: every corner shares x with one neighbour and y with the other.
		ok := true
		for i := range 4 {
			j := (i + 1) % 4
			if xs[i] != xs[j] && ys[i] != ys[j] {
				ok = false
			}
		}
		if ok {
			o.rects = append(o.rects, rect{x0: minf(xs), y0: minf(ys), x1: maxf(xs), y1: maxf(ys), color: col, hollow: hollow})
		}
		return
	}
	if m := segRE.FindStringSubmatch(d); m != nil {
		o.segs = append(o.segs, seg{x0: atof(m[1]), y0: atof(m[2]), x1: atof(m[3]), y1: atof(m[4]),
			color: stroke, dashed: strings.Contains(style, "stroke-dasharray") && !strings.Contains(style, "stroke-dasharray:none")})
	}
}

func minf(v []float64) float64 {
	m := math.Inf(1)
	for _, x := range v {
		m = math.Min(m, x)
	}
	return m
}

func maxf(v []float64) float64 {
	m := math.Inf(-1)
	for _, x := range v {
		m = math.Max(m, x)
	}
	return m
}

// axes returns the horizontal and the vertical axis lines: the longest
// solid horizontal and vertical segments.
func (o *svgShapes) axes() (x, y seg, err error) {
	var bx, by float64
	for _, s := range o.segs {
		if s.dashed {
			continue
		}
		if s.y0 == s.y1 && math.Abs(s.x1-s.x0) > bx {
			bx, x = math.Abs(s.x1-s.x0), s
		}
		if s.x0 == s.x1 && math.Abs(s.y1-s.y0) > by {
			by, y = math.Abs(s.y1-s.y0), s
		}
	}
	if bx == 0 || by == 0 {
		return x, y, fmt.Errorf("no axis lines among %d segments", len(o.segs))
	}
	return x, y, nil
}

// fitLine fits px = a*v + b by least squares and returns the largest
// absolute residual.
func fitLine(v, px []float64) (a, b, maxRes float64) {
	n := float64(len(v))
	var sv, sp, svv, svp float64
	for i := range v {
		sv += v[i]
		sp += px[i]
		svv += v[i] * v[i]
		svp += v[i] * px[i]
	}
	a = (n*svp - sv*sp) / (n*svv - sv*sv)
	b = (sp - a*sv) / n
	for i := range v {
		maxRes = math.Max(maxRes, math.Abs(a*v[i]+b-px[i]))
	}
	return a, b, maxRes
}
