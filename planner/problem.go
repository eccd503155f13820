package planner

import (
	"errors"
	"fmt"
	"math"

	"canalstep/planner/hydraulics"
)

// ErrInput is wrapped by every error about a problem that cannot be planned
// as given: bad numbers, controls beyond the alignment, grades outside the
// velocity limits, drop heights that are not whole elevation steps.
var ErrInput = errors.New("planner: invalid input")

// Problem is one canal to plan: the ground profile and the design. Only the
// profile, the flow, the section, the roughness, the permissible velocity
// and the drop heights are required; zero values elsewhere take the defaults
// that the field comments state.
type Problem struct {
	Chainage []float64 // stations, m along the alignment, strictly increasing
	Ground   []float64 // ground elevation at each station, m

	Flow        float64            // design discharge Q, m³/s
	Section     hydraulics.Section // bed width b (m) and side slope z (H:V) of the canal
	Roughness   float64            // Manning n
	MaxVelocity float64            // permissible (non-eroding) mean velocity, m/s
	MinVelocity float64            // non-silting mean velocity, m/s; 0 for none

	// DropHeights are the allowed bed falls at a drop, m (one value: a fixed
	// height). Each must be a whole number of Settings.Step.
	DropHeights []float64
	// Grades are the candidate bed slopes (m/m) of a reach. Nil means
	// DefaultGrades. Each must lie within the velocity-limited range.
	Grades []float64

	// StartInvert is the bed elevation (m) at the first station; nil means
	// the ground there minus the normal depth at the steepest grade, so the
	// design water surface starts at ground level.
	StartInvert *float64
	// EndInvert ties the bed at the last station to this elevation (m),
	// within half an elevation step; nil for a free end.
	EndInvert *float64
	// FixedInverts hold the bed at given chainages (a road culvert), within
	// half an elevation step. No drop may sit at such a station.
	FixedInverts []Control
	// MinWaterLevels require the normal-flow water surface at given
	// chainages to reach at least the given elevation (to command an
	// offtake).
	MinWaterLevels []Control

	MaxCutDepth   float64 // ground minus invert, m; 0 means DefaultMaxCutDepth
	MaxFillHeight float64 // invert minus ground, m; 0 means DefaultMaxFillHeight
	MinReach      float64 // shortest canal reach beside a drop's basin and transition, m; 0 means DefaultMinReach

	// Template is the earthwork cross-section. Nil means: bed width and side
	// slope of Section, bank height = normal depth + freeboard of the reach's
	// grade, DefaultBankTopWidth, DefaultOuterSlope, DefaultCutSlope. A
	// non-nil template is used as given, except that a zero BankHeight again
	// means depth + freeboard per grade.
	Template *Template
	// Costs are the unit prices; nil means DefaultCosts.
	Costs *Costs
}

// Control is an elevation required at a chainage.
type Control struct {
	Chainage float64 // m; must match a station within Settings.ControlTolerance
	Level    float64 // m
}

// Design defaults (common practice, no source; set your project's values).
const (
	DefaultMaxCutDepth   = 5.0  // m
	DefaultMaxFillHeight = 2.0  // m
	DefaultMinReach      = 30.0 // m
)

// Costs are the unit prices of the plan in one currency (the tool does not
// care which). Earthwork is priced per segment between two stations: the cut
// there is used for the banks there (lateral haul, the practice behind the
// classical balancing depth); a surplus of usable cut goes to waste and a
// shortfall is borrowed. Longitudinal haul is not modelled.
//
//	usable = cut·(1 − Shrinkage)                         compacted m³
//	cost   = Cut·cut + Fill·fill
//	       + Waste·max(0, cut − fill/(1 − Shrinkage))   surplus, bank m³
//	       + Borrow·max(0, fill − usable)              shortfall, compacted m³
type Costs struct {
	Cut          float64 `json:"cut"`            // per m³ of excavation (bank measure)
	Fill         float64 `json:"fill"`           // per m³ of compacted fill placed
	Shrinkage    float64 `json:"shrinkage"`      // fraction of cut volume lost when compacted into fill, in [0, 1)
	Waste        float64 `json:"waste"`          // per m³ (bank) of surplus cut hauled to spoil
	Borrow       float64 `json:"borrow"`         // per m³ (compacted) of fill brought from borrow pits
	DropFixed    float64 `json:"drop_fixed"`     // per drop structure
	DropPerMetre float64 `json:"drop_per_metre"` // per metre of drop height
}

