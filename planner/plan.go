package planner

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"sync"

	"canalstep/planner/hydraulics"
)

// ErrInfeasible is wrapped by *InfeasibleError: no profile meets every
// constraint on the discretisation.
var ErrInfeasible = errors.New("planner: no feasible profile")

// Unwrap makes errors.Is(err, ErrInfeasible) true.
func (e *InfeasibleError) Unwrap() error { return ErrInfeasible }

// Status says how an optimisation ended.
type Status int

const (
	// Optimal: the plan is the least-cost profile on the discretisation.
	Optimal Status = iota + 1
	// Infeasible: no profile meets every constraint; see the error.
	Infeasible
)

func (s Status) String() string {
	switch s {
	case Optimal:
		return "optimal"
	case Infeasible:
		return "infeasible"
	}
	return fmt.Sprintf("Status(%d)", int(s))
}

// Err returns nil for Optimal and ErrInfeasible for Infeasible.
func (s Status) Err() error {
	if s == Infeasible {
		return ErrInfeasible
	}
	return nil
}

// Result is the outcome of Optimize.
type Result struct {
	Plan
	Status   Status
	Stats    Stats
	Design   Design
	Baseline *Baseline // the even-spacing method on the same ground
}

// Stats describe the work the optimiser did.
type Stats struct {
	Stations  int     `json:"stations"`
	Grades    int     `json:"grades"`
	Heights   int     `json:"heights"`
	States    int64   `json:"states"`    // station states evaluated
	Objective float64 `json:"objective"` // least cost found by the dynamic programme
}

// Design records the inputs a plan was made with and the section results.
type Design struct {
	Flow           float64   `json:"flow"`             // m³/s
	BottomWidth    float64   `json:"bottom_width"`     // m
	SideSlope      float64   `json:"side_slope"`       // H:V
	Roughness      float64   `json:"roughness"`        // Manning n
	MaxVelocity    float64   `json:"max_velocity"`     // m/s
	MinVelocity    float64   `json:"min_velocity"`     // m/s
	MaxSlope       float64   `json:"max_slope"`        // steepest grade the velocity allows, m/m
	MinSlope       float64   `json:"min_slope"`        // flattest grade, m/m (0: no limit)
	Grades         []float64 `json:"grades"`           // candidate grades, m/m
	NormalDepths   []float64 `json:"normal_depths"`    // per grade, m
	BankHeights    []float64 `json:"bank_heights"`     // per grade, m above bed
	DropHeights    []float64 `json:"drop_heights"`     // m
	BasinLengths   []float64 `json:"basin_lengths"`    // per drop height, m
	MinDropSpacing []float64 `json:"min_drop_spacing"` // per drop height, m
	StartInvert    float64   `json:"start_invert"`     // m
	Step           float64   `json:"step"`             // elevation step, m
	MaxCutDepth    float64   `json:"max_cut_depth"`    // m
	MaxFillHeight  float64   `json:"max_fill_height"`  // m
	MinReach       float64   `json:"min_reach"`        // m
	CrestWidth     float64   `json:"crest_width"`      // m
	Transition     float64   `json:"transition_length"`
	Template       Template  `json:"-"`
	Costs          Costs     `json:"-"`
	Volume         string    `json:"volume_method"`
}

// Plan is a canal profile with its earthwork, structures and hydraulics.
type Plan struct {
	Stations []StationResult
	Drops    []DropResult
	Reaches  []Reach
	Totals   Totals
	Warnings []string
}

// StationResult is one station of a plan. At a drop station the invert,
// depths and areas are those of the upstream side; InvertDown is the bed
// just below the drop.
type StationResult struct {
	Chainage     float64 // m
	Ground       float64 // m
	Invert       float64 // bed elevation, m
	InvertDown   float64 // bed elevation on the downstream side, m (= Invert except at a drop)
	WaterSurface float64 // m, from the standard-step profile
	TopOfBank    float64 // m
	CutDepth     float64 // ground − invert when positive, m
	FillHeight   float64 // invert − ground when positive, m
	CutArea      float64 // m²
	FillArea     float64 // m²
	CumCut       float64 // cut volume from the start, m³
	CumFill      float64 // fill volume from the start, m³
	Depth        float64 // flow depth, m
	Velocity     float64 // mean velocity, m/s
	Grade        float64 // grade of the reach upstream of the station (downstream at the first), m/m
}

