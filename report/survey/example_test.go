package survey_test

import (
	"fmt"
	"math"
	"os"
	"time"

	"canalstep/report/survey"
	"canalstep/report/units"
)

// ExampleWriteStakesCSV writes two stake points of a station 250 m down a
// canal in UTM zone 34N: its centre line and its right catch point, 6.1 m
// out where the fill slope (2:1) meets the ground. The coordinates are
// invented for the example.
func ExampleWriteStakesCSV() {
	stakes := []survey.Stake{
		{ID: "C0+250.00", Kind: survey.Centreline, Station: "0+250.00", Chainage: 250,
			X: 500150.0, Y: 5000200.0, Lon: 21.00190906, Lat: 45.15527645,
			Ground: 197.842, Design: 197.256, Slope: math.NaN()},
		{ID: "XR0+250.00", Kind: survey.CatchRight, Station: "0+250.00", Chainage: 250, Offset: 6.1,
			X: 500154.880, Y: 5000196.340, Lon: 21.00197107, Lat: 45.15524349,
			Ground: 198.012, Design: 198.012, Slope: 2},
	}
	h := survey.Header{Alignment: "Lateral 7", Units: units.SI, CRS: "EPSG:32634", DEM: "dem.tif",
		Date: time.Date(2024, 3, 9, 0, 0, 0, 0, time.UTC)}
	if err := survey.WriteStakesCSV(os.Stdout, stakes, h); err != nil {
		fmt.Println(err)
	}
	// Output:
	// # canalstep stake points of alignment: Lateral 7
	// # Preliminary design aid only: site survey, geotechnical and structural review and a licensed engineer's approval are required before construction; local codes govern. Drops and hydraulic jumps are drowning hazards: fence them, sign them, allow no public access.
	// # easting, northing: metre, CRS EPSG:32634
	// # lon, lat: WGS 84 (OGC:CRS84) longitude and latitude, degrees
	// # levels (ground, design_level, cut_fill) in m; chainage and offset in m; stations in kilometres+metres (1+250.00 is 1,250 m)
	// # datum: levels are on the DEM's vertical datum, from the DEM's values; verify against survey control before setting out
	// # DEM: dem.tif
	// # offset: negative left, positive right, looking downstream; cut_fill = ground - design_level: positive cut, negative fill; slope_h_per_v: horizontal per vertical of the face the point marks
	// # inputs dated 2024-03-09
	// point,kind,station,chainage_m,offset_m,easting_m,northing_m,lon,lat,ground_m,design_level_m,cut_fill_m,slope_h_per_v,note
	// C0+250.00,centreline,0+250.00,250.000,0.000,500150.000,5000200.000,21.001909060,45.155276450,197.842,197.256,0.586,,
	// XR0+250.00,catch_right,0+250.00,250.000,6.100,500154.880,5000196.340,21.001971070,45.155243490,198.012,198.012,0.000,2.00,
}
