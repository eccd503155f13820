package planner

import (
	"errors"
	"fmt"
	"math"

	"canalstep/planner/earthwork"
	"canalstep/planner/hydraulics"
)

// ErrInput is wrapped by every error about a design or profile that cannot
// be planned as given: numbers outside their physical range, controls
// beyond the alignment or in conflict, grades outside the velocity limits,
// drop heights that are not whole elevation steps.
var ErrInput = errors.New("planner: invalid input")

// Design is one canal's design: everything a plan needs besides its ground.
// Zero means zero in every field (no maximum fill, no minimum reach, no
// command); [DefaultDesign] returns the stated defaults, and a caller
// changes what it needs. Lengths and levels are metres, discharge m³/s,
// velocity m/s, slopes H:V, grades m/m, prices in the currency of Costs.
type Design struct {
	Flow        float64            // design discharge Q, m³/s
	Section     hydraulics.Section // bed width b (m) and inner side slope z (H:V)
	Roughness   float64            // Manning n
	MaxVelocity float64            // permissible (non-eroding) mean velocity, m/s
	MinVelocity float64            // non-silting mean velocity, m/s; 0 for none

	// DropHeights are the allowed bed falls at a drop, m (one value: a fixed
	// height). Each must be a whole number of Step.
	DropHeights []float64
	// Grades are the candidate bed slopes (m/m) of a reach; nil means
	// GradeCount grades from DefaultGrades. Each must lie within the
	// velocity-limited range.
	Grades     []float64
	GradeCount int // number of default grades when Grades is nil

	// StartInvert is the bed elevation (m) at the first station; nil means
	// the ground there minus the normal depth at the steepest grade plus
	// the command margin at the start, so the design water surface starts at
	// ground level (or the margin above it), raised where a lowest water
	// level downstream (a command margin, a control, an offtake) needs it so
	// that the flattest candidate grade without drops could hold it
	// (Record.StartInvertRaised says by how much).
	StartInvert *float64
	// EndInvert ties the bed at the last station to this elevation (m),
	// within half an elevation step; nil for a free end.
	EndInvert *float64
	// FixedInverts hold the bed at given chainages (a road culvert), within
	// half an elevation step. No drop may sit at such a station.
	FixedInverts []Control
	// MinWaterLevels require the design water surface at given chainages to
	// reach at least the given elevation.
	MinWaterLevels []Control
	// Command keeps the design water surface at least Margin metres above
	// the centre-line ground over chainage ranges, so the canal commands the
	// land beside it.
	Command []CommandRange
	// Offtakes are turnouts whose command level is a lowest water level at
	// their station; the summary reports the margin at each.
	Offtakes []Offtake

	MaxCutDepth   float64 // largest ground − invert, m
	MaxFillHeight float64 // largest invert − ground, m
	MinReach      float64 // shortest canal reach beside a drop's basin and transition, m

	// The earthwork cross-section besides the canal section: bank top width
	// (m) and outer fill and cut slopes (H:V); the bank height is the normal
	// depth plus the freeboard of each grade.
	BankTopWidth float64
	OuterSlope   float64
	CutSlope     float64
	Freeboard    hydraulics.FreeboardRule

	Costs earthwork.Costs // unit prices

	Step   float64                // elevation step of the discretisation, m
	Volume earthwork.VolumeMethod // volumes between stations

	CrestWidth       *float64  // drop crest and basin width, m; nil: the canal bed width
	TransitionLength *float64  // outlet transition length, m; nil: 2·(T − B), at least 1 m (a 1 in 4 flare each side; common practice, no source)
	TransitionLoss   float64   // outlet loss coefficient Co; 0 is the conservative value for the sweep-out check
	CheckFlows       []float64 // fractions of the design flow for the outlet check

	// ByEyeRise is the rise (m) of the water surface above the ground at
	// which the by-eye baseline puts in a drop.
	ByEyeRise float64

	// ControlTolerance is how far (m) a control's chainage may lie from a
	// station.
	ControlTolerance float64

	// MaxMemory bounds the memory (bytes) the optimiser's state arrays may
	// take; a larger problem is refused with a *TooBigError before anything
	// is allocated. 0 means no bound.
	MaxMemory int64

	// BasinLength, when non-nil, replaces the drop design for the basin
	// length (m) of a drop of height h (m) in the spacing rule. It exists for
	// tests and for users with a standard basin.
	BasinLength func(h float64) float64
}

// Control is an elevation required at a chainage.
type Control struct {
	Chainage float64 `json:"chainage"` // m; must match a station within Design.ControlTolerance
	Level    float64 `json:"level"`    // m
}

// CommandRange asks for the design water surface to stand at least Margin
// (m) above the centre-line ground from chainage From to To (m), both
// included. Use math.Inf(-1) and math.Inf(1) for the whole alignment.
type CommandRange struct {
	From   float64 `json:"from"`   // chainage, m
	To     float64 `json:"to"`     // chainage, m
	Margin float64 `json:"margin"` // m, ≥ 0
}

