package planner

import (
	"fmt"
	"math"
	"sort"

	"canalstep/planner/hydraulics"
)

// prepared is a validated problem with everything derived from it.
type prepared struct {
	p        Problem
	s        Settings
	limits   hydraulics.SlopeLimits
	grades   []float64
	depth    []float64 // normal depth per grade, m
	tpl      []Template
	costs    Costs
	heights  []float64
	basin    []float64 // basin length per height, m
	spacing  []float64 // minimum distance from a drop to the next, per height, m
	transLen float64
	crest    float64
	z0       float64
	maxCut   float64
	maxFill  float64
	minReach float64
	fixedAt  map[int]float64 // station → fixed invert
	minWLAt  map[int]float64 // station → minimum water level
	warnings []string
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

func prepare(p Problem, st *Settings) (*prepared, error) {
	s := st.withDefaults()
	q := &prepared{p: p, s: s}
	n := len(p.Chainage)
	if n < 2 || len(p.Ground) != n {
		return nil, fmt.Errorf("%w: need at least two stations with one ground elevation each (got %d chainages, %d elevations)", ErrInput, n, len(p.Ground))
	}
	for i := 0; i < n; i++ {
		if !finite(p.Chainage[i]) || !finite(p.Ground[i]) {
			return nil, fmt.Errorf("%w: station %d has a chainage or ground that is not a number", ErrInput, i)
		}
		if i > 0 && !(p.Chainage[i] > p.Chainage[i-1]) {
			return nil, fmt.Errorf("%w: chainages must increase (station %d at %.3f m follows %.3f m)", ErrInput, i, p.Chainage[i], p.Chainage[i-1])
		}
	}
	if !(s.Step > 0) || !finite(s.Step) {
		return nil, fmt.Errorf("%w: elevation step %g m must be positive", ErrInput, s.Step)
	}
	for _, v := range []struct {
		name string
		x    float64
	}{{"design flow", p.Flow}, {"roughness", p.Roughness}, {"maximum velocity", p.MaxVelocity}} {
		if !(v.x > 0) || !finite(v.x) {
			return nil, fmt.Errorf("%w: %s %g must be positive", ErrInput, v.name, v.x)
		}
	}
	if err := p.Section.Validate(); err != nil {
		return nil, fmt.Errorf("%w: canal section: %v", ErrInput, err)
	}
	if !(p.MinVelocity >= 0) || !finite(p.MinVelocity) {
		return nil, fmt.Errorf("%w: minimum velocity %g must be ≥ 0", ErrInput, p.MinVelocity)
	}
	for _, v := range []struct {
		name string
		x    float64
	}{{"maximum cut depth", p.MaxCutDepth}, {"maximum fill height", p.MaxFillHeight}, {"minimum reach", p.MinReach}} {
		if !(v.x >= 0) || !finite(v.x) {
			return nil, fmt.Errorf("%w: %s %g m must be ≥ 0", ErrInput, v.name, v.x)
		}
	}
	q.maxCut = orDefault(p.MaxCutDepth, DefaultMaxCutDepth)
	q.maxFill = orDefault(p.MaxFillHeight, DefaultMaxFillHeight)
	q.minReach = orDefault(p.MinReach, DefaultMinReach)

	q.costs = DefaultCosts()
	if p.Costs != nil {
		q.costs = *p.Costs
	}
	if err := q.costs.Validate(); err != nil {
		return nil, err
	}

	// Drop heights: positive, whole steps, distinct.
	if len(p.DropHeights) == 0 {
		return nil, fmt.Errorf("%w: no drop heights given", ErrInput)
	}
	hs := append([]float64(nil), p.DropHeights...)
	sort.Float64s(hs)
	for i, h := range hs {
		if !(h > 0) || !finite(h) {
			return nil, fmt.Errorf("%w: drop height %g m must be positive", ErrInput, h)
		}
		r := h / s.Step
		if math.Abs(r-math.Round(r)) > 1e-6 {
			return nil, fmt.Errorf("%w: drop height %g m is not a whole number of elevation steps (%g m)", ErrInput, h, s.Step)
		}
		if i > 0 && math.Round(r) == math.Round(hs[i-1]/s.Step) {
			return nil, fmt.Errorf("%w: drop height %g m is given twice", ErrInput, h)
		}
	}
	q.heights = hs

	// Velocity-limited grades.
	c := hydraulics.SI()
	lim, err := hydraulics.VelocityLimitedSlopes(c, p.Section, p.Flow, p.Roughness, p.MaxVelocity, p.MinVelocity)
	if err != nil {
		return nil, fmt.Errorf("velocity limits: %w", err)
	}
	q.limits = lim
	if p.Grades != nil {
		if len(p.Grades) == 0 {
			return nil, fmt.Errorf("%w: empty list of grades", ErrInput)
		}
		gs := append([]float64(nil), p.Grades...)
		sort.Sort(sort.Reverse(sort.Float64Slice(gs)))
		for i, g := range gs {
			if !(g > 0) || !finite(g) {
				return nil, fmt.Errorf("%w: grade %g must be positive", ErrInput, g)
			}
			if g > lim.MaxSlope*(1+1e-12) || g < lim.MinSlope*(1-1e-12) {
				return nil, fmt.Errorf("%w: grade %g is outside the velocity-limited range [%g, %g]", ErrInput, g, lim.MinSlope, lim.MaxSlope)
			}
			if i > 0 && g == gs[i-1] {
				return nil, fmt.Errorf("%w: grade %g is given twice", ErrInput, g)
			}
		}
		q.grades = gs
	} else {
		q.grades = DefaultGrades(lim.MinSlope, lim.MaxSlope, s.Step, typicalSpacing(p.Chainage), s.GradeCount)
	}
	if len(q.grades) > 64 {
		return nil, fmt.Errorf("%w: %d grades; use at most 64", ErrInput, len(q.grades))
	}
	// Per-grade depth and template.
	base := Template{BedWidth: p.Section.BottomWidth, SideSlope: p.Section.SideSlope,
		BankTopWidth: DefaultBankTopWidth, OuterSlope: DefaultOuterSlope, CutSlope: DefaultCutSlope}
	if p.Template != nil {
		base = *p.Template
	}
	for _, g := range q.grades {
		yn, err := hydraulics.NormalDepth(c, p.Section, p.Flow, p.Roughness, g)
		if err != nil {
			return nil, fmt.Errorf("normal depth at grade %g: %w", g, err)
		}
		t := base
		if t.BankHeight == 0 {
			t.BankHeight = hydraulics.BankHeight(p.Flow, yn, s.Freeboard)
		}
		if err := t.Validate(); err != nil {
			return nil, err
		}
		q.depth = append(q.depth, yn)
		q.tpl = append(q.tpl, t)
	}

	// Start invert.
	if p.StartInvert != nil {
		q.z0 = *p.StartInvert
		if !finite(q.z0) {
			return nil, fmt.Errorf("%w: start invert is not a number", ErrInput)
		}
	} else {
		q.z0 = p.Ground[0] - q.depth[0]
	}
	if q.z0-p.Ground[0] > q.maxFill {
		return nil, fmt.Errorf("%w: start invert %.3f m is %.3f m above the ground, more than the maximum fill height %.3f m", ErrInput, q.z0, q.z0-p.Ground[0], q.maxFill)
	}
	if p.Ground[0]-q.z0 > q.maxCut {
		return nil, fmt.Errorf("%w: start invert %.3f m is %.3f m below the ground, more than the maximum cut depth %.3f m", ErrInput, q.z0, p.Ground[0]-q.z0, q.maxCut)
	}

	// Controls.
	q.fixedAt = map[int]float64{}
	q.minWLAt = map[int]float64{}
	for _, ctl := range p.FixedInverts {
		i, err := q.stationAt(ctl, "fixed invert")
		if err != nil {
			return nil, err
		}
		q.fixedAt[i] = ctl.Level
	}
	for _, ctl := range p.MinWaterLevels {
		i, err := q.stationAt(ctl, "minimum water level")
		if err != nil {
			return nil, err
		}
		if old, ok := q.minWLAt[i]; !ok || ctl.Level > old {
			q.minWLAt[i] = ctl.Level
		}
	}
	if p.EndInvert != nil && !finite(*p.EndInvert) {
		return nil, fmt.Errorf("%w: end invert is not a number", ErrInput)
	}

	// Structures: crest width, transition, basin lengths.
	q.crest = s.CrestWidth
	if q.crest == 0 {
		q.crest = p.Section.BottomWidth
	}
	if !(q.crest > 0) {
		return nil, fmt.Errorf("%w: drop crest width must be positive (the canal has no bed width; set the crest width)", ErrInput)
	}
	q.transLen = s.TransitionLength
	if q.transLen == 0 {
		q.transLen = math.Max(1, 2*(p.Section.TopWidth(q.depth[0])-q.crest))
	}
	if !(q.transLen >= 0) || !finite(q.transLen) {
		return nil, fmt.Errorf("%w: transition length %g m must be ≥ 0", ErrInput, q.transLen)
	}
	for _, h := range q.heights {
		var bl float64
		if s.BasinLength != nil {
			bl = s.BasinLength(h)
		} else {
			for gi, g := range q.grades {
				d, err := hydraulics.DesignDrop(c, q.dropInput(h, g, g))
				if err != nil {
					return nil, fmt.Errorf("drop of %.2f m at grade %g (depth %.3f m): %w", h, g, q.depth[gi], err)
				}
				bl = math.Max(bl, d.BasinLength)
			}
		}
		if !(bl >= 0) || !finite(bl) {
			return nil, fmt.Errorf("%w: basin length %g m for a %.2f m drop", ErrInput, bl, h)
		}
		q.basin = append(q.basin, bl)
		q.spacing = append(q.spacing, bl+q.transLen+q.minReach)
	}
	return q, nil
}

func orDefault(x, d float64) float64 {
	if x == 0 {
		return d
	}
	return x
}

func (q *prepared) stationAt(ctl Control, what string) (int, error) {
	ch := q.p.Chainage
	if !finite(ctl.Chainage) || !finite(ctl.Level) {
		return 0, fmt.Errorf("%w: %s control is not a number", ErrInput, what)
	}
	i := sort.SearchFloat64s(ch, ctl.Chainage)
	best := -1
	for _, k := range []int{i - 1, i} {
		if k >= 0 && k < len(ch) && math.Abs(ch[k]-ctl.Chainage) <= q.s.ControlTolerance {
			if best < 0 || math.Abs(ch[k]-ctl.Chainage) < math.Abs(ch[best]-ctl.Chainage) {
				best = k
			}
		}
	}
	if best < 0 {
		if ctl.Chainage < ch[0] || ctl.Chainage > ch[len(ch)-1] {
			return 0, fmt.Errorf("%w: %s at chainage %.2f m lies beyond the alignment (%.2f to %.2f m)", ErrInput, what, ctl.Chainage, ch[0], ch[len(ch)-1])
		}
		return 0, fmt.Errorf("%w: %s at chainage %.2f m is not within %.2f m of a station", ErrInput, what, ctl.Chainage, q.s.ControlTolerance)
	}
	return best, nil
}

func (q *prepared) channel(g float64) hydraulics.Channel {
	return hydraulics.Channel{Section: q.p.Section, N: q.p.Roughness, Slope: g}
}

func (q *prepared) dropInput(h, upGrade, downGrade float64) hydraulics.DropInput {
	var hold []float64
	for _, f := range q.s.CheckFlows {
		if f*q.p.Flow != q.p.Flow {
			hold = append(hold, f*q.p.Flow)
		}
	}
	return hydraulics.DropInput{Q: q.p.Flow, CrestWidth: q.crest, Height: h,
		Downstream: q.channel(downGrade), Upstream: q.channel(upGrade),
		TransitionLoss: q.s.TransitionLoss, HoldFlows: hold}
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

// core builds the discretised problem.
func (q *prepared) core() *core {
	n, G := len(q.p.Chainage), len(q.grades)
	k := &core{c: q.p.Chainage, g: q.p.Ground, z0: q.z0, step: q.s.Step, grades: q.grades, tpl: q.tpl,
		heights: q.heights, costs: q.costs, volume: q.s.Volume,
		keep: 1 - q.costs.Shrinkage, invKeep: 1 / (1 - q.costs.Shrinkage)}
	for _, h := range q.heights {
		k.hSteps = append(k.hSteps, int(math.Round(h/q.s.Step)))
		k.dropCost = append(k.dropCost, q.costs.Drop(h))
	}
	k.zlo = make([][]float64, G)
	k.zhi = make([][]float64, G)
	k.loWhy = make([][]uint8, G)
	k.hiWhy = make([][]uint8, G)
	half := q.s.Step / 2
	for g := 0; g < G; g++ {
		lo, hi := make([]float64, n), make([]float64, n)
		lw, hw := make([]uint8, n), make([]uint8, n)
		for i := 0; i < n; i++ {
			lo[i], lw[i] = q.p.Ground[i]-q.maxCut, whyMaxCut
			hi[i], hw[i] = q.p.Ground[i]+q.maxFill, whyMaxFill
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
				tighten(wl-q.depth[g], math.Inf(1), whyMinWater)
			}
			if i == n-1 && q.p.EndInvert != nil {
				tighten(*q.p.EndInvert-half, *q.p.EndInvert+half*0.999, whyEnd)
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
			for next < n && q.p.Chainage[next]-q.p.Chainage[j] < q.spacing[h]-1e-9 {
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
// (fixed invert or minimum water level).
func (q *prepared) dropAllowed(j int) bool {
	n := len(q.p.Chainage)
	if j < 1 || j > n-2 || q.p.Chainage[j]-q.p.Chainage[0] < q.minReach-1e-9 {
		return false
	}
	_, fixed := q.fixedAt[j]
	_, wl := q.minWLAt[j]
	return !fixed && !wl
}
