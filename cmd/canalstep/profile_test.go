package main

import (
	"bytes"
	"context"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"canalstep/terrain"
	"canalstep/testdata/reftool"
)

// Test fixtures: a planar DEM in UTM zone 34N (EPSG:32634), 10 m cells,
// upper-left corner (500000, 4500000), 300×300 cells. The numbers are
// invented for the tests; the plane makes bilinear samples exact.
const (
	fxX0, fxY0, fxCell = 500000.0, 4500000.0, 10.0
	fxN                = 300
)

// plane is the analytic ground of the planar fixture, m.
func plane(x, y float64) float64 { return 120 + 0.004*(x-fxX0) + 0.01*(y-(fxY0-3000)) }

// writePlaneDEM writes the planar fixture; cells whose centre lies in the
// nodata box (x0, y0, x1, y1), if given, are nodata.
func writePlaneDEM(t *testing.T, dir string, nodata ...float64) string {
	t.Helper()
	g := terrain.Grid{Width: fxN, Height: fxN, GeoTransform: [6]float64{fxX0, fxCell, 0, fxY0, 0, -fxCell},
		EPSG: 32634, NoData: -9999, HasNoData: true, Data: make([]float32, fxN*fxN)}
	for r := range fxN {
		for c := range fxN {
			x, y := fxX0+(float64(c)+0.5)*fxCell, fxY0-(float64(r)+0.5)*fxCell
			v := float32(plane(x, y))
			if len(nodata) == 4 && x > nodata[0] && x < nodata[2] && y > nodata[1] && y < nodata[3] {
				v = -9999
			}
			g.Data[r*fxN+c] = v
		}
	}
	p := filepath.Join(dir, "dem.tif")
	if err := terrain.WriteGeoTIFF(p, g); err != nil {
		t.Fatal(err)
	}
	return p
}

// lonLatLine converts projected EPSG:32634 vertices to a GeoJSON LineString
// Feature in lon/lat with the given name.
func lonLatLine(t *testing.T, name string, pts [][2]float64) string {
	t.Helper()
	tr, err := terrain.NewTransform("EPSG:32634", "OGC:CRS84")
	if err != nil {
		t.Fatal(err)
	}
	defer tr.Close()
	xs, ys := make([]float64, len(pts)), make([]float64, len(pts))
	for i, p := range pts {
		xs[i], ys[i] = p[0], p[1]
	}
	if err := tr.Transform(xs, ys); err != nil {
		t.Fatal(err)
	}
	var b strings.Builder
	fmt.Fprintf(&b, `{"type":"Feature","properties":{"name":%q},"geometry":{"type":"LineString","coordinates":[`, name)
	for i := range xs {
		if i > 0 {
			b.WriteString(",")
		}
		fmt.Fprintf(&b, "[%.12f,%.12f]", xs[i], ys[i])
	}
	b.WriteString("]}}")
	return b.String()
}

