package earthwork

import (
	"fmt"
	"math"
	"slices"
	"sync/atomic"
)

// Bounds on the cross-sections that Cross accepts (common practice, no
// source: far beyond any canal corridor or terrain, and small enough that
// every area stays finite).
const (
	MaxCrossOffset = 1e5     // m, largest |offset| from the centre line
	MaxCrossLevel  = 1e5     // m, largest |ground level|
	MaxCrossPoints = 1 << 16 // points in one cross-section
)

// minOuterSlope is the smallest outer slope (H:V) handled as a slope: a
// smaller one, nearer vertical, is taken as a vertical face, which moves its
// catch point by less than 1e-12 times the slope height.
const minOuterSlope = 1e-12

// tableMax is the most segments the inner part of a half-section may have
// for its areas to be tabulated in the bed; a longer one (a very densely
// sampled cross-section) is integrated segment by segment at each call,
// which keeps the construction time linear in the input.
const tableMax = 64

// Cross uses ground cross-sections: for station i, offsets[i] (m from the
// centre line, negative left looking downstream, strictly increasing) and
// levels[i] (ground elevations, m). Each cross-section must hold at least
// two points at offsets ≤ 0 and two at offsets ≥ 0 (a point at offset 0
// counts on both sides), finite offsets within ±MaxCrossOffset, levels within
// ±MaxCrossLevel and at most MaxCrossPoints points. The template must pass
// Validate. Otherwise the error wraps ErrInput.
//
// The ground is the polyline through the points; beyond the last point on a
// side it is taken as level at that point's level (Catch.Found then tells
// that a catch point lies there). Cut and fill are integrated exactly
// between the ground and the design line (reference sheet §6.1): ground −
// design is linear between the breakpoints of either line and is split at
// its sign changes. An outer slope below 1e-12 H:V is taken as a vertical
// face.
//
// The mid-section of the segment from station i−1 to i (MidAreas) is built
// from averaged dimensions (reference sheet §6.2): its ground is the average
// of the two stations' cross-sections, both resampled (with their level
// extensions) at the union of their offsets, and its bed is the average of
// the two beds. That is the ground of the straight-line interpolation
// between the two sections at mid-segment.
//
// Cross copies what it needs: the ground of each station and side relative
// to its centre-line level, 16 bytes a point, nothing per template beyond
// that (the ground is shared by no two values: one value per template).
// Areas, MidAreas and Catch work from that ground for one bed: the inner
// part (out to the bank edge) is the template merged with the ground, its
// cut taken from the coefficients of the one interval of node values that
// holds the bed; the outer slope is followed outward from the bank edge to
// where it meets the ground. AreasRun and MidAreasRun (Runs) prepare the
// section once for a whole run of beds, in scratch space the value keeps
// for the next call: the inner cut tabulated as a piecewise quadratic of
// the bed, and for the outer slopes the running integral of the ground and
// the running extrema of ground minus slope; as the bed rises they step
// through the tables, and the outer area is a quadratic of the bed on each
// ground segment. Both work out every number in the same way, so the runs
// give the point calls' values bit for bit.
func Cross(t Template, offsets, levels [][]float64) (Sections, error) {
	return newCross(t, offsets, levels, tableMax)
}

// crossSections is Cross's Sections.
type crossSections struct {
	x1, x2, x3 float64 // template breakpoints: bed edge, top of inner slope, bank outer edge, m from the centre line
	h          float64 // bank height, m
	zc, zo     float64 // cut and fill slopes as used, H:V (0: vertical)
	tmax       int     // tabulation limit (tableMax)
	st         []crossStation
	// The ground of every side of every station, outward from the centre
	// line: distance a ≥ 0 (m) and level relative to the station's ref (m).
	// Each side starts with the centre line itself, (0, 0).
	ga, gg []float64
	// spare holds one builder (scratch space) between calls; a call that
	// finds none, because another goroutine holds it, makes its own.
	spare atomic.Pointer[builder]
}

// crossStation is one station's centre-line level and where its sides lie
// in ga, gg: left [side[0], side[1]), right [side[1], side[2]).
type crossStation struct {
	ref  float64 // m
	side [3]int
}

var (
	_ Sections = (*crossSections)(nil)
	_ Runs     = (*crossSections)(nil)
)

// section is one cross-section prepared for one template. Elevations inside
// are relative to ref, the centre-line ground, to keep their rounding small.
type section struct {
	ref  float64 // m
	side [2]half // left, right
}

