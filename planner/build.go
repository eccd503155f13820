package planner

import (
	"fmt"
	"math"
	"sort"

	"canalstep/alignment"
	"canalstep/planner/earthwork"
	"canalstep/planner/hydraulics"
)

// Problem is one canal to plan: its stationed ground profile and its
// design.
type Problem struct {
	// Stations are the profile in chainage order: Chainage and Ground are
	// required; when every station has a Cross section the earthwork is
	// taken on those DEM cross-sections, else on level ground.
	Stations []alignment.Station
	Design   Design
}

// LevelProfile returns stations at the given chainages (m) with the given
// ground (m) and nothing else: a profile for tests and for callers that
// have a ground profile from elsewhere. It panics if the lengths differ.
func LevelProfile(chainage, ground []float64) []alignment.Station {
	if len(chainage) != len(ground) {
		panic(fmt.Sprintf("planner: LevelProfile with %d chainages and %d elevations", len(chainage), len(ground)))
	}
	st := make([]alignment.Station, len(chainage))
	for i := range st {
		st[i].Chainage, st[i].Ground = chainage[i], ground[i]
		st[i].X = chainage[i]
	}
	return st
}

// prepared is a validated problem with everything derived from it.
type prepared struct {
	d        Design
	st       []alignment.Station
	c, g     []float64 // chainage and centre-line ground, m
	cross    bool      // earthwork on DEM cross-sections
	limits   hydraulics.SlopeLimits
	grades   []float64
	depth    []float64 // normal depth per grade, m
	tpl      []earthwork.Template
	sec      []earthwork.Sections // per grade
	heights  []float64
	basin    []float64 // basin length per height, m
	spacing  []float64 // minimum distance from a drop to the next, per height, m
	transLen float64
	crest    float64
	z0       float64
	fixedAt  map[int]float64 // station → fixed invert
	minWLAt  map[int]float64 // station → lowest water level (controls and offtakes)
	wlKind   map[int]Kind    // station → KindMinWaterLevel or KindOfftake
	margin   []float64       // command margin per station, m; NaN where none
	raised   float64         // how far the default start invert was raised for the command downstream, m
	offtakes []offtakeAt
}

type offtakeAt struct {
	Offtake
	station int
}