// DropResult is one drop structure of a plan.
type DropResult struct {
	Station          int     // index into Plan.Stations
	Chainage         float64 // m
	Height           float64 // bed fall, m
	UpstreamInvert   float64 // m
	DownstreamInvert float64 // m
	CrestLevel       float64 // m
	BasinFloor       float64 // m
	BasinLength      float64 // m
	EndSill          float64 // m
	CrestRaise       float64 // m above the upstream bed
	BasinDepression  float64 // m below the downstream bed
	JumpState        hydraulics.JumpState
	Checks           []hydraulics.OutletCheck // at Settings.CheckFlows × design flow
	Warnings         []string
}

// Reach is a stretch of uniform grade between drops (or the ends).
type Reach struct {
	From, To    float64 // chainage, m
	Grade       float64 // m/m
	StartInvert float64 // m
	EndInvert   float64 // m
	NormalDepth float64 // m
	Velocity    float64 // normal-flow velocity, m/s
}

// Totals sum up a plan.
type Totals struct {
	DropCount     int     `json:"drop_count"`
	CutVolume     float64 `json:"cut_volume"`     // m³
	FillVolume    float64 `json:"fill_volume"`    // m³
	WasteVolume   float64 `json:"waste_volume"`   // surplus cut to spoil, bank m³ (per segment, see Costs)
	BorrowVolume  float64 `json:"borrow_volume"`  // fill brought in, compacted m³
	EarthworkCost float64 `json:"earthwork_cost"` // including waste and borrow
	DropCost      float64 `json:"drop_cost"`
	TotalCost     float64 `json:"total_cost"`
	MaxVelocity   float64 `json:"max_velocity"`    // m/s
	MinVelocity   float64 `json:"min_velocity"`    // m/s
	MaxCutDepth   float64 `json:"max_cut_depth"`   // m
	MaxFillHeight float64 `json:"max_fill_height"` // m
}

// Baseline is the classic hand method on the same ground: one average
// ground slope, the steepest grade, the largest allowed drop height, drops
// evenly spaced.
type Baseline struct {
	Plan
	AverageGroundSlope float64  // (ground at start − ground at end)/length, m/m
	Grade              float64  // m/m
	DropHeight         float64  // m
	Feasible           bool     // false when the profile breaks a constraint
	Violations         []string // the constraints it breaks
}

// Optimize plans the canal: the least-cost bed profile on the
// discretisation described in the package doc, its structures and its
// water-surface profile, and the even-spacing baseline beside it. It returns
// an error wrapping ErrInput for a problem that cannot be planned as given;
// for an infeasible problem it returns a Result with Status Infeasible and
// the baseline, and an *InfeasibleError. Optimize keeps no state between
// calls and may run concurrently.
func Optimize(p Problem, s *Settings) (*Result, error) {
	q, err := prepare(p, s)
	if err != nil {
		return nil, err
	}
	res := &Result{Design: q.design()}
	res.Baseline = q.baseline()
	k := q.core()
	sol, err := k.solve()
	if err != nil {
		var ie *InfeasibleError
		if errors.As(err, &ie) {
			res.Status = Infeasible
			return res, err
		}
		return nil, err
	}
	drops := make([]dropSpec, len(sol.drops))
	for x, d := range sol.drops {
		drops[x] = dropSpec{station: d.station, height: q.heights[d.height]}
	}
	plan := q.evaluate(drops, sol.grades)
	q.hydraulics(plan, drops, sol.grades)
	res.Plan = *plan
	res.Status = Optimal
	res.Stats = Stats{Stations: len(p.Chainage), Grades: len(q.grades), Heights: len(q.heights), States: sol.states, Objective: sol.cost}
	if d := math.Abs(sol.cost - plan.Totals.TotalCost); d > 1e-6*math.Max(1, math.Abs(sol.cost)) {
		return nil, fmt.Errorf("planner: internal error: optimiser cost %.6f differs from the plan's %.6f", sol.cost, plan.Totals.TotalCost)
	}
	return res, nil
}