// cursor remembers, per side, where the last bed fell in the section's
// tables, so that the next bed nearby is found in a step or two. The zero
// cursor starts at the beginning; any cursor gives the same result.
type cursor struct {
	knot      [2]int
	cut, fill [2]rampCursor
}

// rampCursor is a ramp's last answer (find) and, when ok, its piece.
type rampCursor struct {
	j  int
	ok bool
	p  piece
}

// half is one side of a section, as functions of a = |offset|.
type half struct {
	// Inner part, 0 ≤ a ≤ x3: u(a) = ground − template rise above the bed,
	// piecewise linear. With β the relative bed, the inner cut is
	// C(β) = ∫ max(u − β, 0) da and the fill C(β) − (uInt − β·wSum).
	// Tabulated: C(β) = c0[k] + t·c1[k] + t²·c2[k], t = β − knots[k], for
	// knots[k] ≤ β < knots[k+1]; C = uInt − β·wSum below the first knot and
	// 0 from the last; the knots are the distinct node values. Otherwise
	// (knots nil) from the nodes nu with segment widths nw: by interval,
	// the table's coefficients of the one interval holding β, worked out
	// from the nodes as table would (same numbers, without the rest of the
	// table), or walked segment by segment (a section of more than tmax
	// segments).
	knots, c0, c1, c2 []float64
	nw, nu            []float64
	byInterval        bool
	uInt, wSum        float64

	// Outer part: the ground g at the bank edge and at every ground point
	// beyond it (a[0] = x3), its integral gi from x3 to each, and the ramps
	// of the two outer slopes.
	a, g, gi  []float64
	top0      float64 // g[0] − H: the relative bed at which the ground at the bank edge is at the top of bank
	cut, fill ramp
	width     float64 // sampled half-width, m
}

// ramp is one outer slope against the outer ground:
// e(j) = σ·(g[j] − H) − (a[j] − x3)/z with σ = +1 for the cut slope and −1
// for the fill slope, so that with y = σ·β the slope lies below the ground
// (cut) or above it (fill) where e > y. m is the prefix minimum of e.
type ramp struct {
	z, inv float64 // slope (H:V; 0 for a vertical face) and 1/z
	sigma  float64 // +1 cut slope, −1 fill slope
	bank   float64 // H, m
	m      []float64
}

// e returns e(j) for the nodes of h.
func (r *ramp) e(h *half, j int) float64 { return r.eAt(h.a[j]-h.a[0], h.g[j]) }

// eAt returns e at distance d beyond the bank edge where the ground is g.
// The conversions round each product on its own, so that e is the same
// number wherever it is computed (no fused multiply-add).
func (r *ramp) eAt(d, g float64) float64 {
	return float64(r.sigma*(g-r.bank)) - float64(d*r.inv)
}

// integralAt returns the integral of e − y from the bank edge x3 to
// distance d beyond it, where the ground's integral from x3 is gi:
// σ·(gi − H·d) − d²/(2z) − y·d.
func (r *ramp) integralAt(d, gi, y float64) float64 {
	return r.sigma*(gi-r.bank*d) - d*d*r.inv/2 - y*d
}

// hit is where a ramp meets y (see find): on the segment from node j−1
// (aPrev, gPrev, the ground's integral giPrev there, e0 = e(j−1) > y) to
// node j (a, g, e1 = e(j) ≤ y), or on the level ground beyond the last
// node (end; aPrev, gPrev, giPrev, e0 are then the last node's).
type hit struct {
	end                        bool
	e0, e1                     float64
	aPrev, gPrev, giPrev, a, g float64
}

// hitAt describes find's answer j on the nodes of h as a hit.
func (r *ramp) hitAt(h *half, j int) hit {
	if j < len(h.a) {
		return hit{e0: r.e(h, j-1), e1: r.e(h, j), aPrev: h.a[j-1], gPrev: h.g[j-1], giPrev: h.gi[j-1], a: h.a[j], g: h.g[j]}
	}
	n := len(h.a) - 1
	return hit{end: true, e0: r.e(h, n), aPrev: h.a[n], gPrev: h.g[n], giPrev: h.gi[n]}
}

// piece is the area between a ramp and the ground from the bank edge to
// where the ramp meets y, for every y whose hit is on one segment (or
// beyond the last node): with s = e0 − y ≥ 0, the integral of e − y to the
// segment's start is c0 + s·c1 and the triangle beyond it, between the
// ramp and the ground, s²·c2 (w/(2·(e0 − e1)) on a segment of width w, z/2
// on the level ground beyond the last node).
type piece struct{ e0, c0, c1, c2 float64 }

