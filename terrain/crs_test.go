package terrain_test

import (
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"sync"
	"testing"

	"github.com/airbusgeo/godal"

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
		{"UTM 33N to CRS84", "EPSG:32633", "OGC:CRS84", false, false, 14.2, 35.5, 5e-9, 5e-9, true},
		// Against cs2cs's EPSG:4326, not its OGC:CRS84: for this NAD83 CRS
		// cs2cs picks another datum transformation from OGC:CRS84, 1.2 m
		// away, where GDAL picks the EPSG:4326 one for both (seen with
		// cs2cs and projinfo of PROJ 9.1.1).
		{"CA zone 3 ftUS to WGS84", "EPSG:2227", "EPSG:4326", false, true, -122.6, 37.3, 5e-9, 5e-9, true},
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
			if len(lines) != len(xs) {
				t.Fatalf("cs2cs gave %d lines for %d points", len(lines), len(xs))
			}
			in0, in1 := slices.Clone(xs), slices.Clone(ys)
			// The same pair built three ways: new, shared, and as the
			// inverse of the shared reverse pair.
			for _, how := range []string{"new", "shared", "inverse"} {
				var tr *terrain.Transform
				var err error
				switch how {
				case "new":
					tr, err = terrain.NewTransform(tt.src, tt.dst)
				case "shared":
					tr, err = terrain.SharedTransform(tt.src, tt.dst)
				case "inverse":
					var rev *terrain.Transform
					if rev, err = terrain.NewTransform(tt.dst, tt.src); err == nil {
						tr, err = rev.Inverse()
						rev.Close()
					}
				}
				if err != nil {
					t.Fatalf("%s: %v", how, err)
				}
				xs, ys := slices.Clone(in0), slices.Clone(in1)
				if err := tr.Transform(xs, ys); err != nil {
					t.Fatalf("%s: %v", how, err)
				}
				tr.Close()
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
						t.Errorf("%s, point %d: got (%.10f, %.10f), cs2cs (%.10f, %.10f)", how, i, xs[i], ys[i], wx, wy)
					}
				}
				t.Logf("%s: %d points, worst difference %.2g of the 1 mm tolerance", how, len(xs), worst)
			}
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

