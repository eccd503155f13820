package earthwork

import (
	"math"
	"testing"
)

// planarSection is the closed-form section of template tp on planar ground
// z = g0 + k·x across the line (x the offset, m, positive right), with the
// bed at bed, derived here from the geometry alone (the slope-stake method
// of route surveying: from memory, Wolf & Ghilani, Elementary Surveying,
// chapters on route surveying and earthwork cross-sections; reference sheet
// §6.1 for the two-level case):
//
//   - The catch point on each side is the intersection of the outer slope
//     from the bank's outer edge (x3, top) with the ground line. Along a side
//     the ground rises m = ±k per metre outward; the cut slope z_c meets it
//     at x3 + z_c·(G3 − top)/(1 − m·z_c), the fill slope z_o at
//     x3 + z_o·(top − G3)/(1 + m·z_o), G3 the ground at x3 (for the
//     two-level section this is (b/2 + s·c)·N/(N ∓ s)).
//   - Between the catch points the design is the polyline through the slope
//     stakes, the bank edges, the tops of the inner slopes and the bed
//     corners, and the ground is the straight chord between the stakes.
//     The design is split where it crosses the chord; each piece and the
//     chord bound one polygon, whose signed area by the shoelace formula is
//     cut (design below the ground) or fill (above).
//
// ok is false when an outer slope never meets the ground (the ground rises
// faster than the cut slope or falls faster than the fill slope).
func planarSection(tp Template, g0, k, bed float64) (cut, fill, left, right float64, ok bool) {
	x1 := tp.BedWidth / 2
	x2 := x1 + tp.SideSlope*tp.BankHeight
	x3 := x2 + tp.BankTopWidth
	top := bed + tp.BankHeight
	ground := func(x float64) float64 { return g0 + k*x }
	stake := func(side float64) (float64, bool) {
		m := side * k
		g3 := ground(side * x3)
		switch {
		case g3 > top:
			den := 1 - m*tp.CutSlope
			return x3 + tp.CutSlope*(g3-top)/den, den > 0
		case g3 < top:
			den := 1 + m*tp.OuterSlope
			return x3 + tp.OuterSlope*(top-g3)/den, den > 0
		}
		return x3, true
	}
	aL, okL := stake(-1)
	aR, okR := stake(1)
	if !okL || !okR {
		return 0, 0, 0, 0, false
	}
	type pt struct{ x, z float64 }
	design := []pt{{-aL, ground(-aL)}, {-x3, top}, {-x2, top}, {-x1, bed}, {x1, bed}, {x2, top}, {x3, top}, {aR, ground(aR)}}
	// Height of the ground above each design vertex.
	h := func(p pt) float64 { return ground(p.x) - p.z }
	var run []pt
	close := func() {
		// Shoelace over the run (left to right along the design) and back
		// along the chord from its last point to its first.
		var s float64
		for i := range run {
			p, q := run[i], run[(i+1)%len(run)]
			s += p.x*q.z - q.x*p.z
		}
		if s > 0 {
			cut += s / 2
		} else {
			fill -= s / 2
		}
		run = run[:0]
	}
	run = append(run, design[0])
	for i := 1; i < len(design); i++ {
		p, q := design[i-1], design[i]
		hp, hq := h(p), h(q)
		if hp*hq < 0 { // the design crosses the chord inside this edge
			f := hp / (hp - hq)
			c := pt{p.x + f*(q.x-p.x), p.z + f*(q.z-p.z)}
			run = append(run, c)
			close()
			run = append(run, c)
		}
		run = append(run, q)
		if hq == 0 && i < len(design)-1 { // the design touches the chord at a vertex
			close()
			run = append(run, q)
		}
	}
	close()
	return cut, fill, -aL, aR, true
}

// offsetsEvery returns offsets from lo to hi (m) every step metres, with 0
// added when missing when zero is true.
func offsetsEvery(lo, hi, step float64, zero bool) []float64 {
	var o []float64
	for x := lo; x <= hi+1e-9; x += step {
		o = append(o, x)
	}
	if zero {
		for i := range o {
			if o[i] == 0 {
				return o
			}
			if o[i] > 0 {
				o = append(o[:i], append([]float64{0}, o[i:]...)...)
				return o
			}
		}
	}
	return o
}

// planeLevels returns g0 + k·x at the offsets.
func planeLevels(offs []float64, g0, k float64) []float64 {
	l := make([]float64, len(offs))
	for i, x := range offs {
		l[i] = g0 + k*x
	}
	return l
}

// near reports whether a and b agree within tol·(1 + |b|).
func near(a, b, tol float64) bool { return math.Abs(a-b) <= tol*(1+math.Abs(b)) }

// mustCross builds the sections of Cross with tabulation limit tmax or
// stops the test.
func mustCross(tb testing.TB, tp Template, offsets, levels [][]float64, tmax int) *crossSections {
	tb.Helper()
	s, err := newCross(tp, offsets, levels, tmax)
	if err != nil {
		tb.Fatal(err)
	}
	return s
}

// tabulated reports whether Cross tabulates the inner areas of side k of
// station i (or walks them segment by segment).
func tabulated(x *crossSections, i, k int) bool {
	bd := x.take()
	defer x.give(bd)
	return bd.station(i, forRun).side[k].knots != nil
}
