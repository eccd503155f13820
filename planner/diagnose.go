package planner

import (
	"fmt"
	"math"
	"sort"
	"strings"
)

// InfeasibleError says that no profile meets every constraint on the
// discretisation. Conflicts lists every stretch where the constraints
// conflict, in chainage order, each with its binding cause.
type InfeasibleError struct {
	Conflicts []Conflict
}

// Conflict is one stretch of an infeasible problem.
type Conflict struct {
	// Kinds are the constraints that bind, the true cause first.
	Kinds    []Kind  `json:"kinds"`
	From     float64 `json:"from"` // chainage, m
	To       float64 `json:"to"`   // chainage, m (= From at one station)
	Limit    float64 `json:"limit,omitempty"`
	Value    float64 `json:"value,omitempty"`
	Shortage float64 `json:"shortage,omitempty"` // by how much the binding constraint is missed, m
	// Cause says how the constraints conflict; with Grade (m/m) and Height
	// (m), the figures it names, the writers word it in the user's units.
	Cause  Cause   `json:"cause"`
	Grade  float64 `json:"grade,omitempty"`
	Height float64 `json:"height,omitempty"`
	// Hint says in words (SI) what conflicts and how to relax it; Flags
	// name the command-line flags that relax it.
	Hint  string   `json:"hint,omitempty"`
	Flags []string `json:"flags,omitempty"`
	// Grades are grades (m/m) that would meet the binding control, when
	// the candidate grade set is the cause.
	Grades []float64 `json:"grades,omitempty"`
	// Uphill is true when the ground rises along the route and the cut
	// binds: the route may be drawn backwards.
	Uphill bool `json:"route_uphill,omitempty"`

	station, startStation int
}

// Cause is how the constraints of a conflict meet.
type Cause string

// Causes of a conflict.
const (
	// CauseContradict: two bounds contradict at one station (Kinds[0] needs
	// the bed Shortage metres above what Kinds[1] allows).
	CauseContradict Cause = "contradict"
	// CauseTooHigh: Kinds[0] needs the bed Shortage metres above the
	// highest bed the flattest grade (Grade) reaches from the start.
	CauseTooHigh Cause = "too_high"
	// CauseTooLow: the lowest bed the steepest grade (Grade) and drops of
	// Height at their spacing can reach stays Shortage metres above what
	// Kinds[0] allows.
	CauseTooLow Cause = "too_low"
	// CauseGradeSet: the candidate grades cannot meet an invert on the
	// elevation grid; Grades would.
	CauseGradeSet Cause = "grade_set"
	// CauseSpacing: drops cannot be spaced by their basin, transition and
	// minimum reach.
	CauseSpacing Cause = "spacing"
	// CauseLimits: the cut and fill limits (Kinds) leave no bed line the
	// grades and drops can follow.
	CauseLimits Cause = "limits"
)

// Error words every conflict in SI units.
func (e *InfeasibleError) Error() string {
	var parts []string
	for _, c := range e.Conflicts {
		parts = append(parts, c.String())
	}
	return "planner: no feasible profile: " + strings.Join(parts, "; ")
}

// Unwrap makes errors.Is(err, ErrInfeasible) true.
func (e *InfeasibleError) Unwrap() error { return ErrInfeasible }

// String words one conflict in SI units.
func (c Conflict) String() string {
	var names []string
	for _, k := range c.Kinds {
		names = append(names, words(k))
	}
	s := strings.Join(names, " and ") + " cannot be met"
	if c.From == c.To {
		s += fmt.Sprintf(" at chainage %.2f m", c.From)
	} else {
		s += fmt.Sprintf(" from chainage %.2f m to %.2f m", c.From, c.To)
	}
	if c.Hint != "" {
		s += ": " + c.Hint
	}
	return s
}

