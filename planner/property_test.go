package planner

import (
	"errors"
	"fmt"
	"math"
	"strings"
	"testing"

	"canalstep/alignment"
	"canalstep/planner/hydraulics"
)

// checkPlan asserts the invariants every optimised plan must keep.
func checkPlan(t *testing.T, p Problem, res *Result) {
	t.Helper()
	d := res.Design
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
	tt, pc := res.Totals, res.Design.Costs
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
			p.MaxCutDepth, p.MaxFillHeight = 12, 6
		}
		res, err := Optimize(p, nil)
		if err != nil {
			t.Fatalf("seed %d: %v", seed, err)
		}
		checkPlan(t, p, res)
		b := res.Baseline
		if b.Feasible {
			feasibleBaselines++
			if res.Totals.TotalCost > b.Totals.TotalCost*(1+1e-12) {
				t.Errorf("seed %d: optimum %.2f costs more than the feasible baseline %.2f", seed, res.Totals.TotalCost, b.Totals.TotalCost)
			}
		}
		t.Logf("seed %d: optimum %.0f (%d drops), baseline %.0f (%d drops, feasible %v)", seed, res.Totals.TotalCost, res.Totals.DropCount,
			b.Totals.TotalCost, b.Totals.DropCount, b.Feasible)
	}
	if feasibleBaselines < 3 {
		t.Errorf("only %d feasible baselines; the property is hardly exercised", feasibleBaselines)
	}
}

func TestPlanHydraulics(t *testing.T) {
	p := testProblem(300, 3)
	res, err := Optimize(p, nil)
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
	yc := math.Cbrt(math.Pow(p.Flow/p.Section.BottomWidth, 2) / c.G)
	for _, d := range res.Drops {
		st := res.Stations[d.Station]
		e := hydraulics.SpecificEnergy(c, p.Section, p.Flow, st.Depth)
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
			if strings.Contains(w, "eats more than half") {
				n++
			}
		}
		return n
	}
	res, err := Optimize(p, nil)
	if err != nil {
		t.Fatal(err)
	}
	if n := count(res); n != 0 {
		t.Errorf("default crest: %d freeboard warnings, want 0", n)
	}
	res, err = Optimize(p, &Settings{CrestWidth: 0.3})
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
	p.Chainage, p.Ground, p.MaxCutDepth = c, g, 2.5
	res, err := Optimize(p, nil)
	var ie *InfeasibleError
	if !errors.As(err, &ie) || !errors.Is(err, ErrInfeasible) {
		t.Fatalf("got %v, want an InfeasibleError", err)
	}
	if res == nil || res.Status != Infeasible || res.Baseline == nil {
		t.Errorf("result %+v, want status infeasible with a baseline", res)
	}
	if !strings.Contains(err.Error(), "maximum cut depth") || ie.To < 300 || ie.To > 400 || ie.From > ie.To {
		t.Errorf("error %q (range %.0f–%.0f m), want the cut limit named between 300 and 400 m", err, ie.From, ie.To)
	}
	t.Log(err)

	// An end invert far below anything reachable.
	p = testProblem(50, 2)
	end := p.Ground[49] - 4.9
	p.EndInvert = &end
	p.DropHeights = []float64{0.5}
	_, err = Optimize(p, nil)
	if !errors.As(err, &ie) || !strings.Contains(err.Error(), "end invert") {
		t.Errorf("got %v, want the end invert named", err)
	}
	t.Log(err)

	// A fixed invert above the fill limit.
	p = testProblem(50, 2)
	p.FixedInverts = []Control{{Chainage: 200, Level: p.Ground[20] + 3}}
	_, err = Optimize(p, nil)
	if !errors.As(err, &ie) || !strings.Contains(err.Error(), "fixed invert") || ie.To != 200 {
		t.Errorf("got %v, want the fixed invert named at 200 m", err)
	}
	t.Log(err)
}

