package report_test

import (
	"fmt"
	"image/png"
	"log"
	"math"
	"os"
	"path/filepath"

	"canalstep/report"
)

// pngSize prints the pixel size of a PNG file.
func pngSize(path string) {
	f, err := os.Open(path)
	if err != nil {
		log.Fatal(err)
	}
	defer f.Close()
	cfg, err := png.DecodeConfig(f)
	if err != nil {
		log.Fatal(err)
	}
	fmt.Printf("%s: %d × %d px\n", filepath.Base(path), cfg.Width, cfg.Height)
}

// The ground long section of `canalstep profile`: a made-up ground falling
// 1 % with a gap where the DEM has no data (NaN).
func ExampleWriteGroundProfile() {
	dir, err := os.MkdirTemp("", "canalstep-example")
	if err != nil {
		log.Fatal(err)
	}
	defer os.RemoveAll(dir)
	g := report.GroundProfile{Name: "Example canal"}
	for i := range 301 {
		c := 10 * float64(i) // m
		z := 250 - 0.01*c + 0.4*math.Sin(c/90)
		if c > 1200 && c < 1300 {
			z = math.NaN() // no DEM data here
		}
		g.Chainage, g.Ground = append(g.Chainage, c), append(g.Ground, z)
	}
	path := filepath.Join(dir, "ground.png")
	if err := report.WriteGroundProfile(path, g); err != nil {
		log.Fatal(err)
	}
	pngSize(path)
	// Output: ground.png: 907 × 454 px
}

// The long section of `canalstep plan`, with two drops. The planner's
// results map onto LongSection field by field; all values are SI and Units
// only chooses the axis labels (here US customary feet).
func ExampleWriteLongSection() {
	dir, err := os.MkdirTemp("", "canalstep-example")
	if err != nil {
		log.Fatal(err)
	}
	defer os.RemoveAll(dir)
	s := report.LongSection{Name: "Example canal", Units: report.US}
	bedAt := func(c float64) float64 { // bed at 0.2 % with 1.5 m drops at 1 km and 2 km
		return 248.8 - 0.002*c - 1.5*math.Floor(c/1000)
	}
	for i := range 301 {
		c := 10 * float64(i)
		bed := bedAt(c)
		s.Chainage = append(s.Chainage, c)
		s.Ground = append(s.Ground, 250-0.0035*c+0.3*math.Sin(c/150))
		s.Invert = append(s.Invert, bed)
		s.WaterSurface = append(s.WaterSurface, bed+0.9)
		s.TopOfBank = append(s.TopOfBank, bed+1.4)
	}
	for _, c := range []float64{1000, 2000} {
		s.Drops = append(s.Drops, report.DropMark{
			Chainage: c, Label: fmt.Sprintf("%.0f+%05.2f", math.Floor(c/0.3048/100), math.Mod(c/0.3048, 100)),
			UpstreamInvert: bedAt(c - 0.001), DownstreamInvert: bedAt(c),
		})
	}
	for _, name := range []string{"profile.png", "profile.svg"} {
		if err := report.WriteLongSection(filepath.Join(dir, name), s); err != nil {
			log.Fatal(err)
		}
	}
	pngSize(filepath.Join(dir, "profile.png"))
	// Output: profile.png: 1058 × 491 px
}

// The bar chart of `canalstep compare`: made-up volumes and costs.
func ExampleWriteAlternativesChart() {
	dir, err := os.MkdirTemp("", "canalstep-example")
	if err != nil {
		log.Fatal(err)
	}
	defer os.RemoveAll(dir)
	c := report.AlternativesChart{Name: "Example canal", Currency: "EUR", Alternatives: []report.Alternative{
		{Label: "0.5", CutVolume: 12000, FillVolume: 8000, TotalCost: 410000},
		{Label: "1.0", CutVolume: 14500, FillVolume: 6100, TotalCost: 365000},
		{Label: "0.5,1.0", CutVolume: 11800, FillVolume: 6000, TotalCost: 352000},
	}}
	path := filepath.Join(dir, "alternatives.png")
	if err := report.WriteAlternativesChart(path, c); err != nil {
		log.Fatal(err)
	}
	pngSize(path)
	// Output: alternatives.png: 756 × 605 px
}