// DefaultCosts returns the default unit prices: cut 4, fill 6, shrinkage
// 0.10, waste 2, borrow 8, a drop 15000 + 10000 per metre of height. They are
// illustrative scoping values (no source): only their ratios matter to the
// plan, and a real project sets its own. Shrinkage 0.10 is the low end of the
// 10–20 % the reference sheet §6.3 gives for common earth (from memory).
func DefaultCosts() Costs {
	return Costs{Cut: 4, Fill: 6, Shrinkage: 0.10, Waste: 2, Borrow: 8, DropFixed: 15000, DropPerMetre: 10000}
}

// Validate reports whether every price is finite and non-negative and the
// shrinkage lies in [0, 1).
func (c Costs) Validate() error {
	for _, v := range []struct {
		name string
		x    float64
	}{{"cut", c.Cut}, {"fill", c.Fill}, {"waste", c.Waste}, {"borrow", c.Borrow},
		{"drop fixed", c.DropFixed}, {"drop per metre", c.DropPerMetre}} {
		if !(v.x >= 0) || math.IsInf(v.x, 0) {
			return fmt.Errorf("%w: %s cost %g must be a finite number ≥ 0", ErrInput, v.name, v.x)
		}
	}
	if !(c.Shrinkage >= 0 && c.Shrinkage < 1) {
		return fmt.Errorf("%w: shrinkage %g must be in [0, 1)", ErrInput, c.Shrinkage)
	}
	return nil
}

// Earthwork returns the cost of cut and fill volumes (m³) of one segment.
func (c *Costs) Earthwork(cut, fill float64) float64 {
	v := c.Cut*cut + c.Fill*fill
	usable := cut * (1 - c.Shrinkage)
	if usable > fill {
		v += c.Waste * (cut - fill/(1-c.Shrinkage))
	} else {
		v += c.Borrow * (fill - usable)
	}
	return v
}

// Drop returns the cost of one drop of height h (m).
func (c *Costs) Drop(h float64) float64 { return c.DropFixed + c.DropPerMetre*h }

// Settings tune the optimiser and the structure design. The zero value (or
// nil) gives the defaults each field names. The planner works in SI units
// (m, s, m³/s) with hydraulics.SI() constants; convert at the edges.
type Settings struct {
	Step   float64      // elevation step of the discretisation, m; 0 means 0.01
	Volume VolumeMethod // volumes between stations; zero is AverageEndArea

	GradeCount int // number of default candidate grades; 0 means 5

	CrestWidth       float64   // drop crest and basin width, m; 0 means the canal bed width
	TransitionLength float64   // outlet transition length, m; 0 means 2·(T − B), at least 1 m (a 1 in 4 flare each side; common practice, no source)
	TransitionLoss   float64   // outlet loss coefficient Co; 0 is the conservative value for the sweep-out check
	CheckFlows       []float64 // fractions of the design flow for the outlet check; nil means 0.25, 0.5, 1
	Freeboard        hydraulics.FreeboardRule

	// BasinLength, when non-nil, replaces the drop design for the basin
	// length (m) of a drop of height h (m) in the spacing rule. It exists for
	// tests and for users with a standard basin.
	BasinLength func(h float64) float64

	// ControlTolerance is how far (m) a control's chainage may lie from a
	// station; 0 means 0.5 m.
	ControlTolerance float64
}

func (s *Settings) withDefaults() Settings {
	var out Settings
	if s != nil {
		out = *s
	}
	if out.Step == 0 {
		out.Step = 0.01
	}
	if out.GradeCount == 0 {
		out.GradeCount = 5
	}
	if out.CheckFlows == nil {
		out.CheckFlows = []float64{0.25, 0.5, 1}
	}
	if out.ControlTolerance == 0 {
		out.ControlTolerance = 0.5
	}
	return out
}

// DefaultGrades returns candidate grades (m/m) within [flattest, steepest]:
// the steepest first, then flatter ones spaced by a whole multiple of
// step/(5·spacing), at most count in all. The spacing keeps the bed lines of
// any two candidates in step with each other on the elevation grid at least
// every fifth station of that spacing, which is where a reach may change
// grade at a drop (see the package doc). flattest = 0 means no lower limit;
// the candidates then reach down to a fifth of the steepest.
func DefaultGrades(flattest, steepest, step, spacing float64, count int) []float64 {
	if count < 1 {
		count = 1
	}
	if flattest <= 0 {
		flattest = steepest / 5
	}
	out := []float64{steepest}
	unit := step / (5 * spacing)
	if count == 1 || steepest-flattest < unit {
		return out
	}
	k := math.Max(1, math.Floor((steepest-flattest)/float64(count-1)/unit+1e-9))
	for i := 1; i < count; i++ {
		g := steepest - float64(i)*k*unit
		if g < flattest*(1-1e-12) || g <= 0 {
			break
		}
		out = append(out, g)
	}
	return out
}
