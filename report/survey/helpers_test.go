package survey

import (
	"math"
	"sync"
	"testing"
	"time"

	"github.com/paulmach/orb"

	"canalstep/alignment"
	"canalstep/planner"
	"canalstep/planner/corridor"
	"canalstep/planner/hydraulics"
	"canalstep/report/layers/testdata/fixture"
	"canalstep/report/units"
	"canalstep/terrain"
)

// terrainCRS gives the corridor stage terrain's PROJ transforms, as the
// command does: the lon/lat columns then come from the real PROJ, which
// cs2cs can be checked against.
type terrainCRS struct{}

var _ corridor.CRS = terrainCRS{}

func (terrainCRS) Transformer(src, dst string) (alignment.Transformer, error) {
	return terrain.SharedTransform(src, dst)
}

func (terrainCRS) Describe(def string) (bool, float64, error) {
	c, err := terrain.CRSInfo(def)
	return c.Geographic, c.LinearUnitToMetre, err
}

// groundFunc is a synthetic DEM: the ground level (m) at a point in the
// DEM's CRS.
type groundFunc func(x, y float64) float64

var _ corridor.Ground = groundFunc(nil)

func (g groundFunc) Sample(xs, ys, out []float64) error {
	for k := range xs {
		out[k] = g(xs[k], ys[k])
	}
	return nil
}

// testDate is the inputs' date the tests write (invented).
var testDate = time.Date(2024, 3, 9, 0, 0, 0, 0, time.UTC)

// scenario is one synthetic plan, invented for the tests (demo data, no
// source): an alignment over a synthetic ground, planned with a small
// earth canal.
type scenario struct {
	name     string
	demCRS   string // EPSG code of the DEM
	geo      bool   // the DEM is geographic
	line     orb.LineString
	lineCRS  string // CRS of line
	extent   [4]float64
	ground   groundFunc
	spacing  float64 // m
	radius   float64 // m of the curves, 0 for none
	offtakes []alignment.Offtake
	units    units.System
}

// Origins of the scenarios: UTM zone 34N (EPSG:32634) near its central
// meridian 21°E, and lon/lat near 21.5°E 45.2°N.
const (
	x0, y0     = 500000.0, 5000000.0
	lon0, lat0 = 21.5, 45.2
)

// falling is ground that falls 0.9 % to the north-east, rises 2 % across
// the line to the south-east and undulates ±0.3 m; x, y are metres from an
// origin.
func falling(x, y float64) float64 {
	along := 0.6*x + 0.8*y
	across := 0.8*x - 0.6*y
	return 200 - 0.009*along + 0.02*across + 0.3*math.Sin(x/37)*math.Cos(y/53)
}

// metresPerDegree converts lon/lat near lat0 to metres east and north for
// the synthetic ground: a sphere of radius 6371 km is plenty for inventing
// a surface (the surface need not be any real one).
const metresPerDegree = 6371000 * math.Pi / 180

func projected(hostile bool) scenario {
	name := "Lateral 7"
	if hostile {
		name = fixture.HostileName
	}
	lvl := 150.0
	return scenario{
		name: name, demCRS: "EPSG:32634", lineCRS: "EPSG:32634",
		line:    orb.LineString{{x0, y0}, {x0 + 250, y0 + 320}, {x0 + 600, y0 + 470}, {x0 + 800, y0 + 780}},
		extent:  [4]float64{x0 - 2000, y0 - 2000, x0 + 3000, y0 + 3000},
		ground:  func(x, y float64) float64 { return falling(x-x0, y-y0) },
		spacing: 10, radius: 150,
		offtakes: []alignment.Offtake{{Name: "Turnout <b>&\"4\"\u202e", X: x0 + 430, Y: y0 + 420, CommandLevel: &lvl}},
		units:    units.SI,
	}
}

func geographic() scenario {
	lvl := 150.0
	east := 700.0 / (metresPerDegree * math.Cos(lat0*math.Pi/180))
	north := 600.0 / metresPerDegree
	return scenario{
		name: "Distributary 2", demCRS: "EPSG:4326", geo: true, lineCRS: "",
		line:   orb.LineString{{lon0, lat0}, {lon0 + east, lat0 + north}},
		extent: [4]float64{lon0 - 0.05, lat0 - 0.05, lon0 + 0.05, lat0 + 0.05},
		ground: func(lon, lat float64) float64 {
			return falling((lon-lon0)*metresPerDegree*math.Cos(lat0*math.Pi/180), (lat-lat0)*metresPerDegree)
		},
		spacing:  10,
		offtakes: []alignment.Offtake{{Name: "Farm gate 3", X: lon0 + east/2, Y: lat0 + north/2, CommandLevel: &lvl}},
		units:    units.SI,
	}
}