// TooBigError says that a problem would need more memory than
// Design.MaxMemory: a coarser elevation step, tighter cut and fill limits or
// a shorter alignment make it smaller. It wraps ErrInput.
type TooBigError struct {
	States int64 // station states the optimiser would evaluate
	Bytes  int64 // memory it would take
	Limit  int64 // Design.MaxMemory
}

func (e *TooBigError) Error() string {
	return fmt.Sprintf("planner: the optimiser would need %s for %d states, more than the %s allowed; use a coarser --step, tighter --max-cut/--max-fill, split the alignment, or raise --max-memory",
		bytesText(e.Bytes), e.States, bytesText(e.Limit))
}

// bytesText prints a memory size in MB below a gigabyte, else in GB.
func bytesText(b int64) string {
	if b < 1e9 {
		return fmt.Sprintf("%.1f MB", float64(b)/1e6)
	}
	return fmt.Sprintf("%.1f GB", float64(b)/1e9)
}

// Unwrap makes errors.Is(err, ErrInput) true.
func (e *TooBigError) Unwrap() error { return ErrInput }

// diagnose refines the conflicts the dynamic programme found: it names the
// true binding cause from a continuous relaxation of the problem (any grade
// in the velocity-limited range, drops anywhere), how far the binding
// constraint is missed, and which flag relaxes it.
func (q *prepared) diagnose(e *InfeasibleError) {
	n := len(q.c)
	d := &q.d
	flat := q.grades[len(q.grades)-1]
	steep := q.grades[0]
	yDeep := q.depth[len(q.depth)-1] // the flattest grade has the deepest water
	hMax := q.heights[len(q.heights)-1]
	// Highest and lowest bed any profile could reach at each station
	// (relaxed: the flattest candidate grade and no drops for the highest;
	// the steepest grade and the largest drop at every allowed station for
	// the lowest), and what each station requires.
	floor, ceil := make([]float64, n), make([]float64, n)
	hiR, loR := make([]float64, n), make([]float64, n)
	floorWhy, ceilWhy := make([]Kind, n), make([]Kind, n)
	lastDrop := math.Inf(-1)
	for i := 0; i < n; i++ {
		floor[i], floorWhy[i] = q.g[i]-d.MaxCutDepth, KindMaxCut
		ceil[i], ceilWhy[i] = q.g[i]+d.MaxFillHeight, KindMaxFill
		if zf, ok := q.fixedAt[i]; ok {
			floor[i], floorWhy[i] = math.Max(floor[i], zf), KindFixedInvert
			if zf < ceil[i] {
				ceil[i], ceilWhy[i] = zf, KindFixedInvert
			}
		}
		if wl, kind, ok := q.lowestWater(i); ok && wl-yDeep > floor[i] {
			floor[i], floorWhy[i] = wl-yDeep, kind
		}
		if i == n-1 && d.EndInvert != nil {
			if *d.EndInvert > floor[i] {
				floor[i], floorWhy[i] = *d.EndInvert, KindEndInvert
			}
			if *d.EndInvert < ceil[i] {
				ceil[i], ceilWhy[i] = *d.EndInvert, KindEndInvert
			}
		}
		if i == 0 {
			hiR[0], loR[0] = q.z0, q.z0
			continue
		}
		l := q.c[i] - q.c[i-1]
		hiR[i] = math.Min(hiR[i-1]-flat*l, ceil[i])
		// The lowest bed: drops of the largest height as often as their
		// spacing allows, from the first station one may stand at.
		drop := 0.0
		if q.dropAllowed(i-1) && q.c[i-1]-lastDrop >= q.spacing[len(q.spacing)-1]-1e-9 && q.c[n-1]-q.c[i-1] >= q.spacing[len(q.spacing)-1]-1e-9 {
			drop, lastDrop = hMax, q.c[i-1]
		}
		loR[i] = math.Max(loR[i-1]-steep*l-drop, floor[i])
	}
	uphill := q.g[n-1] > q.g[0]
	for x := range e.Conflicts {
		c := &e.Conflicts[x]
		if c.Hint != "" {
			continue
		}
		a, b := c.startStation, c.station
		// Two bounds that contradict at one station.
		worst, wi := 0.0, -1
		for i := a; i <= b; i++ {
			if s := floor[i] - ceil[i]; s > worst+1e-9 {
				worst, wi = s, i
			}
		}
		if wi >= 0 {
			c.Kinds = []Kind{floorWhy[wi], ceilWhy[wi]}
			c.Shortage, c.Cause = worst, CauseContradict
			c.From, c.To = q.c[wi], q.c[wi]
			c.Hint = fmt.Sprintf("the %s needs the bed %.3f m higher than the %s allows at this station", words(floorWhy[wi]), worst, words(ceilWhy[wi]))
			c.Flags = flagsFor(floorWhy[wi], ceilWhy[wi])
			continue
		}
		// Too high: a requirement above the highest reachable bed.
		for i := a; i <= b; i++ {
			if s := floor[i] - hiR[i]; s > worst+1e-9 {
				worst, wi = s, i
			}
		}
		if wi >= 0 {
			k := floorWhy[wi]
			c.Kinds = lead(c.Kinds, k)
			c.Shortage, c.Cause, c.Grade = worst, CauseTooHigh, flat
			c.From, c.To = q.c[wi], q.c[wi]
			switch k {
			case KindMaxCut:
				c.Hint = fmt.Sprintf("the ground stands %.2f m higher above the bed than the maximum cut depth %.2f m allows, even at the flattest grade %.6g without drops", worst, d.MaxCutDepth, flat)
				c.Flags = []string{"--max-cut", "--start-invert", "--grades"}
				c.Uphill = uphill
			case KindCommand:
				c.Hint = fmt.Sprintf("the command margin needs the water surface %.2f m higher than the flattest grade %.6g from the start can hold", worst, flat)
				c.Flags = []string{"--command-margin", "--command", "--start-invert"}
			default:
				c.Hint = fmt.Sprintf("the %s needs the bed %.3f m higher than the flattest grade %.6g from the start invert %.3f m can reach", words(k), worst, flat, q.z0)
				c.Flags = []string{"--start-invert", "--grades"}
			}
			continue
		}
		// Too low: the lowest reachable bed above a ceiling (ground falling
		// faster than the steepest grade and drops can follow).
		for i := a; i <= b; i++ {
			if s := loR[i] - ceil[i]; s > worst+1e-9 {
				worst, wi = s, i
			}
		}
		if wi >= 0 {
			k := ceilWhy[wi]
			c.Kinds = lead(c.Kinds, k)
			c.Shortage, c.Cause, c.Grade, c.Height = worst, CauseTooLow, steep, hMax
			c.From, c.To = q.c[wi], q.c[wi]
			if k == KindMaxFill {
				c.Hint = fmt.Sprintf("the ground falls faster than the steepest grade %.6g and drops of %.2f m at their spacing can follow: the bed stays %.2f m above the fill limit", steep, hMax, worst)
				c.Flags = []string{"--drop-heights", "--max-fill", "--min-reach"}
			} else {
				c.Hint = fmt.Sprintf("the %s is %.3f m below the lowest bed the steepest grade %.6g and drops of %.2f m at their spacing can reach", words(k), worst, steep, hMax)
				c.Flags = []string{"--end-invert", "--drop-heights", "--min-reach"}
			}
			continue
		}
		// Reachable in the relaxation: the candidate grades, the elevation
		// grid or the drop spacing bind. For a fixed or end invert, say
		// which grades would meet it.
		for i := a; i <= b; i++ {
			level, ok := q.fixedAt[i]
			if !ok && i == n-1 && d.EndInvert != nil {
				level, ok = *d.EndInvert, true
			}
			if !ok {
				continue
			}
			c.Kinds = lead(c.Kinds, KindGradeSet)
			c.From, c.To, c.Cause, c.Height = q.c[i], q.c[i], CauseGradeSet, level
			c.Grades = q.gradesMeeting(i, level)
			c.Hint = fmt.Sprintf("the candidate grades cannot meet the invert %.3f m at this station on the %.3g m elevation grid", level, d.Step)
			if len(c.Grades) > 0 {
				var gs []string
				for _, g := range c.Grades {
					gs = append(gs, fmt.Sprintf("%.7g", g))
				}
				c.Hint += "; grades that would: " + strings.Join(gs, ", ")
			}
			c.Flags = []string{"--grades", "--step"}
			break
		}
		if c.Hint != "" {
			continue
		}
		c.Cause = CauseLimits
		switch {
		case has(c.Kinds, KindMaxFill) && !has(c.Kinds, KindMaxCut):
			c.Hint = "the ground falls faster than the steepest grade and the allowed drops at their minimum spacing can follow"
			c.Flags = []string{"--drop-heights", "--max-fill", "--min-reach"}
		case has(c.Kinds, KindMaxCut) && !has(c.Kinds, KindMaxFill):
			c.Hint = "the ground rises above the bed by more than the cut allowed"
			c.Flags = []string{"--max-cut", "--grades", "--start-invert"}
		default:
			c.Hint = "the cut and fill limits leave no bed line the grades and drops can follow"
			c.Flags = []string{"--max-cut", "--max-fill", "--drop-heights"}
		}
		c.Uphill = uphill && has(c.Kinds, KindMaxCut)
	}
	for x := range e.Conflicts {
		if c := &e.Conflicts[x]; c.Uphill {
			c.Hint += "; the ground rises along the route: it may be drawn from its tail to its head (reverse its vertices)"
		}
	}
	sort.SliceStable(e.Conflicts, func(i, j int) bool { return e.Conflicts[i].From < e.Conflicts[j].From })
}

