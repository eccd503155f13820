package planner

import (
	"fmt"
	"math"
)

// Template is the canal cross-section used for earthwork, left to right at
// one station (reference sheet §6.1): a bed of width BedWidth, inner side
// slopes SideSlope rising BankHeight to the top of bank, a bank top
// BankTopWidth wide on each side, then an outer slope down to the ground
// (fill, OuterSlope) or up to it (cut, CutSlope). Slopes are horizontal per
// unit vertical (H:V); lengths are in metres.
//
//	  ground above top of bank: cut slope up to ground
//	\                                         /
//	 \______ W ______            ______ W ___/        top of bank, BankHeight above bed
//	                 \          /
//	                  \________/                      bed, BedWidth wide
//	  ground below top of bank: outer slope down to ground (fill)
//
// The ground is taken as level across the section at the centre-line
// elevation; DEM cross-sections are a later addition.
type Template struct {
	BedWidth     float64 `json:"bed_width"`      // b, m
	SideSlope    float64 `json:"side_slope"`     // inner side slope z_i, H:V
	BankHeight   float64 `json:"bank_height"`    // top of bank above bed (water depth + freeboard), m; 0 in Problem.Template means depth + freeboard per grade
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

// Validate reports whether every dimension is finite and non-negative and the
// bed or the side slopes give the canal some width.
func (t Template) Validate() error {
	for _, v := range []struct {
		name string
		x    float64
	}{{"bed width", t.BedWidth}, {"side slope", t.SideSlope}, {"bank height", t.BankHeight},
		{"bank top width", t.BankTopWidth}, {"outer slope", t.OuterSlope}, {"cut slope", t.CutSlope}} {
		if !(v.x >= 0) || math.IsInf(v.x, 0) {
			return fmt.Errorf("%w: template %s %g must be a finite number ≥ 0", ErrInput, v.name, v.x)
		}
	}
	if t.BedWidth+t.SideSlope <= 0 {
		return fmt.Errorf("%w: template needs a bed width or side slopes", ErrInput)
	}
	return nil
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
func (t Template) Areas(depth float64) (cut, fill float64) {
	x1 := t.BedWidth / 2
	h := t.BankHeight
	d := depth
	switch {
	case d > h:
		r := d - h
		cut = x1*d + t.SideSlope*(h*d-h*h/2) + t.BankTopWidth*r + t.CutSlope*r*r/2
	case d > 0:
		cut = x1*d + t.SideSlope*d*d/2
		ht := h - d
		fill = ht * (t.BankTopWidth + (t.SideSlope+t.OuterSlope)*ht/2)
	default:
		e := -d
		he := h + e
		fill = x1*e + t.SideSlope*(h*h/2+e*h) + t.BankTopWidth*he + t.OuterSlope*he*he/2
	}
	return 2 * cut, 2 * fill
}

// PolylineAreas returns the cut and fill areas (m²) between a ground
// cross-section and the template at bed elevation bed (m). The ground is the
// polyline through (offsets[k], levels[k]): offsets in metres from the centre
// line (negative left, looking downstream), strictly increasing. On each
// interval between merged breakpoints ground − design is linear and is
// integrated exactly, splitting at sign changes (reference sheet §6.1). The
// design outside the catch points is the ground itself; if an outer slope
// does not meet the ground inside the polyline, the error says so (no silent
// extrapolation). It panics if the slices differ in length or hold fewer
// than two points.
func (t Template) PolylineAreas(bed float64, offsets, levels []float64) (cut, fill float64, err error) {
	if len(offsets) != len(levels) || len(offsets) < 2 {
		panic(fmt.Sprintf("planner: PolylineAreas with %d offsets and %d levels", len(offsets), len(levels)))
	}
	for side := -1.0; side <= 1; side += 2 {
		// Design half-section as a function of |x| up to the catch point.
		c, f, e := t.halfPolyline(bed, side, offsets, levels)
		if e != nil {
			return 0, 0, e
		}
		cut += c
		fill += f
	}
	return cut, fill, nil
}

// halfPolyline integrates one side (side −1 left, +1 right) from the centre
// line to the catch point.
func (t Template) halfPolyline(bed, side float64, offsets, levels []float64) (cut, fill float64, err error) {
	ground := func(a float64) (float64, bool) { // a = |x|
		x := side * a
		n := len(offsets)
		if x < offsets[0] || x > offsets[n-1] {
			return 0, false
		}
		for k := 1; k < n; k++ {
			if x <= offsets[k] {
				w := (x - offsets[k-1]) / (offsets[k] - offsets[k-1])
				return levels[k-1] + w*(levels[k]-levels[k-1]), true
			}
		}
		return levels[n-1], true
	}
	x1 := t.BedWidth / 2
	x2 := x1 + t.SideSlope*t.BankHeight
	x3 := x2 + t.BankTopWidth
	top := bed + t.BankHeight
	// design returns the design line of the piece holding mid, evaluated at
	// a: each interval is integrated on one piece, so a vertical face (zero
	// slope) is taken from the correct side.
	design := func(mid float64) func(float64) float64 {
		switch {
		case mid <= x1:
			return func(float64) float64 { return bed }
		case mid <= x2:
			return func(a float64) float64 { return bed + (a-x1)/t.SideSlope }
		default:
			return func(float64) float64 { return top }
		}
	}
	// Breakpoints: template vertices and ground vertices on this side.
	pts := []float64{0, x1, x2, x3}
	for _, o := range offsets {
		a := side * o
		if a > 0 && a < x3 {
			pts = append(pts, a)
		}
	}
	sortFloats(pts)
	integrate := func(a0, a1 float64, d func(float64) float64) error {
		g0, ok0 := ground(a0)
		g1, ok1 := ground(a1)
		if !ok0 || !ok1 {
			return fmt.Errorf("%w: ground cross-section does not reach offset %.2f m", ErrInput, side*a1)
		}
		fa, fb := g0-d(a0), g1-d(a1)
		c, f := linearParts(a1-a0, fa, fb)
		cut += c
		fill += f
		return nil
	}
	for k := 1; k < len(pts); k++ {
		if pts[k] > pts[k-1] {
			if err := integrate(pts[k-1], pts[k], design((pts[k-1]+pts[k])/2)); err != nil {
				return 0, 0, err
			}
		}
	}
	// Outer slope from (x3, top) to the catch point, walking the ground.
	gTop, ok := ground(x3)
	if !ok {
		return 0, 0, fmt.Errorf("%w: ground cross-section does not reach the bank edge at offset %.2f m", ErrInput, side*x3)
	}
	slope := t.OuterSlope // fill: design falls outward
	dir := -1.0
	if gTop > top {
		slope, dir = t.CutSlope, 1
	}
	if gTop == top {
		return cut, fill, nil
	}
	outer := func(a float64) float64 {
		if slope == 0 {
			return top // vertical face: the catch point is at x3
		}
		return top + dir*(a-x3)/slope
	}
	if slope == 0 {
		return cut, fill, nil
	}
	var gv []float64
	for _, o := range offsets {
		if a := side * o; a > x3 {
			gv = append(gv, a)
		}
	}
	sortFloats(gv)
	a0 := x3
	f0 := gTop - outer(a0)
	for _, a1 := range gv {
		g1, _ := ground(a1)
		f1 := g1 - outer(a1)
		if f0*f1 <= 0 { // the catch point lies in [a0, a1]
			ac := a0 + (a1-a0)*f0/(f0-f1)
			c, f := linearParts(ac-a0, f0, 0)
			return cut + c, fill + f, nil
		}
		c, f := linearParts(a1-a0, f0, f1)
		cut += c
		fill += f
		a0, f0 = a1, f1
	}
	return 0, 0, fmt.Errorf("%w: catch point not found: the %s slope does not meet the ground within offset %.2f m", ErrInput,
		map[bool]string{true: "cut", false: "fill"}[dir > 0], side*a0)
}

// linearParts integrates a linear difference f (ground − design) from fa to fb
// over width w, returning the positive part as cut and the negative part as
// fill.
func linearParts(w, fa, fb float64) (cut, fill float64) {
	switch {
	case fa >= 0 && fb >= 0:
		return w * (fa + fb) / 2, 0
	case fa <= 0 && fb <= 0:
		return 0, -w * (fa + fb) / 2
	}
	xc := w * fa / (fa - fb)
	if fa > 0 {
		return fa * xc / 2, -fb * (w - xc) / 2
	}
	return fb * (w - xc) / 2, -fa * xc / 2
}

func sortFloats(a []float64) {
	for i := 1; i < len(a); i++ {
		for j := i; j > 0 && a[j] < a[j-1]; j-- {
			a[j], a[j-1] = a[j-1], a[j]
		}
	}
}

// VolumeMethod chooses how volumes between two stations are computed.
type VolumeMethod int

const (
	// AverageEndArea is V = L·(A1 + A2)/2 (reference sheet §6.2).
	AverageEndArea VolumeMethod = iota
	// Prismoidal is V = L·(A1 + 4·Am + A2)/6 with Am the area of the
	// mid-section built from the averaged depth (reference sheet §6.2); exact
	// when the area varies quadratically along the segment.
	Prismoidal
)

func (m VolumeMethod) String() string {
	if m == Prismoidal {
		return "prismoidal"
	}
	return "average_end_area"
}

// AverageEndVolume returns L·(a1 + a2)/2 in m³ for end areas a1, a2 (m²)
// l metres apart.
func AverageEndVolume(l, a1, a2 float64) float64 { return l * (a1 + a2) / 2 }

// PrismoidalVolume returns L·(a1 + 4·am + a2)/6 in m³ for end areas a1, a2
// and mid-section area am (m²) l metres apart.
func PrismoidalVolume(l, a1, am, a2 float64) float64 { return l * (a1 + 4*am + a2) / 6 }