// pieceOf returns the piece of the hit t; a0 is the bank edge.
func (r *ramp) pieceOf(t hit, a0 float64) piece {
	d := t.aPrev - a0
	p := piece{e0: t.e0, c0: r.integralAt(d, t.giPrev, t.e0), c1: d, c2: r.z / 2}
	if !t.end {
		p.c2 = (t.a - t.aPrev) / (2 * (t.e0 - t.e1))
	}
	return p
}

// at returns the piece's area at y.
func (p *piece) at(y float64) float64 {
	s := p.e0 - y
	return max(p.c0+s*(p.c1+s*p.c2), 0)
}

// meetOf returns the distance from the centre line and the ground level
// (relative) where the ramp meets y at the hit t.
func (r *ramp) meetOf(t hit, y float64) (at, level float64) {
	f0 := max(t.e0-y, 0)
	if t.end {
		return t.aPrev + r.z*f0, t.gPrev
	}
	// f0 > 0 ≥ f1; the clamps only guard the division.
	var fr float64
	if f1 := min(t.e1-y, 0); f0 > 0 {
		fr = f0 / (f0 - f1)
	}
	return t.aPrev + (t.a-t.aPrev)*fr, t.gPrev + (t.g-t.gPrev)*fr
}

// find returns where the ramp meets y, the first point outward from the
// bank edge where e = y: on segment j (from node j−1 to j, 1 ≤ j ≤ n), or
// j = n+1 on the level ground beyond the last node n. It needs e(0) > y
// and a slope (z > 0). The search steps from *at, the previous answer, and
// leaves the answer there.
func (r *ramp) find(h *half, y float64, at *int) int {
	n := len(h.a) - 1
	// The first j in [1, n] with m[j] ≤ y, n+1 if none: m falls outward.
	lo := min(max(*at, 1), n+1)
	for lo > 1 && r.m[lo-1] <= y {
		lo--
	}
	for lo <= n && r.m[lo] > y {
		lo++
	}
	*at = lo
	return lo
}

// area returns the area between the ramp and the ground of h from the bank
// edge to where the ramp meets y (see find): cut for the cut slope, fill for
// the fill slope. Beyond the last node the ground is level, so e falls at
// 1/z and always meets y. c holds the search's last answer and its piece.
func (r *ramp) area(h *half, y float64, c *rampCursor) float64 {
	if r.z == 0 {
		return 0
	}
	if j := c.j; r.find(h, y, &c.j) != j || !c.ok {
		c.p, c.ok = r.pieceOf(r.hitAt(h, c.j), h.a[0]), true
	}
	return c.p.at(y)
}

// meet returns the distance from the centre line and the ground level
// (relative) where the ramp meets y (see find).
func (r *ramp) meet(h *half, y float64) (at, level float64) {
	if r.z == 0 {
		return h.a[0], h.g[0]
	}
	var from int
	return r.meetOf(r.hitAt(h, r.find(h, y, &from)), y)
}

// inner returns the cut and fill areas of the inner part at relative bed
// b; the table search steps from *at, the previous interval, and leaves the
// answer there.
func (h *half) inner(b float64, at *int) (cut, fill float64) {
	net := h.uInt - b*h.wSum // ∫(u − b) da
	if kn := h.knots; kn != nil {
		r := len(kn)
		switch {
		case b < kn[0]:
			cut = net
		case b >= kn[r-1]:
			cut = 0
		default: // the interval kn[lo] ≤ b < kn[lo+1]: knots rise strictly
			lo := min(max(*at, 0), r-2)
			for lo > 0 && kn[lo] > b {
				lo--
			}
			for lo < r-2 && kn[lo+1] <= b {
				lo++
			}
			*at = lo
			t := b - kn[lo]
			cut = h.c0[lo] + t*(h.c1[lo]+t*h.c2[lo])
		}
		cut = max(cut, 0)
		return cut, max(cut-net, 0)
	}
	if h.byInterval {
		// The interval vk ≤ b < vn between node values, as in the table.
		vk, vn := math.Inf(-1), math.Inf(1)
		for _, u := range h.nu {
			if u <= b {
				vk = max(vk, u)
			} else {
				vn = min(vn, u)
			}
		}
		switch {
		case math.IsInf(vk, -1):
			cut = net
		case math.IsInf(vn, 1):
			cut = 0
		default:
			c0, c1, c2 := intervalCoef(h.nw, h.nu, vk, vn)
			t := b - vk
			cut = c0 + t*(c1+t*c2)
		}
		cut = max(cut, 0)
		return cut, max(cut-net, 0)
	}
	for j := 1; j < len(h.nu); j++ {
		c, f := linearParts(h.nw[j-1], h.nu[j-1]-b, h.nu[j]-b)
		cut += c
		fill += f
	}
	return cut, fill
}

