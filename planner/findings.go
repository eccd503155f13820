package planner

import (
	"fmt"
	"sort"
)

// Kind names a constraint or a check. Findings carry a kind and numbers in
// SI units; the writers word them in the user's units (report.Findings), so
// no one ever parses a message back.
type Kind string

// Constraints a profile can break (Violation.Kind, Conflict.Kind).
const (
	KindMaxCut        Kind = "max_cut_depth"     // ground − invert above the limit; Limit, Value in m
	KindMaxFill       Kind = "max_fill_height"   // invert − ground above the limit; Limit, Value in m
	KindFixedInvert   Kind = "fixed_invert"      // bed off a fixed invert; Limit = required level, Value = bed, m
	KindMinWaterLevel Kind = "min_water_level"   // water below a lowest water level; Limit, Value levels, m
	KindOfftake       Kind = "offtake"           // water below an offtake's command level; Limit, Value levels, m
	KindCommand       Kind = "command"           // water less than the margin above ground; Limit = margin, Value = worst margin, m
	KindEndInvert     Kind = "end_invert"        // bed at the end off the tie-in level; Limit, Value levels, m
	KindStartInvert   Kind = "start_invert"      // start invert outside the cut and fill limits; Limit, Value levels, m
	KindDropSpacing   Kind = "drop_spacing"      // drops closer than basin + transition + minimum reach; Limit, Value in m
	KindDropPosition  Kind = "drop_position"     // a drop within the minimum reach of the start or at a control station
	KindGradeSet      Kind = "grade_set"         // a control the candidate grades cannot reach on the elevation grid
	KindNoStations    Kind = "no_feasible_state" // no bed line meets every bound at a station
)

// Warnings: checks that passed with a caution, or results to look at.
const (
	WarnDropDesign       Kind = "drop_design"      // the drop design itself warns; Text says what (unit-free)
	WarnOutlet           Kind = "outlet_check"     // an outlet check at Flow × the design flow warns; Text (unit-free)
	WarnBackwater        Kind = "backwater"        // backwater above a drop eats more than half the freeboard; Limit = freeboard, m
	WarnVelocityMax      Kind = "velocity_high"    // velocity above the permissible, in a drawdown; Limit, Value m/s
	WarnVelocityMin      Kind = "velocity_low"     // velocity below the non-silting, in a backwater; Limit, Value m/s
	WarnProfile          Kind = "profile_failed"   // the water-surface profile failed; normal depth shown; Text
	WarnCatch            Kind = "catch_not_found"  // a catch point lies beyond the sampled cross-section
	WarnCommand          Kind = "command_drawdown" // the water surface dips below the command margin in a drawdown; Limit, Value in m
	WarnDropDesignFailed Kind = "drop_design_failed"
)

// Violation is a constraint a profile breaks over a range of stations.
type Violation struct {
	Kind     Kind    `json:"kind"`
	From     float64 `json:"from"`     // first chainage, m
	To       float64 `json:"to"`       // last chainage, m (= From at one station)
	Stations int     `json:"stations"` // stations that break it
	Limit    float64 `json:"limit"`    // the constraint's value, in the unit Kind states
	Value    float64 `json:"value"`    // the worst value found, same unit
}

// Warning is a check result worth a designer's attention. Text carries
// unit-free detail (Froude numbers, ratios) from the hydraulic checks.
type Warning struct {
	Kind     Kind    `json:"kind"`
	From     float64 `json:"from"`               // chainage, m
	To       float64 `json:"to"`                 // last chainage, m (= From at one station)
	Stations int     `json:"stations,omitempty"` // stations concerned, for range warnings
	Limit    float64 `json:"limit,omitempty"`    // in the unit Kind states
	Value    float64 `json:"value,omitempty"`    // in the unit Kind states
	Flow     float64 `json:"flow,omitempty"`     // checked flow as a fraction of the design flow
	Text     string  `json:"text,omitempty"`
}

// String words a violation in SI units (summary.json's "text"; report
// words them in the user's units).
func (v Violation) String() string {
	where := fmt.Sprintf("at chainage %.2f m", v.From)
	if v.To != v.From {
		where = fmt.Sprintf("at %d stations from chainage %.2f m to %.2f m", v.Stations, v.From, v.To)
	}
	switch v.Kind {
	case KindMaxCut:
		return fmt.Sprintf("maximum cut depth %.2f m exceeded %s (up to %.2f m)", v.Limit, where, v.Value)
	case KindMaxFill:
		return fmt.Sprintf("maximum fill height %.2f m exceeded %s (up to %.2f m)", v.Limit, where, v.Value)
	case KindFixedInvert:
		return fmt.Sprintf("fixed invert %.3f m missed %s (bed %.3f m)", v.Limit, where, v.Value)
	case KindMinWaterLevel, KindOfftake:
		return fmt.Sprintf("lowest water level %.3f m not reached %s (water %.3f m)", v.Limit, where, v.Value)
	case KindCommand:
		return fmt.Sprintf("command margin %.2f m not held %s (worst %.2f m)", v.Limit, where, v.Value)
	case KindEndInvert:
		return fmt.Sprintf("end invert %.3f m missed (bed %.3f m)", v.Limit, v.Value)
	case KindDropSpacing:
		return fmt.Sprintf("drops closer than %.2f m %s (%.2f m)", v.Limit, where, v.Value)
	case KindDropPosition:
		return fmt.Sprintf("drop within the minimum reach of the start or at a control station %s", where)
	}
	return fmt.Sprintf("%s %s", v.Kind, where)
}

// violations gathers per-station breaches into ranges: runs of the same
// kind and limit over consecutive stations become one Violation.
type violationSet struct {
	c   []float64
	out []Violation
	idx map[violationKey]int
}

type violationKey struct {
	kind  Kind
	limit float64
}

func newViolationSet(c []float64) *violationSet {
	return &violationSet{c: c, idx: map[violationKey]int{}}
}

// add records a breach at station i; worse reports whether value is worse
// than the one recorded.
func (s *violationSet) add(kind Kind, i int, limit, value float64, worse func(a, b float64) bool) {
	k := violationKey{kind, limit}
	if x, ok := s.idx[k]; ok {
		v := &s.out[x]
		v.To = s.c[i]
		v.Stations++
		if worse(value, v.Value) {
			v.Value = value
		}
		return
	}
	s.idx[k] = len(s.out)
	s.out = append(s.out, Violation{Kind: kind, From: s.c[i], To: s.c[i], Stations: 1, Limit: limit, Value: value})
}

func (s *violationSet) list() []Violation {
	sort.SliceStable(s.out, func(a, b int) bool { return s.out[a].From < s.out[b].From })
	return s.out
}

func larger(a, b float64) bool  { return a > b }
func smaller(a, b float64) bool { return a < b }