// gradesMeeting returns up to four grades within the velocity limits that
// bring the bed from the nearest upstream anchor (the start or a fixed
// invert) to level at station i with no drop or with whole drops of the
// allowed heights between: S = (z_anchor − level − H)/(c_i − c_anchor).
func (q *prepared) gradesMeeting(i int, level float64) []float64 {
	a, za := 0, q.z0
	for j := i - 1; j > 0; j-- {
		if zf, ok := q.fixedAt[j]; ok {
			a, za = j, zf
			break
		}
	}
	dist := q.c[i] - q.c[a]
	if !(dist > 0) {
		return nil
	}
	var out []float64
	for k := 0; k <= 20 && len(out) < 4; k++ {
		for _, h := range q.heights {
			if k == 0 && h != q.heights[0] {
				continue
			}
			s := (za - level - float64(k)*h) / dist
			if s >= q.limits.MinSlope && s <= q.limits.MaxSlope && s > 0 && len(out) < 4 {
				out = append(out, s)
			}
		}
	}
	return out
}

// words names a kind in words: "max cut depth".
func words(k Kind) string { return strings.ReplaceAll(string(k), "_", " ") }

// flagsFor names the flags that relax two conflicting bounds.
func flagsFor(ks ...Kind) []string {
	names := map[Kind]string{KindMaxCut: "--max-cut", KindMaxFill: "--max-fill", KindFixedInvert: "--fixed-invert",
		KindMinWaterLevel: "--min-water-level", KindCommand: "--command-margin", KindEndInvert: "--end-invert",
		KindOfftake: "--alignment (the offtake's command_level)"}
	var out []string
	for _, k := range ks {
		if f, ok := names[k]; ok {
			out = append(out, f)
		}
	}
	return out
}

func has(ks []Kind, k Kind) bool {
	for _, x := range ks {
		if x == k {
			return true
		}
	}
	return false
}

// lead puts k first in ks (adding it when missing).
func lead(ks []Kind, k Kind) []Kind {
	out := []Kind{k}
	for _, x := range ks {
		if x != k {
			out = append(out, x)
		}
	}
	return out
}
