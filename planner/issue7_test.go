package planner

import (
	"math"
	"math/rand/v2"
	"testing"

	"canalstep/alignment"
)

// withCrossFall gives every station of p a DEM-like cross-section: the
// centre-line ground with a seeded cross-fall (up to ±8 %) and a little
// roughness, sampled every metre out to halfWidth metres. Synthetic ground,
// not a published case.
func withCrossFall(p *Problem, seed uint64, halfWidth float64) {
	r := rand.New(rand.NewPCG(seed, 17))
	for i := range p.Stations {
		s := &p.Stations[i]
		k := 0.16 * (r.Float64() - 0.5)
		cs := &alignment.CrossSection{}
		for off := -halfWidth; off <= halfWidth+1e-9; off++ {
			lv := s.Ground + k*off
			if off != 0 {
				lv += 0.05 * (r.Float64() - 0.5)
			}
			cs.Offsets = append(cs.Offsets, off)
			cs.Levels = append(cs.Levels, lv)
		}
		s.Cross = cs
	}
}

// levelCross gives every station a cross-section that is level at its
// centre-line ground: the DEM cross-section code path on ground where it
// must agree with the level-ground model exactly.
func levelCross(p *Problem, halfWidth float64) {
	for i := range p.Stations {
		s := &p.Stations[i]
		s.Cross = &alignment.CrossSection{Offsets: []float64{-halfWidth, 0, halfWidth}, Levels: []float64{s.Ground, s.Ground, s.Ground}}
	}
}

// TestCrossSectionsMatchExhaustiveSearch: with DEM cross-sections the
// optimum is still the least cost over every profile the discretisation
// allows (exhaustive enumeration, independent of the dynamic programme).
func TestCrossSectionsMatchExhaustiveSearch(t *testing.T) {
	for _, tc := range []struct {
		name    string
		n       int
		seed    uint64
		grades  []float64
		heights []float64
	}{
		{"two grades, two heights", 8, 21, []float64{0.008, 0.005, 0.003}, []float64{0.3, 0.6}},
		{"one grade, three heights", 9, 22, []float64{0.008}, []float64{0.2, 0.4, 0.7}},
		{"spacing two stations", 9, 23, []float64{0.008, 0.004}, []float64{0.5, 1.0}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			c, g := tinyGround(tc.n, tc.seed)
			p := steepCanal(c, g)
			p.Design.Grades, p.Design.DropHeights, p.Design.MinReach = tc.grades, tc.heights, 5
			p.Design.BasinLength = func(float64) float64 { return 6 }
			withCrossFall(&p, tc.seed, 25)
			q, err := prepare(p)
			if err != nil {
				t.Fatal(err)
			}
			if !q.cross {
				t.Fatal("the problem did not take the cross-sections")
			}
			want, nfeas := exhaustive(q)
			res, err := Optimize(p)
			if err != nil {
				t.Fatalf("Optimize: %v (exhaustive %.6f over %d profiles)", err, want, nfeas)
			}
			// Both sides sum the same float64 terms in different orders.
			if got := res.Totals.TotalCost; math.Abs(got-want) > 1e-9*want {
				t.Errorf("optimum %.9f, exhaustive %.9f (%d feasible profiles)", got, want, nfeas)
			}
			if res.Record.Ground != "cross_sections" {
				t.Errorf("ground model %q", res.Record.Ground)
			}
			t.Logf("optimum %.3f over %d feasible profiles, %d drops", want, nfeas, len(res.Drops))
		})
	}
}