// TestProfilePlanar runs `canalstep profile` end to end on the planar DEM
// with a lon/lat alignment: stations at the spacing, every vertex and the
// end; ground equal to the plane (bilinear is exact on a plane: analytic
// case); chainage equal to the projected polyline length (three 500 m legs,
// 300-400-500 right triangles: exact analytic lengths).
func TestProfilePlanar(t *testing.T) {
	dir := t.TempDir()
	dem := writePlaneDEM(t, dir)
	pts := [][2]float64{{500500, 4499500}, {500800, 4499100}, {501100, 4498700}, {501100, 4498200}}
	aln := writeFile(t, dir, "a.geojson", lonLatLine(t, "Head race / reach 1", pts))
	out := filepath.Join(dir, "out")
	var stdout, stderr bytes.Buffer
	err := run(context.Background(), []string{"profile", "--dem", dem, "--alignment", aln, "--spacing", "25", "--out", out}, &stdout, &stderr)
	if err != nil {
		t.Fatalf("profile: %v", err)
	}
	folder := filepath.Join(out, "Head_race_reach_1")
	rows := readCSV(t, filepath.Join(folder, "ground.csv"))
	if got, want := strings.Join(rows[0], ","), "station,chainage_m,easting,northing,lon,lat,ground_m"; got != want {
		t.Fatalf("header %q, want %q", got, want)
	}
	// easting and northing are in the work CRS, here the DEM's EPSG:32634.
	rows = rows[1:]
	// 1500 m at 25 m: 61 stations; the vertices at 500 and 1000 m fall on the grid.
	if len(rows) != 61 {
		t.Fatalf("%d stations, want 61", len(rows))
	}
	for i, r := range rows {
		ch, x, y, z := num(t, r[1]), num(t, r[2]), num(t, r[3]), num(t, r[6])
		if math.Abs(ch-25*float64(i)) > 0.0015 { // printed to the mm; lon/lat round trip adds < 1e-6 m
			t.Errorf("row %d chainage %.3f, want %.3f", i, ch, 25*float64(i))
		}
		// Float32 storage of values near 130 m rounds to about 8e-6 m; print rounding 0.5 mm.
		if want := plane(x, y); math.Abs(z-want) > 0.001 {
			t.Errorf("row %d ground %.4f, want plane %.4f", i, z, want)
		}
	}
	if last := rows[len(rows)-1]; last[0] != "1+500.00" {
		t.Errorf("last station label %q, want 1+500.00", last[0])
	}
	if _, err := os.Stat(filepath.Join(folder, "ground.png")); err != nil {
		t.Errorf("ground.png: %v", err)
	}
	if !strings.Contains(stdout.String(), "61 stations") {
		t.Errorf("stdout lacks the station count:\n%s", stdout.String())
	}
}

// TestProfileGeographicLengthAgreesWithGeod stations a lon/lat alignment on a
// geographic DEM (stationing in a transverse Mercator projection centred on
// the alignment) and compares the final chainage with PROJ's geod on the
// WGS 84 ellipsoid: within 0.1 %, the bound issue 2 sets (the grid scale of
// such a projection departs from 1 by about (x/R)²/2, a few parts per
// million 20 km off its meridian: Snyder 1987, USGS PP 1395, from memory).
func TestProfileGeographicLengthAgreesWithGeod(t *testing.T) {
	geod := reftool.Need(t, "geod")
	dir := t.TempDir()
	const n = 400 // 0.001° cells over lon 20.8..21.2, lat 40.8..41.2
	g := terrain.Grid{Width: n, Height: n, GeoTransform: [6]float64{20.8, 0.001, 0, 41.2, 0, -0.001},
		EPSG: 4326, Data: make([]float32, n*n)}
	for i := range g.Data {
		g.Data[i] = float32(200 + i%n/10)
	}
	dem := filepath.Join(dir, "geo.tif")
	if err := terrain.WriteGeoTIFF(dem, g); err != nil {
		t.Fatal(err)
	}
	verts := [][2]float64{{20.85, 41.15}, {20.95, 41.05}, {21.10, 41.02}, {21.15, 40.85}}
	var coords []string
	for _, v := range verts {
		coords = append(coords, fmt.Sprintf("[%g,%g]", v[0], v[1]))
	}
	aln := writeFile(t, dir, "geo.geojson", `{"type":"LineString","coordinates":[`+strings.Join(coords, ",")+`]}`)
	out := filepath.Join(dir, "out")
	var stdout, stderr bytes.Buffer
	if err := run(context.Background(), []string{"profile", "--dem", dem, "--alignment", aln, "--spacing", "100", "--out", out}, &stdout, &stderr); err != nil {
		t.Fatalf("profile: %v", err)
	}
	rows := readCSV(t, filepath.Join(out, "alignment-1", "ground.csv"))
	got := num(t, rows[len(rows)-1][1])

	var want float64
	for i := 1; i < len(verts); i++ {
		// geod -I reads "lat1 lon1 lat2 lon2" and prints "az12 az21 s12".
		cmd := exec.Command(geod, "+ellps=WGS84", "-I", "+units=m", "-f", "%.6f")
		cmd.Stdin = strings.NewReader(fmt.Sprintf("%g %g %g %g\n", verts[i-1][1], verts[i-1][0], verts[i][1], verts[i][0]))
		b, err := cmd.Output()
		if err != nil {
			t.Fatalf("geod: %v", err)
		}
		f := strings.Fields(string(b))
		want += num(t, f[len(f)-1])
	}
	if rel := math.Abs(got-want) / want; rel > 0.001 {
		t.Errorf("stationed length %.3f m, geod %.3f m: %.4f %% apart, want ≤ 0.1 %%", got, want, 100*rel)
	}
	t.Logf("stationed length %.3f m, geod ellipsoidal %.3f m", got, want)
}