func TestBadInput(t *testing.T) {
	neg := Costs{Cut: -1}
	high := 1000.0
	cases := []struct {
		name string
		mod  func(p *Problem)
		s    *Settings
	}{
		{"no drop heights", func(p *Problem) { p.DropHeights = nil }, nil},
		{"negative drop height", func(p *Problem) { p.DropHeights = []float64{-0.5} }, nil},
		{"drop height not a whole step", func(p *Problem) { p.DropHeights = []float64{0.505} }, nil},
		{"drop height twice", func(p *Problem) { p.DropHeights = []float64{0.5, 0.5} }, nil},
		{"grade too steep", func(p *Problem) { p.Grades = []float64{0.05} }, nil},
		{"grade too flat", func(p *Problem) { p.Grades = []float64{1e-6} }, nil},
		{"start invert above max fill", func(p *Problem) { p.StartInvert = &high }, nil},
		{"control beyond alignment", func(p *Problem) { p.FixedInverts = []Control{{Chainage: 1e6, Level: 1}} }, nil},
		{"control between stations", func(p *Problem) { p.MinWaterLevels = []Control{{Chainage: 15, Level: 1}} }, nil},
		{"negative cost", func(p *Problem) { p.Costs = &neg }, nil},
		{"chainage not increasing", func(p *Problem) { p.Chainage[3] = p.Chainage[2] }, nil},
		{"ground NaN", func(p *Problem) { p.Ground[4] = math.NaN() }, nil},
		{"no flow", func(p *Problem) { p.Flow = 0 }, nil},
		{"negative max cut", func(p *Problem) { p.MaxCutDepth = -1 }, nil},
		{"bad template", func(p *Problem) { p.Template = &Template{BedWidth: -1} }, nil},
		{"negative step", func(p *Problem) {}, &Settings{Step: -0.01}},
	}
	for _, tc := range cases {
		p := testProblem(40, 1)
		tc.mod(&p)
		_, err := Optimize(p, tc.s)
		if !errors.Is(err, ErrInput) {
			t.Errorf("%s: got %v, want ErrInput", tc.name, err)
		}
	}
	// Contradictory velocity limits come from hydraulics, wrapped.
	p := testProblem(40, 1)
	p.MinVelocity = 2
	if _, err := Optimize(p, nil); err == nil || !strings.Contains(err.Error(), "velocity limits") {
		t.Errorf("min velocity above max: got %v", err)
	}
}

func TestCompareMatchesSeparateRuns(t *testing.T) {
	p := testProblem(300, 4)
	p.MaxCutDepth, p.MaxFillHeight = 8, 4 // every alternative feasible
	alts := [][]float64{{0.5}, {1.0}, {1.5}, {0.5, 1.0, 1.5}, {-1}}
	par := Compare(p, nil, alts, 3)
	seq := Compare(p, nil, alts, 1)
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

type fakeGround struct{ slope float64 }

func (f fakeGround) Sample(xs, ys, out []float64) error {
	var err error
	for i := range xs {
		out[i] = 100 - f.slope*xs[i]
		if xs[i] > 1000 {
			out[i] = math.NaN()
			err = errors.New("outside")
		}
	}
	return err
}

func TestGroundProfile(t *testing.T) {
	st := []alignment.Station{{Chainage: 0, X: 0}, {Chainage: 10, X: 10}, {Chainage: 20, X: 20}}
	c, g, err := GroundProfile(fakeGround{0.01}, st)
	if err != nil || len(c) != 3 || g[2] != 100-0.2 || c[1] != 10 {
		t.Errorf("got %v %v %v", c, g, err)
	}
	st = append(st, alignment.Station{Chainage: 2000, X: 2000})
	if _, _, err := GroundProfile(fakeGround{0.01}, st); err == nil || !strings.Contains(err.Error(), "2+000") {
		t.Errorf("missing ground: got %v, want the chainage named", err)
	}
}
