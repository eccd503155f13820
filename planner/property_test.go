package planner

import (
	"errors"
	"fmt"
	"math"
	"testing"

	"canalstep/planner/hydraulics"
)

// checkPlan asserts the invariants every optimised plan must keep.
func checkPlan(t *testing.T, p Problem, res *Result) {
	t.Helper()
	d := res.Record
	inSet := func(x float64, set []float64) bool {
		for _, s := range set {
			if x == s {
				return true
			}
		}
		return false
	}
	for _, r := range res.Reaches {
		// Exact: grades are taken from the candidate set, never rounded.
		if r.Grade > d.MaxSlope || r.Grade < d.MinSlope || !inSet(r.Grade, d.Grades) {
			t.Errorf("reach %.0f–%.0f m: grade %g outside [%g, %g] or not a candidate", r.From, r.To, r.Grade, d.MinSlope, d.MaxSlope)
		}
		// The bed between the reach's ends falls by exactly grade × length
		// (float rounding only).
		if fall := r.StartInvert - r.EndInvert; math.Abs(fall-r.Grade*(r.To-r.From)) > 1e-9 {
			t.Errorf("reach %.0f–%.0f m falls %.12f m, grade × length %.12f m", r.From, r.To, fall, r.Grade*(r.To-r.From))
		}
	}
	prev := -1.0
	prevSpacing := 0.0
	for _, dr := range res.Drops {
		hi := -1
		for i, h := range d.DropHeights {
			if h == dr.Height {
				hi = i
			}
		}
		if hi < 0 {
			t.Errorf("drop at %.0f m: height %g not in %v", dr.Chainage, dr.Height, d.DropHeights)
			continue
		}
		if math.Abs(dr.UpstreamInvert-dr.DownstreamInvert-dr.Height) > 1e-9 {
			t.Errorf("drop at %.0f m: inverts %.4f → %.4f do not fall %g", dr.Chainage, dr.UpstreamInvert, dr.DownstreamInvert, dr.Height)
		}
		if prev >= 0 && dr.Chainage-prev < prevSpacing-1e-9 {
			t.Errorf("drops at %.0f m and %.0f m closer than %.2f m", prev, dr.Chainage, prevSpacing)
		}
		prev, prevSpacing = dr.Chainage, d.MinDropSpacing[hi]
	}
	for _, st := range res.Stations {
		if st.CutDepth > d.MaxCutDepth+1e-9 || st.FillHeight > d.MaxFillHeight+1e-9 {
			t.Errorf("chainage %.0f m: cut %.3f fill %.3f beyond limits", st.Chainage, st.CutDepth, st.FillHeight)
		}
	}
	// The per-segment pricing adds up to the totals (Costs doc formula).
	tt, pc := res.Totals, res.Record.Costs
	if e := pc.Cut*tt.CutVolume + pc.Fill*tt.FillVolume + pc.Waste*tt.WasteVolume + pc.Borrow*tt.BorrowVolume; math.Abs(e-tt.EarthworkCost) > 1e-9*e {
		t.Errorf("earthwork cost %.6f, priced volumes %.6f", tt.EarthworkCost, e)
	}
	if math.Abs(res.Stats.Objective-res.Totals.TotalCost) > 1e-6*res.Totals.TotalCost {
		t.Errorf("objective %.6f, plan cost %.6f", res.Stats.Objective, res.Totals.TotalCost)
	}
}

func TestOptimumNeverCostsMoreThanBaseline(t *testing.T) {
	feasibleBaselines := 0
	for seed := uint64(1); seed <= 8; seed++ {
		p := testProblem(250, seed)
		if seed%2 == 0 {
			// Wide limits so that the even-spacing profile is feasible too.
			p.Design.MaxCutDepth, p.Design.MaxFillHeight = 12, 6
		}
		res, err := Optimize(p)
		if err != nil {
			t.Fatalf("seed %d: %v", seed, err)
		}
		checkPlan(t, p, res)
		for _, b := range res.Baselines() {
			if b.Feasible {
				feasibleBaselines++
				if res.Totals.TotalCost > b.Totals.TotalCost*(1+1e-12) {
					t.Errorf("seed %d: optimum %.2f costs more than the feasible %s baseline %.2f", seed, res.Totals.TotalCost, b.Method, b.Totals.TotalCost)
				}
			}
			t.Logf("seed %d: optimum %.0f (%d drops), %s %.0f (%d drops, feasible %v)", seed, res.Totals.TotalCost, res.Totals.DropCount,
				b.Method, b.Totals.TotalCost, b.Totals.DropCount, b.Feasible)
		}
	}
	if feasibleBaselines < 4 {
		t.Errorf("only %d feasible baselines; the property is hardly exercised", feasibleBaselines)
	}
}

