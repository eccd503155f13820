package report

import (
	"bytes"
	"encoding/xml"
	"flag"
	"fmt"
	"image"
	"image/png"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// regenPlots rewrites the golden images in testdata from the current code:
//
//	go test ./report -run Golden -regen
var regenPlots = flag.Bool("regen", false, "rewrite report/testdata/*_golden.png from the current plots")

// plotDir keeps the rendered plots of TestPlotsRender for a person to look
// at: go test ./report -run PlotsRender -plotdir /tmp/plots
var plotDir = flag.String("plotdir", "", "keep the plots rendered by TestPlotsRender in this folder")

// testGround is a made-up ground profile for the plot tests (invented
// numbers, demo only): a fall of about 1.2 % with a 12 m terrace riser near
// 60 % of the length, undulations of a few decimetres and, when gap is true,
// a nodata stretch.
func testGround(n int, length float64, gap bool) (x, z []float64) {
	x, z = make([]float64, n), make([]float64, n)
	for i := range n {
		c := length * float64(i) / float64(n-1)
		x[i] = c
		t := c / length
		riser := 12 / (1 + math.Exp(-(c-0.6*length)/60))
		z[i] = 410 - 0.012*c - riser + 0.6*math.Sin(c/170) + 0.25*math.Sin(c/37+1)
		if gap && t > 0.22 && t < 0.25 {
			z[i] = math.NaN()
		}
	}
	return x, z
}

// testSection builds a long section on testGround with a simple greedy bed
// (grade 0.3 %, a 1.0 m or 1.5 m drop whenever the bed would sit more than
// 0.6 m above the ground), so the plot has cut, fill, steps and labels.
// Invented numbers, demo only.
func testSection(n int, length float64) LongSection {
	x, z := testGround(n, length, false)
	const depth, freeboard, grade = 1.1, 0.5, 0.003
	s := LongSection{Name: "Test branch", Chainage: x, Ground: z}
	bed := z[0] - depth
	for i := range x {
		if i > 0 {
			bed -= grade * (x[i] - x[i-1])
		}
		if bed > z[i]+0.6 {
			h := 1.0
			if bed > z[i]+1.2 {
				h = 1.5
			}
			s.Drops = append(s.Drops, DropMark{
				Chainage: x[i], Label: stationLabel(x[i]),
				UpstreamInvert: bed, DownstreamInvert: bed - h,
			})
			bed -= h
		}
		s.Invert = append(s.Invert, bed)
		s.WaterSurface = append(s.WaterSurface, bed+depth)
		s.TopOfBank = append(s.TopOfBank, bed+depth+freeboard)
	}
	// Even spacing: one average grade with equal drops.
	fall := (z[0] - z[n-1]) - grade*length
	count := int(math.Ceil(fall / 1.0))
	spacing := length / float64(count+1)
	for i := range x {
		k := math.Floor(x[i] / spacing)
		s.BaselineInvert = append(s.BaselineInvert, z[0]-depth-grade*x[i]-k*fall/float64(count))
	}
	cut := make([]float64, n)
	fill := make([]float64, n)
	vel := make([]float64, n)
	for i := range x {
		cut[i] = math.Max(0, z[i]-s.Invert[i])
		fill[i] = math.Max(0, s.TopOfBank[i]-z[i])
		vel[i] = 0.62 + 0.03*math.Sin(x[i]/400)
	}
	s.Lower = &LowerPanel{
		Label: "Cut depth, fill height", Quantity: PanelLength,
		Series: []PanelSeries{{Name: "cut depth to bed", Values: cut}, {Name: "fill height to top of bank", Values: fill}},
	}
	_ = vel
	return s
}

// stationLabel is a metric station label for the tests (km+m.mm).
func stationLabel(c float64) string {
	km := math.Floor(c / 1000)
	return fmt.Sprintf("%.0f+%06.2f", km, c-1000*km)
}

func TestPlotsRender(t *testing.T) {
	t.Parallel()
	dir := *plotDir
	if dir == "" {
		dir = t.TempDir()
	}
	x, z := testGround(4001, 6000, true)
	sec := testSection(601, 6000)
	noLower := sec
	noLower.Lower = nil
	us := sec
	us.Units = US
	cases := []struct {
		name   string
		write  func(path string) error
		wantPx [2]int // PNG size at PlotDPI
	}{
		{"ground.png", func(p string) error {
			return WriteGroundProfile(p, GroundProfile{Name: "North branch", Chainage: x, Ground: z})
		}, [2]int{907, 454}},
		{"section.png", func(p string) error { return WriteLongSection(p, sec) }, [2]int{1058, 643}},
		{"section_nolower.png", func(p string) error { return WriteLongSection(p, noLower) }, [2]int{1058, 491}},
		{"section_us.png", func(p string) error { return WriteLongSection(p, us) }, [2]int{1058, 643}},
		{"section.svg", func(p string) error { return WriteLongSection(p, sec) }, [2]int{}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			path := filepath.Join(dir, c.name)
			if err := c.write(path); err != nil {
				t.Fatal(err)
			}
			b, err := os.ReadFile(path)
			if err != nil {
				t.Fatal(err)
			}
			if strings.HasSuffix(c.name, ".svg") {
				// 28 × 17 cm = 793.7 × 481.9 pt.
				if w, h := checkSVG(t, b); math.Abs(w-793.7) > 0.1 || math.Abs(h-481.9) > 0.1 {
					t.Errorf("SVG is %g × %g pt, want 793.7 × 481.9", w, h)
				}
				return
			}
			cfg, err := png.DecodeConfig(bytes.NewReader(b))
			if err != nil {
				t.Fatalf("not a PNG: %v", err)
			}
			if got := [2]int{cfg.Width, cfg.Height}; got != c.wantPx {
				t.Errorf("size = %v px, want %v", got, c.wantPx)
			}
		})
	}
}

