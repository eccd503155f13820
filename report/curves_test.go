package report

import (
	"bytes"
	"encoding/csv"
	"math"
	"strconv"
	"testing"

	"github.com/paulmach/orb"

	"canalstep/alignment"
)

// TestCurvesCSV: the curve table of a 90° bend of radius 100 m. Circular
// curve elements T = R tan(Δ/2), L = RΔ, C = 2R sin(Δ/2), E = R(sec(Δ/2) − 1)
// (Ghilani & Wolf, Elementary Surveying, ch. 24; from memory): T = 100,
// L = 157.080, C = 141.421, E = 41.421 m; PC 100 m before the vertex, at
// chainage 500 m, PT at 500 + L.
func TestCurvesCSV(t *testing.T) {
	r, err := alignment.FitCurves(orb.LineString{{0, 0}, {600, 0}, {600, 400}}, 1, 100)
	if err != nil {
		t.Fatal(err)
	}
	var b bytes.Buffer
	if err := WriteCurvesCSV(&b, r, 0, SI); err != nil {
		t.Fatal(err)
	}
	rows, err := csv.NewReader(&b).ReadAll()
	if err != nil || len(rows) != 2 {
		t.Fatalf("%d rows, %v", len(rows), err)
	}
	col := map[string]int{}
	for i, h := range rows[0] {
		col[h] = i
	}
	want := map[string]float64{"deflection_deg": -90, "radius_m": 100, "tangent_m": 100, "length_m": 50 * math.Pi,
		"chord_m": 100 * math.Sqrt2, "external_m": 100 * (math.Sqrt2 - 1), "pc_chainage_m": 500, "pt_chainage_m": 500 + 50*math.Pi,
		"pc_easting": 500, "pc_northing": 0, "pt_easting": 600, "pt_northing": 100, "pi_easting": 600, "pi_northing": 0}
	for k, w := range want {
		v, err := strconv.ParseFloat(rows[1][col[k]], 64)
		if err != nil || math.Abs(v-w) > 0.0005+1e-9 { // printed to the millimetre (or 1e-6 degree)
			t.Errorf("%s = %q, want %.4f", k, rows[1][col[k]], w)
		}
	}
	if rows[1][col["turns"]] != "left" || rows[1][col["pc_station"]] != "0+500.00" {
		t.Errorf("turns %q, PC station %q", rows[1][col["turns"]], rows[1][col["pc_station"]])
	}
}