// Offtake is a turnout the canal must command: the design water surface at
// its station must reach Level (m).
type Offtake struct {
	Name     string  `json:"name"`
	Chainage float64 `json:"chainage"` // m, snapped to a station
	Level    float64 `json:"level"`    // command level, m
	Offset   float64 `json:"offset"`   // distance from the centre line to the offtake point, m (information)
}

// Design defaults (common practice, no source; set your project's values).
const (
	DefaultMaxCutDepth   = 5.0  // m
	DefaultMaxFillHeight = 2.0  // m
	DefaultMinReach      = 30.0 // m
	DefaultStep          = 0.01 // m
	DefaultGradeCount    = 5
	// DefaultByEyeRise is the water-surface rise above the ground at which a
	// designer working by eye drops the canal (common practice, no source:
	// a few tenths of a metre keeps the banks low and the command easy).
	DefaultByEyeRise        = 0.3 // m
	DefaultControlTolerance = 0.5 // m
	// DefaultMaxMemory bounds the optimiser's memory: 2 GiB, half of what
	// a small build machine has (common practice, no source).
	DefaultMaxMemory = 2 << 30 // bytes
)

// DefaultDesign returns a design with every default filled in and the
// canal-specific values (flow, section, roughness, velocities, drop
// heights) left zero for the caller to set.
func DefaultDesign() Design {
	return Design{
		GradeCount:       DefaultGradeCount,
		MaxCutDepth:      DefaultMaxCutDepth,
		MaxFillHeight:    DefaultMaxFillHeight,
		MinReach:         DefaultMinReach,
		BankTopWidth:     earthwork.DefaultBankTopWidth,
		OuterSlope:       earthwork.DefaultOuterSlope,
		CutSlope:         earthwork.DefaultCutSlope,
		Costs:            earthwork.DefaultCosts(),
		Step:             DefaultStep,
		CheckFlows:       []float64{0.25, 0.5, 1},
		ByEyeRise:        DefaultByEyeRise,
		ControlTolerance: DefaultControlTolerance,
		MaxMemory:        DefaultMaxMemory,
	}
}

// Range is the physical range a design number must lie in. Numbers outside
// it are refused as input errors: they are typing mistakes or hostile
// input, not designs.
type Range struct {
	Min, Max     float64
	MinExclusive bool // the minimum itself is not allowed
	Unit         string
}

// String prints the range for help texts and errors: "(0, 10000] m³/s".
func (r Range) String() string {
	open := "["
	if r.MinExclusive {
		open = "("
	}
	s := fmt.Sprintf("%s%g, %g]", open, r.Min, r.Max)
	if r.Unit != "" {
		s += " " + r.Unit
	}
	return s
}

// Contains reports whether v is finite and within r.
func (r Range) Contains(v float64) bool {
	if math.IsNaN(v) || math.IsInf(v, 0) || v > r.Max {
		return false
	}
	if r.MinExclusive {
		return v > r.Min
	}
	return v >= r.Min
}

// Ranges of the design numbers, keyed by the field they check (the CLI
// shows them in --help). They are wide physical bounds, not design
// guidance (common practice, no source): the largest irrigation canals
// carry a few thousand m³/s, Manning's n of natural channels stays below
// 0.2, and a drop above 20 m is a chute or a dam, not a canal drop.
var Ranges = map[string]Range{
	"flow":              {0, 1e4, true, "m³/s"},
	"bottom_width":      {0, 500, false, "m"},
	"side_slope":        {0, 20, false, "H:V"},
	"roughness":         {0, 0.2, true, ""},
	"max_velocity":      {0, 20, true, "m/s"},
	"min_velocity":      {0, 20, false, "m/s"},
	"drop_height":       {0, 20, true, "m"},
	"grade":             {0, 0.2, true, "m/m"},
	"grade_count":       {1, 64, false, ""},
	"max_cut":           {0, 100, false, "m"},
	"max_fill":          {0, 100, false, "m"},
	"min_reach":         {0, 1e5, false, "m"},
	"bank_top_width":    {0, 100, false, "m"},
	"outer_slope":       {0, 20, false, "H:V"},
	"cut_slope":         {0, 20, false, "H:V"},
	"freeboard":         {0, 20, false, "m"},
	"price":             {0, 1e9, false, "per unit"},
	"shrinkage":         {0, 0.95, false, ""},
	"step":              {1e-4, 1, false, "m"},
	"crest_width":       {0, 500, true, "m"},
	"transition_length": {0, 1000, false, "m"},
	"transition_loss":   {0, 2, false, ""},
	"check_flow":        {0, 2, true, "× design flow"},
	"byeye_rise":        {0, 10, false, "m"},
	"control_tolerance": {0, 1000, false, "m"},
	"level":             {-1000, 10000, false, "m"},
	"margin":            {0, 100, false, "m"},
}

// check returns an input error when v is outside Ranges[key].
func check(key, what string, v float64) error {
	r := Ranges[key]
	if !r.Contains(v) {
		return fmt.Errorf("%w: %s %g is outside %s", ErrInput, what, v, r)
	}
	return nil
}

