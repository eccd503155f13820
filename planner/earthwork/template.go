package earthwork

import (
	"errors"
	"fmt"
)

// ErrInput is wrapped by every error about input that cannot be used as
// given: a template or prices out of range, a malformed cross-section.
var ErrInput = errors.New("earthwork: invalid input")

// Template is the canal cross-section used for earthwork, left to right at
// one station (reference sheet §6.1): a bed of width BedWidth, inner side
// slopes SideSlope rising BankHeight to the top of bank, a bank top
// BankTopWidth wide on each side, then an outer slope down to the ground
// (fill, OuterSlope) or up to it (cut, CutSlope). Slopes are horizontal per
// unit vertical (H:V); lengths are in metres. A slope of 0 is a vertical
// face.
//
//	  ground above top of bank: cut slope up to ground
//	\                                         /
//	 \______ W ______            ______ W ___/        top of bank, BankHeight above bed
//	                 \          /
//	                  \________/                      bed, BedWidth wide
//	  ground below top of bank: outer slope down to ground (fill)
type Template struct {
	BedWidth     float64 `json:"bed_width"`      // b, m
	SideSlope    float64 `json:"side_slope"`     // inner side slope z_i, H:V
	BankHeight   float64 `json:"bank_height"`    // H, top of bank above bed (water depth + freeboard), m
	BankTopWidth float64 `json:"bank_top_width"` // bank top width W on each side, m
	OuterSlope   float64 `json:"outer_slope"`    // outer (fill) slope of the banks z_o, H:V
	CutSlope     float64 `json:"cut_slope"`      // cut slope above the top of bank z_c, H:V
}

// Default template parts (common practice, no source: a 3 m bank carries a
// maintenance track; 2:1 outer fill slopes and 1.5:1 cut slopes suit common
// earth). Project values come from the geotechnical report.
const (
	DefaultBankTopWidth = 3.0 // m
	DefaultOuterSlope   = 2.0 // H:V
	DefaultCutSlope     = 1.5 // H:V
)

// Bounds that Validate enforces, far beyond any canal (common practice, no
// source: they keep every product of the area formulas finite).
const (
	MaxTemplateLength = 1000.0 // m, for the bed width, bank height and bank top width
	MaxTemplateSlope  = 100.0  // H:V, for every slope
)

// Validate reports whether every dimension is finite, non-negative and
// within MaxTemplateLength or MaxTemplateSlope, and the bed or the side
// slopes give the canal some width.
func (t Template) Validate() error {
	for _, v := range []struct {
		name string
		x    float64
		max  float64
		unit string
	}{{"bed width", t.BedWidth, MaxTemplateLength, " m"}, {"side slope", t.SideSlope, MaxTemplateSlope, ":1"},
		{"bank height", t.BankHeight, MaxTemplateLength, " m"}, {"bank top width", t.BankTopWidth, MaxTemplateLength, " m"},
		{"outer slope", t.OuterSlope, MaxTemplateSlope, ":1"}, {"cut slope", t.CutSlope, MaxTemplateSlope, ":1"}} {
		if !(v.x >= 0 && v.x <= v.max) {
			return fmt.Errorf("%w: template %s %g must be a number from 0 to %g%s", ErrInput, v.name, v.x, v.max, v.unit)
		}
	}
	if t.BedWidth+t.SideSlope <= 0 {
		return fmt.Errorf("%w: template needs a bed width or side slopes", ErrInput)
	}
	return nil
}

// HalfWidthAtBank returns b/2 + z_i·H + W, m: the offset of the bank's
// outer edge from the centre line, where the outer slope starts.
func (t Template) HalfWidthAtBank() float64 {
	return t.BedWidth/2 + t.SideSlope*t.BankHeight + t.BankTopWidth
}

// Areas returns the cut and fill areas (m²) of the section when the level
// ground lies depth metres above the bed (depth < 0: the bed is above the
// ground). The integrals are exact for this piecewise-linear section against
// level ground (reference sheet §6.1); per half section, with X1 = b/2,
// H the bank height, W the bank top width:
//
//	cut  (0 < d ≤ H):  X1·d + z_i·d²/2
//	cut  (d > H):      X1·d + z_i·(H·d − H²/2) + W·(d − H) + z_c·(d − H)²/2
//	fill (0 ≤ d < H):  h·(W + (z_i + z_o)·h/2),  h = H − d
//	fill (d < 0):      X1·e + z_i·(H²/2 + e·H) + W·(H + e) + z_o·(H + e)²/2,  e = −d
//
// Cut and fill are reported separately, never netted within the section.
// A NaN depth gives a NaN fill.
func (t Template) Areas(depth float64) (cut, fill float64) {
	h := t.BankHeight
	switch d := depth; {
	case d > h:
		return t.deepCut(d), 0
	case d > 0:
		return t.shallowCut(d), t.shallowFill(d)
	default:
		return 0, t.highFill(d)
	}
}

// The three regimes of Areas, each small enough to inline (Level's runs
// call them in loops). Each returns the whole section (both halves).

// deepCut is the cut for d > H.
func (t *Template) deepCut(d float64) float64 {
	h := t.BankHeight
	r := d - h
	return 2 * (t.BedWidth/2*d + t.SideSlope*(h*d-h*h/2) + t.BankTopWidth*r + t.CutSlope*r*r/2)
}

// shallowCut and shallowFill are the cut and fill for 0 < d ≤ H.
func (t *Template) shallowCut(d float64) float64 {
	return 2 * (t.BedWidth/2*d + t.SideSlope*d*d/2)
}

func (t *Template) shallowFill(d float64) float64 {
	ht := t.BankHeight - d
	return 2 * (ht * (t.BankTopWidth + (t.SideSlope+t.OuterSlope)*ht/2))
}

// highFill is the fill for d ≤ 0 (and NaN).
func (t *Template) highFill(d float64) float64 {
	h := t.BankHeight
	e := -d
	he := h + e
	return 2 * (t.BedWidth/2*e + t.SideSlope*(h*h/2+e*h) + t.BankTopWidth*he + t.OuterSlope*he*he/2)
}

// levelCatch returns the distance (m) of the catch point from the centre
// line on level ground depth metres above the bed, and whether the cut slope
// meets it: x3 + z_c·(d − H) above the top of bank, x3 + z_o·(H − d) below.
func (t Template) levelCatch(depth float64) (a float64, cut bool) {
	x3 := t.HalfWidthAtBank()
	if r := depth - t.BankHeight; r > 0 {
		return x3 + t.CutSlope*r, true
	} else {
		return x3 - t.OuterSlope*r, false
	}
}
