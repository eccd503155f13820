package report

import (
	"bytes"
	"image"
	"image/color"
	"image/png"
	"io"
	"testing"

	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/vgimg"
)

// groundCanvas renders the 40 km ground profile of the benchmarks onto a
// raster canvas and returns its image.
func groundCanvas(t testing.TB) *image.RGBA {
	x, z := testGround(40001, 40000, true)
	var buf bytes.Buffer
	if err := RenderGroundProfile(&buf, "png", GroundProfile{Name: "png test", Chainage: x, Ground: z}); err != nil {
		t.Fatal(err)
	}
	img, err := png.Decode(&buf)
	if err != nil {
		t.Fatal(err)
	}
	m := image.NewRGBA(img.Bounds())
	for y := m.Rect.Min.Y; y < m.Rect.Max.Y; y++ {
		for x := m.Rect.Min.X; x < m.Rect.Max.X; x++ {
			m.Set(x, y, img.At(x, y))
		}
	}
	return m
}

// TestEncodePNG checks encodePNG against image/png, the reference decoder:
// an opaque plot and a translucent image (which takes image/png's own
// encoder) decode to the same pixels as image/png's encoding of them, the
// opaque plot to exactly the pixels encoded, with the same header (8-bit
// RGB for the plot, as image/png writes it).
func TestEncodePNG(t *testing.T) {
	plotImg := groundCanvas(t)
	translucent := image.NewRGBA(image.Rect(0, 0, 37, 11))
	for i := range translucent.Pix {
		translucent.Pix[i] = byte(i * 7)
	}
	for i := 3; i < len(translucent.Pix); i += 4 {
		translucent.Pix[i] = 255 - byte(i) // premultiplied: colour ≤ alpha
		for k := 1; k <= 3; k++ {
			translucent.Pix[i-k] = min(translucent.Pix[i-k], translucent.Pix[i])
		}
	}
	for _, tc := range []struct {
		name  string
		img   *image.RGBA
		exact bool // opaque: decodes to the very pixels (translucent ones pass through non-premultiplied colour)
	}{{"plot", plotImg, true}, {"translucent", translucent, false}} {
		t.Run(tc.name, func(t *testing.T) {
			var ours, ref bytes.Buffer
			if err := encodePNG(&ours, tc.img); err != nil {
				t.Fatal(err)
			}
			if err := png.Encode(&ref, tc.img); err != nil {
				t.Fatal(err)
			}
			cfg, err := png.DecodeConfig(bytes.NewReader(ours.Bytes()))
			if err != nil {
				t.Fatal(err)
			}
			refCfg, _ := png.DecodeConfig(bytes.NewReader(ref.Bytes()))
			if cfg != refCfg {
				t.Errorf("config %+v, image/png writes %+v", cfg, refCfg)
			}
			a, err := png.Decode(&ours)
			if err != nil {
				t.Fatal(err)
			}
			b, _ := png.Decode(&ref)
			if bad, total := pixelDiff(a, b, 0); bad != 0 {
				t.Errorf("%d of %d pixels differ from image/png's encoding", bad, total)
			}
			if bad, total := pixelDiff(a, tc.img, 0); tc.exact && bad != 0 {
				t.Errorf("%d of %d pixels differ from the image encoded", bad, total)
			}
		})
	}
	if cfg, _ := png.DecodeConfig(bytes.NewReader(mustEncode(t, plotImg))); cfg.ColorModel != color.RGBAModel {
		t.Errorf("the opaque plot decodes as %v", cfg.ColorModel)
	}
}

func mustEncode(t testing.TB, img image.Image) []byte {
	var b bytes.Buffer
	if err := encodePNG(&b, img); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

// TestEncodePNGWriteError checks that a failing writer fails the encoding.
func TestEncodePNGWriteError(t *testing.T) {
	c := vgimg.NewWith(vgimg.UseWH(4*vg.Centimeter, 3*vg.Centimeter), vgimg.UseDPI(PlotDPI))
	count := &failAfter{n: -1}
	if err := encodePNG(count, c.Image()); err != nil {
		t.Fatal(err)
	}
	writes := -1 - count.n
	for n := range writes {
		if err := encodePNG(&failAfter{n: n}, c.Image()); err == nil {
			t.Fatalf("writer failing after %d of %d writes: no error", n, writes)
		}
	}
}

// failAfter fails every write after the first n; with n < 0 it counts its
// writes down from -1 and never fails.
type failAfter struct{ n int }

func (f *failAfter) Write(p []byte) (int, error) {
	if f.n == 0 {
		return 0, io.ErrShortWrite
	}
	f.n--
	return len(p), nil
}

// BenchmarkEncodePNG encodes the 907 × 454 ground profile plot with
// encodePNG and with image/png at its fastest level, for the ratio.
func BenchmarkEncodePNG(b *testing.B) {
	m := groundCanvas(b)
	for _, tc := range []struct {
		name string
		enc  func(io.Writer, image.Image) error
	}{
		{"encodePNG", encodePNG},
		{"image-png-BestSpeed", (&png.Encoder{CompressionLevel: png.BestSpeed}).Encode},
	} {
		b.Run(tc.name, func(b *testing.B) {
			var buf bytes.Buffer
			b.ReportAllocs()
			for b.Loop() {
				buf.Reset()
				if err := tc.enc(&buf, m); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(buf.Len()), "bytes")
		})
	}
}