// areas returns the cut and fill areas of s with the bed at bed (m),
// starting the table searches from c.
func (s *section) areas(bed float64, c *cursor) (cut, fill float64) {
	if bed != bed {
		return math.NaN(), math.NaN()
	}
	b := bed - s.ref
	for k := range s.side {
		h := &s.side[k]
		ci, fi := h.inner(b, &c.knot[k])
		cut += ci
		fill += fi
		if b < h.top0 {
			cut += h.cut.area(h, b, &c.cut[k])
		} else if b > h.top0 {
			fill += h.fill.area(h, -b, &c.fill[k])
		}
	}
	return cut, fill
}

// take returns a builder for one call: the spare one, or a new one when
// another call holds it. give puts it back for the next call.
func (x *crossSections) take() *builder {
	if bd := x.spare.Swap(nil); bd != nil {
		return bd
	}
	return &builder{x: x}
}

func (x *crossSections) give(bd *builder) { x.spare.Store(bd) }

func (x *crossSections) Len() int { return len(x.st) }

func (x *crossSections) Areas(i int, bed float64) (cut, fill float64) {
	if bed != bed {
		return math.NaN(), math.NaN()
	}
	bd := x.take()
	b := bed - x.st[i].ref
	for k := range 2 {
		bd.ga, bd.gg = x.side(i, k)
		bd.oneBed(b, &cut, &fill)
	}
	x.give(bd)
	return cut, fill
}

func (x *crossSections) MidAreas(i int, bedPrev, bed float64) (cut, fill float64) {
	bed = (bedPrev + bed) / 2
	if bed != bed {
		return math.NaN(), math.NaN()
	}
	bd := x.take()
	b := bed - bd.midRef(i)
	for k := range 2 {
		bd.midSide(i, k)
		bd.oneBed(b, &cut, &fill)
	}
	x.give(bd)
	return cut, fill
}

// oneBed returns the cut and fill of the side in bd.ga, bd.gg at the
// relative bed b without preparing its tables: the inner areas by
// interval (or walked), the outer slope by a scan outward from the bank
// edge that stops where it meets the ground. It adds them to *cut, *fill
// as section.areas does, in the same order, so the numbers are those of
// the prepared section.
func (bd *builder) oneBed(b float64, cut, fill *float64) {
	var h half
	bd.innerNodes(&h)
	bd.nw = bd.nw[:0]
	for j := 1; j < len(bd.na); j++ {
		bd.nw = append(bd.nw, bd.na[j]-bd.na[j-1])
	}
	h.nu, h.nw, h.byInterval = bd.nu, bd.nw, len(bd.na)-1 <= bd.x.tmax
	var at int
	ci, fi := h.inner(b, &at)
	*cut += ci
	*fill += fi
	r, y, g3 := bd.outerRamp(b)
	switch {
	case r.z == 0: // no slope: the prepared section adds a zero area
	case r.sigma > 0:
		p := r.pieceOf(bd.scan(r, y, g3), bd.x.x3)
		*cut += p.at(y)
	default:
		p := r.pieceOf(bd.scan(r, y, g3), bd.x.x3)
		*fill += p.at(y)
	}
}

// outerRamp returns the outer slope that applies to the side in bd.ga,
// bd.gg at the relative bed b (z = 0: none, the ground at the bank edge is
// at the top of bank, or the slope is a vertical face), the level y it is
// matched against, and the ground g3 at the bank edge.
func (bd *builder) outerRamp(b float64) (r ramp, y, g3 float64) {
	x := bd.x
	g3 = bd.groundAt(x.x3)
	top0 := g3 - x.h
	switch {
	case b < top0 && x.zc > 0:
		return ramp{z: x.zc, inv: 1 / x.zc, sigma: 1, bank: x.h}, b, g3
	case b > top0 && x.zo > 0:
		return ramp{z: x.zo, inv: 1 / x.zo, sigma: -1, bank: x.h}, -b, g3
	}
	return ramp{}, 0, g3
}

