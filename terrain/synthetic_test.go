package terrain_test

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"unsafe"

	"canalstep/terrain"
	"canalstep/testdata/reftool"
)

// bilinear samples g at easting e, northing n (metres of g's CRS) between
// the four surrounding cell centres; NaN when the stencil leaves the grid or
// touches nodata. Written here, independently of the GDAL sampler, so the
// synthetic terrain is tested in pure Go.
func bilinear(g terrain.Grid, e, n float64) float64 {
	gt := g.GeoTransform
	fc := (e-gt[0])/gt[1] - 0.5
	fr := (n-gt[3])/gt[5] - 0.5
	c0, r0 := int(math.Floor(fc)), int(math.Floor(fr))
	if c0 < 0 || r0 < 0 || c0+1 >= g.Width || r0+1 >= g.Height {
		return math.NaN()
	}
	tx, ty := fc-float64(c0), fr-float64(r0)
	at := func(c, r int) float64 {
		v := float64(g.Data[r*g.Width+c])
		if g.HasNoData && v == g.NoData {
			return math.NaN()
		}
		return v
	}
	top := at(c0, r0)*(1-tx) + at(c0+1, r0)*tx
	bot := at(c0, r0+1)*(1-tx) + at(c0+1, r0+1)*tx
	return top*(1-ty) + bot*ty
}

// profile samples g every step metres along the polyline v and returns the
// chainages and elevations.
func profile(g terrain.Grid, v [][2]float64, step float64) (ch, z []float64) {
	var c0 float64
	for i := 1; i < len(v); i++ {
		a, b := v[i-1], v[i]
		l := math.Hypot(b[0]-a[0], b[1]-a[1])
		for s := 0.0; s < l; s += step {
			t := s / l
			ch = append(ch, c0+s)
			z = append(z, bilinear(g, a[0]+t*(b[0]-a[0]), a[1]+t*(b[1]-a[1])))
		}
		c0 += l
	}
	last := v[len(v)-1]
	return append(ch, c0), append(z, bilinear(g, last[0], last[1]))
}

// fans caches demo grids by seed: generating one takes about 0.1 s, more
// under the race detector.
var fans sync.Map

func fan(seed uint64) terrain.Grid {
	if g, ok := fans.Load(seed); ok {
		return g.(terrain.Grid)
	}
	g := terrain.SyntheticFan(seed)
	fans.Store(seed, g)
	return g
}

func gridBytes(g terrain.Grid) []byte {
	return unsafe.Slice((*byte)(unsafe.Pointer(unsafe.SliceData(g.Data))), 4*len(g.Data))
}

func TestSyntheticFanReproducible(t *testing.T) {
	a, b := terrain.SyntheticFan(7), terrain.SyntheticFan(7)
	if !bytes.Equal(gridBytes(a), gridBytes(b)) || a.GeoTransform != b.GeoTransform {
		t.Fatal("the same seed gave different grids")
	}
	c := terrain.SyntheticFan(8)
	if bytes.Equal(gridBytes(a), gridBytes(c)) {
		t.Fatal("different seeds gave the same grid")
	}
	if a.Width*a.Height != len(a.Data) || a.EPSG != terrain.DemoEPSG || !a.HasNoData {
		t.Fatalf("grid header inconsistent: %d×%d, %d values, EPSG %d", a.Width, a.Height, len(a.Data), a.EPSG)
	}
	var void int
	for _, v := range a.Data {
		switch {
		case float64(v) == a.NoData:
			void++
		case !(v > 200 && v < 600):
			t.Fatalf("elevation %v outside the fan's plausible 200–600 m", v)
		}
	}
	// The void is a disc of 260 m radius over 10 m cells: π·26² ≈ 2124 cells.
	if void < 2000 || void > 2250 {
		t.Errorf("nodata cells = %d, want about 2124 (the void)", void)
	}
	if !bytes.Equal(terrain.DemoAlignmentsGeoJSON(), terrain.DemoAlignmentsGeoJSON()) {
		t.Error("the alignments' GeoJSON differs between calls")
	}
}

