package alignment

import (
	"math"
	"testing"

	"github.com/paulmach/orb"
)

// Cross-section directions are exact plane geometry: perpendicular to a
// straight, and the bisector of the two normals at a vertex (an exact
// analytic case; the practice of setting cross-sections on the bisector at
// an angle point is common practice, no source).
func TestCrossAzimuth(t *testing.T) {
	// East 100 m, then north 100 m: a left turn of 90°.
	line := orb.LineString{{0, 0}, {100, 0}, {100, 100}}
	st, err := StationLine(line, 1, 50, 0)
	if err != nil {
		t.Fatal(err)
	}
	const tol = 1e-9 // m; exact arithmetic up to rounding
	for _, tc := range []struct {
		chainage, offset float64
		wantX, wantY     float64
	}{
		{0, 10, 0, -10},                  // right of eastward travel is south
		{50, -5, 50, 5},                  // left is north
		{100, 10 * math.Sqrt2, 110, -10}, // the outer bisector at the corner
		{150, 10, 110, 50},               // right of northward travel is east
		{200, 10, 110, 100},              // the end takes the last segment's normal
		{100, -10 * math.Sqrt2, 90, 10},  // the inner side of the corner
	} {
		var s *Station
		for i := range st {
			if st[i].Chainage == tc.chainage {
				s = &st[i]
			}
		}
		if s == nil {
			t.Fatalf("no station at chainage %g", tc.chainage)
		}
		x, y := s.CrossPoint(tc.offset, 1)
		if math.Abs(x-tc.wantX) > tol || math.Abs(y-tc.wantY) > tol {
			t.Errorf("chainage %g offset %g: got (%.9f, %.9f), want (%g, %g) ± %g m", tc.chainage, tc.offset, x, y, tc.wantX, tc.wantY, tol)
		}
	}
}
