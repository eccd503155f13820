package corridor

import (
	"errors"
	"math"
	"strings"
	"testing"

	"github.com/paulmach/orb"

	"canalstep/alignment"
)

// plane is a DEM that is an exact plane, z = z0 + ax·x + ay·y (m), over an
// extent; outside it, or in the hole, it has no data. Exact analytic ground.
type plane struct {
	z0, ax, ay float64
	ext        [4]float64
	hole       [4]float64 // a nodata rectangle (zero: none)
	calls      int
}

func (p *plane) Sample(xs, ys, out []float64) error {
	p.calls++
	var err error
	for i := range xs {
		x, y := xs[i], ys[i]
		switch {
		case x < p.ext[0] || x > p.ext[2] || y < p.ext[1] || y > p.ext[3]:
			out[i], err = math.NaN(), errors.New("outside")
		case x >= p.hole[0] && x <= p.hole[2] && y >= p.hole[1] && y <= p.hole[3] && p.hole != [4]float64{}:
			out[i] = math.NaN()
		default:
			out[i] = p.z0 + p.ax*x + p.ay*y
		}
	}
	return err
}

// identity is a CRS service for tests whose every CRS is the same
// projected metre grid: transforms are the identity.
type identity struct{}

func (identity) Transformer(src, dst string) (alignment.Transformer, error) {
	return alignment.TransformerFunc(func(xs, ys []float64) error { return nil }), nil
}

func (identity) Describe(def string) (bool, float64, error) {
	if def == "bad" {
		return false, 0, errors.New("unknown CRS")
	}
	return false, 1, nil
}

func testDEM() DEM {
	return DEM{CRS: "EPSG:32634", UnitToMetre: 1, CellSize: 1, Extent: [4]float64{-1000, -1000, 3000, 3000}}
}

// lShape is 600 m east then 400 m north, in projected metres.
func lShape(name string) alignment.Alignment {
	return alignment.Alignment{Name: name, Line: orb.LineString{{0, 0}, {600, 0}, {600, 400}}, CRS: "EPSG:32634"}
}

func TestCentreLineAndCrossSections(t *testing.T) {
	g := &plane{z0: 100, ax: -0.01, ay: 0.02, ext: testDEM().Extent}
	c, err := Build(lShape("L"), testDEM(), g, identity{}, Options{Spacing: 50, CrossSections: true, HalfWidth: 20, CrossStep: 2})
	if err != nil {
		t.Fatal(err)
	}
	p := c.Profile
	if n := len(p.Stations); n != 21 { // 1000 m at 50 m plus the end, the vertex at 600 m on the grid
		t.Fatalf("%d stations, want 21", n)
	}
	const tol = 1e-9 // m: exact plane arithmetic up to rounding
	for _, s := range p.Stations {
		if want := 100 - 0.01*s.WorkX + 0.02*s.WorkY; math.Abs(s.Ground-want) > tol {
			t.Errorf("%s: ground %.9f, plane %.9f", s.Label, s.Ground, want)
		}
		if s.Cross == nil || len(s.Cross.Offsets) != 21 || s.Cross.Offsets[0] != -20 || s.Cross.Offsets[20] != 20 {
			t.Fatalf("%s: cross-section %+v, want 21 points from -20 to 20 m", s.Label, s.Cross)
		}
		for k, off := range s.Cross.Offsets {
			x, y := s.CrossPoint(off, 1)
			if want := 100 - 0.01*x + 0.02*y; math.Abs(s.Cross.Levels[k]-want) > tol {
				t.Errorf("%s offset %g: level %.9f, plane %.9f", s.Label, off, s.Cross.Levels[k], want)
			}
		}
	}
	// On the eastward leg the right of travel is south: the ground across
	// falls to the right by ay = 0.02 per metre (exact: y = −offset).
	s := p.Stations[2]
	if got := (s.Cross.Levels[20] - s.Cross.Levels[0]) / 40; math.Abs(got+0.02) > 1e-12 {
		t.Errorf("cross-fall on the first leg %.6f, want -0.02", got)
	}
	if p.Stations[0].Label != "0+000.00" || p.Stations[20].Label != "1+000.00" {
		t.Errorf("labels %q … %q", p.Stations[0].Label, p.Stations[20].Label)
	}
	if g.calls != 2 {
		t.Errorf("%d Sample calls, want 2 (the centre line, then every cross-section in one call)", g.calls)
	}
}