// TestCrossSectionsLevelEqualsLevel: level cross-sections give the
// level-ground plan to the last bit of the cost (the two area integrators
// agree on level ground; planner/earthwork tests them against closed forms).
func TestCrossSectionsLevelEqualsLevel(t *testing.T) {
	p := testProblem(200, 4)
	a, err := Optimize(p)
	if err != nil {
		t.Fatal(err)
	}
	levelCross(&p, 40)
	b, err := Optimize(p)
	if err != nil {
		t.Fatal(err)
	}
	// Different integrators of the same exact areas: rounding only.
	if math.Abs(a.Totals.TotalCost-b.Totals.TotalCost) > 1e-9*a.Totals.TotalCost || a.Totals.DropCount != b.Totals.DropCount {
		t.Errorf("level ground %.6f (%d drops), level cross-sections %.6f (%d drops)", a.Totals.TotalCost, a.Totals.DropCount, b.Totals.TotalCost, b.Totals.DropCount)
	}
}

// gentleProblem is testDesign on n stations of seeded ground falling about
// 1 % with gentle undulations (±0.3 m): land a canal can command
// everywhere. Synthetic, not a published case.
func gentleProblem(n int, seed uint64) Problem {
	r := rand.New(rand.NewPCG(seed, 5))
	c, g := make([]float64, n), make([]float64, n)
	ph, w := 2*math.Pi*r.Float64(), 250+200*r.Float64()
	for i := range c {
		c[i] = 10 * float64(i)
		g[i] = 300 - 0.01*c[i] + 0.3*math.Sin(2*math.Pi*c[i]/w+ph)
	}
	return Problem{Stations: LevelProfile(c, g), Design: testDesign()}
}

// TestCommandMargin: with a command margin the design water surface at
// every station stands at least the margin above the centre-line ground
// (to 1 mm), and the start invert puts it there at the first station.
func TestCommandMargin(t *testing.T) {
	p := gentleProblem(300, 6)
	p.Design.MaxFillHeight = 3
	p.Design.Command = []CommandRange{{From: math.Inf(-1), To: math.Inf(1), Margin: 0.1}}
	res, err := Optimize(p)
	if err != nil {
		t.Fatal(err)
	}
	for _, s := range res.Stations {
		if s.WaterSurface < s.Ground+0.1-1e-3 {
			t.Errorf("%.0f m: water %.4f m, ground %.4f m: margin %.4f m below 0.1 m", s.Chainage, s.WaterSurface, s.Ground, s.Margin())
		}
	}
	if res.Totals.CommandShare != 1 {
		t.Errorf("command share %.3f, want 1", res.Totals.CommandShare)
	}
	// Over a range only: the stations outside it may lie lower.
	p.Design.Command = []CommandRange{{From: 1000, To: 2000, Margin: 0.2}}
	res, err = Optimize(p)
	if err != nil {
		t.Fatal(err)
	}
	for _, s := range res.Stations {
		if s.Chainage >= 1000 && s.Chainage <= 2000 && s.WaterSurface < s.Ground+0.2-1e-3 {
			t.Errorf("%.0f m: margin %.4f m below 0.2 m", s.Chainage, s.Margin())
		}
	}
}

// byEyeAgain re-implements the by-eye baseline from its description, apart
// from the planner's code: the steepest grade from the start invert; a drop
// wherever the water surface (start invert bed + normal depth) stands more
// than the rise above the ground plus margin and a drop may stand; of the
// allowed heights the largest that keeps the cut within the limit (and the
// water at the margin) over the stretch its spacing covers. It returns the
// drop stations and heights.
func byEyeAgain(q *prepared) (stations []int, heights []float64) {
	c, g, d := q.c, q.g, &q.d
	s, y := q.grades[0], q.depth[0]
	z, at := q.z0, c[0]
	last, lastSpacing := math.Inf(-1), 0.0
	for i := 1; i < len(c)-1; i++ {
		bed := z - s*(c[i]-at)
		m := 0.0
		if !math.IsNaN(q.margin[i]) {
			m = q.margin[i]
		}
		if bed+y-(g[i]+m) <= d.ByEyeRise || !q.dropAllowed(i) || c[i]-last < lastSpacing-1e-9 {
			continue
		}
		for h := len(q.heights) - 1; h >= 0; h-- {
			if c[len(c)-1]-c[i] < q.spacing[h]-1e-9 {
				continue
			}
			good := true
			for k := i; k < len(c) && c[k]-c[i] <= q.spacing[h]+1e-9; k++ {
				b := bed - q.heights[h] - s*(c[k]-c[i])
				if g[k]-b > d.MaxCutDepth+1e-9 || (!math.IsNaN(q.margin[k]) && b+y < g[k]+q.margin[k]-1e-9) {
					good = false
					break
				}
			}
			if good {
				stations, heights = append(stations, i), append(heights, q.heights[h])
				z, at, last, lastSpacing = bed-q.heights[h], c[i], c[i], q.spacing[h]
				break
			}
		}
	}
	return stations, heights
}