func (q *prepared) design() Design {
	d := Design{Flow: q.p.Flow, BottomWidth: q.p.Section.BottomWidth, SideSlope: q.p.Section.SideSlope,
		Roughness: q.p.Roughness, MaxVelocity: q.p.MaxVelocity, MinVelocity: q.p.MinVelocity,
		MaxSlope: q.limits.MaxSlope, MinSlope: q.limits.MinSlope, Grades: q.grades, NormalDepths: q.depth,
		DropHeights: q.heights, BasinLengths: q.basin, MinDropSpacing: q.spacing, StartInvert: q.z0,
		Step: q.s.Step, MaxCutDepth: q.maxCut, MaxFillHeight: q.maxFill, MinReach: q.minReach,
		CrestWidth: q.crest, Transition: q.transLen, Template: q.tpl[0], Costs: q.costs, Volume: q.s.Volume.String()}
	for _, t := range q.tpl {
		d.BankHeights = append(d.BankHeights, t.BankHeight)
	}
	return d
}

type dropSpec struct {
	station int
	height  float64
}

// inverts returns the bed on the upstream and downstream side of every
// station and the reach index of each segment.
func (q *prepared) inverts(drops []dropSpec, grades []int) (up, down []float64, reachOf []int) {
	c := q.p.Chainage
	n := len(c)
	up, down, reachOf = make([]float64, n), make([]float64, n), make([]int, n)
	r, start, z := 0, 0, q.z0
	for i := 0; i < n; i++ {
		zi := z - q.grades[grades[r]]*(c[i]-c[start])
		up[i], down[i] = zi, zi
		if r < len(drops) && drops[r].station == i {
			down[i] = zi - drops[r].height
			r, start, z = r+1, i, zi-drops[r].height
		}
		reachOf[i] = r // reach of the segment i → i+1
	}
	return up, down, reachOf
}

// evaluate computes the earthwork and cost of a profile given by its drops
// and the grade index of each reach, independently of the optimiser.
func (q *prepared) evaluate(drops []dropSpec, grades []int) *Plan {
	c, gr := q.p.Chainage, q.p.Ground
	n := len(c)
	up, down, reachOf := q.inverts(drops, grades)
	pl := &Plan{Stations: make([]StationResult, n)}
	var cum, cumF, earth float64
	for i := 0; i < n; i++ {
		gUp := grades[0]
		if i > 0 {
			gUp = grades[reachOf[i-1]]
		}
		st := &pl.Stations[i]
		st.Chainage, st.Ground, st.Invert, st.InvertDown = c[i], gr[i], up[i], down[i]
		st.Grade = q.grades[gUp]
		st.CutDepth = math.Max(0, gr[i]-up[i])
		st.FillHeight = math.Max(0, up[i]-gr[i])
		st.CutArea, st.FillArea = q.tpl[gUp].Areas(gr[i] - up[i])
		st.TopOfBank = up[i] + q.tpl[gUp].BankHeight
		pl.Totals.MaxCutDepth = math.Max(pl.Totals.MaxCutDepth, math.Max(st.CutDepth, gr[i]-down[i]))
		pl.Totals.MaxFillHeight = math.Max(pl.Totals.MaxFillHeight, math.Max(st.FillHeight, down[i]-gr[i]))
		if i > 0 {
			t := &q.tpl[grades[reachOf[i-1]]]
			l := c[i] - c[i-1]
			d1, d2 := gr[i-1]-down[i-1], gr[i]-up[i]
			c1, f1 := t.Areas(d1)
			c2, f2 := t.Areas(d2)
			var vc, vf float64
			if q.s.Volume == Prismoidal {
				cm, fm := t.Areas((d1 + d2) / 2)
				vc, vf = PrismoidalVolume(l, c1, cm, c2), PrismoidalVolume(l, f1, fm, f2)
			} else {
				vc, vf = AverageEndVolume(l, c1, c2), AverageEndVolume(l, f1, f2)
			}
			cum += vc
			cumF += vf
			earth += q.costs.Earthwork(vc, vf)
			if usable := vc * (1 - q.costs.Shrinkage); usable > vf {
				pl.Totals.WasteVolume += vc - vf/(1-q.costs.Shrinkage)
			} else {
				pl.Totals.BorrowVolume += vf - usable
			}
		}
		st.CumCut, st.CumFill = cum, cumF
	}
	for _, d := range drops {
		pl.Totals.DropCost += q.costs.Drop(d.height)
	}
	pl.Totals.DropCount = len(drops)
	pl.Totals.CutVolume, pl.Totals.FillVolume = cum, cumF
	pl.Totals.EarthworkCost = earth
	pl.Totals.TotalCost = earth + pl.Totals.DropCost
	// Reaches.
	start := 0
	for r := 0; r <= len(drops); r++ {
		end := n - 1
		if r < len(drops) {
			end = drops[r].station
		}
		g := grades[r]
		pl.Reaches = append(pl.Reaches, Reach{From: c[start], To: c[end], Grade: q.grades[g],
			StartInvert: down[start], EndInvert: up[end], NormalDepth: q.depth[g],
			Velocity: hydraulics.Velocity(q.p.Section, q.p.Flow, q.depth[g])})
		start = end
	}
	return pl
}