// TestDemoRouteSlopes checks the demo is what the scheme needs: along each
// route the ground falls 0.5–3 % on average (the range the demo is specified
// to show; irrigated fans commonly fall about that much, common practice, no
// source), and it is not uniform, so drops placed on the real profile beat
// even spacing.
func TestDemoRouteSlopes(t *testing.T) {
	for _, seed := range []uint64{1, 42} {
		g := fan(seed)
		for _, a := range terrain.DemoAlignments() {
			t.Run(fmt.Sprintf("seed%d/%s", seed, a.Name), func(t *testing.T) {
				ch, z := profile(g, a.Vertices, 10)
				for i, v := range z {
					if math.IsNaN(v) {
						t.Fatalf("no ground at chainage %.0f m", ch[i])
					}
				}
				length := ch[len(ch)-1]
				lmin, lmax, slo, shi := 3000.0, 7000.0, 0.005, 0.03
				if a.Main { // the main canal runs across the fan's head, nearly along the contours
					lmin, lmax, slo, shi = 1000, 3000, 0.001, 0.01
				}
				if length < lmin || length > lmax {
					t.Errorf("length %.0f m, want %.0f–%.0f m", length, lmin, lmax)
				}
				avg := (z[0] - z[len(z)-1]) / length
				if avg < slo || avg > shi {
					t.Errorf("average ground slope %.2f %%, want %.1f–%.1f %%", 100*avg, 100*slo, 100*shi)
				}
				// Slopes over 200 m windows (20 steps of 10 m).
				lo, hi := math.Inf(1), math.Inf(-1)
				for i := 20; i < len(z); i++ {
					s := (z[i-20] - z[i]) / (ch[i] - ch[i-20])
					lo, hi = math.Min(lo, s), math.Max(hi, s)
				}
				if hi < 2*lo+0.005 {
					t.Errorf("200 m slopes %.2f–%.2f %%: the ground is too uniform to show the point of placing drops", 100*lo, 100*hi)
				}
				t.Logf("length %.0f m, fall %.1f m, average %.2f %%, 200 m windows %.2f … %.2f %%",
					length, z[0]-z[len(z)-1], 100*avg, 100*lo, 100*hi)
			})
		}
	}
}

func TestDemoAlignmentsGeoJSON(t *testing.T) {
	var fc struct {
		Type string `json:"type"`
		CRS  struct {
			Properties struct{ Name string } `json:"properties"`
		} `json:"crs"`
		Features []struct {
			Properties struct{ Name string } `json:"properties"`
			Geometry   struct {
				Type        string       `json:"type"`
				Coordinates [][2]float64 `json:"coordinates"`
			} `json:"geometry"`
		} `json:"features"`
	}
	if err := json.Unmarshal(terrain.DemoAlignmentsGeoJSON(), &fc); err != nil {
		t.Fatal(err)
	}
	if fc.Type != "FeatureCollection" || fc.CRS.Properties.Name != "urn:ogc:def:crs:EPSG::32634" {
		t.Fatalf("type %q, crs %q", fc.Type, fc.CRS.Properties.Name)
	}
	want := terrain.DemoAlignments()
	if len(fc.Features) != len(want) || len(want) != 5 {
		t.Fatalf("%d features, want %d (the main canal, three branches, a second route of one)", len(fc.Features), len(want))
	}
	g := fan(1)
	x0, y0 := g.GeoTransform[0], g.GeoTransform[3]
	x1, y1 := x0+float64(g.Width)*g.GeoTransform[1], y0+float64(g.Height)*g.GeoTransform[5]
	for i, f := range fc.Features {
		if f.Properties.Name != want[i].Name || f.Geometry.Type != "LineString" {
			t.Errorf("feature %d: %q %s", i, f.Properties.Name, f.Geometry.Type)
		}
		if len(f.Geometry.Coordinates) < 5 {
			t.Errorf("%s: %d vertices, want several", f.Properties.Name, len(f.Geometry.Coordinates))
		}
		for _, p := range f.Geometry.Coordinates {
			if p[0] < x0+100 || p[0] > x1-100 || p[1] > y0-100 || p[1] < y1+100 {
				t.Errorf("%s: vertex %v within 100 m of the grid's edge or outside", f.Properties.Name, p)
			}
		}
	}
}

