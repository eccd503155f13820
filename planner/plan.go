package planner

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"sync"

	"canalstep/alignment"
	"canalstep/planner/earthwork"
	"canalstep/planner/hydraulics"
)

// ErrInfeasible is wrapped by *InfeasibleError: no profile meets every
// constraint on the discretisation.
var ErrInfeasible = errors.New("planner: no feasible profile")

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
	Status Status
	Stats  Stats
	Record Record // the design as planned and the section results
	// The baselines on the same ground, section, heights and costs: the
	// classic even-spacing hand method and the by-eye method of drafting.
	EvenSpacing *Baseline
	ByEye       *Baseline
	Command     Command // how the plan commands the land
}

// Baselines returns the baselines in a fixed order.
func (r *Result) Baselines() []*Baseline {
	var out []*Baseline
	for _, b := range []*Baseline{r.EvenSpacing, r.ByEye} {
		if b != nil {
			out = append(out, b)
		}
	}
	return out
}

// BestBaseline returns the cheapest feasible baseline, or nil when no
// baseline meets every constraint: the plan's saving is stated against it
// and never against an infeasible one.
func (r *Result) BestBaseline() *Baseline {
	var best *Baseline
	for _, b := range r.Baselines() {
		if b.Feasible && (best == nil || b.Totals.TotalCost < best.Totals.TotalCost) {
			best = b
		}
	}
	return best
}

// Saving returns the best feasible baseline's total cost minus the plan's,
// the same as a fraction of the baseline's, and the baseline; ok is false
// when no baseline is feasible.
func (r *Result) Saving() (amount, fraction float64, against *Baseline, ok bool) {
	b := r.BestBaseline()
	if b == nil || r.Status != Optimal {
		return 0, 0, nil, false
	}
	amount = b.Totals.TotalCost - r.Totals.TotalCost
	if b.Totals.TotalCost > 0 {
		fraction = amount / b.Totals.TotalCost
	}
	return amount, fraction, b, true
}

// Stats describe the work the optimiser did.
type Stats struct {
	Stations  int     `json:"stations"`
	Grades    int     `json:"grades"`
	Heights   int     `json:"heights"`
	States    int64   `json:"states"`    // station states evaluated
	Objective float64 `json:"objective"` // least cost found by the dynamic programme
}

// Record records the design a plan was made with and the section results,
// in SI units.
type Record struct {
	Flow           float64   `json:"flow"`         // m³/s
	BottomWidth    float64   `json:"bottom_width"` // m
	SideSlope      float64   `json:"side_slope"`   // H:V
	Roughness      float64   `json:"roughness"`    // Manning n
	MaxVelocity    float64   `json:"max_velocity"` // m/s
	MinVelocity    float64   `json:"min_velocity"` // m/s
	MaxSlope       float64   `json:"max_slope"`    // steepest grade the velocity allows, m/m
	MinSlope       float64   `json:"min_slope"`    // flattest grade, m/m (0: no limit)
	Grades         []float64 `json:"grades"`       // candidate grades, m/m
	NormalDepths   []float64 `json:"normal_depths"`
	BankHeights    []float64 `json:"bank_heights"`     // per grade, m above bed
	DropHeights    []float64 `json:"drop_heights"`     // m
	BasinLengths   []float64 `json:"basin_lengths"`    // per drop height, m
	MinDropSpacing []float64 `json:"min_drop_spacing"` // per drop height, m
	StartInvert    float64   `json:"start_invert"`     // m
	// StartInvertRaised is how far (m) the default start invert was raised
	// above the ground minus normal depth (plus the margin at the start) so
	// that the flattest grade can hold the lowest water levels downstream.
	StartInvertRaised float64                  `json:"start_invert_raised"`
	EndInvert         *float64                 `json:"end_invert"`      // m; null for a free end
	Step              float64                  `json:"step"`            // elevation step, m
	MaxCutDepth       float64                  `json:"max_cut_depth"`   // m
	MaxFillHeight     float64                  `json:"max_fill_height"` // m
	MinReach          float64                  `json:"min_reach"`       // m
	CrestWidth        float64                  `json:"crest_width"`     // m
	Transition        float64                  `json:"transition_length"`
	ByEyeRise         float64                  `json:"byeye_rise"` // m
	FixedInverts      []Control                `json:"fixed_inverts"`
	MinWaterLevels    []Control                `json:"min_water_levels"`
	Command           []CommandRange           `json:"-"`
	Offtakes          []Offtake                `json:"offtakes"`
	Ground            string                   `json:"ground_model"` // "level" or "cross_sections"
	Template          earthwork.Template       `json:"-"`
	Costs             earthwork.Costs          `json:"-"`
	Volume            string                   `json:"volume_method"`
	CheckFlows        []float64                `json:"check_flows"`
	Freeboard         hydraulics.FreeboardRule `json:"-"`
}