// Validate checks every number of the design against its physical range
// and the lists for emptiness and repeats. It does not need the ground;
// controls are checked against the stations by Optimize.
func (d *Design) Validate() error {
	checks := []struct {
		key, what string
		v         float64
	}{
		{"flow", "design flow", d.Flow}, {"bottom_width", "bed width", d.Section.BottomWidth},
		{"side_slope", "side slope", d.Section.SideSlope}, {"roughness", "roughness", d.Roughness},
		{"max_velocity", "maximum velocity", d.MaxVelocity}, {"min_velocity", "minimum velocity", d.MinVelocity},
		{"max_cut", "maximum cut depth", d.MaxCutDepth}, {"max_fill", "maximum fill height", d.MaxFillHeight},
		{"min_reach", "minimum reach", d.MinReach}, {"bank_top_width", "bank top width", d.BankTopWidth},
		{"outer_slope", "outer slope", d.OuterSlope}, {"cut_slope", "cut slope", d.CutSlope},
		{"freeboard", "freeboard", d.Freeboard.Fixed}, {"step", "elevation step", d.Step},
		{"transition_loss", "transition loss", d.TransitionLoss}, {"byeye_rise", "by-eye rise", d.ByEyeRise},
		{"control_tolerance", "control tolerance", d.ControlTolerance},
		{"shrinkage", "shrinkage", d.Costs.Shrinkage},
	}
	for _, p := range []struct {
		what string
		v    float64
	}{{"cut price", d.Costs.Cut}, {"fill price", d.Costs.Fill}, {"waste price", d.Costs.Waste},
		{"borrow price", d.Costs.Borrow}, {"drop price", d.Costs.DropFixed}, {"drop price per metre", d.Costs.DropPerMetre}} {
		checks = append(checks, struct {
			key, what string
			v         float64
		}{"price", p.what, p.v})
	}
	for _, c := range checks {
		if err := check(c.key, c.what, c.v); err != nil {
			return err
		}
	}
	if d.Section.BottomWidth+d.Section.SideSlope <= 0 {
		return fmt.Errorf("%w: the canal needs a bed width or side slopes", ErrInput)
	}
	if d.MinVelocity > 0 && d.MinVelocity >= d.MaxVelocity {
		return fmt.Errorf("%w: minimum velocity %g m/s must be below the maximum %g m/s", ErrInput, d.MinVelocity, d.MaxVelocity)
	}
	if d.CrestWidth != nil {
		if err := check("crest_width", "crest width", *d.CrestWidth); err != nil {
			return err
		}
	}
	if d.TransitionLength != nil {
		if err := check("transition_length", "transition length", *d.TransitionLength); err != nil {
			return err
		}
	}
	if len(d.DropHeights) == 0 {
		return fmt.Errorf("%w: no drop heights given", ErrInput)
	}
	for _, h := range d.DropHeights {
		if err := check("drop_height", "drop height", h); err != nil {
			return err
		}
	}
	if d.Grades != nil {
		if len(d.Grades) == 0 {
			return fmt.Errorf("%w: empty list of grades", ErrInput)
		}
		for _, g := range d.Grades {
			if err := check("grade", "grade", g); err != nil {
				return err
			}
		}
	} else if err := check("grade_count", "number of grades", float64(d.GradeCount)); err != nil {
		return err
	}
	if len(d.CheckFlows) == 0 {
		return fmt.Errorf("%w: no check flows given", ErrInput)
	}
	for _, f := range d.CheckFlows {
		if err := check("check_flow", "check flow", f); err != nil {
			return err
		}
	}
	for _, p := range []*float64{d.StartInvert, d.EndInvert} {
		if p != nil {
			if err := check("level", "invert", *p); err != nil {
				return err
			}
		}
	}
	for _, set := range [][]Control{d.FixedInverts, d.MinWaterLevels} {
		for _, c := range set {
			if !finite(c.Chainage) {
				return fmt.Errorf("%w: control chainage %g is not a finite number", ErrInput, c.Chainage)
			}
			if err := check("level", "control level", c.Level); err != nil {
				return err
			}
		}
	}
	for _, c := range d.Command {
		if math.IsNaN(c.From) || math.IsNaN(c.To) || c.To < c.From {
			return fmt.Errorf("%w: command range %g to %g m runs backwards", ErrInput, c.From, c.To)
		}
		if err := check("margin", "command margin", c.Margin); err != nil {
			return err
		}
	}
	for _, o := range d.Offtakes {
		if !finite(o.Chainage) {
			return fmt.Errorf("%w: offtake %q chainage is not a finite number", ErrInput, o.Name)
		}
		if err := check("level", fmt.Sprintf("offtake %q command level", o.Name), o.Level); err != nil {
			return err
		}
	}
	return nil
}

// template returns the earthwork template of the design for a bank height
// (m above the bed).
func (d *Design) template(bankHeight float64) earthwork.Template {
	return earthwork.Template{BedWidth: d.Section.BottomWidth, SideSlope: d.Section.SideSlope, BankHeight: bankHeight,
		BankTopWidth: d.BankTopWidth, OuterSlope: d.OuterSlope, CutSlope: d.CutSlope}
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }
