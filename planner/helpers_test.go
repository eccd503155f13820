package planner

import (
	"math"
	"math/rand/v2"

	"canalstep/planner/earthwork"
	"canalstep/planner/hydraulics"
)

// terrain returns n stations at 10 m on seeded synthetic ground: an average
// fall of 1 % with rolling undulations (a few metres over a few hundred
// metres) and small-scale roughness. Demo-style data, not a published case.
func terrain(n int, seed uint64) (c, g []float64) {
	r := rand.New(rand.NewPCG(seed, 99))
	c, g = make([]float64, n), make([]float64, n)
	a1, a2 := 1+2*r.Float64(), 0.5+r.Float64()
	w1, w2 := 300+400*r.Float64(), 80+120*r.Float64()
	ph1, ph2 := 2*math.Pi*r.Float64(), 2*math.Pi*r.Float64()
	slope := 0.006 + 0.008*r.Float64()
	rough := 0.0
	for i := range c {
		x := float64(i) * 10
		c[i] = x
		rough = 0.8*rough + 0.05*r.NormFloat64()
		g[i] = 500 - slope*x + a1*math.Sin(2*math.Pi*x/w1+ph1) + a2*math.Sin(2*math.Pi*x/w2+ph2) + rough
	}
	return c, g
}

// testDesign is a small earth canal (1 m³/s, 1 m bed, 1.5:1 sides,
// n = 0.025, 0.3–0.9 m/s) with three drop heights and the defaults.
func testDesign() Design {
	d := DefaultDesign()
	d.Flow, d.Section, d.Roughness = 1, hydraulics.Section{BottomWidth: 1, SideSlope: 1.5}, 0.025
	d.MaxVelocity, d.MinVelocity = 0.9, 0.3
	d.DropHeights = []float64{0.5, 1, 1.5}
	return d
}

// testProblem is testDesign on n stations of synthetic ground.
func testProblem(n int, seed uint64) Problem {
	c, g := terrain(n, seed)
	return Problem{Stations: LevelProfile(c, g), Design: testDesign()}
}

// chainages and grounds read a problem's profile back.
func chainages(p Problem) []float64 {
	out := make([]float64, len(p.Stations))
	for i, s := range p.Stations {
		out[i] = s.Chainage
	}
	return out
}

func grounds(p Problem) []float64 {
	out := make([]float64, len(p.Stations))
	for i, s := range p.Stations {
		out[i] = s.Ground
	}
	return out
}

// setChainages moves the stations of p to the given chainages (m).
func setChainages(p *Problem, c ...float64) {
	for i := range c {
		p.Stations[i].Chainage = c[i]
	}
}

// linearDesign is the single-grade case that WriteLP models: a rectangular
// lined canal without banks (2 m bed, vertical walls, no bank top or outer
// slopes: areas linear in depth), 0.5 m³/s, n = 0.015, 0.6–2.0 m/s, no
// waste or borrow price. Prices are illustrative (no source).
func linearDesign() Design {
	d := DefaultDesign()
	d.Flow, d.Section, d.Roughness = 0.5, hydraulics.Section{BottomWidth: 2}, 0.015
	d.MaxVelocity, d.MinVelocity = 2.0, 0.6
	d.BankTopWidth, d.OuterSlope, d.CutSlope = 0, 0, 0
	d.MinReach, d.TransitionLength = 5, ptr(1)
	d.Costs = earthwork.Costs{Cut: 4, Fill: 6, DropFixed: 300, DropPerMetre: 200}
	return d
}