// checkSVG checks b is a well-formed SVG document with its font embedded
// and returns its width and height in points.
func checkSVG(t *testing.T, b []byte) (w, h float64) {
	t.Helper()
	dec := xml.NewDecoder(bytes.NewReader(b))
	root := true
	for {
		tok, err := dec.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("SVG is not well-formed XML: %v", err)
		}
		if se, ok := tok.(xml.StartElement); ok && root {
			root = false
			if se.Name.Local != "svg" {
				t.Fatalf("root element %q, want svg", se.Name.Local)
			}
			for _, a := range se.Attr {
				switch a.Name.Local {
				case "width":
					w, _ = strconv.ParseFloat(strings.TrimSuffix(a.Value, "pt"), 64)
				case "height":
					h, _ = strconv.ParseFloat(strings.TrimSuffix(a.Value, "pt"), 64)
				}
			}
		}
	}
	if root {
		t.Fatal("SVG has no root element")
	}
	if !bytes.Contains(b, []byte("@font-face")) {
		t.Error("SVG does not embed its font")
	}
	return w, h
}

// decodePNG decodes a PNG file.
func decodePNG(t testing.TB, b []byte) image.Image {
	t.Helper()
	img, err := png.Decode(bytes.NewReader(b))
	if err != nil {
		t.Fatal(err)
	}
	return img
}

func mustRead(t testing.TB, path string) []byte {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return b
}

// TestLongSectionGolden compares the rendered long section with
// testdata/longsection_golden.png. Rendering is pure Go and deterministic
// on one machine; the tolerance (at most 20 pixels off by more than 24/255
// in a channel) allows for anti-aliasing that differs by a few levels along
// edges on another CPU architecture (common practice, no source), while a
// single changed digit in a drop label (58 pixels, measured) still fails.
// Refresh with: go test ./report -run Golden -regen
func TestLongSectionGolden(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		golden string
		render func(w *bytes.Buffer) error
	}{
		{"longsection_golden.png", func(w *bytes.Buffer) error { return RenderLongSection(w, "png", testSection(601, 6000)) }},
		{"alternatives_golden.png", func(w *bytes.Buffer) error { return RenderAlternativesChart(w, "png", testAlternatives()) }},
	} {
		t.Run(c.golden, func(t *testing.T) {
			var got bytes.Buffer
			if err := c.render(&got); err != nil {
				t.Fatal(err)
			}
			path := filepath.Join("testdata", c.golden)
			if *regenPlots {
				if err := WriteFileAtomic(path, func(w io.Writer) error { _, err := w.Write(got.Bytes()); return err }); err != nil {
					t.Fatal(err)
				}
				return
			}
			want := decodePNG(t, mustRead(t, path))
			bad, total := pixelDiff(decodePNG(t, got.Bytes()), want, 24)
			if bad < 0 {
				t.Fatalf("size differs from %s", path)
			}
			if frac := float64(bad) / float64(total); bad > 20 {
				out := filepath.Join(t.TempDir(), strings.Replace(c.golden, "_golden", "_got", 1))
				os.WriteFile(out, got.Bytes(), 0o644)
				t.Errorf("%d of %d pixels (%.2f %%) differ from %s; the new image is %s (refresh with -regen if the change is intended)",
					bad, total, 100*frac, path, out)
			}
		})
	}
}

// pixelDiff counts the pixels whose channels differ by more than tol (of
// 255) between a and b; bad is -1 when the sizes differ.
func pixelDiff(a, b image.Image, tol uint32) (bad, total int) {
	if a.Bounds() != b.Bounds() {
		return -1, 0
	}
	r := a.Bounds()
	t16 := tol * 257
	for y := r.Min.Y; y < r.Max.Y; y++ {
		for x := r.Min.X; x < r.Max.X; x++ {
			r1, g1, b1, a1 := a.At(x, y).RGBA()
			r2, g2, b2, a2 := b.At(x, y).RGBA()
			if absDiff(r1, r2) > t16 || absDiff(g1, g2) > t16 || absDiff(b1, b2) > t16 || absDiff(a1, a2) > t16 {
				bad++
			}
			total++
		}
	}
	return bad, total
}

func absDiff(a, b uint32) uint32 {
	if a > b {
		return a - b
	}
	return b - a
}
