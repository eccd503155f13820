package planner

import (
	"fmt"
	"math"

	"canalstep/planner/earthwork"
	"canalstep/planner/hydraulics"
)

// Envelope is what a design asks of the ground across the line: how wide
// the section is and how far a ground cross-section must reach.
type Envelope struct {
	// TopWidth is the section's width between the outer edges of the two
	// banks (m), at the tallest bank of the candidate grades.
	TopWidth float64
	// HalfWidth is how far each side of the centre line (m) the outer
	// slopes reach on level ground at the deepest cut and the highest fill
	// the limits allow, plus a margin: the width to sample a DEM
	// cross-section to.
	HalfWidth float64
	// Template is the section with the tallest bank.
	Template earthwork.Template
}

// crossMargin is added to the half-width a cross-section is sampled to:
// side-long ground moves the catch points outward (common practice, no
// source: a few metres beyond the computed catch point).
const crossMargin = 3.0 // m

// SectionEnvelope returns the envelope of design d: its candidate grades'
// tallest bank gives the widest section. It fails like Optimize on a design
// whose velocity limits or normal depth cannot be computed.
func SectionEnvelope(d Design) (Envelope, error) {
	if err := d.Validate(); err != nil {
		return Envelope{}, err
	}
	c := hydraulics.SI()
	lim, err := hydraulics.VelocityLimitedSlopes(c, d.Section, d.Flow, d.Roughness, d.MaxVelocity, d.MinVelocity)
	if err != nil {
		return Envelope{}, fmt.Errorf("velocity limits: %w", err)
	}
	flattest := lim.MinSlope
	if d.Grades != nil {
		flattest = math.Inf(1)
		for _, g := range d.Grades {
			flattest = math.Min(flattest, g)
		}
	}
	if !(flattest > 0) {
		flattest = lim.MaxSlope / 5 // as DefaultGrades without a lower limit
	}
	yn, err := hydraulics.NormalDepth(c, d.Section, d.Flow, d.Roughness, flattest)
	if err != nil {
		return Envelope{}, fmt.Errorf("normal depth at grade %g: %w", flattest, err)
	}
	t := d.template(hydraulics.BankHeight(d.Flow, yn, d.Freeboard))
	x3 := t.HalfWidthAtBank()
	reach := math.Max(t.OuterSlope*(t.BankHeight+d.MaxFillHeight), t.CutSlope*math.Max(0, d.MaxCutDepth-t.BankHeight))
	return Envelope{TopWidth: 2 * x3, HalfWidth: x3 + reach + crossMargin, Template: t}, nil
}

// Holds reports whether a ground cross-section (offsets in m from the
// centre line, negative left, and levels in m; centre-line ground in m)
// holds both catch points of the envelope's section for the lowest and the
// highest bed the cut and fill limits allow.
func (e Envelope) Holds(d Design) func(offsets, levels []float64, ground float64) bool {
	return func(offsets, levels []float64, ground float64) bool {
		s, err := earthwork.Cross(e.Template, [][]float64{offsets}, [][]float64{levels})
		if err != nil {
			return false
		}
		for _, bed := range []float64{ground - d.MaxCutDepth, ground + d.MaxFillHeight} {
			l, r := s.Catch(0, bed)
			if !l.Found || !r.Found {
				return false
			}
		}
		return true
	}
}
