package html_test

import (
	"bytes"
	"fmt"
	"regexp"

	"canalstep/planner"
	"canalstep/planner/hydraulics"
	"canalstep/report/html"
	"canalstep/report/units"
)

// ExampleWrite plans 600 m of a small earth canal on ground falling 1 %,
// taken level across the line (a fictional case), and writes its report:
// a sheet per drop, one long-section sheet (up to 1 km) and cross-sections
// at every drop and every 500 m. A caller fills Provenance from its inputs
// and Words from the report package's wording.
func ExampleWrite() {
	c, g := make([]float64, 61), make([]float64, 61)
	for i := range c {
		c[i], g[i] = 10*float64(i), 50-0.01*10*float64(i)
	}
	d := planner.DefaultDesign()
	d.Flow, d.Section, d.Roughness = 1, hydraulics.Section{BottomWidth: 1, SideSlope: 1.5}, 0.025
	d.MaxVelocity, d.MinVelocity = 0.9, 0.3
	d.DropHeights = []float64{1, 1.5}
	res, err := planner.Optimize(planner.Problem{Stations: planner.LevelProfile(c, g), Design: d})
	if err != nil {
		fmt.Println(err)
		return
	}
	var b bytes.Buffer
	err = html.Write(&b, html.Report{
		Name: "Demo canal", Result: res, Units: units.SI,
		Provenance: html.Provenance{Version: "example", CommandLine: "canalstep plan", InputsDate: "2024-05-01"},
		Caution:    "SAFETY NOTICE\nA preliminary design aid; a licensed engineer approves the design.",
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	count := func(re string) int { return len(regexp.MustCompile(re).FindAllIndex(b.Bytes(), -1)) }
	fmt.Printf("%s\n", regexp.MustCompile(`<title>(.*)</title>`).FindSubmatch(b.Bytes())[1])
	fmt.Printf("%d drops, %d drop sheets, %d long-section sheet, %d cross-sections\n", res.Totals.DropCount,
		count(`<article class="drop"`), count(`<figure class="sheet">`), count(`aria-label="Cross-section at`))
	// Output:
	// Canal design report: Demo canal
	// 3 drops, 3 drop sheets, 1 long-section sheet, 5 cross-sections
}