// scan finds where the ramp r (z > 0) meets y on the side in bd.ga, bd.gg,
// whose ground at the bank edge is g3, walking outward from the bank edge:
// the hit find gives on the prepared nodes (e(0) > y holds there).
func (bd *builder) scan(r ramp, y, g3 float64) hit {
	x3 := bd.x.x3
	ap, gp, gip, ep := x3, g3, 0.0, r.eAt(0, g3)
	for k := bd.beyond(x3); k < len(bd.ga); k++ {
		a, g := bd.ga[k], bd.gg[k]
		gi := giNext(gip, ap, a, gp, g)
		e := r.eAt(a-x3, g)
		if e <= y {
			return hit{e0: ep, e1: e, aPrev: ap, gPrev: gp, giPrev: gip, a: a, g: g}
		}
		ap, gp, gip, ep = a, g, gi, e
	}
	return hit{end: true, e0: ep, aPrev: ap, gPrev: gp, giPrev: gip}
}

func (x *crossSections) AreasRun(i int, base, step float64, k0 int, cut, fill []float64) {
	fill = fill[:len(cut)]
	bd := x.take()
	s := bd.station(i, forRun)
	var c cursor
	for j := range cut {
		cut[j], fill[j] = s.areas(base+float64(k0+j)*step, &c)
	}
	x.give(bd)
}

func (x *crossSections) MidAreasRun(i int, base, step, rise float64, k0 int, cut, fill []float64) {
	fill = fill[:len(cut)]
	bd := x.take()
	s := bd.mid(i, forRun)
	var c cursor
	for j := range cut {
		bed := base + float64(k0+j)*step
		cut[j], fill[j] = s.areas(((bed+rise)+bed)/2, &c)
	}
	x.give(bd)
}

func (x *crossSections) Catch(i int, bed float64) (left, right Catch) {
	bd := x.take()
	defer x.give(bd)
	b := bed - x.st[i].ref
	for k := range 2 {
		bd.ga, bd.gg = x.side(i, k)
		r, y, g3 := bd.outerRamp(b)
		top0 := g3 - x.h
		var c Catch
		var at, lev float64
		switch {
		case b < top0 || b > top0:
			at, lev = x.x3, g3
			if r.z > 0 {
				at, lev = r.meetOf(bd.scan(r, y, g3), y)
			}
			c.Cut = b < top0
		case b == top0:
			at, lev = x.x3, g3
		default: // NaN bed
			at, lev = math.NaN(), math.NaN()
		}
		c.Offset, c.Level, c.Found = at, lev+x.st[i].ref, at <= bd.ga[len(bd.ga)-1]
		if k == 0 {
			c.Offset = -at
			left = c
		} else {
			right = c
		}
	}
	return left, right
}

// linearParts integrates a linear difference f (ground − design) from fa to
// fb over width w, returning the positive part as cut and the negative part
// as fill (reference sheet §6.1).
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

// newCross is Cross with the tabulation limit as a parameter (tests force
// either inner method with it).
func newCross(t Template, offsets, levels [][]float64, tmax int) (*crossSections, error) {
	if err := t.Validate(); err != nil {
		return nil, err
	}
	if err := checkCross(offsets, levels); err != nil {
		return nil, err
	}
	x := &crossSections{h: t.BankHeight, zc: t.CutSlope, zo: t.OuterSlope, tmax: tmax}
	x.x1 = t.BedWidth / 2
	x.x2 = x.x1 + t.SideSlope*t.BankHeight
	x.x3 = x.x2 + t.BankTopWidth
	if x.zc < minOuterSlope {
		x.zc = 0
	}
	if x.zo < minOuterSlope {
		x.zo = 0
	}
	n := len(offsets)
	pts := 0
	for _, o := range offsets {
		pts += len(o) + 2
	}
	x.st = make([]crossStation, n)
	x.ga, x.gg = make([]float64, 0, pts), make([]float64, 0, pts)
	for i := range n {
		x.st[i] = x.addStation(offsets[i], levels[i])
	}
	return x, nil
}

// addStation appends one validated cross-section's sides to x.ga, x.gg.
func (x *crossSections) addStation(offs, levs []float64) crossStation {
	// Centre-line ground: the point at 0 or the interpolation across it.
	k, _ := slices.BinarySearch(offs, 0)
	ref := levs[k]
	if offs[k] != 0 {
		w := (0 - offs[k-1]) / (offs[k] - offs[k-1])
		ref = levs[k-1] + w*(levs[k]-levs[k-1])
	}
	st := crossStation{ref: ref}
	st.side[0] = len(x.ga)
	x.ga, x.gg = append(x.ga, 0), append(x.gg, 0)
	for j := len(offs) - 1; j >= 0; j-- {
		if offs[j] < 0 {
			x.ga, x.gg = append(x.ga, -offs[j]), append(x.gg, levs[j]-ref)
		}
	}
	st.side[1] = len(x.ga)
	x.ga, x.gg = append(x.ga, 0), append(x.gg, 0)
	for j, o := range offs {
		if o > 0 {
			x.ga, x.gg = append(x.ga, o), append(x.gg, levs[j]-ref)
		}
	}
	st.side[2] = len(x.ga)
	return st
}