func TestWidenOnce(t *testing.T) {
	g := &plane{z0: 100, ext: testDEM().Extent}
	var seen []float64
	holds := func(offsets, levels []float64, ground float64) bool {
		w := offsets[len(offsets)-1]
		seen = append(seen, w)
		return w >= 30 // the first width (20 m) is too narrow everywhere
	}
	c, err := Build(lShape("L"), testDEM(), g, identity{}, Options{Spacing: 100, CrossSections: true, HalfWidth: 20, CrossStep: 5, Holds: holds})
	if err != nil {
		t.Fatal(err)
	}
	for _, s := range c.Profile.Stations {
		if !s.Cross.Widened || s.Cross.Offsets[len(s.Cross.Offsets)-1] != 40 {
			t.Errorf("%s: widened %v to %g m, want true to 40 m", s.Label, s.Cross.Widened, s.Cross.Offsets[len(s.Cross.Offsets)-1])
		}
	}
	if len(seen) != len(c.Profile.Stations) {
		t.Errorf("Holds asked %d times for %d stations: it must judge the first width only", len(seen), len(c.Profile.Stations))
	}
}

func TestGroundErrors(t *testing.T) {
	ext := testDEM().Extent
	for _, tc := range []struct {
		name string
		g    *plane
		a    alignment.Alignment
		want string
	}{
		{"leaves the DEM", &plane{z0: 1, ext: [4]float64{-1000, -1000, 455, 3000}}, lShape("L"), "leaves the DEM at chainage 0+460.00 to 1+000.00"},
		{"nodata", &plane{z0: 1, ext: ext, hole: [4]float64{175, -5, 265, 5}}, lShape("L"), "without valid data at chainage 0+180.00 to 0+260.00"},
		{"projected coordinates without a CRS", &plane{z0: 1, ext: ext}, alignment.Alignment{Name: "P", Line: orb.LineString{{500000, 0}, {500600, 0}}}, "not WGS 84 lon/lat"},
		{"unknown CRS", &plane{z0: 1, ext: ext}, alignment.Alignment{Name: "P", Line: orb.LineString{{0, 0}, {600, 0}}, CRS: "bad"}, "alignment CRS"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			dem := testDEM()
			dem.Extent = tc.g.ext
			_, err := Build(tc.a, dem, tc.g, identity{}, Options{Spacing: 10})
			if err == nil || !strings.Contains(err.Error(), tc.want) || !errors.Is(err, ErrInput) {
				t.Errorf("got %v, want ErrInput saying %q", err, tc.want)
			}
		})
	}
}

func TestOfftakes(t *testing.T) {
	g := &plane{z0: 100, ax: -0.01, ext: testDEM().Extent}
	lvl, margin := 99.0, 0.3
	offs := []alignment.Offtake{
		{Name: "T1", X: 333, Y: 7, CommandLevel: &lvl},    // 7 m left of the first leg
		{Name: "T2", X: 612, Y: 200, Margin: &margin},     // 12 m right of the second leg
		{Name: "far", X: 300, Y: 150, CommandLevel: &lvl}, // 150 m from the line
	}
	o := Options{Spacing: 10, Offtakes: offs[:2], MaxOfftakeDistance: 100}
	c, err := Build(lShape("L"), testDEM(), g, identity{}, o)
	if err != nil {
		t.Fatal(err)
	}
	// Exact plane geometry: the foot of the perpendicular and the plane's
	// level at the offtake point.
	want := []Offtake{
		{Name: "T1", Chainage: 330, Distance: 7, Level: 99, Ground: 100 - 3.33},
		{Name: "T2", Chainage: 800, Distance: 12, Level: 100 - 6.12 + 0.3, Ground: 100 - 6.12},
	}
	for i, w := range want {
		got := c.Offtakes[i]
		if got.Name != w.Name || got.Chainage != w.Chainage || math.Abs(got.Distance-w.Distance) > 1e-9 ||
			math.Abs(got.Level-w.Level) > 1e-9 || math.Abs(got.Ground-w.Ground) > 1e-9 {
			t.Errorf("offtake %d: got %+v, want %+v", i, got, w)
		}
	}
	o.Offtakes = offs[2:]
	if _, err := Build(lShape("L"), testDEM(), g, identity{}, o); err == nil || !strings.Contains(err.Error(), "150.0 m from alignment") {
		t.Errorf("far offtake: got %v", err)
	}
}

func TestCurveRadius(t *testing.T) {
	g := &plane{z0: 100, ext: testDEM().Extent}
	c, err := Build(lShape("L"), testDEM(), g, identity{}, Options{Spacing: 20, CurveRadius: 100})
	if err != nil {
		t.Fatal(err)
	}
	// A 90° curve of radius 100 m: the route is 1000 − 2T + πR/2 with
	// T = R tan 45° = 100 m (the circular-curve formulas; Ghilani & Wolf,
	// Elementary Surveying, ch. 24, from memory).
	want := 1000 - 200 + math.Pi*50
	last := c.Profile.Stations[len(c.Profile.Stations)-1].Chainage
	if math.Abs(last-want) > 1e-6 || len(c.Route.Curves) != 1 {
		t.Errorf("route length %.6f m with %d curves, want %.6f m and 1", last, len(c.Route.Curves), want)
	}
}
