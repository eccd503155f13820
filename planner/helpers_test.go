package planner

import (
	"math"
	"math/rand/v2"

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

// testProblem is a small earth canal (1 m³/s, 1 m bed, 1.5:1 sides,
// n = 0.025, 0.3–0.9 m/s) on synthetic ground with three drop heights.
func testProblem(n int, seed uint64) Problem {
	c, g := terrain(n, seed)
	return Problem{Chainage: c, Ground: g, Flow: 1, Section: hydraulics.Section{BottomWidth: 1, SideSlope: 1.5},
		Roughness: 0.025, MaxVelocity: 0.9, MinVelocity: 0.3, DropHeights: []float64{0.5, 1, 1.5}}
}