func TestPlanHydraulics(t *testing.T) {
	p := testProblem(300, 3)
	res, err := Optimize(p)
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Drops) == 0 {
		t.Fatal("no drops")
	}
	for _, d := range res.Drops {
		if !(d.BasinLength > 0) || d.JumpState == "" || len(d.Checks) != 3 {
			t.Errorf("drop at %.0f m: basin %.3f jump %q checks %d", d.Chainage, d.BasinLength, d.JumpState, len(d.Checks))
		}
		if d.BasinFloor > d.DownstreamInvert+1e-12 || d.CrestLevel < d.UpstreamInvert-1e-12 {
			t.Errorf("drop at %.0f m: basin floor %.3f above bed %.3f or crest %.3f below bed %.3f", d.Chainage, d.BasinFloor, d.DownstreamInvert, d.CrestLevel, d.UpstreamInvert)
		}
	}
	for _, st := range res.Stations {
		if !(st.Depth > 0) || math.Abs(st.WaterSurface-st.Invert-st.Depth) > 1e-9 || st.Velocity <= 0 {
			t.Errorf("chainage %.0f m: depth %.3f water %.3f invert %.3f velocity %.3f", st.Chainage, st.Depth, st.WaterSurface, st.Invert, st.Velocity)
		}
		if st.TopOfBank <= st.WaterSurface {
			t.Errorf("chainage %.0f m: water %.3f at or above the top of bank %.3f", st.Chainage, st.WaterSurface, st.TopOfBank)
		}
	}
	// The crest of these drops (1 m, the bed width) is narrower than the
	// control width, so each backs the water up (M1): at the drop the depth
	// is above normal and its specific energy is 1.5·yc on the crest
	// (reference sheet §4.5); upstream the profile returns towards normal
	// depth and never falls below it.
	c := hydraulics.SI()
	yc := math.Cbrt(math.Pow(p.Design.Flow/p.Design.Section.BottomWidth, 2) / c.G)
	for _, d := range res.Drops {
		st := res.Stations[d.Station]
		e := hydraulics.SpecificEnergy(c, p.Design.Section, p.Design.Flow, st.Depth)
		if math.Abs(e-1.5*yc) > 1e-6 {
			t.Errorf("drop at %.0f m: upstream energy %.6f m, want 1.5·yc = %.6f m", d.Chainage, e, 1.5*yc)
		}
	}
	for _, r := range res.Reaches {
		for _, st := range res.Stations {
			if st.Chainage > r.From && st.Chainage < r.To && st.Depth < r.NormalDepth-1e-6 {
				t.Errorf("chainage %.0f m: depth %.4f below normal %.4f in an M1 reach", st.Chainage, st.Depth, r.NormalDepth)
			}
		}
	}
	if res.Totals.MaxVelocity <= 0 || res.Totals.MinVelocity > res.Totals.MaxVelocity {
		t.Errorf("velocities %.3f–%.3f", res.Totals.MinVelocity, res.Totals.MaxVelocity)
	}
	last := res.Stations[len(res.Stations)-1]
	if math.Abs(last.CumCut-res.Totals.CutVolume) > 1e-9 || math.Abs(last.CumFill-res.Totals.FillVolume) > 1e-9 {
		t.Errorf("cumulative volumes %.3f/%.3f, totals %.3f/%.3f", last.CumCut, last.CumFill, res.Totals.CutVolume, res.Totals.FillVolume)
	}
}

