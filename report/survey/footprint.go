package survey

import (
	"math"

	"canalstep/report/layers"
)

// Footprint is the land the canal takes: the area between the left and
// right catch lines (the polyline through the catch points of the stations,
// in order), closed across the first and the last station.
type Footprint struct {
	// Ring is the closed exterior ring in the work CRS, counterclockwise
	// (east X, north Y): along the right catch line downstream, back up
	// the left one; nil when fewer than two stations have both catch
	// points.
	Ring []layers.Coord
	// Area is the area enclosed (m²).
	Area float64
	// Stations is the number of stations whose catch points the ring
	// runs through; Beyond those of them whose catch point lies beyond the
	// sampled cross-section (placed on the ground taken level there).
	Stations, Beyond int
}

// NewFootprint builds the plan's footprint. A station without a finite
// catch point on either side is left out of both lines. Where a catch line
// crosses itself (the inside of a sharp angle point, where neighbouring
// cross-sections overlap) the loop is cut out at the crossing, so the ring
// stays simple along each side.
func NewFootprint(in *Input) (Footprint, error) {
	if err := in.check(); err != nil {
		return Footprint{}, err
	}
	u := in.unit()
	var left, right []layers.Coord
	var chain []float64
	var f Footprint
	reach := 0.0 // largest catch offset, m
	for i := range in.Result.Stations {
		s := &in.Result.Stations[i]
		l, r := s.CatchLeft, s.CatchRight
		if !finite(l.Offset) || !finite(r.Offset) {
			continue
		}
		lx, ly := s.CrossPoint(l.Offset, u)
		rx, ry := s.CrossPoint(r.Offset, u)
		left = append(left, layers.Coord{lx, ly})
		right = append(right, layers.Coord{rx, ry})
		chain = append(chain, s.Chainage)
		reach = math.Max(reach, math.Max(math.Abs(l.Offset), math.Abs(r.Offset)))
		f.Stations++
		if !l.Found || !r.Found {
			f.Beyond++
		}
	}
	if f.Stations < 2 {
		return Footprint{Stations: f.Stations, Beyond: f.Beyond}, nil
	}
	// A loop spans at most about twice the offset along the line.
	window := 2*reach + 1
	left, right = untangle(left, chain, window), untangle(right, chain, window)
	ring := make([]layers.Coord, 0, len(left)+len(right)+1)
	ring = append(ring, right...)
	for k := len(left) - 1; k >= 0; k-- {
		ring = append(ring, left[k])
	}
	ring = append(ring, right[0])
	f.Ring = ring
	f.Area = layers.SignedArea(ring) * u * u
	return f, nil
}

// untangle cuts the loops out of the polyline pts, whose point k stands at
// chainage chain[k] (m): where segment i crosses a later segment j (not its
// neighbour) no more than window metres of chainage downstream, the line
// goes from segment i's start to the crossing and on along segment j, the
// farthest such j taken. It returns pts itself when nothing crosses.
func untangle(pts []layers.Coord, chain []float64, window float64) []layers.Coord {
	n := len(pts)
	if n < 4 {
		return pts
	}
	var out []layers.Coord
	cur := pts[0]
	changed := false
	for i := 0; i < n-1; {
		best, at := -1, layers.Coord{}
		for j := i + 2; j < n-1 && chain[j]-chain[i+1] <= window; j++ {
			if p, ok := crossing(cur, pts[i+1], pts[j], pts[j+1]); ok {
				best, at = j, p
			}
		}
		if out == nil {
			out = append(make([]layers.Coord, 0, n), pts[0])
		}
		if best < 0 {
			cur = pts[i+1]
			out = append(out, cur)
			i++
			continue
		}
		changed = true
		cur = at
		out = append(out, cur)
		i = best
	}
	if !changed {
		return pts
	}
	return out
}

// crossing returns the point where segments a–b and c–d cross in their
// interiors, by the parametric line intersection (exact analytic case,
// from memory): a + t·(b − a) = c + s·(d − c) with 0 < t, s < 1. Touching
// at an end point and collinear overlap do not count.
func crossing(a, b, c, d layers.Coord) (layers.Coord, bool) {
	ex, ey := b[0]-a[0], b[1]-a[1]
	fx, fy := d[0]-c[0], d[1]-c[1]
	den := ex*fy - ey*fx
	if den == 0 {
		return layers.Coord{}, false
	}
	gx, gy := c[0]-a[0], c[1]-a[1]
	t := (gx*fy - gy*fx) / den
	s := (gx*ey - gy*ex) / den
	if !(t > 0 && t < 1 && s > 0 && s < 1) {
		return layers.Coord{}, false
	}
	return layers.Coord{a[0] + t*ex, a[1] + t*ey}, true
}
