package terrain_test

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"
	"testing"

	"canalstep/terrain"
)

// TestTransformMatchesCs2cs compares Transform with PROJ's command-line tool
// cs2cs (proj-bin) on grids of points, to 1 mm. Our input and output are in
// traditional GIS order (lon, lat); cs2cs uses each CRS's authority order,
// which for EPSG:4326 and EPSG:4269 is lat, lon, so the test swaps axes
// when it talks to cs2cs.
func TestTransformMatchesCs2cs(t *testing.T) {
	const mm = 0.001 // m
	usFt := 1200.0 / 3937
	tests := []struct {
		name     string
		src, dst string
		// srcLatLon/dstLatLon: cs2cs reads/writes that CRS as lat, lon.
		srcLatLon, dstLatLon bool
		lon0, lat0           float64 // south-west corner of the test grid (degrees)
		tolX, tolY           float64 // in dst units: 1 mm
		inverse              bool    // src is projected: feed the forward output back
	}{
		// UTM zone 33N around (15°E, 36°N), invented points.
		{"WGS84 to UTM 33N", "EPSG:4326", "EPSG:32633", true, false, 14.2, 35.5, mm, mm, false},
		{"CRS84 to UTM 33N", "OGC:CRS84", "EPSG:32633", false, false, 14.2, 35.5, mm, mm, false},
		// California zone 3 in US survey feet around San Francisco Bay.
		{"NAD83 to CA zone 3 ftUS", "EPSG:4269", "EPSG:2227", true, false, -122.6, 37.3, mm / usFt, mm / usFt, false},
		{"WGS84 to CA zone 3 ftUS", "EPSG:4326", "EPSG:2227", true, false, -122.6, 37.3, mm / usFt, mm / usFt, false},
		// Back to degrees: 1 mm is about 9e-9° of latitude, and of longitude
		// at these latitudes about 1.1e-8°; 5e-9° is tighter than both.
		{"UTM 33N to WGS84", "EPSG:32633", "EPSG:4326", false, true, 14.2, 35.5, 5e-9, 5e-9, true},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			var lons, lats []float64
			for i := range 12 {
				for j := range 10 {
					lons = append(lons, tt.lon0+0.071*float64(i)+0.0003*float64(j))
					lats = append(lats, tt.lat0+0.093*float64(j)+0.0002*float64(i))
				}
			}
			xs, ys := slices.Clone(lons), slices.Clone(lats)
			if tt.inverse { // make projected input from the lon/lat grid
				fwd, err := terrain.NewTransform(tt.dst, tt.src)
				if err != nil {
					t.Fatal(err)
				}
				if err := fwd.Transform(xs, ys); err != nil {
					t.Fatal(err)
				}
				fwd.Close()
			}
			var in strings.Builder
			for i := range xs {
				a, b := xs[i], ys[i]
				if tt.srcLatLon {
					a, b = b, a
				}
				fmt.Fprintf(&in, "%.12f %.12f\n", a, b)
			}
			lines := runLines(t, in.String(), "cs2cs", "-f", "%.10f", tt.src, tt.dst)

			tr, err := terrain.NewTransform(tt.src, tt.dst)
			if err != nil {
				t.Fatal(err)
			}
			defer tr.Close()
			if err := tr.Transform(xs, ys); err != nil {
				t.Fatal(err)
			}
			if len(lines) != len(xs) {
				t.Fatalf("cs2cs gave %d lines for %d points", len(lines), len(xs))
			}
			worst := 0.0
			for i, l := range lines {
				f := fields(t, l)
				wx, wy := f[0], f[1]
				if tt.dstLatLon {
					wx, wy = wy, wx
				}
				dx, dy := math.Abs(xs[i]-wx), math.Abs(ys[i]-wy)
				worst = max(worst, dx/tt.tolX, dy/tt.tolY)
				if dx > tt.tolX || dy > tt.tolY {
					t.Errorf("point %d: got (%.10f, %.10f), cs2cs (%.10f, %.10f)", i, xs[i], ys[i], wx, wy)
				}
			}
			t.Logf("%d points, worst difference %.2g of the 1 mm tolerance", len(xs), worst)
		})
	}
}