func prepare(p Problem) (*prepared, error) {
	d := p.Design
	if err := d.Validate(); err != nil {
		return nil, err
	}
	n := len(p.Stations)
	if n < 2 {
		return nil, fmt.Errorf("%w: need at least two stations (got %d)", ErrInput, n)
	}
	q := &prepared{d: d, st: p.Stations, c: make([]float64, n), g: make([]float64, n), cross: true}
	for i, s := range p.Stations {
		q.c[i], q.g[i] = s.Chainage, s.Ground
		if !finite(s.Chainage) || !finite(s.Ground) {
			return nil, fmt.Errorf("%w: station %d has a chainage or ground that is not a number", ErrInput, i)
		}
		if math.Abs(s.Chainage) > 1e9 || !Ranges["level"].Contains(s.Ground) {
			return nil, fmt.Errorf("%w: station %d at chainage %.2f m has ground %g m, outside %s", ErrInput, i, s.Chainage, s.Ground, Ranges["level"])
		}
		if i > 0 && !(s.Chainage > q.c[i-1]) {
			return nil, fmt.Errorf("%w: chainages must increase (station %d at %.3f m follows %.3f m)", ErrInput, i, s.Chainage, q.c[i-1])
		}
		q.cross = q.cross && s.Cross != nil
	}

	// Drop heights: whole steps, distinct.
	hs := append([]float64(nil), d.DropHeights...)
	sort.Float64s(hs)
	for i, h := range hs {
		r := h / d.Step
		if math.Abs(r-math.Round(r)) > 1e-6 {
			return nil, fmt.Errorf("%w: drop height %g m is not a whole number of elevation steps (%g m)", ErrInput, h, d.Step)
		}
		if i > 0 && math.Round(r) == math.Round(hs[i-1]/d.Step) {
			return nil, fmt.Errorf("%w: drop height %g m is given twice", ErrInput, h)
		}
	}
	q.heights = hs

	// Velocity-limited grades.
	c := hydraulics.SI()
	lim, err := hydraulics.VelocityLimitedSlopes(c, d.Section, d.Flow, d.Roughness, d.MaxVelocity, d.MinVelocity)
	if err != nil {
		return nil, fmt.Errorf("velocity limits: %w", err)
	}
	q.limits = lim
	if d.Grades != nil {
		gs := append([]float64(nil), d.Grades...)
		sort.Sort(sort.Reverse(sort.Float64Slice(gs)))
		for i, g := range gs {
			if g > lim.MaxSlope*(1+1e-12) || g < lim.MinSlope*(1-1e-12) {
				return nil, fmt.Errorf("%w: grade %g is outside the velocity-limited range [%g, %g]", ErrInput, g, lim.MinSlope, lim.MaxSlope)
			}
			if i > 0 && g == gs[i-1] {
				return nil, fmt.Errorf("%w: grade %g is given twice", ErrInput, g)
			}
		}
		q.grades = gs
	} else {
		q.grades = DefaultGrades(lim.MinSlope, lim.MaxSlope, d.Step, typicalSpacing(q.c), d.GradeCount)
	}
	if len(q.grades) > 64 {
		return nil, fmt.Errorf("%w: %d grades; use at most 64", ErrInput, len(q.grades))
	}
	// Per-grade depth, template and sections.
	var offsets, levels [][]float64
	if q.cross {
		offsets, levels = make([][]float64, n), make([][]float64, n)
		for i, s := range p.Stations {
			offsets[i], levels[i] = s.Cross.Offsets, s.Cross.Levels
		}
	}
	for _, g := range q.grades {
		yn, err := hydraulics.NormalDepth(c, d.Section, d.Flow, d.Roughness, g)
		if err != nil {
			return nil, fmt.Errorf("normal depth at grade %g: %w", g, err)
		}
		t := d.template(hydraulics.BankHeight(d.Flow, yn, d.Freeboard))
		if err := t.Validate(); err != nil {
			return nil, fmt.Errorf("%w: %v", ErrInput, err)
		}
		var sec earthwork.Sections
		if q.cross {
			if sec, err = earthwork.Cross(t, offsets, levels); err != nil {
				return nil, fmt.Errorf("%w: cross-sections: %v", ErrInput, err)
			}
		} else {
			sec = earthwork.Level(t, q.g)
		}
		q.depth = append(q.depth, yn)
		q.tpl = append(q.tpl, t)
		q.sec = append(q.sec, sec)
	}

	// Command margins per station.
	q.margin = make([]float64, n)
	for i := range q.margin {
		q.margin[i] = math.NaN()
		for _, r := range d.Command {
			if q.c[i] >= r.From-1e-9 && q.c[i] <= r.To+1e-9 && !(r.Margin <= q.margin[i]) {
				q.margin[i] = r.Margin
			}
		}
	}

	// Point controls (below) first: the default start invert looks at them.
	if err := q.pointControls(); err != nil {
		return nil, err
	}
	// Start invert. startWhy names what set it.
	startWhy := KindStartInvert
	if d.StartInvert != nil {
		q.z0 = *d.StartInvert
	} else {
		q.z0 = q.g[0] - q.depth[0]
		if m := q.margin[0]; !math.IsNaN(m) {
			q.z0 += m
		}
		// Raised where a lowest water level downstream (a command margin,
		// a control, an offtake) needs it: the flattest candidate grade from
		// the start, without drops, must hold every one of them.
		flat, yf := q.grades[len(q.grades)-1], q.depth[len(q.depth)-1]
		low := q.z0
		if !math.IsNaN(q.margin[0]) {
			startWhy = KindCommand
		}
		for i := range q.c {
			if wl, kind, ok := q.lowestWater(i); ok {
				if need := wl - yf + flat*(q.c[i]-q.c[0]); need > low {
					low, startWhy = need, kind
				}
			}
		}
		q.raised, q.z0 = low-q.z0, low
	}
	if d.StartInvert != nil && (q.z0-q.g[0] > d.MaxFillHeight+1e-9 || q.g[0]-q.z0 > d.MaxCutDepth+1e-9) {
		return nil, fmt.Errorf("%w: the start invert %.3f m is %.3f m from the ground %.3f m at the first station, outside the maximum cut depth %.2f m and fill height %.2f m",
			ErrInput, q.z0, math.Abs(q.z0-q.g[0]), q.g[0], d.MaxCutDepth, d.MaxFillHeight)
	}
	if q.z0-q.g[0] > d.MaxFillHeight+1e-9 {
		// The default start invert stands this high for a lowest water
		// level: that requirement, not the start, is what to relax.
		flags := []string{"--max-fill"}
		switch startWhy {
		case KindCommand:
			flags = append(flags, "--command-margin", "--command")
		case KindMinWaterLevel:
			flags = append(flags, "--min-water-level")
		case KindOfftake:
			flags = append(flags, "--alignment (the offtake's command_level or margin)")
		}
		return nil, &InfeasibleError{Conflicts: []Conflict{{Kinds: []Kind{startWhy, KindMaxFill}, Cause: CauseContradict, From: q.c[0], To: q.c[0], Shortage: q.z0 - q.g[0] - d.MaxFillHeight,
			Limit: d.MaxFillHeight, Value: q.z0 - q.g[0],
			Hint:  fmt.Sprintf("the start invert %.3f m is %.3f m above the ground, more than the maximum fill height %.3f m; lower the start invert or allow more fill", q.z0, q.z0-q.g[0], d.MaxFillHeight),
			Flags: flags}}}
	}
	if q.g[0]-q.z0 > d.MaxCutDepth+1e-9 {
		return nil, &InfeasibleError{Conflicts: []Conflict{{Kinds: []Kind{KindStartInvert, KindMaxCut}, Cause: CauseContradict, From: q.c[0], To: q.c[0], Shortage: q.g[0] - q.z0 - d.MaxCutDepth,
			Limit: d.MaxCutDepth, Value: q.g[0] - q.z0,
			Hint:  fmt.Sprintf("the start invert %.3f m is %.3f m below the ground, more than the maximum cut depth %.3f m; raise the start invert or allow deeper cut", q.z0, q.g[0]-q.z0, d.MaxCutDepth),
			Flags: []string{"--start-invert", "--max-cut"}}}}
	}

	if d.EndInvert != nil {
		if lvl, ok := q.fixedAt[n-1]; ok && math.Abs(lvl-*d.EndInvert) > d.Step/2 {
			return nil, fmt.Errorf("%w: the end invert %.3f m and a fixed invert %.3f m both stand at the last station", ErrInput, *d.EndInvert, lvl)
		}
	}
	if err := q.structures(); err != nil {
		return nil, err
	}
	return q, nil
}

// pointControls places the fixed inverts, lowest water levels and
// offtakes at their stations, at most one per station.
func (q *prepared) pointControls() error {
	d := &q.d
	q.fixedAt, q.minWLAt, q.wlKind = map[int]float64{}, map[int]float64{}, map[int]Kind{}
	taken := map[int]string{}
	claim := func(i int, what string) error {
		if prev, ok := taken[i]; ok {
			return fmt.Errorf("%w: %s and %s both stand at chainage %.2f m; give one control per station", ErrInput, prev, what, q.c[i])
		}
		taken[i] = what
		return nil
	}
	for _, ctl := range d.FixedInverts {
		what := fmt.Sprintf("fixed invert %.3f m", ctl.Level)
		i, err := q.stationAt(ctl.Chainage, what)
		if err != nil {
			return err
		}
		if err := claim(i, what); err != nil {
			return err
		}
		q.fixedAt[i] = ctl.Level
		if m := q.margin[i]; !math.IsNaN(m) && ctl.Level+q.depth[len(q.depth)-1] < q.g[i]+m-1e-9 {
			return fmt.Errorf("%w: %s at chainage %.2f m holds the water surface at most %.3f m there, below the command level %.3f m (ground + %.2f m margin); lower the margin there or raise the fixed invert",
				ErrInput, what, q.c[i], ctl.Level+q.depth[len(q.depth)-1], q.g[i]+m, m)
		}
	}
	addWL := func(ch, level float64, what string, kind Kind) (int, error) {
		i, err := q.stationAt(ch, what)
		if err != nil {
			return 0, err
		}
		if err := claim(i, what); err != nil {
			return 0, err
		}
		q.minWLAt[i], q.wlKind[i] = level, kind
		return i, nil
	}
	for _, ctl := range d.MinWaterLevels {
		if _, err := addWL(ctl.Chainage, ctl.Level, fmt.Sprintf("lowest water level %.3f m", ctl.Level), KindMinWaterLevel); err != nil {
			return err
		}
	}
	for _, o := range d.Offtakes {
		i, err := addWL(o.Chainage, o.Level, fmt.Sprintf("offtake %q (command level %.3f m)", o.Name, o.Level), KindOfftake)
		if err != nil {
			return err
		}
		q.offtakes = append(q.offtakes, offtakeAt{Offtake: o, station: i})
	}
	return nil
}

// structures sets the crest width, the transition and the basin lengths.
func (q *prepared) structures() error {
	d := &q.d
	c := hydraulics.SI()
	q.crest = d.Section.BottomWidth
	if d.CrestWidth != nil {
		q.crest = *d.CrestWidth
	}
	if !(q.crest > 0) {
		return fmt.Errorf("%w: drop crest width must be positive (the canal has no bed width; set the crest width)", ErrInput)
	}
	if d.TransitionLength != nil {
		q.transLen = *d.TransitionLength
	} else {
		q.transLen = math.Max(1, 2*(d.Section.TopWidth(q.depth[0])-q.crest))
	}
	for _, h := range q.heights {
		var bl float64
		if d.BasinLength != nil {
			bl = d.BasinLength(h)
		} else {
			for gi, g := range q.grades {
				dd, err := hydraulics.DesignDrop(c, q.dropInput(h, g, g))
				if err != nil {
					return fmt.Errorf("drop of %.2f m at grade %g (depth %.3f m): %w", h, g, q.depth[gi], err)
				}
				bl = math.Max(bl, dd.BasinLength)
			}
		}
		if !(bl >= 0) || !finite(bl) {
			return fmt.Errorf("%w: basin length %g m for a %.2f m drop", ErrInput, bl, h)
		}
		q.basin = append(q.basin, bl)
		q.spacing = append(q.spacing, bl+q.transLen+d.MinReach)
	}
	return nil
}

// stationAt returns the station within the control tolerance of chainage
// ch (m), the nearest one when two are.
func (q *prepared) stationAt(ch float64, what string) (int, error) {
	c := q.c
	i := sort.SearchFloat64s(c, ch)
	best := -1
	for _, k := range []int{i - 1, i} {
		if k >= 0 && k < len(c) && math.Abs(c[k]-ch) <= q.d.ControlTolerance {
			if best < 0 || math.Abs(c[k]-ch) < math.Abs(c[best]-ch) {
				best = k
			}
		}
	}
	if best < 0 {
		if ch < c[0] || ch > c[len(c)-1] {
			return 0, fmt.Errorf("%w: %s at chainage %.2f m lies beyond the alignment (%.2f to %.2f m)", ErrInput, what, ch, c[0], c[len(c)-1])
		}
		return 0, fmt.Errorf("%w: %s at chainage %.2f m is not within %.2f m of a station", ErrInput, what, ch, q.d.ControlTolerance)
	}
	return best, nil
}

func (q *prepared) channel(g float64) hydraulics.Channel {
	return hydraulics.Channel{Section: q.d.Section, N: q.d.Roughness, Slope: g}
}

func (q *prepared) dropInput(h, upGrade, downGrade float64) hydraulics.DropInput {
	var hold []float64
	for _, f := range q.d.CheckFlows {
		if f*q.d.Flow != q.d.Flow {
			hold = append(hold, f*q.d.Flow)
		}
	}
	return hydraulics.DropInput{Q: q.d.Flow, CrestWidth: q.crest, Height: h,
		Downstream: q.channel(downGrade), Upstream: q.channel(upGrade),
		TransitionLoss: q.d.TransitionLoss, HoldFlows: hold}
}