// TestByEyeBaselineReproduced: the planner's by-eye baseline equals an
// independent re-implementation of its description on seeded terrains, drop
// for drop and in cost to the unit.
func TestByEyeBaselineReproduced(t *testing.T) {
	for seed := uint64(1); seed <= 6; seed++ {
		p := testProblem(300, seed)
		if seed%2 == 0 {
			p = gentleProblem(300, seed)
			p.Design.Command = []CommandRange{{From: math.Inf(-1), To: math.Inf(1), Margin: 0.1}}
			p.Design.MaxFillHeight = 3
		}
		q, err := prepare(p)
		if err != nil {
			t.Fatal(err)
		}
		st, hs := byEyeAgain(q)
		drops := make([]dropSpec, len(st))
		for i := range st {
			drops[i] = dropSpec{station: st[i], height: hs[i]}
		}
		want := q.evaluate(drops, make([]int, len(drops)+1)).Totals.TotalCost
		b := q.byEye()
		if b.Totals.DropCount != len(drops) || math.Round(b.Totals.TotalCost) != math.Round(want) {
			t.Errorf("seed %d: by-eye %d drops cost %.0f, re-implementation %d drops cost %.0f", seed, b.Totals.DropCount, b.Totals.TotalCost, len(drops), want)
		}
		for k, dr := range b.Drops {
			if k < len(st) && (dr.Station != st[k] || dr.Height != hs[k]) {
				t.Errorf("seed %d: drop %d at station %d (%.1f m), re-implementation at %d (%.1f m)", seed, k, dr.Station, dr.Height, st[k], hs[k])
				break
			}
		}
	}
}

// TestOptimumNoDearerThanFeasibleBaselines on seeded terrains with DEM
// cross-sections and a command margin: the optimum costs no more than every
// feasible baseline (both are profiles of the same discretised problem).
func TestOptimumNoDearerThanFeasibleBaselines(t *testing.T) {
	feasible := 0
	for seed := uint64(11); seed <= 16; seed++ {
		p := gentleProblem(200, seed)
		p.Design.MaxFillHeight, p.Design.MaxCutDepth = 4, 8
		p.Design.Command = []CommandRange{{From: math.Inf(-1), To: math.Inf(1), Margin: 0.05}}
		withCrossFall(&p, seed, 30)
		res, err := Optimize(p)
		if err != nil {
			t.Fatalf("seed %d: %v", seed, err)
		}
		for _, b := range res.Baselines() {
			if !b.Feasible {
				continue
			}
			feasible++
			if res.Totals.TotalCost > b.Totals.TotalCost*(1+1e-12) {
				t.Errorf("seed %d: optimum %.2f dearer than the feasible %s baseline %.2f", seed, res.Totals.TotalCost, b.Method, b.Totals.TotalCost)
			}
		}
		if amount, _, b, ok := res.Saving(); ok && (amount < 0 || !b.Feasible) {
			t.Errorf("seed %d: saving %.2f against %s (feasible %v)", seed, amount, b.Method, b.Feasible)
		}
	}
	if feasible < 3 {
		t.Errorf("only %d feasible baselines: the property is hardly exercised", feasible)
	}
}
