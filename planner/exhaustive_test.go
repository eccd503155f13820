package planner

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"canalstep/planner/earthwork"
	"canalstep/planner/hydraulics"
)

// steepCanal is a small lined canal whose velocity limits allow a wide range
// of grades: 0.5 m³/s, 0.5 m bed, 1:1 sides, n = 0.015, 0.6–2.0 m/s (its
// limits are about 0.00034 to 0.0087).
// Drops are priced low (tiny cases are 60–80 m long) so that optima use them.
func steepCanal(c, g []float64) Problem {
	d := DefaultDesign()
	d.Flow, d.Section, d.Roughness = 0.5, hydraulics.Section{BottomWidth: 0.5, SideSlope: 1}, 0.015
	d.MaxVelocity, d.MinVelocity, d.Costs = 2.0, 0.6, tinyCosts
	d.TransitionLength = ptr(1)
	return Problem{Stations: LevelProfile(c, g), Design: d}
}

func ptr(x float64) *float64 { return &x }

// tinyCosts: illustrative prices for the tiny cases (no source).
var tinyCosts = earthwork.Costs{Cut: 4, Fill: 6, Shrinkage: 0.1, Waste: 2, Borrow: 8, DropFixed: 150, DropPerMetre: 100}

// tinyGround is n stations at 10 m with a seeded, bumpy fall of about 3 %.
func tinyGround(n int, seed uint64) (c, g []float64) {
	r := rand.New(rand.NewPCG(seed, 7))
	c, g = make([]float64, n), make([]float64, n)
	z := 50.0
	for i := range c {
		c[i] = 10 * float64(i)
		g[i] = z
		z -= 0.3 + 0.35*r.NormFloat64()
	}
	return c, g
}

// exhaustive enumerates every drop placement, height and reach grade the
// discretisation allows (grade changes only where the two bed lines are in
// step, see the package doc), checks each profile against the constraints
// and prices it, independently of the dynamic programme. It returns the least
// cost and the number of feasible profiles.
func exhaustive(q *prepared) (best float64, feasible int) {
	c := q.c
	n := len(c)
	best = math.Inf(1)
	var rec func(drops []dropSpec, grades []int)
	rec = func(drops []dropSpec, grades []int) {
		if pl := q.evaluate(drops, grades); len(q.violations(pl, drops)) == 0 {
			feasible++
			best = math.Min(best, pl.Totals.TotalCost)
		}
		first := 1
		if len(drops) > 0 {
			first = drops[len(drops)-1].station + 1
		}
		cur := grades[len(grades)-1]
		for j := first; j <= n-2; j++ {
			if !q.dropAllowed(j) {
				continue
			}
			if len(drops) > 0 {
				last := drops[len(drops)-1]
				if c[j]-c[last.station] < q.spacing[q.heightIndex(last.height)]-1e-9 {
					continue
				}
			}
			for _, h := range q.heights {
				for g := range q.grades {
					m := (q.grades[g] - q.grades[cur]) * (c[j] - c[0]) / q.d.Step
					if math.Abs(m-math.Round(m)) > 1e-6 {
						continue
					}
					rec(append(append([]dropSpec(nil), drops...), dropSpec{j, h}), append(append([]int(nil), grades...), g))
				}
			}
		}
	}
	for g := range q.grades {
		rec(nil, []int{g})
	}
	return best, feasible
}

