package report

import (
	"bytes"
	"image"
	"image/color"
	"image/png"
	"math/rand/v2"
	"testing"
)

// TestChartPNGDecodesToTheImage checks chartPNG against the standard
// library's PNG decoder (image/png, an implementation of the PNG
// specification independent of ours): an opaque chart decodes to the
// same pixels as the standard encoder's PNG of it, and an image with any
// pixel not opaque keeps its alpha through the fallback.
func TestChartPNGDecodesToTheImage(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	for _, tc := range []struct {
		name   string
		w, h   int
		opaque bool
	}{
		{"one pixel", 1, 1, true},
		{"wide", 97, 3, true},
		{"tall", 2, 61, true},
		{"chart sized", 600, 360, true},
		{"one pixel translucent", 40, 30, false},
	} {
		img := image.NewRGBA(image.Rect(0, 0, tc.w, tc.h))
		for y := 0; y < tc.h; y++ {
			for x := 0; x < tc.w; x++ {
				// Runs of one colour, as a chart has, with noise between.
				c := color.RGBA{255, 255, 255, 255}
				if rng.IntN(4) == 0 {
					c = color.RGBA{uint8(rng.IntN(256)), uint8(rng.IntN(256)), uint8(rng.IntN(256)), 255}
				}
				img.SetRGBA(x, y, c)
			}
		}
		if !tc.opaque {
			img.SetRGBA(tc.w/2, tc.h/2, color.RGBA{10, 20, 30, 128})
		}
		b, err := chartPNG(img)
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		got, err := png.Decode(bytes.NewReader(b))
		if err != nil {
			t.Fatalf("%s: image/png cannot decode it: %v", tc.name, err)
		}
		var ref bytes.Buffer
		if err := png.Encode(&ref, img); err != nil {
			t.Fatal(err)
		}
		want, err := png.Decode(&ref)
		if err != nil {
			t.Fatal(err)
		}
		if got.Bounds() != img.Bounds() {
			t.Fatalf("%s: bounds %v, want %v", tc.name, got.Bounds(), img.Bounds())
		}
		for y := 0; y < tc.h; y++ {
			for x := 0; x < tc.w; x++ {
				if g, w := color.RGBAModel.Convert(got.At(x, y)), color.RGBAModel.Convert(want.At(x, y)); g != w {
					t.Fatalf("%s: pixel (%d,%d) decodes to %v, the standard encoder's PNG to %v", tc.name, x, y, g, w)
				}
			}
		}
	}
}
