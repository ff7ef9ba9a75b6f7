package report

import (
	"fmt"
	"image/color"
	"math"
	"testing"
)

// Colour-vision-deficiency simulation matrices of Machado, Oliveira &
// Fernandes 2009 (IEEE TVCG 15:1291, table of severity 1.0), applied to
// linear RGB (from memory).
var machado = map[string][3][3]float64{
	"normal": {{1, 0, 0}, {0, 1, 0}, {0, 0, 1}},
	"protanopia": {{0.152286, 1.052583, -0.204868},
		{0.114503, 0.786281, 0.099216},
		{-0.003882, -0.048116, 1.051998}},
	"deuteranopia": {{0.367322, 0.860646, -0.227968},
		{0.280085, 0.672501, 0.047413},
		{-0.011820, 0.042940, 0.968881}},
	"tritanopia": {{1.255528, -0.076749, -0.178779},
		{-0.078411, 0.930809, 0.147602},
		{0.004733, 0.691367, 0.303900}},
}

// srgbToLinear is the sRGB transfer function inverse (IEC 61966-2-1).
func srgbToLinear(c uint8) float64 {
	v := float64(c) / 255
	if v <= 0.04045 {
		return v / 12.92
	}
	return math.Pow((v+0.055)/1.055, 2.4)
}

// linearToLab converts linear sRGB to CIELAB under D65 (CIE 15:2004; the
// sRGB-to-XYZ matrix of IEC 61966-2-1).
func linearToLab(rgb [3]float64) [3]float64 {
	for i := range rgb {
		rgb[i] = math.Min(1, math.Max(0, rgb[i]))
	}
	x := 0.4124*rgb[0] + 0.3576*rgb[1] + 0.1805*rgb[2]
	y := 0.2126*rgb[0] + 0.7152*rgb[1] + 0.0722*rgb[2]
	z := 0.0193*rgb[0] + 0.1192*rgb[1] + 0.9505*rgb[2]
	f := func(t float64) float64 {
		const d = 6.0 / 29
		if t > d*d*d {
			return math.Cbrt(t)
		}
		return t/(3*d*d) + 4.0/29
	}
	fx, fy, fz := f(x/0.95047), f(y/1.0), f(z/1.08883)
	return [3]float64{116*fy - 16, 500 * (fx - fy), 200 * (fy - fz)}
}

func labIn(view string, c color.NRGBA) [3]float64 {
	m := machado[view]
	lin := [3]float64{srgbToLinear(c.R), srgbToLinear(c.G), srgbToLinear(c.B)}
	var s [3]float64
	for i := range 3 {
		s[i] = m[i][0]*lin[0] + m[i][1]*lin[1] + m[i][2]*lin[2]
	}
	return linearToLab(s)
}

func deltaE(a, b [3]float64) float64 {
	return math.Sqrt((a[0]-b[0])*(a[0]-b[0]) + (a[1]-b[1])*(a[1]-b[1]) + (a[2]-b[2])*(a[2]-b[2]))
}

// TestLabConversion checks the colour arithmetic the palette test relies
// on against published CIELAB values of sRGB primaries (from memory; the
// values printed by common colour converters): red (53.24, 80.09, 67.20),
// blue (32.30, 79.19, -107.86), white (100, 0, 0).
func TestLabConversion(t *testing.T) {
	cases := []struct {
		c    color.NRGBA
		want [3]float64
	}{
		{color.NRGBA{255, 0, 0, 255}, [3]float64{53.24, 80.09, 67.20}},
		{color.NRGBA{0, 0, 255, 255}, [3]float64{32.30, 79.19, -107.86}},
		{color.NRGBA{255, 255, 255, 255}, [3]float64{100, 0, 0}},
	}
	for _, tc := range cases {
		got := labIn("normal", tc.c)
		if deltaE(got, tc.want) > 0.1 {
			t.Errorf("Lab%v = %.2f, want %.2f", tc.c, got, tc.want)
		}
	}
	// The simulation matrices keep white white (rows sum to 1).
	for v, m := range machado {
		for i := range 3 {
			if s := m[i][0] + m[i][1] + m[i][2]; math.Abs(s-1) > 1e-5 {
				t.Errorf("%s row %d sums to %g", v, i, s)
			}
		}
	}
}

// TestPaletteDistinct: every pair of group colours (and the unlabelled
// grey) stays at least 25 CIE76 units apart under normal vision and the
// three full dichromacies simulated by Machado et al. 2009, and every
// colour has L* in [28, 72] and chroma above 30 (the design rule in
// palette.go).
func TestPaletteDistinct(t *testing.T) {
	p := Palette()
	cols := append(p[:], Unlabelled())
	names := make([]string, len(cols))
	for i, c := range cols {
		names[i] = fmt.Sprintf("#%02X%02X%02X", c.R, c.G, c.B)
	}
	for view := range machado {
		worst, wi, wj := math.Inf(1), 0, 0
		for i := range cols {
			for j := i + 1; j < len(cols); j++ {
				if d := deltaE(labIn(view, cols[i]), labIn(view, cols[j])); d < worst {
					worst, wi, wj = d, i, j
				}
			}
		}
		if worst < 25 {
			t.Errorf("%s: %s and %s only %.1f apart (want >= 25)", view, names[wi], names[wj], worst)
		}
		t.Logf("%s: closest pair %s %s, Delta E %.1f", view, names[wi], names[wj], worst)
	}
	for i, c := range Palette() {
		lab := labIn("normal", c)
		if lab[0] < 28 || lab[0] > 72 || math.Hypot(lab[1], lab[2]) < 30 {
			t.Errorf("%s: L* %.1f chroma %.1f outside L* [28, 72], chroma > 30", names[i], lab[0], math.Hypot(lab[1], lab[2]))
		}
	}
}