// checkCross validates the cross-sections (see Cross).
func checkCross(offsets, levels [][]float64) error {
	if len(offsets) != len(levels) {
		return fmt.Errorf("%w: %d offset lists but %d level lists; give one of each per station", ErrInput, len(offsets), len(levels))
	}
	if len(offsets) == 0 {
		return fmt.Errorf("%w: no cross-sections", ErrInput)
	}
	for i, o := range offsets {
		l := levels[i]
		if len(o) != len(l) {
			return fmt.Errorf("%w: cross-section %d has %d offsets but %d levels", ErrInput, i, len(o), len(l))
		}
		if len(o) > MaxCrossPoints {
			return fmt.Errorf("%w: cross-section %d has %d points; at most %d are allowed", ErrInput, i, len(o), MaxCrossPoints)
		}
		left, right := 0, 0
		for k, v := range o {
			if !(math.Abs(v) <= MaxCrossOffset) {
				return fmt.Errorf("%w: cross-section %d point %d: offset %g m must be a finite number within ±%g m", ErrInput, i, k, v, MaxCrossOffset)
			}
			if !(math.Abs(l[k]) <= MaxCrossLevel) {
				return fmt.Errorf("%w: cross-section %d point %d: level %g m must be a finite number within ±%g m", ErrInput, i, k, l[k], MaxCrossLevel)
			}
			if k > 0 && !(v > o[k-1]) {
				return fmt.Errorf("%w: cross-section %d point %d: offset %g m after %g m; offsets must increase from left to right", ErrInput, i, k, v, o[k-1])
			}
			if v <= 0 {
				left++
			}
			if v >= 0 {
				right++
			}
		}
		if left < 2 || right < 2 {
			return fmt.Errorf("%w: cross-section %d has %d of its points at offsets ≤ 0 and %d at offsets ≥ 0; it needs at least 2 on each side of the centre line (a point at offset 0 counts on both)", ErrInput, i, left, right)
		}
	}
	return nil
}

// builder prepares one section at a time for x's template, reusing its
// scratch space: the section it returns lives until its next call.
type builder struct {
	x              *crossSections
	use            int       // forOneBed or forRun: the section being built
	ga, gg, na, nu []float64 // the side being built (stored or averaged), inner nodes
	kn, ma, mg, nw []float64 // scratch: knots, averaged side, inner widths
	block          []float64 // the tables of the section being built
	used           int       // of block
	sec            section
}

// take returns n zeroed float64s from the block.
func (bd *builder) take(n int) []float64 {
	if bd.used+n > len(bd.block) {
		// A new block; the slices already taken keep the old one.
		bd.block, bd.used = make([]float64, max(n, 2*len(bd.block), 256)), 0
	}
	s := bd.block[bd.used : bd.used+n : bd.used+n]
	bd.used += n
	clear(s)
	return s
}

// side returns side k of station i as stored.
func (x *crossSections) side(i, k int) (ga, gg []float64) {
	s := &x.st[i]
	return x.ga[s.side[k]:s.side[k+1]], x.gg[s.side[k]:s.side[k+1]]
}

// What a builder prepares of the inner areas of a side that has at most
// tmax segments: the whole table, for many beds, or the nodes, for one bed
// (evaluated by interval, the same numbers). A longer side is walked.
const (
	forOneBed = iota
	forRun
)

// station prepares the section of station i for one bed or for a run.
func (bd *builder) station(i, use int) *section {
	bd.used, bd.use = 0, use
	bd.sec.ref = bd.x.st[i].ref
	for k := range 2 {
		bd.ga, bd.gg = bd.x.side(i, k)
		bd.sec.side[k] = bd.half()
	}
	return &bd.sec
}

// mid prepares the mid-section of the segment from station i−1 to i.
func (bd *builder) mid(i, use int) *section {
	bd.used, bd.use = 0, use
	bd.sec.ref = bd.midRef(i)
	for k := range 2 {
		bd.midSide(i, k)
		bd.sec.side[k] = bd.half()
	}
	return &bd.sec
}