// TestProfileBadInput checks that each kind of bad input gives one clear
// line on stderr with exit status 2 (bad input: a path, a file, a value, an
// alignment the DEM cannot serve) and leaves no alignment folder behind.
func TestProfileBadInput(t *testing.T) {
	dir := t.TempDir()
	dem := writePlaneDEM(t, dir, 500900, 4499000, 501000, 4499100)
	inside := lonLatLine(t, "inside", [][2]float64{{500200, 4499800}, {500600, 4499800}})
	outside := lonLatLine(t, "long", [][2]float64{{500200, 4499800}, {503500, 4499800}})
	overNoData := lonLatLine(t, "wet", [][2]float64{{500800, 4499050}, {501200, 4499050}})
	noCRS := filepath.Join(dir, "nocrs.tif")
	if err := terrain.WriteGeoTIFF(noCRS, terrain.Grid{Width: 4, Height: 4, GeoTransform: [6]float64{0, 1, 0, 4, 0, -1}, Data: make([]float32, 16)}); err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		name    string
		args    []string
		alnBody string
		wantMsg string
	}{
		{"missing DEM", []string{"--dem", filepath.Join(dir, "nope.tif")}, inside, "nope.tif"},
		{"DEM without CRS", []string{"--dem", noCRS}, inside, "coordinate reference system"},
		{"not JSON", []string{"--dem", dem}, "this is not json", "not valid JSON"},
		{"no line", []string{"--dem", dem}, `{"type":"Point","coordinates":[21,40]}`, "no LineString"},
		{"one point", []string{"--dem", dem}, `{"type":"LineString","coordinates":[[21,40],[21,40]]}`, "fewer than two distinct points"},
		{"disjoint parts", []string{"--dem", dem}, `{"type":"MultiLineString","coordinates":[[[21,40],[21.001,40]],[[21.01,40],[21.02,40]]]}`, "do not join"},
		{"outside DEM", []string{"--dem", dem}, outside, "leaves the DEM at chainage 2+810.00 to 3+300.00"},
		{"over nodata", []string{"--dem", dem}, overNoData, "without valid data at chainage 0+100.00 to 0+200.00"},
		{"unknown EPSG", []string{"--dem", dem, "--alignment-crs", "EPSG:999999"}, inside, "EPSG:999999"},
		{"zero spacing", []string{"--dem", dem, "--spacing", "0"}, inside, "--spacing\" flag: 0 is outside [0.01, 10000] m"},
		{"spacing not a number", []string{"--dem", dem, "--spacing", "ten"}, inside, "\"ten\" is not a finite number"},
		{"projected coordinates without CRS", []string{"--dem", dem}, `{"type":"LineString","coordinates":[[500200,4499800],[500600,4499800]]}`, "--alignment-crs"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			sub := t.TempDir()
			aln := writeFile(t, sub, "a.geojson", c.alnBody)
			out := filepath.Join(sub, "out")
			stdout, stderr, code := runCmd(t, append([]string{"profile", "--alignment", aln, "--out", out}, c.args...)...)
			t.Log(stderr)
			if code != 2 {
				t.Errorf("exit status %d, want 2; stdout:\n%s", code, stdout)
			}
			checkOneLine(t, stderr, c.wantMsg)
			checkNoPartial(t, out)
		})
	}
}