func TestOptimumMatchesExhaustiveSearch(t *testing.T) {
	cases := []struct {
		name     string
		n        int
		seed     uint64
		grades   []float64 // nil: defaults
		heights  []float64
		basin    float64 // fixed basin length, m
		minReach float64
		volume   earthwork.VolumeMethod
		mod      func(p *Problem)
	}{
		// Grades 0.001 apart stay in step on a 1 cm grid at 10 m stations,
		// so any station may change grade.
		{name: "three grades in step, two heights", n: 8, seed: 1, grades: []float64{0.008, 0.005, 0.003}, heights: []float64{0.3, 0.6}, basin: 6, minReach: 5},
		{name: "next drop at the next station", n: 7, seed: 8, grades: []float64{0.008, 0.002}, heights: []float64{0.5}, basin: 2, minReach: 2},
		{name: "default grades, three heights", n: 9, seed: 2, heights: []float64{0.2, 0.4, 0.7}, basin: 6, minReach: 5},
		{name: "spacing two stations", n: 9, seed: 3, grades: []float64{0.008, 0.004}, heights: []float64{0.5, 1.0}, basin: 6, minReach: 5},
		{name: "prismoidal volumes", n: 8, seed: 4, grades: []float64{0.007, 0.002}, heights: []float64{0.4}, basin: 6, minReach: 5, volume: earthwork.Prismoidal},
		{name: "tight cut and fill", n: 8, seed: 5, grades: []float64{0.008, 0.006, 0.001}, heights: []float64{0.3, 0.9}, basin: 6, minReach: 5,
			mod: func(p *Problem) { p.Design.MaxCutDepth, p.Design.MaxFillHeight = 1.2, 0.6 }},
		{name: "end tie-in and fixed invert", n: 9, seed: 6, grades: []float64{0.008, 0.005}, heights: []float64{0.3, 0.5}, basin: 6, minReach: 5,
			mod: func(p *Problem) {
				// Levels reachable on the grid: the start invert minus whole
				// steps and the grade's fall (chosen from a feasible profile).
				z0 := p.Stations[0].Ground - 0.4
				p.Design.StartInvert = &z0
				end := z0 - 0.008*80 - 0.3 - 0.5
				p.Design.EndInvert = &end
				p.Design.FixedInverts = []Control{{Chainage: 30, Level: z0 - 0.008*30}}
			}},
		// Irregular stations (alignment vertices): grades 0.003 apart are in
		// step only at chainages that are multiples of 10/3 m, and several
		// drop stations free the next drop at the same station.
		{name: "irregular stations", n: 9, seed: 9, grades: []float64{0.008, 0.005}, heights: []float64{0.3, 0.6}, basin: 5, minReach: 4,
			mod: func(p *Problem) { setChainages(p, 0, 10, 17, 30, 36.5, 40, 52, 60, 70) }},
		{name: "minimum water level", n: 8, seed: 7, grades: []float64{0.008, 0.004}, heights: []float64{0.3, 0.6}, basin: 6, minReach: 5,
			mod: func(p *Problem) {
				p.Design.MinWaterLevels = []Control{{Chainage: 40, Level: p.Stations[4].Ground + 0.2}}
			}},
	}
	var withDrops, withGradeChange int
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			c, g := tinyGround(tc.n, tc.seed)
			p := steepCanal(c, g)
			p.Design.Grades, p.Design.DropHeights, p.Design.MinReach = tc.grades, tc.heights, tc.minReach
			if tc.mod != nil {
				tc.mod(&p)
			}
			p.Design.Volume, p.Design.BasinLength = tc.volume, func(float64) float64 { return tc.basin }
			q, err := prepare(p)
			if err != nil {
				t.Fatal(err)
			}
			want, nfeas := exhaustive(q)
			res, err := Optimize(p)
			if math.IsInf(want, 1) {
				if !errors.Is(err, ErrInfeasible) {
					t.Fatalf("exhaustive search finds no feasible profile; Optimize: %v", err)
				}
				return
			}
			if err != nil {
				t.Fatalf("Optimize: %v (exhaustive optimum %.6f over %d profiles)", err, want, nfeas)
			}
			// Both sides sum the same float64 terms in different orders.
			if got := res.Totals.TotalCost; math.Abs(got-want) > 1e-9*want {
				t.Errorf("optimum %.9f, exhaustive %.9f (%d feasible profiles)", got, want, nfeas)
			}
			if len(res.Drops) > 0 {
				withDrops++
			}
			for r := 1; r < len(res.Reaches); r++ {
				if res.Reaches[r].Grade != res.Reaches[r-1].Grade {
					withGradeChange++
					break
				}
			}
			t.Logf("optimum %.3f over %d feasible profiles, %d drops, %d reaches", want, nfeas, len(res.Drops), len(res.Reaches))
		})
	}
	// The cases must exercise drops and grade changes, or they prove little.
	if withDrops < 4 || withGradeChange < 1 {
		t.Errorf("only %d optima use drops and %d change grade; the cases are too easy", withDrops, withGradeChange)
	}
}

func ExampleOptimize() {
	// Ten stations of a small lined canal on ground falling 3 % per station.
	c, g := make([]float64, 10), make([]float64, 10)
	for i := range c {
		c[i], g[i] = 10*float64(i), 50-0.03*10*float64(i)
	}
	p := steepCanal(c, g)
	p.Design.DropHeights, p.Design.Grades, p.Design.MinReach = []float64{0.5, 1.0}, []float64{0.008}, 5
	p.Design.BasinLength = func(float64) float64 { return 3 }
	res, err := Optimize(p)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(res.Status)
	for _, d := range res.Drops {
		fmt.Printf("drop %.1f m at chainage %.0f m: invert %.3f → %.3f m\n", d.Height, d.Chainage, d.UpstreamInvert, d.DownstreamInvert)
	}
	fmt.Printf("total cost %.0f, baseline %.0f\n", res.Totals.TotalCost, res.EvenSpacing.Totals.TotalCost)
	// Output:
	// optimal
	// drop 1.0 m at chainage 10 m: invert 49.604 → 48.604 m
	// drop 0.5 m at chainage 40 m: invert 48.364 → 47.864 m
	// drop 0.5 m at chainage 60 m: invert 47.704 → 47.204 m
	// total cost 2211, baseline 4568
}
