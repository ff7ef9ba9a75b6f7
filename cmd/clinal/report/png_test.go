package report

import (
	"bytes"
	"errors"
	"image"
	"image/color"
	"image/png"
	"math/rand/v2"
	"testing"
)

// TestWritePNG: what writePNG writes decodes, with Go's image/png (an
// implementation of the W3C PNG specification outside this project), to
// exactly the pixels written, for opaque images of several sizes (noise
// whose zlib stream spans several 64 KiB IDAT chunks) and content from
// flat white to noise; an image with transparent pixels keeps them
// (image/png writes it); a writer that fails makes writePNG fail.
func TestWritePNG(t *testing.T) {
	r := rand.New(rand.NewPCG(4, 4))
	cases := []struct {
		name   string
		w, h   int
		fill   func(x, y int) color.RGBA
		opaque bool
		idats  int // at least this many IDAT chunks
	}{
		{"white", 37, 11, func(x, y int) color.RGBA { return color.RGBA{255, 255, 255, 255} }, true, 1},
		{"noise", 640, 480, func(x, y int) color.RGBA {
			return color.RGBA{uint8(r.Uint32()), uint8(r.Uint32()), uint8(r.Uint32()), 255}
		}, true, 10},
		{"figure-like", 300, 200, func(x, y int) color.RGBA {
			if (x-150)*(x-150)+(y-100)*(y-100) < 900 {
				return color.RGBA{0x4B, 0x0F, 0xE1, 255}
			}
			return color.RGBA{255, 255, 255, 255}
		}, true, 1},
		{"one pixel", 1, 1, func(x, y int) color.RGBA { return color.RGBA{1, 2, 3, 255} }, true, 1},
		{"transparent", 20, 20, func(x, y int) color.RGBA { return color.RGBA{0, 0, 0, uint8(x * 10)} }, false, 1},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			img := image.NewRGBA(image.Rect(0, 0, c.w, c.h))
			for y := 0; y < c.h; y++ {
				for x := 0; x < c.w; x++ {
					img.SetRGBA(x, y, c.fill(x, y))
				}
			}
			var b bytes.Buffer
			if err := writePNG(&b, img); err != nil {
				t.Fatal(err)
			}
			if n := bytes.Count(b.Bytes(), []byte("IDAT")); n < c.idats {
				t.Errorf("%d IDAT chunks, want at least %d", n, c.idats)
			}
			if err := writePNG(failingWriter{}, img); err == nil {
				t.Error("a failing writer gave no error")
			}
			back, err := png.Decode(&b)
			if err != nil {
				t.Fatalf("image/png cannot read it: %v", err)
			}
			if got := back.Bounds(); got != img.Bounds() {
				t.Fatalf("bounds %v, want %v", got, img.Bounds())
			}
			for y := 0; y < c.h; y++ {
				for x := 0; x < c.w; x++ {
					r0, g0, b0, a0 := img.At(x, y).RGBA()
					r1, g1, b1, a1 := back.At(x, y).RGBA()
					if r0 != r1 || g0 != g1 || b0 != b1 || a0 != a1 {
						t.Fatalf("pixel (%d,%d): read back %v, wrote %v", x, y, back.At(x, y), img.At(x, y))
					}
				}
			}
			if _, ok := back.(*image.RGBA); ok != c.opaque {
				t.Errorf("decoded as %T: want truecolour without alpha (image.RGBA) %v", back, c.opaque)
			}
		})
	}
}

type failingWriter struct{}

func (failingWriter) Write([]byte) (int, error) { return 0, errors.New("disk full") }