// TestSyntheticFanGeoTIFF writes the demo grid as a GeoTIFF and reads cells
// back with GDAL's gdallocationinfo (gdal-bin), an outside check that the
// grid's orientation, georeferencing and values survive the trip.
func TestSyntheticFanGeoTIFF(t *testing.T) {
	reftool.Need(t, "gdallocationinfo")
	g := fan(1)
	path := filepath.Join(t.TempDir(), "fan.tif")
	if err := terrain.WriteGeoTIFF(path, g); err != nil {
		t.Fatal(err)
	}
	cells := [][2]int{{0, 0}, {599, 0}, {0, 799}, {599, 799}, {300, 400}, {123, 456}}
	var in strings.Builder
	for _, c := range cells {
		fmt.Fprintf(&in, "%.3f %.3f\n", g.GeoTransform[0]+(float64(c[0])+0.5)*g.GeoTransform[1],
			g.GeoTransform[3]+(float64(c[1])+0.5)*g.GeoTransform[5])
	}
	lines := runLines(t, in.String(), "gdallocationinfo", "-valonly", "-geoloc", path)
	if len(lines) != len(cells) {
		t.Fatalf("gdallocationinfo gave %d lines for %d cells", len(lines), len(cells))
	}
	for i, c := range cells {
		got := fields(t, lines[i])
		want := float64(g.Data[c[1]*g.Width+c[0]])
		// Float32 printed by GDAL with at least 7 significant digits.
		if len(got) != 1 || math.Abs(got[0]-want) > 1e-4 {
			t.Errorf("cell %v: gdallocationinfo %v, grid %v", c, got, want)
		}
	}
	out := runLines(t, "", "gdalsrsinfo", "-o", "epsg", path)
	if !strings.Contains(strings.Join(out, " "), "EPSG:32634") {
		t.Errorf("gdalsrsinfo: %q, want EPSG:32634", out)
	}
}

func BenchmarkSyntheticFan(b *testing.B) {
	b.ReportAllocs()
	for b.Loop() {
		terrain.SyntheticFan(1)
	}
}

func ExampleDemoAlignments() {
	for _, a := range terrain.DemoAlignments() {
		var l float64
		for i := 1; i < len(a.Vertices); i++ {
			l += math.Hypot(a.Vertices[i][0]-a.Vertices[i-1][0], a.Vertices[i][1]-a.Vertices[i-1][1])
		}
		fmt.Printf("%s: %d vertices, %.0f m, starts at E %.2f N %.2f (EPSG:%d)\n",
			a.Name, len(a.Vertices), l, a.Vertices[0][0], a.Vertices[0][1], terrain.DemoEPSG)
	}
	// Output:
	// West Branch: 11 vertices, 4912 m, starts at E 540772.55 N 4625613.66 (EPSG:32634)
	// Middle Branch: 13 vertices, 5663 m, starts at E 541475.41 N 4625557.32 (EPSG:32634)
	// East Branch: 10 vertices, 3645 m, starts at E 541229.62 N 4625211.49 (EPSG:32634)
	// Main Canal: 9 vertices, 1811 m, starts at E 540217.06 N 4625879.20 (EPSG:32634)
	// Middle Branch east route: 13 vertices, 5371 m, starts at E 541527.02 N 4625518.90 (EPSG:32634)
}
