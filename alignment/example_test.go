package alignment_test

import (
	"fmt"
	"math"
	"strings"

	"canalstep/alignment"

	"github.com/paulmach/orb"
)

// Station an L-shaped alignment (300 m east, then 400 m north) every 250 m
// from chainage 1+000: spacing stations at 1+250 and 1+500, the corner
// vertex at 1+300, the end at 1+700.
func ExampleStationLine() {
	line := orb.LineString{{500000, 4000000}, {500300, 4000000}, {500300, 4000400}}
	stations, err := alignment.StationLine(line, 1, 250, 1000)
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, s := range stations {
		fmt.Printf("%s  %8.2f m  E %.2f  N %.2f  vertex=%v\n",
			alignment.FormatStation(s.Chainage, false), s.Chainage, s.X, s.Y, s.Vertex)
	}
	// Output:
	// 1+000.00   1000.00 m  E 500000.00  N 4000000.00  vertex=true
	// 1+250.00   1250.00 m  E 500250.00  N 4000000.00  vertex=false
	// 1+300.00   1300.00 m  E 500300.00  N 4000000.00  vertex=true
	// 1+500.00   1500.00 m  E 500300.00  N 4000200.00  vertex=false
	// 1+700.00   1700.00 m  E 500300.00  N 4000400.00  vertex=true
}

// In a CRS measured in international feet, chainage is still metres:
// pass the unit's length in metres. 100-ft stations in US labels.
func ExampleStationLine_feet() {
	line := orb.LineString{{6000000, 2000000}, {6000250, 2000000}}
	stations, _ := alignment.StationLine(line, alignment.FootM, 100*alignment.FootM, 0)
	for _, s := range stations {
		fmt.Printf("%s  %s  %s\n", alignment.FormatStation(s.Chainage, true),
			alignment.FormatChainage(s.Chainage, true), alignment.FormatChainage(s.Chainage, false))
	}
	// Output:
	// 0+00.00  0.00 ft  0.00 m
	// 1+00.00  100.00 ft  30.48 m
	// 2+00.00  200.00 ft  60.96 m
	// 2+50.00  250.00 ft  76.20 m
}

func ExampleFormatStation() {
	fmt.Println(alignment.FormatStation(1250, false))  // metres
	fmt.Println(alignment.FormatStation(381, true))    // 381 m = 1250 ft
	fmt.Println(alignment.FormatStation(-12.3, false)) // before the origin
	// Output:
	// 1+250.00
	// 12+50.00
	// -0+012.30
}

func ExampleParseStation() {
	m, err := alignment.ParseStation("12+50.00", true)
	fmt.Printf("%.2f m %v\n", m, err)
	_, err = alignment.ParseStation("1+25", false)
	fmt.Println(err)
	// Output:
	// 381.00 m <nil>
	// station "1+25": the part after "+" must start with exactly 3 digits; want kilometres+metres such as 1+250.00
}

func ExampleRead() {
	data := []byte(`{"type":"FeatureCollection","features":[
	  {"type":"Feature","properties":{"name":"Main canal"},
	   "geometry":{"type":"LineString","coordinates":[[15.00,36.00],[15.01,36.00],[15.01,36.00],[15.02,36.01]]}},
	  {"type":"Feature","properties":{"name":"Main canal"},
	   "geometry":{"type":"MultiLineString","coordinates":[[[15.00,36.02],[15.01,36.02]],[[15.01,36.02],[15.02,36.03]]]}},
	  {"type":"Feature","properties":{"name":"head regulator"},"geometry":{"type":"Point","coordinates":[15.00,36.00]}}
	]}`)
	as, err := alignment.Read(data)
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, a := range as {
		fmt.Printf("%d %q feature %d, %d vertices, folder %s\n", a.Index, a.Name, a.Feature, len(a.Line), alignment.SafeName(a.Name))
	}
	_, err = alignment.Read([]byte(`{"type":"Point","coordinates":[15,36]}`))
	fmt.Println(err)
	// Output:
	// 0 "Main canal" feature 1, 3 vertices, folder Main_canal
	// 1 "Main canal-2" feature 2, 3 vertices, folder Main_canal-2
	// no LineString or MultiLineString geometry found
}

func ExampleRanges() {
	line := orb.LineString{{0, 0}, {100, 0}}
	stations, _ := alignment.StationLine(line, 1, 10, 1200)
	// Say stations 2 to 4 and 9 fell on nodata.
	fmt.Println("no ground data at", alignment.Ranges(stations, []int{2, 3, 4, 9}, false))
	// Output:
	// no ground data at chainage 1+220.00 to 1+240.00 and 1+290.00
}

func ExampleUTMZoneEPSG() {
	fmt.Println(alignment.UTMZoneEPSG(15, 36), alignment.UTMZoneEPSG(-58.4, -34.6), alignment.UTMZoneEPSG(5, 60))
	// Output:
	// 32633 32721 32632
}

func ExampleSafeName() {
	fmt.Println(alignment.SafeName("Lateral 3/B (upper)"), alignment.SafeName("../secret"), alignment.SafeName(".."))
	// Output:
	// Lateral_3_B_upper secret alignment
}

// Fit a 200 m curve at the corner of an alignment that runs 1000 m east,
// then 1000 m north, and print the curve table: a 90° turn to the left
// takes T = 200 m of each tangent.
func ExampleFitCurves() {
	line := orb.LineString{{500000, 4000000}, {501000, 4000000}, {501000, 4001000}}
	route, err := alignment.FitCurves(line, 1, 200)
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, c := range route.Curves {
		fmt.Printf("%s: Δ %.2f° %s, R %.2f m, T %.2f m, L %.2f m, E %.2f m, M %.2f m\n",
			c.At, math.Abs(c.DeflectionDegrees()), c.Side(), c.Radius, c.Tangent, c.Length, c.External, c.MidOrdinate)
		fmt.Printf("  PC %s (E %.2f N %.2f)  PT %s (E %.2f N %.2f)  centre E %.2f N %.2f\n",
			alignment.FormatStation(c.PCDistance, false), c.PC[0], c.PC[1],
			alignment.FormatStation(c.PTDistance, false), c.PT[0], c.PT[1], c.Centre[0], c.Centre[1])
	}
	fmt.Printf("route %.2f m, polyline %.2f m\n", route.Length, alignment.Length(line, 1))
	_, err = alignment.FitCurves(line, 1, 1200)
	fmt.Println(err)
	// Output:
	// vertex 2: Δ 90.00° left, R 200.00 m, T 200.00 m, L 314.16 m, E 82.84 m, M 58.58 m
	//   PC 0+800.00 (E 500800.00 N 4000000.00)  PT 1+114.16 (E 501000.00 N 4000200.00)  centre E 500800.00 N 4000200.00
	// route 1914.16 m, polyline 2000.00 m
	// vertex 2: a curve of radius 1200.00 m turning 90.00° left needs tangents of 1200.00 m, more than the 1000.00 m to the start of the line (vertex 1); a radius of at most 1000.00 m fits there, at most 1000.00 m at every vertex
}

// Station the curved route every 100 m: the PC and PT stand in for the
// corner vertex, and stations on the arc face the tangent. (Checked by
// hand: 1+000.00 is 200 m, 1 rad, into the arc, at centre + 200 m ·
// (sin(π − 1), cos(π − 1)), facing 90° − 57.30°.)
func ExampleStationRoute() {
	line := orb.LineString{{500000, 4000000}, {501000, 4000000}, {501000, 4001000}}
	route, _ := alignment.FitCurves(line, 1, 200)
	stations, err := alignment.StationRoute(route, 100, 0)
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, s := range stations[7:14] {
		fmt.Println(strings.TrimSpace(fmt.Sprintf("%s  E %.2f  N %.2f  azimuth %6.2f° %s", alignment.FormatStation(s.Chainage, false),
			s.X, s.Y, s.Azimuth*180/math.Pi, s.Mark)))
	}
	// Output:
	// 0+700.00  E 500700.00  N 4000000.00  azimuth  90.00°
	// 0+800.00  E 500800.00  N 4000000.00  azimuth  90.00° PC
	// 0+900.00  E 500895.89  N 4000024.48  azimuth  61.35°
	// 1+000.00  E 500968.29  N 4000091.94  azimuth  32.70°
	// 1+100.00  E 500999.50  N 4000185.85  azimuth   4.06°
	// 1+114.16  E 501000.00  N 4000200.00  azimuth   0.00° PT
	// 1+200.00  E 501000.00  N 4000285.84  azimuth   0.00°
}

// Read a scheme: an alignment with its own flow and radius, an offtake
// that must be commanded 0.3 m above the ground, and a property nobody
// reads.
func ExampleReadScheme() {
	data := []byte(`{"type":"FeatureCollection","features":[
	  {"type":"Feature","properties":{"name":"West lateral","flow":0.8,"curve_radius":40,"owner":"district"},
	   "geometry":{"type":"LineString","coordinates":[[500000,4000000],[500600,4000000],[500900,4000400]]}},
	  {"type":"Feature","properties":{"name":"Farm gate 3","margin":0.3,"alignment":"West lateral"},
	   "geometry":{"type":"Point","coordinates":[500450,4000012]}}
	]}`)
	sc, err := alignment.ReadScheme(data)
	if err != nil {
		fmt.Println(err)
		return
	}
	a := sc.Alignments[0]
	fmt.Printf("%s: flow %.2f m³/s, curve radius %.0f m, roughness given: %v\n", a.Name, *a.Overrides.Flow, *a.Overrides.CurveRadius, a.Overrides.Roughness != nil)
	o := sc.Offtakes[0]
	fmt.Printf("%s serves %s, margin %.2f m\n", o.Name, o.Alignment, *o.Margin)
	fmt.Printf("ignored: %q\n", sc.Ignored)
	_, err = alignment.ReadScheme([]byte(`{"type":"Feature","properties":{"name":"East Branch","flow":"2.5"},"geometry":{"type":"LineString","coordinates":[[0,0],[1,0]]}}`))
	fmt.Println(err)
	// Output:
	// West lateral: flow 0.80 m³/s, curve radius 40 m, roughness given: false
	// Farm gate 3 serves West lateral, margin 0.30 m
	// ignored: ["owner"]
	// feature 1 ("East Branch"): property "flow" must be a number (m³/s), got the string "2.5"
}