// midRef is the centre-line level of the mid-section before station i:
// the average of the two stations' (m).
func (bd *builder) midRef(i int) float64 { return (bd.x.st[i-1].ref + bd.x.st[i].ref) / 2 }

// midSide sets bd.ga, bd.gg to side k of the mid-section of the segment
// from station i−1 to i (averaged dimensions): the two grounds resampled at
// the union of their distances, level beyond their ends, and averaged
// (relative to the averaged centre-line level).
func (bd *builder) midSide(i, k int) {
	a1, g1 := bd.x.side(i-1, k)
	a2, g2 := bd.x.side(i, k)
	bd.ma, bd.mg = bd.ma[:0], bd.mg[:0]
	j1, j2 := 0, 0
	for j1 < len(a1) || j2 < len(a2) {
		var a float64
		switch {
		case j2 == len(a2) || (j1 < len(a1) && a1[j1] < a2[j2]):
			a = a1[j1]
		case j1 == len(a1) || a2[j2] < a1[j1]:
			a = a2[j2]
		default: // equal
			a = a1[j1]
		}
		l1, n1 := levelAt(a1, g1, j1, a)
		l2, n2 := levelAt(a2, g2, j2, a)
		j1, j2 = n1, n2
		bd.ma, bd.mg = append(bd.ma, a), append(bd.mg, (l1+l2)/2)
	}
	bd.ga, bd.gg = bd.ma, bd.mg
}

// levelAt returns the polyline (o, l) at v, as polyAt does, given that
// o[k] is its first point at or beyond v (k = len(o): none), and the index
// of its first point beyond v.
func levelAt(o, l []float64, k int, v float64) (level float64, next int) {
	switch {
	case k < len(o) && o[k] == v:
		return l[k], k + 1
	case k == 0:
		return l[0], k
	case k == len(o):
		return l[k-1], k
	}
	w := (v - o[k-1]) / (o[k] - o[k-1])
	return l[k-1] + w*(l[k]-l[k-1]), k
}

// groundAt returns the ground of the side in bd.ga, bd.gg at distance a,
// level beyond the last point.
func (bd *builder) groundAt(a float64) float64 { return polyAt(bd.ga, bd.gg, a) }

// half prepares the side held in bd.ga, bd.gg.
func (bd *builder) half() half {
	x := bd.x
	var h half
	h.width = bd.ga[len(bd.ga)-1]
	bd.innerNodes(&h)
	if short := len(bd.na)-1 <= bd.x.tmax; short && bd.use == forRun {
		bd.table(&h)
	} else {
		h.nu = bd.take(len(bd.nu))
		copy(h.nu, bd.nu)
		h.nw = bd.take(len(bd.na) - 1)
		for j := range h.nw {
			h.nw[j] = bd.na[j+1] - bd.na[j]
		}
		h.byInterval = short
	}

	// Outer nodes: the bank edge, then the ground points beyond it.
	k3 := bd.beyond(x.x3)
	no := 1 + len(bd.ga) - k3
	h.a, h.g, h.gi = bd.take(no), bd.take(no), bd.take(no)
	h.a[0], h.g[0] = x.x3, bd.groundAt(x.x3)
	for j := 1; j < no; j++ {
		h.a[j], h.g[j] = bd.ga[k3+j-1], bd.gg[k3+j-1]
		h.gi[j] = giNext(h.gi[j-1], h.a[j-1], h.a[j], h.g[j-1], h.g[j])
	}
	h.top0 = h.g[0] - x.h
	h.cut = bd.ramp(&h, 1, x.zc)
	h.fill = bd.ramp(&h, -1, x.zo)
	return h
}

// giNext returns the ground's integral from the bank edge to a, given it
// (gi) to the previous node at ap and the levels gp, g at the two nodes.
func giNext(gi, ap, a, gp, g float64) float64 { return gi + (a-ap)*(gp+g)/2 }

// beyond returns the index of the first ground point of the side in bd.ga
// farther out than a.
func (bd *builder) beyond(a float64) int {
	k, found := slices.BinarySearch(bd.ga, a)
	if found {
		k++
	}
	return k
}