// Plan is a canal profile with its earthwork, structures and hydraulics.
type Plan struct {
	Stations []StationResult
	Drops    []DropResult
	Reaches  []Reach
	Totals   Totals
	Warnings []Warning
}

// StationResult is one station of a plan: the profile's station (its
// coordinates, label, ground and cross-section) and the design there. At a
// drop station the invert, depths and areas are those of the upstream
// side; InvertDown is the bed just below the drop.
type StationResult struct {
	alignment.Station
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
	BankHeight   float64 // top of bank above the bed, m
	// CatchLeft and CatchRight are where the section meets the ground.
	CatchLeft, CatchRight earthwork.Catch
}

// Margin is the water surface above the centre-line ground, m (negative:
// below it, the land is not commanded).
func (s *StationResult) Margin() float64 { return s.WaterSurface - s.Ground }

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
	BasinWidth       float64 // m (the crest width)
	EndSill          float64 // m
	CrestRaise       float64 // m above the upstream bed
	BasinDepression  float64 // m below the downstream bed
	WallHeight       float64 // side-wall height above the basin floor, m
	TransitionLength float64 // outlet transition, m
	JumpState        hydraulics.JumpState
	Checks           []hydraulics.OutletCheck // at Design.CheckFlows × design flow
	Warnings         []Warning
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
	WasteVolume   float64 `json:"waste_volume"`   // surplus cut to spoil, bank m³ (per segment, see earthwork.Costs)
	BorrowVolume  float64 `json:"borrow_volume"`  // fill brought in, compacted m³
	EarthworkCost float64 `json:"earthwork_cost"` // including waste and borrow
	DropCost      float64 `json:"drop_cost"`
	TotalCost     float64 `json:"total_cost"`
	MaxVelocity   float64 `json:"max_velocity"`    // m/s
	MinVelocity   float64 `json:"min_velocity"`    // m/s
	MaxCutDepth   float64 `json:"max_cut_depth"`   // m
	MaxFillHeight float64 `json:"max_fill_height"` // m
	// CommandShare is the fraction of stations whose design water surface
	// stands at or above the centre-line ground.
	CommandShare float64 `json:"command_share"`
}

// Command reports how a plan commands the land: at every offtake, the
// water surface and its margin over the command level.
type Command struct {
	Share    float64         `json:"share_above_ground"` // as Totals.CommandShare
	Offtakes []OfftakeResult `json:"offtakes"`
}

// OfftakeResult is one offtake of a plan.
type OfftakeResult struct {
	Name         string  `json:"name"`
	Chainage     float64 `json:"chainage"`      // m
	Level        float64 `json:"command_level"` // m
	WaterSurface float64 `json:"water_surface"` // m
	Margin       float64 `json:"margin"`        // water surface − command level, m
}

// Baseline is a hand method on the same ground, section, heights and
// costs, evaluated like the plan.
type Baseline struct {
	Plan
	Method             string      // "even_spacing" or "by_eye"
	AverageGroundSlope float64     // (ground at start − ground at end)/length, m/m
	Grade              float64     // m/m
	DropHeight         float64     // m (the largest, for by-eye)
	Rise               float64     // by-eye: water-surface rise above the ground that calls for a drop, m
	Feasible           bool        // false when the profile breaks a constraint
	Violations         []Violation // the constraints it breaks
}

