package earthwork

import (
	"fmt"
	"math"
	"slices"
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
// Cross copies what it needs. It precomputes per station and side the
// ground minus the template, tabulating the inner areas as piecewise
// quadratics of the bed, and for the outer slopes the prefix integral of
// the ground and the prefix extrema of ground minus slope, so that Areas and
// Catch cost a few binary searches.
func Cross(t Template, offsets, levels [][]float64) (Sections, error) {
	return newCross(t, offsets, levels, tableMax)
}

// crossSections is Cross's Sections.
type crossSections struct {
	x1, x2, x3 float64 // template breakpoints: bed edge, top of inner slope, bank outer edge, m from the centre line
	h          float64 // bank height, m
	zc, zo     float64 // cut and fill slopes as used, H:V (0: vertical)
	sec        []section
	mid        []section // mid[i−1]: mid-section of the segment from station i−1 to i
}

var _ Sections = (*crossSections)(nil)

// section is one cross-section prepared for one template. Elevations inside
// are relative to ref, the centre-line ground, to keep their rounding small.
type section struct {
	ref  float64 // m
	side [2]half // left, right
}

// half is one side of a section, as functions of a = |offset|.
type half struct {
	// Inner part, 0 ≤ a ≤ x3: u(a) = ground − template rise above the bed,
	// piecewise linear. With β the relative bed, the inner cut is
	// C(β) = ∫ max(u − β, 0) da and the fill C(β) − (uInt − β·wSum).
	// Tabulated: C(β) = c0[k] + t·c1[k] + t²·c2[k], t = β − knots[k], for
	// knots[k] ≤ β < knots[k+1]; C = uInt − β·wSum below the first knot and
	// 0 from the last. Otherwise (knots nil) walked over the nodes nu with
	// segment widths nw.
	knots, c0, c1, c2 []float64
	nw, nu            []float64
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

// e returns e(j) for the nodes of h. The conversions round each product
// on its own, so that e is the same number wherever it is computed (no
// fused multiply-add).
func (r *ramp) e(h *half, j int) float64 {
	return float64(r.sigma*(h.g[j]-r.bank)) - float64((h.a[j]-h.a[0])*r.inv)
}

// integral returns the integral of e − y from x3 to node j: from the
// ground's integral, σ·(gi − H·d) − d²/(2z) − y·d with d = a[j] − x3.
func (r *ramp) integral(h *half, j int, y float64) float64 {
	d := h.a[j] - h.a[0]
	return r.sigma*(h.gi[j]-r.bank*d) - d*d*r.inv/2 - y*d
}

// find returns where the ramp meets y, the first point outward from the
// bank edge where e = y: on segment j (from node j−1 to j, 1 ≤ j ≤ n) at
// fraction fr of its width, or j = n+1 on the level ground beyond the last
// node n; f0 = e(j−1) − y > 0 is the height at the segment's start. It
// needs e(0) > y and a slope (z > 0).
func (r *ramp) find(h *half, y float64) (j int, f0, fr float64) {
	n := len(h.a) - 1
	lo, hi := 1, n+1 // the first j in [1, n] with m[j] ≤ y, n+1 if none
	for lo < hi {
		mid := int(uint(lo+hi) >> 1)
		if r.m[mid] <= y {
			hi = mid
		} else {
			lo = mid + 1
		}
	}
	if lo > n {
		return lo, max(r.e(h, n)-y, 0), 0
	}
	// The search gives f0 > 0 ≥ f1; the clamps only guard the division.
	f0, f1 := max(r.e(h, lo-1)-y, 0), min(r.e(h, lo)-y, 0)
	if f0 > 0 {
		fr = f0 / (f0 - f1)
	}
	return lo, f0, fr
}

// area returns the area between the ramp and the ground of h from the bank
// edge to where the ramp meets y (see find): cut for the cut slope, fill for
// the fill slope. Beyond the last node the ground is level, so e falls at
// 1/z and always meets y.
func (r *ramp) area(h *half, y float64) float64 {
	if r.z == 0 {
		return 0
	}
	j, f0, fr := r.find(h, y)
	if j < len(h.a) {
		return max(r.integral(h, j-1, y)+f0*(h.a[j]-h.a[j-1])*fr/2, 0)
	}
	return max(r.integral(h, j-1, y)+f0*r.z*f0/2, 0)
}

// meet returns the distance from the centre line and the ground level
// (relative) where the ramp meets y (see find).
func (r *ramp) meet(h *half, y float64) (at, level float64) {
	a, g := h.a, h.g
	if r.z == 0 {
		return a[0], g[0]
	}
	j, f0, fr := r.find(h, y)
	if j < len(a) {
		return a[j-1] + (a[j]-a[j-1])*fr, g[j-1] + (g[j]-g[j-1])*fr
	}
	return a[j-1] + r.z*f0, g[j-1]
}

// inner returns the cut and fill areas of the inner part at relative bed b.
func (h *half) inner(b float64) (cut, fill float64) {
	net := h.uInt - b*h.wSum // ∫(u − b) da
	if kn := h.knots; kn != nil {
		r := len(kn)
		switch {
		case b < kn[0]:
			cut = net
		case b >= kn[r-1]:
			cut = 0
		default:
			lo, hi := 0, r-1 // kn[lo] ≤ b < kn[hi]
			for hi-lo > 1 {
				mid := int(uint(lo+hi) >> 1)
				if kn[mid] <= b {
					lo = mid
				} else {
					hi = mid
				}
			}
			t := b - kn[lo]
			cut = h.c0[lo] + t*(h.c1[lo]+t*h.c2[lo])
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

// areas returns the cut and fill areas of s with the bed at bed (m).
func (s *section) areas(bed float64) (cut, fill float64) {
	if bed != bed {
		return math.NaN(), math.NaN()
	}
	b := bed - s.ref
	for k := range s.side {
		h := &s.side[k]
		c, f := h.inner(b)
		cut += c
		fill += f
		if b < h.top0 {
			cut += h.cut.area(h, b)
		} else if b > h.top0 {
			fill += h.fill.area(h, -b)
		}
	}
	return cut, fill
}

func (x *crossSections) Len() int { return len(x.sec) }

func (x *crossSections) Areas(i int, bed float64) (cut, fill float64) {
	return x.sec[i].areas(bed)
}

func (x *crossSections) MidAreas(i int, bedPrev, bed float64) (cut, fill float64) {
	return x.mid[i-1].areas((bedPrev + bed) / 2)
}

func (x *crossSections) Catch(i int, bed float64) (left, right Catch) {
	s := &x.sec[i]
	b := bed - s.ref
	for k := range s.side {
		h := &s.side[k]
		var c Catch
		var at, lev float64
		switch {
		case b < h.top0:
			at, lev = h.cut.meet(h, b)
			c.Cut = true
		case b > h.top0:
			at, lev = h.fill.meet(h, -b)
		case b == h.top0:
			at, lev = h.a[0], h.g[0]
		default: // NaN bed
			at, lev = math.NaN(), math.NaN()
		}
		c.Offset, c.Level, c.Found = at, lev+s.ref, at <= h.width
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
	x := &crossSections{h: t.BankHeight, zc: t.CutSlope, zo: t.OuterSlope}
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
	bd := &builder{x: x, tmax: tmax}
	x.sec = make([]section, n)
	for i := range n {
		x.sec[i] = bd.section(offsets[i], levels[i])
	}
	x.mid = make([]section, max(n-1, 0))
	for i := 1; i < n; i++ {
		o, l := bd.average(offsets[i-1], levels[i-1], offsets[i], levels[i])
		x.mid[i-1] = bd.section(o, l)
	}
	return x, nil
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

// builder prepares sections, reusing its scratch space and carving the
// tables out of large blocks.
type builder struct {
	x              *crossSections
	tmax           int
	ga, gg, na, nu []float64 // scratch: one side's ground, inner nodes
	kn, ao, lo     []float64 // scratch: knots, averaged section
	block          []float64
}

// take returns n zeroed float64s from the current block.
func (bd *builder) take(n int) []float64 {
	if n > len(bd.block) {
		bd.block = make([]float64, max(n, 1<<14))
	}
	s := bd.block[:n:n]
	bd.block = bd.block[n:]
	return s
}

// section prepares one validated cross-section.
func (bd *builder) section(offs, levs []float64) section {
	// Centre-line ground: the point at 0 or the interpolation across it.
	k, _ := slices.BinarySearch(offs, 0)
	ref := levs[k]
	if offs[k] != 0 {
		w := (0 - offs[k-1]) / (offs[k] - offs[k-1])
		ref = levs[k-1] + w*(levs[k]-levs[k-1])
	}
	var s section
	s.ref = ref
	for side := range 2 {
		bd.ga = append(bd.ga[:0], 0)
		bd.gg = append(bd.gg[:0], 0)
		if side == 0 {
			for j := len(offs) - 1; j >= 0; j-- {
				if offs[j] < 0 {
					bd.ga = append(bd.ga, -offs[j])
					bd.gg = append(bd.gg, levs[j]-ref)
				}
			}
		} else {
			for j, o := range offs {
				if o > 0 {
					bd.ga = append(bd.ga, o)
					bd.gg = append(bd.gg, levs[j]-ref)
				}
			}
		}
		s.side[side] = bd.half()
	}
	return s
}

// groundAt returns the ground of the side in bd.ga, bd.gg at distance a,
// level beyond the last point.
func (bd *builder) groundAt(a float64) float64 { return polyAt(bd.ga, bd.gg, a) }

// half prepares the side held in bd.ga, bd.gg.
func (bd *builder) half() half {
	x := bd.x
	var h half
	h.width = bd.ga[len(bd.ga)-1]

	// Inner nodes: the template polyline (0, 0), (x1, 0), (x2, H), (x3, H)
	// merged with the ground points inside it; a vertical face gives two
	// nodes at one distance.
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
	if len(bd.na)-1 <= bd.tmax {
		bd.table(&h)
	} else {
		h.nu = bd.take(len(bd.nu))
		copy(h.nu, bd.nu)
		h.nw = bd.take(len(bd.na) - 1)
		for j := range h.nw {
			h.nw[j] = bd.na[j+1] - bd.na[j]
		}
	}

	// Outer nodes: the bank edge, then the ground points beyond it.
	no := 1
	for _, a := range bd.ga {
		if a > x.x3 {
			no++
		}
	}
	h.a, h.g, h.gi = bd.take(no), bd.take(no), bd.take(no)
	h.a[0], h.g[0] = x.x3, bd.groundAt(x.x3)
	j := 1
	for i, a := range bd.ga {
		if a > x.x3 {
			h.a[j], h.g[j] = a, bd.gg[i]
			h.gi[j] = h.gi[j-1] + (a-h.a[j-1])*(h.g[j-1]+h.g[j])/2
			j++
		}
	}
	h.top0 = h.g[0] - x.h
	h.cut = bd.ramp(&h, 1, x.zc)
	h.fill = bd.ramp(&h, -1, x.zo)
	return h
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
// C is piecewise quadratic in β with knots at the node values. On each
// interval between knots a segment lies wholly above β (adding its mean
// height above the knot and slope −w), wholly below (nothing) or across it
// (adding w·(hi − β)²/(2·(hi − lo))). A segment whose rise is below 1e-300
// of its width counts as level at its lower end (an error below 1e-300·w²).
func (bd *builder) table(h *half) {
	na, nu := bd.na, bd.nu
	bd.kn = append(bd.kn[:0], nu...)
	slices.Sort(bd.kn)
	bd.kn = slices.Compact(bd.kn)
	r := len(bd.kn)
	h.knots = bd.take(r)
	copy(h.knots, bd.kn)
	h.c0, h.c1, h.c2 = bd.take(r), bd.take(r), bd.take(r)
	for k := 0; k+1 < r; k++ {
		vk, vn := h.knots[k], h.knots[k+1]
		var c0, c1, c2 float64
		for j := 1; j < len(nu); j++ {
			w := na[j] - na[j-1]
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
		h.c0[k], h.c1[k], h.c2[k] = c0, c1, c2
	}
}

// average returns the mid-section ground of two validated cross-sections:
// both resampled at the union of their offsets (level beyond their ends)
// and averaged.
func (bd *builder) average(o1, l1, o2, l2 []float64) (offs, levs []float64) {
	bd.ao = append(append(bd.ao[:0], o1...), o2...)
	slices.Sort(bd.ao)
	bd.ao = slices.Compact(bd.ao)
	bd.lo = bd.lo[:0]
	for _, v := range bd.ao {
		bd.lo = append(bd.lo, (polyAt(o1, l1, v)+polyAt(o2, l2, v))/2)
	}
	return bd.ao, bd.lo
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