// innerNodes sets bd.na, bd.nu to the inner nodes of the side in bd.ga,
// bd.gg and h.uInt, h.wSum to their integral and width: the template
// polyline (0, 0), (x1, 0), (x2, H), (x3, H) merged with the ground points
// inside it; a vertical face gives two nodes at one distance.
func (bd *builder) innerNodes(h *half) {
	x := bd.x
	tp := [4][2]float64{{0, 0}, {x.x1, 0}, {x.x2, x.h}, {x.x3, x.h}}
	bd.na, bd.nu = bd.na[:0], bd.nu[:0]
	push := func(a, u float64) {
		if n := len(bd.na); n > 0 && bd.na[n-1] == a && bd.nu[n-1] == u {
			return
		}
		bd.na = append(bd.na, a)
		bd.nu = append(bd.nu, u)
	}
	k := 1
	for s := range 3 {
		p0, d0, p1, d1 := tp[s][0], tp[s][1], tp[s+1][0], tp[s+1][1]
		if !(p1 > p0) {
			continue
		}
		push(p0, bd.groundAt(p0)-d0)
		for k < len(bd.ga) && bd.ga[k] <= p0 {
			k++
		}
		for ; k < len(bd.ga) && bd.ga[k] < p1; k++ {
			a := bd.ga[k]
			push(a, bd.gg[k]-(d0+(d1-d0)*(a-p0)/(p1-p0)))
		}
		push(p1, bd.groundAt(p1)-d1)
	}
	if len(bd.na) == 0 { // no inner width at all
		push(0, bd.gg[0])
	}
	for j := 1; j < len(bd.na); j++ {
		w := bd.na[j] - bd.na[j-1]
		h.uInt += w * (bd.nu[j-1] + bd.nu[j]) / 2
		h.wSum += w
	}
}

// ramp prepares the outer slope z (H:V, 0 vertical) with sign σ (+1 cut,
// −1 fill) against the outer nodes of h.
func (bd *builder) ramp(h *half, sigma, z float64) ramp {
	if z == 0 {
		return ramp{}
	}
	r := ramp{z: z, inv: 1 / z, sigma: sigma, bank: bd.x.h}
	r.m = bd.take(len(h.a))
	r.m[0] = r.e(h, 0)
	for j := 1; j < len(h.a); j++ {
		r.m[j] = min(r.m[j-1], r.e(h, j))
	}
	return r
}

// table tabulates the inner cut C(β) of h from the nodes in bd.na, bd.nu:
// C is piecewise quadratic in β with knots at the node values.
func (bd *builder) table(h *half) {
	na, nu := bd.na, bd.nu
	bd.kn = append(bd.kn[:0], nu...)
	slices.Sort(bd.kn)
	bd.kn = slices.Compact(bd.kn)
	r := len(bd.kn)
	h.knots = bd.take(r)
	copy(h.knots, bd.kn)
	h.c0, h.c1, h.c2 = bd.take(r), bd.take(r), bd.take(r)
	nw := bd.take(len(na) - 1)
	for j := range nw {
		nw[j] = na[j+1] - na[j]
	}
	for k := 0; k+1 < r; k++ {
		h.c0[k], h.c1[k], h.c2[k] = intervalCoef(nw, nu, h.knots[k], h.knots[k+1])
	}
}

// intervalCoef returns the coefficients of C(β) = c0 + t·c1 + t²·c2,
// t = β − vk, on the interval vk ≤ β < vn between two consecutive node
// values, for the nodes nu with segment widths nw. On the interval a
// segment lies wholly above β (adding its mean height above vk and slope
// −w), wholly below (nothing) or across it (adding w·(hi − β)²/(2·(hi −
// lo))). A segment whose rise is below 1e-300 of its width counts as level
// at its lower end (an error below 1e-300·w²).
func intervalCoef(nw, nu []float64, vk, vn float64) (c0, c1, c2 float64) {
	for j := 1; j < len(nu); j++ {
		w := nw[j-1]
		if !(w > 0) {
			continue
		}
		lo, hi := nu[j-1], nu[j]
		if lo > hi {
			lo, hi = hi, lo
		}
		switch {
		case hi <= vk:
		case lo >= vn:
			c0 += w * ((lo+hi)/2 - vk)
			c1 -= w
		default: // lo ≤ vk < vn ≤ hi
			d := hi - lo
			if !(d > w*1e-300) {
				continue
			}
			fr := (hi - vk) / d
			c0 += w * (hi - vk) * fr / 2
			c1 -= w * fr
			c2 += w / (2 * d)
		}
	}
	return c0, c1, c2
}

// polyAt returns the polyline through (o, l) at offset v, level beyond its
// ends.
func polyAt(o, l []float64, v float64) float64 {
	k, found := slices.BinarySearch(o, v)
	switch {
	case found:
		return l[k]
	case k == 0:
		return l[0]
	case k == len(o):
		return l[k-1]
	}
	w := (v - o[k-1]) / (o[k] - o[k-1])
	return l[k-1] + w*(l[k]-l[k-1])
}