// Optimize plans the canal: the least-cost bed profile on the
// discretisation described in the package doc, its structures and its
// water-surface profile, and the two baselines beside it. It returns an
// error wrapping ErrInput for a problem that cannot be planned as given;
// for an infeasible problem it returns a Result with Status Infeasible and
// the baselines, and an *InfeasibleError listing every conflicting stretch.
// Optimize keeps no state between calls and may run concurrently.
func Optimize(p Problem) (*Result, error) {
	q, err := prepare(p)
	if err != nil {
		return nil, err
	}
	res := &Result{Record: q.record()}
	res.EvenSpacing = q.evenSpacing()
	res.ByEye = q.byEye()
	k := q.core()
	sol, err := k.solve()
	if err != nil {
		var ie *InfeasibleError
		if errors.As(err, &ie) {
			q.diagnose(ie)
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
	res.Command = q.command(plan)
	res.Stats = Stats{Stations: len(q.c), Grades: len(q.grades), Heights: len(q.heights), States: sol.states, Objective: sol.cost}
	if d := math.Abs(sol.cost - plan.Totals.TotalCost); d > 1e-6*math.Max(1, math.Abs(sol.cost)) {
		return nil, fmt.Errorf("planner: internal error: optimiser cost %.6f differs from the plan's %.6f", sol.cost, plan.Totals.TotalCost)
	}
	return res, nil
}

func (q *prepared) record() Record {
	d := &q.d
	r := Record{Flow: d.Flow, BottomWidth: d.Section.BottomWidth, SideSlope: d.Section.SideSlope,
		Roughness: d.Roughness, MaxVelocity: d.MaxVelocity, MinVelocity: d.MinVelocity,
		MaxSlope: q.limits.MaxSlope, MinSlope: q.limits.MinSlope, Grades: q.grades, NormalDepths: q.depth,
		DropHeights: q.heights, BasinLengths: q.basin, MinDropSpacing: q.spacing, StartInvert: q.z0, StartInvertRaised: q.raised, EndInvert: d.EndInvert,
		Step: d.Step, MaxCutDepth: d.MaxCutDepth, MaxFillHeight: d.MaxFillHeight, MinReach: d.MinReach,
		CrestWidth: q.crest, Transition: q.transLen, ByEyeRise: d.ByEyeRise,
		FixedInverts: orEmpty(d.FixedInverts), MinWaterLevels: orEmpty(d.MinWaterLevels), Command: d.Command,
		Offtakes: d.Offtakes, Ground: "level", Template: q.tpl[0], Costs: d.Costs, Volume: d.Volume.String(),
		CheckFlows: d.CheckFlows, Freeboard: d.Freeboard}
	if r.Offtakes == nil {
		r.Offtakes = []Offtake{}
	}
	if q.cross {
		r.Ground = "cross_sections"
	}
	for _, t := range q.tpl {
		r.BankHeights = append(r.BankHeights, t.BankHeight)
	}
	return r
}

func orEmpty(c []Control) []Control {
	if c == nil {
		return []Control{}
	}
	return c
}

type dropSpec struct {
	station int
	height  float64
}

// inverts returns the bed on the upstream and downstream side of every
// station and the reach index of each segment.
func (q *prepared) inverts(drops []dropSpec, grades []int) (up, down []float64, reachOf []int) {
	c := q.c
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
	c, gr := q.c, q.g
	n := len(c)
	costs := q.d.Costs
	up, down, reachOf := q.inverts(drops, grades)
	pl := &Plan{Stations: make([]StationResult, n)}
	var cum, cumF, earth float64
	var noCatch []int
	for i := 0; i < n; i++ {
		gUp := grades[0]
		if i > 0 {
			gUp = grades[reachOf[i-1]]
		}
		sec := q.sec[gUp]
		st := &pl.Stations[i]
		st.Station = q.st[i]
		st.Invert, st.InvertDown = up[i], down[i]
		st.Grade = q.grades[gUp]
		st.CutDepth = math.Max(0, gr[i]-up[i])
		st.FillHeight = math.Max(0, up[i]-gr[i])
		st.CutArea, st.FillArea = sec.Areas(i, up[i])
		st.CatchLeft, st.CatchRight = sec.Catch(i, up[i])
		if !st.CatchLeft.Found || !st.CatchRight.Found {
			noCatch = append(noCatch, i)
		}
		st.BankHeight = q.tpl[gUp].BankHeight
		st.TopOfBank = up[i] + st.BankHeight
		pl.Totals.MaxCutDepth = math.Max(pl.Totals.MaxCutDepth, math.Max(st.CutDepth, gr[i]-down[i]))
		pl.Totals.MaxFillHeight = math.Max(pl.Totals.MaxFillHeight, math.Max(st.FillHeight, down[i]-gr[i]))
		if i > 0 {
			l := c[i] - c[i-1]
			vc, vf := earthwork.SegmentVolumes(q.sec[grades[reachOf[i-1]]], q.d.Volume, i, l, down[i-1], up[i])
			cum += vc
			cumF += vf
			earth += costs.Earthwork(vc, vf)
			w, b := costs.Balance(vc, vf)
			pl.Totals.WasteVolume += w
			pl.Totals.BorrowVolume += b
		}
		st.CumCut, st.CumFill = cum, cumF
	}
	if len(noCatch) > 0 && q.cross {
		pl.Warnings = append(pl.Warnings, Warning{Kind: WarnCatch, From: c[noCatch[0]], To: c[noCatch[len(noCatch)-1]], Stations: len(noCatch),
			Text: "a catch point lies beyond the sampled cross-section; the ground is taken level beyond it"})
	}
	for _, d := range drops {
		pl.Totals.DropCost += costs.Drop(d.height)
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
			Velocity: hydraulics.Velocity(q.d.Section, q.d.Flow, q.depth[g])})
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
	d := &q.d
	control := make([]float64, len(pl.Reaches)) // depth at each reach's downstream end
	for r := range pl.Reaches {
		control[r] = q.depth[grades[r]]
	}
	for x, dr0 := range drops {
		gu, gd := q.grades[grades[x]], q.grades[grades[x+1]]
		in := q.dropInput(dr0.height, gu, gd)
		st := pl.Stations[dr0.station]
		ch := st.Chainage
		dr := DropResult{Station: dr0.station, Chainage: ch, Height: dr0.height,
			UpstreamInvert: st.Invert, DownstreamInvert: st.InvertDown, BasinWidth: q.crest, TransitionLength: q.transLen}
		dd, err := hydraulics.DesignDrop(c, in)
		if err != nil {
			dr.Warnings = append(dr.Warnings, Warning{Kind: WarnDropDesignFailed, From: ch, To: ch, Text: err.Error()})
			pl.Warnings = append(pl.Warnings, dr.Warnings...)
			pl.Drops = append(pl.Drops, dr)
			continue
		}
		dr.CrestRaise, dr.BasinDepression = dd.CrestRaise, dd.BasinDepression
		dr.CrestLevel = st.Invert + dd.CrestRaise
		dr.BasinFloor = st.InvertDown - dd.BasinDepression
		dr.BasinLength, dr.EndSill, dr.JumpState = dd.BasinLength, dd.EndSill, dd.JumpState
		dr.WallHeight = dd.WallHeight
		for _, w := range dd.Warnings {
			dr.Warnings = append(dr.Warnings, Warning{Kind: WarnDropDesign, From: ch, To: ch, Text: w})
		}
		for _, f := range d.CheckFlows {
			chk, err := hydraulics.CheckOutlet(c, dd, in, f*d.Flow)
			if err != nil {
				dr.Warnings = append(dr.Warnings, Warning{Kind: WarnOutlet, From: ch, To: ch, Flow: f, Text: "the check failed: " + err.Error()})
				continue
			}
			dr.Checks = append(dr.Checks, chk)
			for _, w := range chk.Warnings {
				dr.Warnings = append(dr.Warnings, Warning{Kind: WarnOutlet, From: ch, To: ch, Flow: f, Text: w})
			}
		}
		pl.Warnings = append(pl.Warnings, dr.Warnings...)
		// Upstream control: a crest raised by p > 0 holds normal depth. A
		// crest narrower than the control width stays at bed level and
		// backs the water up (M1) to the depth whose specific energy is
		// 1.5·yc on the crest (reference sheet §4.5).
		if dd.CrestRaise <= 0 && dd.ControlWidth > q.crest {
			yc := math.Cbrt(math.Pow(d.Flow/q.crest, 2) / c.G)
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
		depths, err := hydraulics.StandardStep(c, q.channel(g), d.Flow, control[r], ch)
		if err != nil {
			pl.Warnings = append(pl.Warnings, Warning{Kind: WarnProfile, From: rc.From, To: rc.To, Text: err.Error()})
			depths = make([]float64, len(ch))
			for i := range depths {
				depths[i] = q.depth[grades[r]]
			}
		}
		fb := q.tpl[grades[r]].BankHeight - q.depth[grades[r]] // design freeboard, m
		var low []float64
		for i, y := range depths {
			st := &pl.Stations[start+i]
			if i == 0 && r > 0 {
				continue // the drop station keeps its upstream-side values
			}
			if y-q.depth[grades[r]] > fb/2 {
				low = append(low, st.Chainage)
			}
			st.Depth = y
			st.WaterSurface = st.Invert + y
			if i == 0 {
				st.WaterSurface = st.InvertDown + y
			}
			st.Velocity = hydraulics.Velocity(d.Section, d.Flow, y)
		}
		if len(low) > 0 {
			pl.Warnings = append(pl.Warnings, Warning{Kind: WarnBackwater, From: low[0], To: low[len(low)-1], Stations: len(low), Limit: fb,
				Text: "the backwater above the drop eats more than half the freeboard; widen the crest or raise the banks"})
		}
		start = end
	}
	t := &pl.Totals
	t.MinVelocity = math.Inf(1)
	above := 0
	var dip []int
	for i := range pl.Stations {
		st := &pl.Stations[i]
		t.MaxVelocity = math.Max(t.MaxVelocity, st.Velocity)
		t.MinVelocity = math.Min(t.MinVelocity, st.Velocity)
		if st.WaterSurface >= st.Ground {
			above++
		}
		if m := q.margin[i]; !math.IsNaN(m) && st.WaterSurface < st.Ground+m-1e-3 {
			dip = append(dip, i)
		}
	}
	t.CommandShare = float64(above) / float64(len(pl.Stations))
	if len(dip) > 0 {
		worst := math.Inf(1)
		for _, i := range dip {
			worst = math.Min(worst, pl.Stations[i].Margin())
		}
		pl.Warnings = append(pl.Warnings, Warning{Kind: WarnCommand, From: pl.Stations[dip[0]].Chainage, To: pl.Stations[dip[len(dip)-1]].Chainage,
			Stations: len(dip), Value: worst, Limit: q.margin[dip[0]],
			Text: "the water surface dips below the command margin in a drawdown above a drop"})
	}
	if t.MaxVelocity > d.MaxVelocity*(1+1e-9) {
		pl.Warnings = append(pl.Warnings, Warning{Kind: WarnVelocityMax, Value: t.MaxVelocity, Limit: d.MaxVelocity,
			Text: "in a drawdown"})
	}
	if d.MinVelocity > 0 && t.MinVelocity < d.MinVelocity*(1-1e-9) {
		pl.Warnings = append(pl.Warnings, Warning{Kind: WarnVelocityMin, Value: t.MinVelocity, Limit: d.MinVelocity,
			Text: "in the backwater above a drop"})
	}
	sort.SliceStable(pl.Warnings, func(a, b int) bool { return pl.Warnings[a].From < pl.Warnings[b].From })
}

// command reports the plan's command of the land at its offtakes.
func (q *prepared) command(pl *Plan) Command {
	out := Command{Share: pl.Totals.CommandShare, Offtakes: []OfftakeResult{}}
	for _, o := range q.offtakes {
		ws := pl.Stations[o.station].WaterSurface
		out.Offtakes = append(out.Offtakes, OfftakeResult{Name: o.Name, Chainage: q.c[o.station], Level: o.Level,
			WaterSurface: ws, Margin: ws - o.Level})
	}
	return out
}

// depthForEnergy returns the subcritical depth (m) at which the canal at
// grade g carries the design flow with specific energy e (m), by bisection
// above critical depth.
func (q *prepared) depthForEnergy(e, g float64) (float64, bool) {
	c := hydraulics.SI()
	yc, err := hydraulics.CriticalDepth(c, q.d.Section, q.d.Flow)
	if err != nil {
		return 0, false
	}
	f := func(y float64) float64 { return hydraulics.SpecificEnergy(c, q.d.Section, q.d.Flow, y) - e }
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

// Alternative is one drop-height set of a comparison and its outcome.
type Alternative struct {
	DropHeights []float64
	Result      *Result // nil when Err is an input error
	Err         error
}

// Compare plans p once per drop-height set in alternatives, with up to
// workers plans at a time (0 or less: one). Each alternative is an
// independent job; the results come back in the order given.
func Compare(p Problem, alternatives [][]float64, workers int) []Alternative {
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
			defer func() { // a bug in one alternative must not bring the others down
				if v := recover(); v != nil {
					out[i] = Alternative{DropHeights: hs, Err: fmt.Errorf("planner: internal error planning drop heights %v: %v", hs, v)}
				}
			}()
			pp := p
			pp.Design.DropHeights = append([]float64(nil), hs...)
			r, err := Optimize(pp)
			out[i] = Alternative{DropHeights: pp.Design.DropHeights, Result: r, Err: err}
		}()
	}
	wg.Wait()
	return out
}