// hydraulics designs every drop, checks its outlet, and fills in the
// water surface and velocity of every station from standard-step profiles
// computed upstream from each reach's downstream control.
func (q *prepared) hydraulics(pl *Plan, drops []dropSpec, grades []int) {
	c := hydraulics.SI()
	n := len(pl.Stations)
	control := make([]float64, len(pl.Reaches)) // depth at each reach's downstream end
	for r := range pl.Reaches {
		control[r] = q.depth[grades[r]]
	}
	for x, d := range drops {
		gu, gd := q.grades[grades[x]], q.grades[grades[x+1]]
		in := q.dropInput(d.height, gu, gd)
		st := pl.Stations[d.station]
		dr := DropResult{Station: d.station, Chainage: st.Chainage, Height: d.height,
			UpstreamInvert: st.Invert, DownstreamInvert: st.InvertDown}
		dd, err := hydraulics.DesignDrop(c, in)
		if err != nil {
			dr.Warnings = append(dr.Warnings, "drop design failed: "+err.Error())
			pl.Warnings = append(pl.Warnings, fmt.Sprintf("drop at chainage %.2f m: design failed: %v", st.Chainage, err))
			pl.Drops = append(pl.Drops, dr)
			continue
		}
		dr.CrestRaise, dr.BasinDepression = dd.CrestRaise, dd.BasinDepression
		dr.CrestLevel = st.Invert + dd.CrestRaise
		dr.BasinFloor = st.InvertDown - dd.BasinDepression
		dr.BasinLength, dr.EndSill, dr.JumpState = dd.BasinLength, dd.EndSill, dd.JumpState
		dr.Warnings = append(dr.Warnings, dd.Warnings...)
		for _, f := range q.s.CheckFlows {
			chk, err := hydraulics.CheckOutlet(c, dd, in, f*q.p.Flow)
			if err != nil {
				dr.Warnings = append(dr.Warnings, fmt.Sprintf("outlet check at %.0f %% flow failed: %v", 100*f, err))
				continue
			}
			dr.Checks = append(dr.Checks, chk)
			for _, w := range chk.Warnings {
				dr.Warnings = append(dr.Warnings, fmt.Sprintf("at %.0f %% of design flow: %s", 100*f, w))
			}
		}
		for _, w := range dr.Warnings {
			pl.Warnings = append(pl.Warnings, fmt.Sprintf("drop at chainage %.2f m: %s", st.Chainage, w))
		}
		// Upstream control: a crest raised by p > 0 holds normal depth. A
		// crest narrower than the control width stays at bed level and
		// backs the water up (M1) to the depth whose specific energy is
		// 1.5·yc on the crest (reference sheet §4.5).
		if dd.CrestRaise <= 0 && dd.ControlWidth > q.crest {
			yc := math.Cbrt(math.Pow(q.p.Flow/q.crest, 2) / c.G)
			if y, ok := q.depthForEnergy(1.5*yc, gu); ok {
				control[x] = y
			}
		}
		pl.Drops = append(pl.Drops, dr)
	}
	// Water-surface profiles reach by reach.
	start := 0
	for r, rc := range pl.Reaches {
		end := n - 1
		if r < len(drops) {
			end = drops[r].station
		}
		g := q.grades[grades[r]]
		ch := make([]float64, end-start+1)
		for i := range ch {
			ch[i] = pl.Stations[start+i].Chainage
		}
		depths, err := hydraulics.StandardStep(c, q.channel(g), q.p.Flow, control[r], ch)
		if err != nil {
			pl.Warnings = append(pl.Warnings, fmt.Sprintf("reach %.2f–%.2f m: water-surface profile failed (%v); normal depth shown", rc.From, rc.To, err))
			depths = make([]float64, len(ch))
			for i := range depths {
				depths[i] = q.depth[grades[r]]
			}
		}
		fb := q.tpl[grades[r]].BankHeight - q.depth[grades[r]] // design freeboard, m
		var low []string
		for i, y := range depths {
			st := &pl.Stations[start+i]
			if i == 0 && r > 0 {
				continue // the drop station keeps its upstream-side values
			}
			if y-q.depth[grades[r]] > fb/2 {
				low = append(low, fmt.Sprintf("%.2f", st.Chainage))
			}
			st.Depth = y
			st.WaterSurface = st.Invert + y
			if i == 0 {
				st.WaterSurface = st.InvertDown + y
			}
			st.Velocity = hydraulics.Velocity(q.p.Section, q.p.Flow, y)
		}
		if len(low) > 0 {
			pl.Warnings = append(pl.Warnings, fmt.Sprintf("reach %.2f–%.2f m: the backwater above the drop eats more than half the %.3f m freeboard at %d stations (chainage %s to %s m); widen the crest or raise the banks",
				rc.From, rc.To, fb, len(low), low[0], low[len(low)-1]))
		}
		start = end
	}
	t := &pl.Totals
	t.MinVelocity = math.Inf(1)
	for i := range pl.Stations {
		st := &pl.Stations[i]
		t.MaxVelocity = math.Max(t.MaxVelocity, st.Velocity)
		t.MinVelocity = math.Min(t.MinVelocity, st.Velocity)
	}
	if t.MaxVelocity > q.p.MaxVelocity*(1+1e-9) {
		pl.Warnings = append(pl.Warnings, fmt.Sprintf("velocity reaches %.3f m/s, above the permissible %.3f m/s, in a drawdown", t.MaxVelocity, q.p.MaxVelocity))
	}
	if q.p.MinVelocity > 0 && t.MinVelocity < q.p.MinVelocity*(1-1e-9) {
		pl.Warnings = append(pl.Warnings, fmt.Sprintf("velocity falls to %.3f m/s, below the non-silting %.3f m/s, in the backwater above a drop", t.MinVelocity, q.p.MinVelocity))
	}
}