func TestBackwaterFreeboardWarning(t *testing.T) {
	// A crest far narrower than the control width backs the water up by
	// more than half the freeboard; the plan must say so. With the default
	// crest (the bed width, 1 m) the backwater is small and no such warning
	// appears.
	p := testProblem(200, 3)
	count := func(res *Result) int {
		n := 0
		for _, w := range res.Warnings {
			if w.Kind == WarnBackwater {
				n++
			}
		}
		return n
	}
	res, err := Optimize(p)
	if err != nil {
		t.Fatal(err)
	}
	if n := count(res); n != 0 {
		t.Errorf("default crest: %d freeboard warnings, want 0", n)
	}
	p.Design.CrestWidth = ptr(0.3)
	res, err = Optimize(p)
	if err != nil {
		t.Fatal(err)
	}
	if n := count(res); n == 0 || n > len(res.Drops) {
		t.Errorf("0.3 m crest: %d freeboard warnings for %d drops", n, len(res.Drops))
	}
}

func TestInfeasibleNamesConstraint(t *testing.T) {
	// Level ground, then a 5 m rise between 300 and 400 m: the bed cannot
	// climb, so the cut limit binds where the rise passes 2.5 m of cut.
	c, g := make([]float64, 60), make([]float64, 60)
	for i := range c {
		c[i] = 10 * float64(i)
		g[i] = 100 + 0.5*math.Min(10, math.Max(0, float64(i-29)))
	}
	p := testProblem(10, 1)
	p.Stations, p.Design.MaxCutDepth = LevelProfile(c, g), 2.5
	res, err := Optimize(p)
	var ie *InfeasibleError
	if !errors.As(err, &ie) || !errors.Is(err, ErrInfeasible) {
		t.Fatalf("got %v, want an InfeasibleError", err)
	}
	if res == nil || res.Status != Infeasible || res.EvenSpacing == nil || res.ByEye == nil {
		t.Errorf("result %+v, want status infeasible with both baselines", res)
	}
	if cf := ie.Conflicts[0]; cf.Kinds[0] != KindMaxCut || cf.To < 300 || cf.To > 400 || cf.From > cf.To || !(cf.Shortage > 0) {
		t.Errorf("conflict %+v, want the cut limit first, between 300 and 400 m, with a shortage", cf)
	}
	t.Log(err)

	// An end invert far below anything reachable.
	p = testProblem(50, 2)
	end := p.Stations[49].Ground - 4.9
	p.Design.EndInvert = &end
	p.Design.DropHeights = []float64{0.5}
	_, err = Optimize(p)
	if !errors.As(err, &ie) || !has(ie.Conflicts[len(ie.Conflicts)-1].Kinds, KindEndInvert) {
		t.Errorf("got %v, want the end invert named", err)
	}
	t.Log(err)

	// A fixed invert above the fill limit.
	p = testProblem(50, 2)
	p.Design.FixedInverts = []Control{{Chainage: 200, Level: p.Stations[20].Ground + 3}}
	_, err = Optimize(p)
	if !errors.As(err, &ie) || ie.Conflicts[0].Kinds[0] != KindFixedInvert || ie.Conflicts[0].To != 200 {
		t.Errorf("got %v, want the fixed invert named at 200 m", err)
	}
	t.Log(err)
}

