package layers

// SignedArea returns the area enclosed by ring by the shoelace formula,
// positive when the ring runs counterclockwise with X to the east and Y to
// the north, in the square of the coordinates' unit. The ring may be closed
// or not. Positions are taken relative to the first one, so that large
// projected coordinates (10^6 m) do not cancel the small area terms.
//
//	A = ½ Σ (x_i·y_{i+1} − x_{i+1}·y_i)
//
// (the shoelace formula; exact analytic case for polygons, from memory).
func SignedArea(ring []Coord) float64 {
	if len(ring) < 3 {
		return 0
	}
	x0, y0 := ring[0][0], ring[0][1]
	var sum float64
	for i := 1; i+1 < len(ring); i++ {
		xa, ya := ring[i][0]-x0, ring[i][1]-y0
		xb, yb := ring[i+1][0]-x0, ring[i+1][1]-y0
		sum += xa*yb - xb*ya
	}
	return sum / 2
}

// Oriented returns the rings of a polygon with the exterior ring (the first)
// counterclockwise and the holes clockwise, the right-hand rule of RFC 7946
// §3.1.6 (for X east, Y north; a conformal projection keeps the sense, so
// the same order serves projected and lon/lat coordinates). Rings already
// in that sense are returned as they are; the others are reversed copies.
// The input is never modified.
func Oriented(rings [][]Coord) [][]Coord {
	out := rings
	copied := false
	for i, r := range rings {
		a := SignedArea(r)
		wantCCW := i == 0
		if (a > 0) == wantCCW || a == 0 {
			continue
		}
		if !copied {
			out = append([][]Coord(nil), rings...)
			copied = true
		}
		rev := make([]Coord, len(r))
		for j := range r {
			rev[j] = r[len(r)-1-j]
		}
		out[i] = rev
	}
	return out
}