// depthForEnergy returns the subcritical depth (m) at which the canal at
// grade g carries the design flow with specific energy e (m), by bisection
// above critical depth.
func (q *prepared) depthForEnergy(e, g float64) (float64, bool) {
	c := hydraulics.SI()
	yc, err := hydraulics.CriticalDepth(c, q.p.Section, q.p.Flow)
	if err != nil {
		return 0, false
	}
	f := func(y float64) float64 { return hydraulics.SpecificEnergy(c, q.p.Section, q.p.Flow, y) - e }
	lo, hi := yc, math.Max(2*yc, e)
	if f(lo) > 0 || f(hi) < 0 {
		return 0, false
	}
	for it := 0; it < 200 && hi-lo > 1e-10; it++ {
		m := (lo + hi) / 2
		if f(m) < 0 {
			lo = m
		} else {
			hi = m
		}
	}
	return (lo + hi) / 2, true
}

// baseline builds the even-spacing profile: average ground slope from the
// end elevations, the steepest candidate grade (on ground flatter than that,
// the steepest candidate not steeper than the ground, else the flattest),
// the largest drop height, n = ceil((ground fall − grade·length)/height)
// drops at the stations nearest to equal fractions of the length.
func (q *prepared) baseline() *Baseline {
	c, g := q.p.Chainage, q.p.Ground
	n := len(c)
	length := c[n-1] - c[0]
	fall := g[0] - g[n-1]
	grade := q.grades[len(q.grades)-1]
	for _, s := range q.grades { // sorted steepest first
		if s <= fall/length {
			grade = s
			break
		}
	}
	gi := 0
	for i, s := range q.grades {
		if s == grade {
			gi = i
		}
	}
	h := q.heights[len(q.heights)-1]
	nd := int(math.Max(0, math.Ceil((fall-grade*length)/h-1e-9)))
	var drops []dropSpec
	for k := 1; k <= nd; k++ {
		target := c[0] + float64(k)*length/float64(nd+1)
		i := sort.SearchFloat64s(c, target)
		if i > 0 && (i == n || target-c[i-1] < c[i]-target) {
			i--
		}
		i = min(max(i, 1), n-2)
		if len(drops) > 0 && drops[len(drops)-1].station >= i {
			continue // stations too coarse for this many drops
		}
		drops = append(drops, dropSpec{station: i, height: h})
	}
	grades := make([]int, len(drops)+1)
	for i := range grades {
		grades[i] = gi
	}
	pl := q.evaluate(drops, grades)
	q.hydraulics(pl, drops, grades)
	b := &Baseline{Plan: *pl, AverageGroundSlope: fall / length, Grade: grade, DropHeight: h}
	b.Violations = q.violations(drops, grades)
	b.Feasible = len(b.Violations) == 0
	return b
}

