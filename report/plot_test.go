package report

import (
	"bytes"
	"flag"
	"fmt"
	"image"
	"image/png"
	"math"
	"os"
	"path/filepath"
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
				checkSVG(t, b)
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

// checkSVG checks b is a complete SVG document with its font embedded.
func checkSVG(t *testing.T, b []byte) {
	t.Helper()
	s := string(b)
	if !strings.HasPrefix(s, "<?xml") || !strings.Contains(s, "<svg") || !strings.HasSuffix(strings.TrimSpace(s), "</svg>") {
		t.Fatalf("not a complete SVG document (%d bytes)", len(b))
	}
	if !strings.Contains(s, "@font-face") {
		t.Error("SVG does not embed its font")
	}
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