func TestBadInput(t *testing.T) {
	high := 1000.0
	cases := []struct {
		name string
		mod  func(p *Problem)
	}{
		{"no drop heights", func(p *Problem) { p.Design.DropHeights = nil }},
		{"negative drop height", func(p *Problem) { p.Design.DropHeights = []float64{-0.5} }},
		{"drop height not a whole step", func(p *Problem) { p.Design.DropHeights = []float64{0.505} }},
		{"drop height twice", func(p *Problem) { p.Design.DropHeights = []float64{0.5, 0.5} }},
		{"grade too steep", func(p *Problem) { p.Design.Grades = []float64{0.05} }},
		{"grade too flat", func(p *Problem) { p.Design.Grades = []float64{1e-6} }},
		{"start invert above max fill", func(p *Problem) { p.Design.StartInvert = &high }},
		{"control beyond alignment", func(p *Problem) { p.Design.FixedInverts = []Control{{Chainage: 1e6, Level: 1}} }},
		{"control between stations", func(p *Problem) { p.Design.MinWaterLevels = []Control{{Chainage: 15, Level: 1}} }},
		{"two controls at one station", func(p *Problem) {
			p.Design.FixedInverts = []Control{{Chainage: 100, Level: 490}, {Chainage: 100.2, Level: 489}}
		}},
		{"fixed invert below a command level", func(p *Problem) {
			p.Design.FixedInverts = []Control{{Chainage: 100, Level: p.Stations[10].Ground - 3}}
			p.Design.Command = []CommandRange{{From: math.Inf(-1), To: math.Inf(1), Margin: 0.1}}
		}},
		{"negative cost", func(p *Problem) { p.Design.Costs.Cut = -1 }},
		{"absurd price", func(p *Problem) { p.Design.Costs.Fill = 1e300 }},
		{"absurd width", func(p *Problem) { p.Design.Section.BottomWidth = 1e300 }},
		{"chainage not increasing", func(p *Problem) { p.Stations[3].Chainage = p.Stations[2].Chainage }},
		{"ground NaN", func(p *Problem) { p.Stations[4].Ground = math.NaN() }},
		{"no flow", func(p *Problem) { p.Design.Flow = 0 }},
		{"negative max cut", func(p *Problem) { p.Design.MaxCutDepth = -1 }},
		{"bad template", func(p *Problem) { p.Design.BankTopWidth = -1 }},
		{"negative step", func(p *Problem) { p.Design.Step = -0.01 }},
		{"tiny step", func(p *Problem) { p.Design.Step = 1e-9 }},
		{"min velocity above max", func(p *Problem) { p.Design.MinVelocity = 2 }},
		{"command range backwards", func(p *Problem) { p.Design.Command = []CommandRange{{From: 300, To: 100, Margin: 0.1}} }},
	}
	for _, tc := range cases {
		p := testProblem(40, 1)
		tc.mod(&p)
		_, err := Optimize(p)
		if !errors.Is(err, ErrInput) {
			t.Errorf("%s: got %v, want ErrInput", tc.name, err)
		}
	}
}

func TestCompareMatchesSeparateRuns(t *testing.T) {
	p := testProblem(300, 4)
	p.Design.MaxCutDepth, p.Design.MaxFillHeight = 8, 4 // every alternative feasible
	alts := [][]float64{{0.5}, {1.0}, {1.5}, {0.5, 1.0, 1.5}, {-1}}
	par := Compare(p, alts, 3)
	seq := Compare(p, alts, 1)
	for i, a := range par {
		if i == len(alts)-1 {
			if !errors.Is(a.Err, ErrInput) {
				t.Errorf("alternative %v: got %v, want ErrInput", a.DropHeights, a.Err)
			}
			continue
		}
		if a.Err != nil || seq[i].Err != nil {
			if fmt.Sprint(a.Err) != fmt.Sprint(seq[i].Err) {
				t.Errorf("alternative %v: parallel %v, sequential %v", a.DropHeights, a.Err, seq[i].Err)
			}
			t.Logf("heights %v: %v", a.DropHeights, a.Err)
			continue
		}
		if a.Result.Totals != seq[i].Result.Totals {
			t.Errorf("alternative %v: parallel %+v, sequential %+v", a.DropHeights, a.Result.Totals, seq[i].Result.Totals)
		}
		t.Logf("heights %v: %d drops, cost %.0f", a.DropHeights, a.Result.Totals.DropCount, a.Result.Totals.TotalCost)
	}
	// The union of heights can do everything each single height can.
	all := par[3].Result.Totals.TotalCost
	for i := 0; i < 3; i++ {
		if par[i].Err != nil {
			continue
		}
		if all > par[i].Result.Totals.TotalCost*(1+1e-12) {
			t.Errorf("heights {0.5,1,1.5} cost %.2f, more than %v at %.2f", all, alts[i], par[i].Result.Totals.TotalCost)
		}
	}
}