// TestTransformFailures checks that points PROJ cannot transform become NaN
// and are named, while the rest are transformed, and that unknown CRSs are
// refused clearly.
func TestTransformFailures(t *testing.T) {
	tr, err := terrain.NewTransform("OGC:CRS84", "EPSG:32633")
	if err != nil {
		t.Fatal(err)
	}
	defer tr.Close()
	xs := []float64{15, 15, 15, math.NaN()}
	ys := []float64{36, 95, 36.5, 36} // latitude 95° is impossible
	err = tr.Transform(xs, ys)
	var te *terrain.TransformError
	if !errors.As(err, &te) {
		t.Fatalf("got error %v, want *TransformError", err)
	}
	if want := []int{1, 3}; !slices.Equal(te.Indices, want) {
		t.Errorf("failed indices %v, want %v", te.Indices, want)
	}
	if !strings.HasPrefix(err.Error(), "2 of 4 points could not be transformed") {
		t.Errorf("message %q", err)
	}
	// (15°E, 36°N) is on the central meridian of zone 33: easting 500000 m
	// exactly by definition of UTM's false easting; northing from
	// `echo 36 15 | cs2cs EPSG:4326 EPSG:32633` = 3983948.45.
	if math.Abs(xs[0]-500000) > 1e-6 || math.Abs(ys[0]-3983948.45) > 0.005 {
		t.Errorf("good point became (%.3f, %.3f)", xs[0], ys[0])
	}
	if !math.IsNaN(xs[1]) || !math.IsNaN(ys[1]) || math.IsNaN(xs[2]) {
		t.Errorf("failed point not NaN or good point NaN: %v %v", xs, ys)
	}

	for _, def := range []string{"EPSG:999999", "not a crs", ""} {
		_, err := terrain.NewTransform("EPSG:4326", def)
		if err == nil {
			t.Errorf("NewTransform to %q succeeded", def)
			continue
		}
		if def != "" && !strings.Contains(err.Error(), fmt.Sprintf("unknown CRS %q", def)) {
			t.Errorf("error %q does not say unknown CRS %q", err, def)
		}
	}
	if err := tr.Close(); err != nil {
		t.Fatal(err)
	}
	if err := tr.Transform([]float64{1}, []float64{1}); err == nil {
		t.Error("Transform after Close succeeded")
	}
}

// TestCRSInfo checks CRS descriptions. Unit factors from the EPSG dataset:
// metre = 1, US survey foot (EPSG:9003) = 0.304800609601219 m.
func TestCRSInfo(t *testing.T) {
	tests := []struct {
		def        string
		geographic bool
		epsg       int
		toMetre    float64
	}{
		{"EPSG:32633", false, 32633, 1},
		{"EPSG:2227", false, 2227, 0.304800609601219},
		{"EPSG:4326", true, 4326, 0},
		{"EPSG:3857", false, 3857, 1},
		{"+proj=utm +zone=33 +datum=WGS84 +units=us-ft", false, 0, 0.304800609601219},
		{"EPSG:32633+5773", false, 0, 1}, // compound: UTM 33N + EGM96 height
	}
	for _, tt := range tests {
		c, err := terrain.CRSInfo(tt.def)
		if err != nil {
			t.Errorf("%s: %v", tt.def, err)
			continue
		}
		if c.Geographic != tt.geographic || c.LinearUnitToMetre != tt.toMetre || (tt.epsg != 0 && c.EPSG != tt.epsg) {
			t.Errorf("%s: geographic %v, EPSG %d, unit %v m; want %v, %d, %v",
				tt.def, c.Geographic, c.EPSG, c.LinearUnitToMetre, tt.geographic, tt.epsg, tt.toMetre)
		}
		if c.WKT == "" {
			t.Errorf("%s: empty WKT", tt.def)
		}
		// The WKT describes the same CRS again.
		again, err := terrain.CRSInfo(c.WKT)
		if err != nil || again.Geographic != c.Geographic || again.LinearUnitToMetre != c.LinearUnitToMetre {
			t.Errorf("%s: WKT round trip gave %+v, %v", tt.def, again, err)
		}
	}
	if _, err := terrain.CRSInfo("EPSG:999999"); err == nil || !strings.Contains(err.Error(), `unknown CRS "EPSG:999999"`) {
		t.Errorf("CRSInfo(EPSG:999999) error %v", err)
	}
}