// typicalSpacing is the median distance between stations, m.
func typicalSpacing(c []float64) float64 {
	d := make([]float64, len(c)-1)
	for i := range d {
		d[i] = c[i+1] - c[i]
	}
	sort.Float64s(d)
	return d[len(d)/2]
}

// lowestWater returns the lowest water level (m) required at station i
// and whether there is one: a control, an offtake or the command margin.
func (q *prepared) lowestWater(i int) (level float64, kind Kind, ok bool) {
	level = math.Inf(-1)
	if wl, has := q.minWLAt[i]; has {
		level, kind, ok = wl, q.wlKind[i], true
	}
	if m := q.margin[i]; !math.IsNaN(m) && q.g[i]+m > level {
		level, kind, ok = q.g[i]+m, KindCommand, true
	}
	return level, kind, ok
}

// core builds the discretised problem.
func (q *prepared) core() *core {
	n, G := len(q.c), len(q.grades)
	d := &q.d
	k := &core{c: q.c, z0: q.z0, step: d.Step, maxMemory: d.MaxMemory, grades: q.grades, sec: q.sec,
		heights: q.heights, costs: d.Costs, volume: d.Volume,
		keep: 1 - d.Costs.Shrinkage, invKeep: 1 / (1 - d.Costs.Shrinkage)}
	for _, h := range q.heights {
		k.hSteps = append(k.hSteps, int(math.Round(h/d.Step)))
		k.dropCost = append(k.dropCost, d.Costs.Drop(h))
	}
	k.zlo = make([][]float64, G)
	k.zhi = make([][]float64, G)
	k.loWhy = make([][]uint8, G)
	k.hiWhy = make([][]uint8, G)
	half := d.Step / 2
	for g := 0; g < G; g++ {
		lo, hi := make([]float64, n), make([]float64, n)
		lw, hw := make([]uint8, n), make([]uint8, n)
		for i := 0; i < n; i++ {
			lo[i], lw[i] = q.g[i]-d.MaxCutDepth, whyMaxCut
			hi[i], hw[i] = q.g[i]+d.MaxFillHeight, whyMaxFill
			tighten := func(l, h float64, why uint8) {
				if l > lo[i] {
					lo[i], lw[i] = l, why
				}
				if h < hi[i] {
					hi[i], hw[i] = h, why
				}
			}
			if zf, ok := q.fixedAt[i]; ok {
				tighten(zf-half, zf+half*0.999, whyFixed)
			}
			if wl, ok := q.minWLAt[i]; ok {
				why := uint8(whyMinWater)
				if q.wlKind[i] == KindOfftake {
					why = whyOfftake
				}
				tighten(wl-q.depth[g], math.Inf(1), why)
			}
			if m := q.margin[i]; !math.IsNaN(m) {
				tighten(q.g[i]+m-q.depth[g], math.Inf(1), whyCommand)
			}
			if i == n-1 && d.EndInvert != nil {
				tighten(*d.EndInvert-half, *d.EndInvert+half*0.999, whyEnd)
			}
		}
		k.zlo[g], k.zhi[g], k.loWhy[g], k.hiWhy[g] = lo, hi, lw, hw
	}
	k.arrive = make([][]int, len(q.heights))
	for h := range q.heights {
		a := make([]int, n)
		next := 0
		for j := 0; j < n; j++ {
			a[j] = -1
			if !q.dropAllowed(j) {
				continue
			}
			next = max(next, j+1)
			for next < n && q.c[next]-q.c[j] < q.spacing[h]-1e-9 {
				next++
			}
			if next < n {
				a[j] = next
			}
		}
		k.arrive[h] = a
	}
	return k
}

// dropAllowed reports whether a drop may sit at station j: not at either
// end, at least the minimum reach from the start, not at a control station
// (fixed invert, lowest water level or offtake).
func (q *prepared) dropAllowed(j int) bool {
	n := len(q.c)
	if j < 1 || j > n-2 || q.c[j]-q.c[0] < q.d.MinReach-1e-9 {
		return false
	}
	_, fixed := q.fixedAt[j]
	_, wl := q.minWLAt[j]
	return !fixed && !wl
}
