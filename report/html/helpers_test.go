package html_test

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"canalstep/alignment"
	"canalstep/planner"
	"canalstep/planner/hydraulics"
	"canalstep/report"
	"canalstep/report/html"
	"canalstep/report/units"
)

// ground returns n stations every 10 m on seeded synthetic ground: an
// average fall of about 1 % with rolling undulations and small roughness,
// and a ground cross-section at every station (a cross fall that wanders
// along the line, plus roughness) from 30 m left to 30 m right. Demo-style
// data of a fictional scheme, not a published case.
func ground(n int, seed uint64) []alignment.Station {
	r := rand.New(rand.NewPCG(seed, 7))
	c, g := make([]float64, n), make([]float64, n)
	a1, a2 := 0.5+r.Float64(), 0.2+0.4*r.Float64()
	w1, w2 := 300+400*r.Float64(), 80+120*r.Float64()
	ph1, ph2 := 2*math.Pi*r.Float64(), 2*math.Pi*r.Float64()
	fall := 0.006 + 0.004*r.Float64()
	rough := 0.0
	for i := range c {
		x := 10 * float64(i)
		rough = 0.8*rough + 0.04*r.NormFloat64()
		c[i], g[i] = x, 240-fall*x+a1*math.Sin(2*math.Pi*x/w1+ph1)+a2*math.Sin(2*math.Pi*x/w2+ph2)+rough
	}
	st := planner.LevelProfile(c, g)
	cross := 0.0
	for i := range st {
		cross = 0.9*cross + 0.01*r.NormFloat64() // cross fall, m/m, right side lower when positive
		var offs, lv []float64
		for a := -30.0; a <= 30; a += 5 {
			z := g[i] - (0.02+cross)*a
			if a != 0 {
				z += 0.03 * r.NormFloat64()
			}
			offs, lv = append(offs, a), append(lv, z)
		}
		st[i].Label = alignment.FormatStation(c[i], false)
		st[i].Cross = &alignment.CrossSection{Offsets: offs, Levels: lv}
	}
	return st
}

// design is a small earth canal of the fictional scheme: 1 m³/s, 1 m bed,
// 1.5:1 sides, n = 0.025, 0.3–0.9 m/s, drops of 0.5, 1 and 1.5 m, one
// offtake two thirds of the way down and, when margin > 0, a command margin
// (m) over the whole alignment.
func design(st []alignment.Station, offtake string, margin float64) planner.Design {
	d := planner.DefaultDesign()
	d.Flow, d.Section, d.Roughness = 1, hydraulics.Section{BottomWidth: 1, SideSlope: 1.5}, 0.025
	d.MaxVelocity, d.MinVelocity = 0.9, 0.3
	d.DropHeights = []float64{0.5, 1, 1.5}
	if margin > 0 {
		d.Command = []planner.CommandRange{{From: math.Inf(-1), To: math.Inf(1), Margin: margin}}
	}
	k := 2 * len(st) / 3
	d.Offtakes = []planner.Offtake{{Name: offtake, Chainage: st[k].Chainage, Level: st[k].Ground - 0.6, Offset: 8}}
	return d
}

// fixture is one planned alignment of the fictional scheme with its
// report, n stations long.
type fixture struct {
	problem planner.Problem
	profile *alignment.Profile
	result  *planner.Result
	err     error
}

func newFixture(tb testing.TB, n int, seed uint64, margin float64, name, offtake string) fixture {
	tb.Helper()
	st := ground(n, seed)
	p := planner.Problem{Stations: st, Design: design(st, offtake, margin)}
	res, err := planner.Optimize(p)
	if res == nil {
		tb.Fatalf("plan %q: %v", name, err)
	}
	prof := &alignment.Profile{Name: name, Folder: alignment.SafeName(name), Stations: st, WorkCRS: "EPSG:32633", WorkUnitToMetre: 1}
	return fixture{problem: p, profile: prof, result: res, err: err}
}

// provenance is a fixed provenance for the fixtures; the hashes are of the
// texts given.
func provenance(tb testing.TB, path, commandLine, crs string) html.Provenance {
	tb.Helper()
	var in []html.InputFile
	for _, f := range []struct{ role, path, body string }{
		{"DEM", path + "/dem.tif", "not a real raster"},
		{"alignments", path + "/canals.geojson", `{"type":"FeatureCollection","features":[]}`},
	} {
		x, err := html.NewInputFile(f.role, f.path, strings.NewReader(f.body))
		if err != nil {
			tb.Fatal(err)
		}
		in = append(in, x)
	}
	return html.Provenance{Version: "0.0.0-test", CommandLine: commandLine, Inputs: in, DEMCRS: crs, DEMCellSize: 5, InputsDate: "2024-05-01"}
}

// newReport is the fixture's report in u.
func (f fixture) report(tb testing.TB, u units.System, alts []planner.Alternative) html.Report {
	return html.Report{Name: f.profile.Name, Profile: f.profile, Result: f.result, PlanErr: f.err, Alternatives: alts,
		Provenance: provenance(tb, "inputs", "canalstep plan --dem inputs/dem.tif --alignments inputs/canals.geojson --out plan", "EPSG:32633"),
		Units:      u, Caution: report.SafetyNotice, Words: report.Words(u)}
}