// TestTransformSplit checks that a batch large enough to be cut into parts
// transformed in parallel gives the same coordinates, bit for bit, as one
// handle transforming it whole, and names its failed points by their place
// in the whole batch, in both parts.
func TestTransformSplit(t *testing.T) {
	const n = 3*8192 + 17
	x0, y0 := make([]float64, n), make([]float64, n)
	for i := range x0 {
		x0[i], y0[i] = 14+2*float64(i)/n, 36+float64(i%1000)/1000
	}
	bad := []int{5, n/2 + 3, n - 1} // one in the first part, one in the second
	for _, i := range bad {
		y0[i] = 95 // latitude 95° is impossible
	}
	run := func(limit int) ([]float64, []float64, error) {
		tr, err := terrain.NewTransform(terrain.LonLat, "EPSG:32633")
		if err != nil {
			t.Fatal(err)
		}
		defer tr.Close()
		terrain.SetHandleLimit(tr, limit)
		xs, ys := slices.Clone(x0), slices.Clone(y0)
		return xs, ys, tr.Transform(xs, ys)
	}
	x1, y1, err1 := run(1)
	x2, y2, err2 := run(4)
	for _, err := range []error{err1, err2} {
		var te *terrain.TransformError
		if !errors.As(err, &te) || !slices.Equal(te.Indices, bad) || te.Total != n {
			t.Fatalf("error %v, want points %v of %d failed", err, bad, n)
		}
	}
	for i := range x1 {
		same := func(a, b float64) bool { return a == b || math.IsNaN(a) && math.IsNaN(b) }
		if !same(x1[i], x2[i]) || !same(y1[i], y2[i]) {
			t.Fatalf("point %d: (%v, %v) in parts, (%v, %v) whole", i, x2[i], y2[i], x1[i], y1[i])
		}
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

// oldTransform builds a transform as this package did before OGC:CRS84 was
// mapped to LonLat: godal's SpatialRefs (traditional GIS order) straight
// from the definitions.
func oldTransform(tb testing.TB, src, dst string) *godal.Transform {
	tb.Helper()
	s, err := godal.NewSpatialRef(src)
	if err != nil {
		tb.Fatal(err)
	}
	defer s.Close()
	d, err := godal.NewSpatialRef(dst)
	if err != nil {
		tb.Fatal(err)
	}
	defer d.Close()
	tr, err := godal.NewTransform(s, d)
	if err != nil {
		tb.Fatal(err)
	}
	return tr
}

// TestLonLatMatchesOldPath checks that taking OGC:CRS84 as EPSG:4326 in
// traditional order gives the coordinates the OGC:CRS84 transforms gave, to
// 1e-9° and 1 mm, both ways, for CRSs on WGS 84 and on other datums
// (NAD83, ETRS89, NZGD2000). The test areas are invented, inside each CRS's
// area of use.
func TestLonLatMatchesOldPath(t *testing.T) {
	const mm, deg = 0.001, 1e-9
	tests := []struct {
		dst        string
		lon0, lat0 float64
		toMetre    float64
	}{
		{"EPSG:32633", 14.2, 35.5, 1},              // WGS 84 / UTM 33N
		{"EPSG:3857", 14.2, 35.5, 1},               // WGS 84 / Pseudo-Mercator
		{"EPSG:2227", -122.6, 37.3, 1200.0 / 3937}, // NAD83 / California zone 3, US survey foot
		{"EPSG:25833", 14.2, 51.5, 1},              // ETRS89 / UTM 33N
		{"EPSG:2193", 174.2, -41.5, 1},             // NZGD2000 / New Zealand TM
		{"EPSG:32634+5773", 21.2, 41.0, 1},         // compound: UTM 34N + EGM96 height
	}
	// compare transforms the points both ways, checks the results agree to
	// tol once scaled to the tolerance's unit, and returns the old path's.
	compare := func(src, dst string, xs, ys []float64, scale, tol float64) (ox, oy []float64, worst float64) {
		ox, oy = slices.Clone(xs), slices.Clone(ys)
		old := oldTransform(t, src, dst)
		defer old.Close()
		if err := old.TransformEx(ox, oy, nil, nil); err != nil {
			t.Fatal(err)
		}
		tr, err := terrain.NewTransform(src, dst)
		if err != nil {
			t.Fatal(err)
		}
		defer tr.Close()
		nx, ny := slices.Clone(xs), slices.Clone(ys)
		if err := tr.Transform(nx, ny); err != nil {
			t.Fatal(err)
		}
		for i := range nx {
			d := max(math.Abs(nx[i]-ox[i]), math.Abs(ny[i]-oy[i])) * scale
			worst = max(worst, d)
			if d > tol {
				t.Errorf("%s to %s, point %d: (%.10f, %.10f), old path (%.10f, %.10f)", src, dst, i, nx[i], ny[i], ox[i], oy[i])
			}
		}
		return ox, oy, worst
	}
	for _, tt := range tests {
		var lons, lats []float64
		for i := range 20 {
			lons = append(lons, tt.lon0+0.037*float64(i))
			lats = append(lats, tt.lat0+0.029*float64(i%7))
		}
		ex, ey, worst := compare("OGC:CRS84", tt.dst, lons, lats, tt.toMetre, mm)
		// And back, from the projected points the old path gave.
		_, _, worstDeg := compare(tt.dst, "OGC:CRS84", ex, ey, 1, deg)
		t.Logf("%s: worst difference from the old path %.3g m forward, %.3g° back", tt.dst, worst, worstDeg)
	}
}

// TestSharedTransform checks the process-wide cache: one Transform per
// pair, OGC:CRS84 and LonLat as one, Close doing nothing, the inverse shared
// too, the identity for two spellings of one CRS, and failures kept.
func TestSharedTransform(t *testing.T) {
	a, err := terrain.SharedTransform("OGC:CRS84", "EPSG:32633")
	if err != nil {
		t.Fatal(err)
	}
	b, err := terrain.SharedTransform(terrain.LonLat, " EPSG:32633")
	if err != nil {
		t.Fatal(err)
	}
	if a != b {
		t.Error("OGC:CRS84 and LonLat gave two shared transforms")
	}
	if err := a.Close(); err != nil {
		t.Fatal(err)
	}
	// (15°E, 36°N) on zone 33's central meridian: easting 500000 m by
	// definition; northing 3983948.45 m from `echo 36 15 | cs2cs EPSG:4326
	// EPSG:32633`.
	xs, ys := []float64{15}, []float64{36}
	if err := b.Transform(xs, ys); err != nil {
		t.Fatalf("shared transform after Close: %v", err)
	}
	if math.Abs(xs[0]-500000) > 1e-6 || math.Abs(ys[0]-3983948.45) > 0.005 {
		t.Errorf("got (%.3f, %.3f)", xs[0], ys[0])
	}
	inv, err := a.Inverse()
	if err != nil {
		t.Fatal(err)
	}
	if again, _ := terrain.SharedTransform("EPSG:32633", "OGC:CRS84"); again != inv {
		t.Error("the shared inverse is not the shared transform of the reversed pair")
	}
	if err := inv.Transform(xs, ys); err != nil {
		t.Fatal(err)
	}
	if math.Abs(xs[0]-15) > 1e-9 || math.Abs(ys[0]-36) > 1e-9 { // round trip, 1e-9° ≈ 0.1 mm
		t.Errorf("round trip gave (%.12f, %.12f)", xs[0], ys[0])
	}

	utm, err := terrain.CRSInfo("EPSG:32633")
	if err != nil {
		t.Fatal(err)
	}
	for _, p := range [][2]string{{"EPSG:32633", "EPSG:32633"}, {utm.WKT, "EPSG:32633"}, {"OGC:CRS84", terrain.LonLat}} {
		id, err := terrain.SharedTransform(p[0], p[1])
		if err != nil {
			t.Fatal(err)
		}
		if !terrain.IsIdentity(id) {
			t.Errorf("%s to %s is not the identity", shorten(p[0]), p[1])
		}
		xs, ys := []float64{500123.25, math.NaN()}, []float64{3983948.5, 1}
		err = id.Transform(xs, ys)
		var te *terrain.TransformError
		if !errors.As(err, &te) || !slices.Equal(te.Indices, []int{1}) || xs[0] != 500123.25 || ys[0] != 3983948.5 {
			t.Errorf("identity: got (%v, %v), error %v; want the first point unchanged and the NaN one failed", xs, ys, err)
		}
	}

	_, err1 := terrain.SharedTransform("EPSG:999999", terrain.LonLat)
	_, err2 := terrain.SharedTransform("EPSG:999999", terrain.LonLat)
	if err1 == nil || err2 == nil || err1.Error() != err2.Error() || !strings.Contains(err1.Error(), `unknown CRS "EPSG:999999"`) {
		t.Errorf("errors %v and %v, want the same unknown-CRS error twice", err1, err2)
	}
}

func shorten(s string) string {
	if len(s) > 30 {
		return s[:27] + "..."
	}
	return s
}

// TestTransformConcurrent transforms from 8 goroutines through one shared
// Transform (run with -race), so that they take PROJ handles from its pool
// at once, and checks every result against the same points transformed
// first on one goroutine: the same operation, so the same bits.
func TestTransformConcurrent(t *testing.T) {
	tr, err := terrain.SharedTransform("EPSG:32633", terrain.LonLat)
	if err != nil {
		t.Fatal(err)
	}
	const n, goroutines = 2000, 8
	var in, want [goroutines][2][]float64
	for g := range goroutines {
		xs, ys := make([]float64, n), make([]float64, n)
		for i := range xs {
			xs[i] = 450000 + 37*float64(i) + float64(g)
			ys[i] = 3950000 + 19*float64(i)
		}
		in[g] = [2][]float64{xs, ys}
		want[g] = [2][]float64{slices.Clone(xs), slices.Clone(ys)}
		if err := tr.Transform(want[g][0], want[g][1]); err != nil {
			t.Fatal(err)
		}
	}
	var wg sync.WaitGroup
	errs := make(chan error, goroutines)
	for g := range goroutines {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for range 5 {
				gx, gy := slices.Clone(in[g][0]), slices.Clone(in[g][1])
				if err := tr.Transform(gx, gy); err != nil {
					errs <- err
					return
				}
				if !slices.Equal(gx, want[g][0]) || !slices.Equal(gy, want[g][1]) {
					errs <- fmt.Errorf("goroutine %d: results differ from the same points transformed alone", g)
					return
				}
			}
		}()
	}
	wg.Wait()
	close(errs)
	for err := range errs {
		t.Error(err)
	}
}

// TestCRSNoFileAccess checks that a CRS definition is never read from a
// file or fetched from a URL (GDAL would otherwise take a file name as the
// file's contents), while the same WKT given as text is accepted.
func TestCRSNoFileAccess(t *testing.T) {
	utm, err := terrain.CRSInfo("EPSG:32633")
	if err != nil {
		t.Fatal(err)
	}
	p := filepath.Join(t.TempDir(), "utm.wkt")
	if err := os.WriteFile(p, []byte(utm.WKT), 0o644); err != nil {
		t.Fatal(err)
	}
	if c, err := terrain.CRSInfo(p); err == nil {
		t.Errorf("CRSInfo(file name) read the file: %+v", c)
	} else if !strings.Contains(err.Error(), "unknown CRS") {
		t.Errorf("error %q", err)
	}
	if _, err := terrain.NewTransform("http://127.0.0.1:9/crs.wkt", terrain.LonLat); err == nil {
		t.Error("NewTransform took a URL as a CRS")
	}
	if c, err := terrain.CRSInfo(utm.WKT); err != nil || c.EPSG != 32633 {
		t.Errorf("WKT as text: %+v, %v", c, err)
	}
}
