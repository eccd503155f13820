package report_test

import (
	"bytes"
	"fmt"
	"log"
	"math"
	"regexp"

	"canalstep/report"
)

// The printable long section of a 2.5 km canal (made-up levels): sheets of
// 1 km at 1:3000 on A3, so three sheets, the last half full.
func ExampleRenderLongSectionSheets() {
	s := report.LongSection{Name: "Example canal", Units: report.SI}
	for i := range 251 {
		c := 10 * float64(i)
		bed := 98.8 - 0.002*c - 1.0*math.Floor(c/1000)
		s.Chainage = append(s.Chainage, c)
		s.Ground = append(s.Ground, 100-0.0045*c+0.3*math.Sin(c/150))
		s.Invert = append(s.Invert, bed)
		s.WaterSurface = append(s.WaterSurface, bed+0.9)
	}
	for _, c := range []float64{1000, 2000} {
		up := 98.8 - 0.002*c - (c/1000-1)*1.0
		s.Drops = append(s.Drops, report.DropMark{Chainage: c, Label: report.StationLabel(c, report.SI),
			UpstreamInvert: up, DownstreamInvert: up - 1})
	}
	var pdf bytes.Buffer
	im := report.Imprint{InputsDate: "2024-05-01"}
	if err := report.RenderLongSectionSheets(&pdf, s, im); err != nil {
		log.Fatal(err)
	}
	pages := regexp.MustCompile(`/Type /Page\n`).FindAll(pdf.Bytes(), -1)
	fmt.Printf("%s, %d pages\n", pdf.Bytes()[:8], len(pages))
	// Output: %PDF-1.4, 3 pages
}