// sharpAngle is a short line that turns 100° to the right at an angle point
// (no curve), stationed every 4 m: the cross-sections on the inside of the
// turn overlap, and the right catch line loops there.
func sharpAngle() scenario {
	return scenario{
		name: "Spur 1", demCRS: "EPSG:32634", lineCRS: "EPSG:32634",
		line:    orb.LineString{{x0, y0}, {x0, y0 + 150}, {x0 + 150*math.Sin(100*math.Pi/180), y0 + 150 + 150*math.Cos(100*math.Pi/180)}},
		extent:  [4]float64{x0 - 2000, y0 - 2000, x0 + 3000, y0 + 3000},
		ground:  func(x, y float64) float64 { return 120 - 0.001*(y-y0) - 0.001*(x-x0) },
		spacing: 4,
		units:   units.SI,
	}
}

// design is the test canal: 1 m³/s in an earth section 1 m wide with
// 1.5:1 sides, n = 0.025, 0.3 to 0.9 m/s, drops of 1 m (invented values of
// the usual order for a small lateral; no source).
func design() planner.Design {
	d := planner.DefaultDesign()
	d.Flow, d.Section, d.Roughness = 1, hydraulics.Section{BottomWidth: 1, SideSlope: 1.5}, 0.025
	d.MaxVelocity, d.MinVelocity = 0.9, 0.3
	d.DropHeights = []float64{1}
	return d
}

// plans caches each scenario's Input: planning takes a while under -race.
var plans sync.Map // name → *planned

type planned struct {
	once sync.Once
	in   *Input
	err  error
}

// build stations, samples and plans s, once per test binary.
func build(t testing.TB, key string, s scenario) *Input {
	t.Helper()
	v, _ := plans.LoadOrStore(key, &planned{})
	p := v.(*planned)
	p.once.Do(func() { p.in, p.err = plan(s) })
	if p.err != nil {
		t.Fatalf("plan %s: %v", key, p.err)
	}
	return p.in
}

func plan(s scenario) (*Input, error) {
	info, err := terrain.CRSInfo(s.demCRS)
	if err != nil {
		return nil, err
	}
	dem := corridor.DEM{CRS: info.WKT, Geographic: info.Geographic, UnitToMetre: info.LinearUnitToMetre, CellSize: 1, Extent: s.extent}
	d := design()
	env, err := planner.SectionEnvelope(d)
	if err != nil {
		return nil, err
	}
	a := alignment.Alignment{Name: s.name, Line: s.line, CRS: s.lineCRS}
	o := corridor.Options{Spacing: s.spacing, CurveRadius: s.radius, US: s.units == units.US,
		CrossSections: true, HalfWidth: env.HalfWidth, CrossStep: 1, Holds: env.Holds(d),
		Offtakes: s.offtakes, MaxOfftakeDistance: 100}
	c, err := corridor.Build(a, dem, s.ground, terrainCRS{}, o)
	if err != nil {
		return nil, err
	}
	for _, ot := range c.Offtakes {
		d.Offtakes = append(d.Offtakes, planner.Offtake{Name: ot.Name, Chainage: ot.Chainage, Level: ot.Level, Offset: ot.Distance})
	}
	r, err := planner.Optimize(planner.Problem{Stations: c.Profile.Stations, Design: d})
	if err != nil {
		return nil, err
	}
	src := Source{DEM: "dem/" + s.name + ".tif", DEMCRS: info.WKT, DEMEPSG: info.EPSG, ZUnits: "m", Date: testDate, Version: "test"}
	if s.geo {
		w, err := terrain.CRSInfo(c.Profile.WorkCRS)
		if err != nil {
			return nil, err
		}
		src.WorkCRSWKT = w.WKT
	}
	return &Input{Corridor: c, Result: r, Units: s.units, Source: src}, nil
}

// stakesOf computes in's stakes, failing t on error.
func stakesOf(t testing.TB, in *Input) []Stake {
	t.Helper()
	st, err := Stakes(in)
	if err != nil {
		t.Fatal(err)
	}
	return st
}