// violations lists the constraints a profile breaks.
func (q *prepared) violations(drops []dropSpec, grades []int) []string {
	c, g := q.p.Chainage, q.p.Ground
	n := len(c)
	up, down, reachOf := q.inverts(drops, grades)
	var out []string
	var cutAt, fillAt []float64
	half := q.s.Step / 2
	for i := 0; i < n; i++ {
		for _, z := range []float64{up[i], down[i]} {
			if g[i]-z > q.maxCut+1e-9 {
				cutAt = append(cutAt, c[i])
				break
			}
			if z-g[i] > q.maxFill+1e-9 {
				fillAt = append(fillAt, c[i])
				break
			}
		}
		if zf, ok := q.fixedAt[i]; ok && (math.Abs(up[i]-zf) > half || math.Abs(down[i]-zf) > half) {
			out = append(out, fmt.Sprintf("fixed invert %.3f m at chainage %.2f m (bed %.3f m)", zf, c[i], up[i]))
		}
		if wl, ok := q.minWLAt[i]; ok {
			gi := grades[0]
			if i > 0 {
				gi = grades[reachOf[i-1]]
			}
			if up[i]+q.depth[gi] < wl-1e-9 {
				out = append(out, fmt.Sprintf("minimum water level %.3f m at chainage %.2f m (water %.3f m)", wl, c[i], up[i]+q.depth[gi]))
			}
		}
	}
	if q.p.EndInvert != nil && math.Abs(up[n-1]-*q.p.EndInvert) > half {
		out = append(out, fmt.Sprintf("end invert %.3f m (bed %.3f m)", *q.p.EndInvert, up[n-1]))
	}
	if len(cutAt) > 0 {
		out = append(out, fmt.Sprintf("maximum cut depth %.2f m at %d stations from chainage %.2f m to %.2f m", q.maxCut, len(cutAt), cutAt[0], cutAt[len(cutAt)-1]))
	}
	if len(fillAt) > 0 {
		out = append(out, fmt.Sprintf("maximum fill height %.2f m at %d stations from chainage %.2f m to %.2f m", q.maxFill, len(fillAt), fillAt[0], fillAt[len(fillAt)-1]))
	}
	prev := -1
	for x, d := range drops {
		if !q.dropAllowed(d.station) {
			out = append(out, fmt.Sprintf("drop at chainage %.2f m is within the minimum reach of the start or at a fixed invert", c[d.station]))
		}
		if prev >= 0 {
			hi := q.heightIndex(drops[x-1].height)
			if c[d.station]-c[prev] < q.spacing[hi]-1e-9 {
				out = append(out, fmt.Sprintf("drops at chainage %.2f m and %.2f m are closer than %.2f m", c[prev], c[d.station], q.spacing[hi]))
			}
		}
		prev = d.station
	}
	if prev >= 0 {
		hi := q.heightIndex(drops[len(drops)-1].height)
		if c[n-1]-c[prev] < q.spacing[hi]-1e-9 {
			out = append(out, fmt.Sprintf("last drop at chainage %.2f m is closer than %.2f m to the end", c[prev], q.spacing[hi]))
		}
	}
	return out
}

func (q *prepared) heightIndex(h float64) int {
	for i, x := range q.heights {
		if x == h {
			return i
		}
	}
	return len(q.heights) - 1
}

// Alternative is one drop-height set of a comparison and its outcome.
type Alternative struct {
	DropHeights []float64
	Result      *Result // nil when Err is an input error
	Err         error
}

// Compare plans p once per drop-height set in alternatives, with up to
// workers plans at a time (0 or less: one). Each alternative is an
// independent job; the results come back in the order given.
func Compare(p Problem, s *Settings, alternatives [][]float64, workers int) []Alternative {
	out := make([]Alternative, len(alternatives))
	workers = max(1, workers)
	sem := make(chan struct{}, workers)
	var wg sync.WaitGroup
	for i, hs := range alternatives {
		wg.Add(1)
		sem <- struct{}{}
		go func() {
			defer wg.Done()
			defer func() { <-sem }()
			pp := p
			pp.DropHeights = append([]float64(nil), hs...)
			r, err := Optimize(pp, s)
			out[i] = Alternative{DropHeights: pp.DropHeights, Result: r, Err: err}
		}()
	}
	wg.Wait()
	return out
}
