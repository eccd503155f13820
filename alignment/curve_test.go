package alignment

import (
	"errors"
	"fmt"
	"math"
	"strings"
	"testing"

	"github.com/paulmach/orb"
)

// The circular-curve relations checked here are those of any route
// surveying text: T = R·tan(Δ/2), L = R·Δ (Δ in radians), long chord
// C = 2R·sin(Δ/2), external E = R·(sec(Δ/2) − 1), mid-ordinate
// M = R·(1 − cos(Δ/2)) (Ghilani and Wolf, Elementary Surveying: An
// Introduction to Geomatics, 13th ed., 2012, ch. 24 "Horizontal Curves";
// from memory). The tests compute them in that textbook form, which the
// code does not use for E and M (it uses E = T·tan(Δ/4) and M = 2R·sin²(Δ/4),
// exact identities that do not cancel at small Δ), and check them again
// against the geometry of the fitted points.

// bend returns a two-leg line turning by deflection (radians, + right) at
// pi: 1000 m in from azimuth az, 1000 m out.
func bend(pi orb.Point, az, deflection float64) orb.LineString {
	return orb.LineString{offset(pi, az+math.Pi, 1000), pi, offset(pi, az+deflection, 1000)}
}

func dist(a, b orb.Point) float64 { return math.Hypot(b[0]-a[0], b[1]-a[1]) }

// relClose reports |got − want| ≤ tol·max(|want|, 1).
func relClose(got, want, tol float64) bool {
	return math.Abs(got-want) <= tol*max(math.Abs(want), 1)
}

func TestCurveElements(t *testing.T) {
	// Deflections and radii span the range a canal uses (common practice,
	// no source): tight bends of 30 m to sweeping curves of 2 km.
	pi := orb.Point{512345.678, 4012345.678}
	for _, tc := range []struct {
		deg, radius, az float64
	}{
		{90, 200, math.Pi / 2},
		{-90, 200, 0},
		{30, 500, 1.1},
		{-12.5, 2000, -2.9},
		{120, 150, 3.0},
		{-150, 30, -0.3},
		{1.2, 800, 0.7},
	} {
		t.Run(fmt.Sprintf("Δ=%g° R=%g", tc.deg, tc.radius), func(t *testing.T) {
			d := tc.deg * math.Pi / 180
			r, err := FitCurves(bend(pi, tc.az, d), 1, tc.radius)
			if err != nil {
				t.Fatal(err)
			}
			if len(r.Curves) != 1 {
				t.Fatalf("%d curves, want 1", len(r.Curves))
			}
			c := r.Curves[0]
			R, h := tc.radius, math.Abs(d)/2
			// Rounding only: the figures are a few float64 operations on
			// values of 1e3 m, and coordinates of 4e6 m carry 1e-9 m
			// (2^-52 of 4e6), so 1e-9 relative with margin.
			const tol = 1e-9
			for _, chk := range []struct {
				what      string
				got, want float64
			}{
				{"tangent T = R tan(Δ/2)", c.Tangent, R * math.Tan(h)},
				{"length L = RΔ", c.Length, R * math.Abs(d)},
				{"chord C = 2R sin(Δ/2)", c.Chord, 2 * R * math.Sin(h)},
				{"external E = R(sec(Δ/2) − 1)", c.External, R * (1/math.Cos(h) - 1)},
				{"mid-ordinate M = R(1 − cos(Δ/2))", c.MidOrdinate, R * (1 - math.Cos(h))},
				{"deflection (°)", c.DeflectionDegrees(), tc.deg},
				{"|PI − PC| = T", dist(c.PI, c.PC), c.Tangent},
				{"|PI − PT| = T", dist(c.PI, c.PT), c.Tangent},
				{"|PC − PT| = C", dist(c.PC, c.PT), c.Chord},
				{"|centre − PC| = R", dist(c.Centre, c.PC), R},
				{"|centre − PT| = R", dist(c.Centre, c.PT), R},
				{"|centre − PI| = R + E", dist(c.Centre, c.PI), R + c.External},
				{"PT − PC along the route = L", c.PTDistance - c.PCDistance, c.Length},
				{"PC at 1000 − T", c.PCDistance, 1000 - c.Tangent},
				{"route length = 2000 − 2T + L", r.Length, 2000 - 2*c.Tangent + c.Length},
			} {
				if !relClose(chk.got, chk.want, tol) {
					t.Errorf("%s: got %.12g, want %.12g", chk.what, chk.got, chk.want)
				}
			}
			if want := map[bool]string{true: "right", false: "left"}[d > 0]; c.Side() != want {
				t.Errorf("side %s, want %s", c.Side(), want)
			}
			// The arc's middle lies E from the PI and M from the chord's
			// middle (exact geometry of the circle).
			arc := r.Elements[1]
			mid := arc.station(arc.From+c.Length/2, 1)
			m := orb.Point{(c.PC[0] + c.PT[0]) / 2, (c.PC[1] + c.PT[1]) / 2}
			if got := dist(orb.Point{mid.WorkX, mid.WorkY}, c.PI); !relClose(got, c.External, tol) {
				t.Errorf("PI to the arc's middle %.12g, want E = %.12g", got, c.External)
			}
			if got := dist(orb.Point{mid.WorkX, mid.WorkY}, m); !relClose(got, c.MidOrdinate, tol) {
				t.Errorf("chord middle to the arc's middle %.12g, want M = %.12g", got, c.MidOrdinate)
			}
			// The tangent at the arc's middle has turned by Δ/2.
			if got := math.Remainder(mid.Azimuth-(tc.az+d/2), 2*math.Pi); math.Abs(got) > 1e-12 {
				t.Errorf("azimuth at the arc's middle off by %g rad", got)
			}
		})
	}
}

// A 90° left bend: 1000 m east, then 1000 m north, radius 200 m. Exact
// case: T = 200 m, so PC (800, 0), PT (1000, 200), centre (800, 200); the
// route is 2000 − 2·200 + π·200/2 m long.
func TestNinetyDegreeBend(t *testing.T) {
	for _, tc := range []struct {
		name       string
		unit, size float64 // CRS unit (m) and the line's scale in it
	}{
		{"metres", 1, 1},
		// The same bend drawn in international feet: 1000 ft legs, R =
		// 200 ft = 60.96 m (1 ft = 0.3048 m exactly).
		{"feet", FootM, 1},
	} {
		t.Run(tc.name, func(t *testing.T) {
			u := tc.unit
			o := orb.Point{300000, 5000000}
			at := func(x, y float64) orb.Point { return orb.Point{o[0] + x, o[1] + y} }
			line := orb.LineString{at(0, 0), at(1000, 0), at(1000, 1000)}
			R := 200 * u
			r, err := FitCurves(line, u, R)
			if err != nil {
				t.Fatal(err)
			}
			c := r.Curves[0]
			// Coordinates of 5e6 units carry about 1e-9 of rounding.
			const tol = 1e-8
			for _, p := range []struct {
				what      string
				got, want orb.Point
			}{{"PC", c.PC, at(800, 0)}, {"PT", c.PT, at(1000, 200)}, {"centre", c.Centre, at(800, 200)}} {
				if dist(p.got, p.want) > tol {
					t.Errorf("%s at %v, want %v", p.what, p.got, p.want)
				}
			}
			if c.Deflection != -math.Pi/2 || c.Side() != "left" {
				t.Errorf("deflection %v (%s), want −π/2 (left)", c.Deflection, c.Side())
			}
			wantLen := (2000 - 400 + math.Pi*200/2) * u
			if !relClose(r.Length, wantLen, 1e-12) {
				t.Errorf("route length %.12g m, want %.12g m", r.Length, wantLen)
			}
			start := 1000.0
			st, err := StationRoute(r, 100*u, start)
			if err != nil {
				t.Fatal(err)
			}
			// Stations: 0 (start), 100 ... 700, 800 (PC), 900 ... 1100 (on
			// the arc), 800 + 100π (PT), 1200 ... 1900, 1600 + 100π (end),
			// in units.
			var want []float64
			for k := 0.0; k <= 19; k++ {
				want = append(want, k*100)
				if k == 11 {
					want = append(want, 800+100*math.Pi)
				}
			}
			want = append(want, 1600+100*math.Pi)
			if len(st) != len(want) {
				t.Fatalf("%d stations, want %d", len(st), len(want))
			}
			for i, s := range st {
				if !relClose(s.Chainage, start+want[i]*u, 1e-12) {
					t.Errorf("station %d at chainage %.9f, want %.9f", i, s.Chainage, start+want[i]*u)
				}
			}
			if last := st[len(st)-1]; last.Chainage != start+r.Length || last.Mark != MarkEnd {
				t.Errorf("last station %+v, want the end at start + length %v", last, start+r.Length)
			}
			marks := map[int]Mark{0: MarkStart, 8: MarkPC, 12: MarkPT, len(st) - 1: MarkEnd}
			for i, s := range st {
				if s.Mark != marks[i] || s.Vertex != (marks[i] != 0) {
					t.Errorf("station %d mark %q vertex %v, want %q", i, s.Mark, s.Vertex, marks[i])
				}
				onArc := i >= 8 && i <= 12
				if (s.Curve == 1) != onArc {
					t.Errorf("station %d curve %d, want on the arc %v", i, s.Curve, onArc)
				}
			}
			// Station 9 is 100 units into the arc: 0.5 rad turned left
			// from the east-bound tangent, radial cross-section pointing
			// right of travel, away from the centre of a left curve.
			s := st[9]
			if got := dist(orb.Point{s.WorkX, s.WorkY}, c.Centre); !relClose(got, 200, 1e-9) {
				t.Errorf("station on the arc %.12g units from the centre, want 200", got)
			}
			if !relClose(s.Azimuth, math.Pi/2-0.5, 1e-12) {
				t.Errorf("azimuth on the arc %v, want π/2 − 0.5", s.Azimuth)
			}
			x, y := s.CrossPoint(10*u, u)
			if got := dist(orb.Point{x, y}, c.Centre); !relClose(got, 210, 1e-9) {
				t.Errorf("10 units right of the arc lies %.12g from the centre, want 210 (radial, outwards)", got)
			}
			// At the PC and PT the cross-section is square to the straight.
			if !relClose(st[8].CrossAzimuth, math.Pi, 1e-12) || !relClose(math.Remainder(st[12].CrossAzimuth, 2*math.Pi), math.Pi/2, 1e-12) {
				t.Errorf("cross azimuths at PC %v and PT %v, want π and π/2", st[8].CrossAzimuth, st[12].CrossAzimuth)
			}
		})
	}
}

// Stations on arcs lie R from the centre, and the route is shorter than the
// polyline by Σ(2T − L): on a zigzag whose every vertex carries a curve.
func TestStationsOnArcs(t *testing.T) {
	line := zigzag(30, 250)
	const R = 120.0
	r, err := FitCurves(line, 1, R)
	if err != nil {
		t.Fatal(err)
	}
	if len(r.Curves) != 29 {
		t.Fatalf("%d curves, want 29 (every interior vertex)", len(r.Curves))
	}
	saved := 0.0
	for _, c := range r.Curves {
		saved += 2*c.Tangent - c.Length
	}
	// Summation of 60 terms of 1e2 m: 1e-12 relative (common practice).
	if got, want := r.Length, Length(line, 1)-saved; !relClose(got, want, 1e-12) {
		t.Errorf("route %.12g m, want the polyline less Σ(2T − L) = %.12g m", got, want)
	}
	for _, spacing := range []float64{1, 7.5, 20} {
		st, err := StationRoute(r, spacing, 0)
		if err != nil {
			t.Fatal(err)
		}
		onArc := 0
		for i, s := range st {
			if i > 0 && !(s.Chainage > st[i-1].Chainage) {
				t.Fatalf("chainage not increasing at %d", i)
			}
			if s.Curve == 0 {
				continue
			}
			onArc++
			c := r.Curves[s.Curve-1]
			// Rounding only: 1e-9 relative, as the task asks.
			if d := dist(orb.Point{s.WorkX, s.WorkY}, c.Centre); !relClose(d, R, 1e-9) {
				t.Fatalf("station %d (chainage %.3f, curve %d) %.12g m from the centre, want %g", i, s.Chainage, s.Curve, d, R)
			}
			// The cross-section is radial: the point 1 m along it is 1 m
			// nearer to or farther from the centre.
			x, y := s.CrossPoint(1, 1)
			if d := math.Abs(dist(orb.Point{x, y}, c.Centre) - R); !relClose(d, 1, 1e-9) {
				t.Fatalf("station %d: cross-section not radial (moves %.12g m off the circle per metre)", i, d)
			}
			if s.Chainage < c.PCDistance || s.Chainage > c.PTDistance {
				t.Fatalf("station %d at %.6f outside its curve's %.6f to %.6f", i, s.Chainage, c.PCDistance, c.PTDistance)
			}
		}
		if onArc == 0 {
			t.Fatal("no station on an arc")
		}
		if st[len(st)-1].Chainage != r.Length {
			t.Errorf("last chainage %v, want the route length %v", st[len(st)-1].Chainage, r.Length)
		}
	}
}

// Tangents that exactly fill the segment between two curves meet: the PT
// of one is the PC of the next, with no straight between.
func TestCurvesMeet(t *testing.T) {
	o := orb.Point{400000, 3000000}
	at := func(x, y float64) orb.Point { return orb.Point{o[0] + x, o[1] + y} }
	for _, tc := range []struct {
		name       string
		line       orb.LineString
		sameCentre bool
	}{
		// East, north 400 m, east: a reverse curve (left, then right).
		{"reverse", orb.LineString{at(0, 0), at(1000, 0), at(1000, 400), at(2000, 400)}, false},
		// East, north 400 m, west: two left turns make one semicircle.
		{"compound into a semicircle", orb.LineString{at(0, 0), at(1000, 0), at(1000, 400), at(0, 400)}, true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			r, err := FitCurves(tc.line, 1, 200)
			if err != nil {
				t.Fatal(err)
			}
			if len(r.Curves) != 2 || len(r.Elements) != 4 {
				t.Fatalf("%d curves and %d elements, want 2 and 4 (straight, arc, arc, straight)", len(r.Curves), len(r.Elements))
			}
			if m := r.Elements[2].Mark; m != MarkPT|MarkPC || m.String() != "PT/PC" {
				t.Errorf("mark between the arcs %q, want PT/PC", m)
			}
			// Exact case: T = 200 m; route 2·800 + 2·100π m.
			if want := 1600 + 200*math.Pi; !relClose(r.Length, want, 1e-12) {
				t.Errorf("length %.12g, want %.12g", r.Length, want)
			}
			if got := dist(r.Curves[0].Centre, r.Curves[1].Centre) < 1e-8; got != tc.sameCentre {
				t.Errorf("centres %v and %v: same %v, want %v", r.Curves[0].Centre, r.Curves[1].Centre, got, tc.sameCentre)
			}
			st, err := StationRoute(r, 50, 0)
			if err != nil {
				t.Fatal(err)
			}
			n := 0
			for _, s := range st {
				if s.Mark == MarkPT|MarkPC {
					n++
					if s.Curve != 2 || dist(orb.Point{s.WorkX, s.WorkY}, at(1000, 200)) > 1e-8 {
						t.Errorf("PT/PC station %+v, want curve 2 at (1000, 200)", s)
					}
				}
			}
			if n != 1 {
				t.Errorf("%d PT/PC stations, want 1", n)
			}
		})
	}
}

// A curve whose arc would pass within 1 mm of its vertex is left as an
// angle point (minExternal); E = R·tan(Δ/2)·tan(Δ/4), so at R = 300 m the
// limit is about 0.30° (values computed from that formula).
func TestCurveSkipped(t *testing.T) {
	for _, tc := range []struct {
		deg    float64
		curves int
	}{
		{0, 0},    // collinear
		{0.25, 0}, // E = 0.71 mm
		{0.35, 1}, // E = 1.40 mm
		{-0.35, 1},
	} {
		r, err := FitCurves(bend(orb.Point{0, 0}, 0.3, tc.deg*math.Pi/180), 1, 300)
		if err != nil {
			t.Fatal(err)
		}
		if len(r.Curves) != tc.curves {
			t.Errorf("Δ = %g°: %d curves, want %d", tc.deg, len(r.Curves), tc.curves)
		}
		if tc.curves == 0 && r.Elements[1].Mark != MarkAngle {
			t.Errorf("Δ = %g°: vertex mark %q, want an angle point", tc.deg, r.Elements[1].Mark)
		}
	}
}

func TestFitCurvesRefusals(t *testing.T) {
	o := orb.Point{0, 0}
	at := func(x, y float64) orb.Point { return orb.Point{o[0] + x, o[1] + y} }
	tests := []struct {
		name   string
		line   orb.LineString
		radius float64
		want   error
		msg    string // the whole message, when given
		check  func(*testing.T, *CurveError)
	}{
		{
			// T = 200 m at both 90° vertices (exact); 300 m between them;
			// R ≤ 300/(tan 45° + tan 45°) = 150 m fits.
			name: "tangents of two curves overlap",
			line: orb.LineString{at(0, 0), at(1000, 0), at(1000, 300), at(2000, 300)}, radius: 200, want: ErrCurveFit,
			msg: "vertex 2: a curve of radius 200.00 m turning 90.00° left needs tangents of 200.00 m, and the curve at vertex 3 (90.00° right) needs 200.00 m: 400.00 m together, more than the 300.00 m between the two vertices; a radius of at most 150.00 m fits there, at most 150.00 m at every vertex",
			check: func(t *testing.T, e *CurveError) {
				if e.Vertex != 2 || e.Other != 3 || e.Segment != 300 || e.MaxHere != 150 || e.MaxAll != 150 {
					t.Errorf("%+v", e)
				}
			},
		},
		{
			name: "tangent longer than the first segment",
			line: orb.LineString{at(0, 0), at(100, 0), at(100, 1000)}, radius: 200, want: ErrCurveFit,
			msg: "vertex 2: a curve of radius 200.00 m turning 90.00° left needs tangents of 200.00 m, more than the 100.00 m to the start of the line (vertex 1); a radius of at most 100.00 m fits there, at most 100.00 m at every vertex",
		},
		{
			name: "tangent longer than the last segment",
			line: orb.LineString{at(0, 0), at(1000, 0), at(1000, -150)}, radius: 200, want: ErrCurveFit,
			msg: "vertex 2: a curve of radius 200.00 m turning 90.00° right needs tangents of 200.00 m, more than the 150.00 m to the end of the line (vertex 3); a radius of at most 150.00 m fits there, at most 150.00 m at every vertex",
		},
		{
			// Vertex 2 turns 0.1° (E = 0.08 mm at R = 200 m: an angle
			// point); vertex 3 needs 200 m of the 50 m to it.
			name:   "tangent reaches an angle point",
			line:   orb.LineString{at(0, 0), at(1000, 0), offset(at(1000, 0), math.Pi/2+0.1*math.Pi/180, 50), at(1050, 1000)},
			radius: 200, want: ErrCurveFit,
			check: func(t *testing.T, e *CurveError) {
				if e.Vertex != 3 || e.Other != 2 || e.OtherTangent != 0 || e.OtherEnd != "" ||
					!strings.Contains(e.Error(), "to vertex 2 (an angle point, no curve)") {
					t.Errorf("%+v: %v", e, e)
				}
			},
		},
		{
			// 0.5 m between two 90° vertices: R ≤ 0.25 m would fit, below
			// MinRadius.
			name: "no radius of 1 m fits",
			line: orb.LineString{at(0, 0), at(100, 0), at(100, 0.5), at(200, 0.5)}, radius: 5, want: ErrCurveFit,
			check: func(t *testing.T, e *CurveError) {
				if e.MaxHere != 0.25 || !strings.HasSuffix(e.Error(), "; not even a 1 m radius fits there: move or remove a vertex") {
					t.Errorf("%+v: %v", e, e)
				}
			},
		},
		{
			name: "a repeated point does not shift the numbering",
			line: orb.LineString{at(0, 0), at(0, 0), at(100, 0), at(100, 1000)}, radius: 200, want: ErrCurveFit,
			check: func(t *testing.T, e *CurveError) {
				if e.Vertex != 3 || e.Other != 1 || !strings.HasPrefix(e.Error(), "vertex 3:") {
					t.Errorf("%+v: %v", e, e)
				}
			},
		},
		{
			name: "line turns back on itself",
			line: orb.LineString{at(0, 0), at(100, 0), at(50, 0)}, radius: 10, want: ErrCurveFit,
			msg: "vertex 2: the line turns back on itself (deflection 180.00°), so no curve can join its tangents; remove the spike or split the alignment there",
		},
		{name: "radius negative", line: lShape, radius: -5, want: ErrRadius},
		{name: "radius NaN", line: lShape, radius: math.NaN(), want: ErrRadius},
		{name: "radius +Inf", line: lShape, radius: math.Inf(1), want: ErrRadius},
		{name: "radius below 1 m", line: lShape, radius: 0.99, want: ErrRadius},
		{name: "coordinates beyond 1e9", line: orb.LineString{{0, 0}, {2e9, 0}, {2e9, 1}}, radius: 5, want: ErrGeometry},
		{
			// T = R·tan(89.99999995°) overflows float64 to +Inf: refused
			// with the figures, no panic.
			name: "tangent overflows", line: bend(orb.Point{0, 0}, 0, math.Pi-1e-9), radius: 1e300, want: ErrCurveFit,
			check: func(t *testing.T, e *CurveError) {
				if !strings.Contains(e.Error(), "+Inf m") {
					t.Errorf("%+v: %v", e, e)
				}
			},
		},
		{name: "one point", line: orb.LineString{{1, 1}}, radius: 5, want: ErrTooFewPoints},
		{name: "NaN vertex", line: orb.LineString{{0, 0}, {math.NaN(), 1}}, radius: 5, want: ErrGeometry},
		{
			// A radius far beyond the line is refused with the figures
			// (T = R at 90°), no panic.
			name: "huge radius", line: lShape, radius: 1e308, want: ErrCurveFit,
			check: func(t *testing.T, e *CurveError) {
				if !strings.Contains(e.Error(), "needs tangents of 1e+308 m") || e.MaxAll != 300 {
					t.Errorf("%+v: %v", e, e)
				}
			},
		},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := FitCurves(tt.line, 1, tt.radius)
			if !errors.Is(err, tt.want) {
				t.Fatalf("error %v, want %v", err, tt.want)
			}
			if tt.msg != "" && err.Error() != tt.msg {
				t.Errorf("message\n%s\nwant\n%s", err, tt.msg)
			}
			if tt.check != nil {
				var e *CurveError
				if !errors.As(err, &e) {
					t.Fatalf("%v is not a *CurveError", err)
				}
				tt.check(t, e)
			}
		})
	}
}

// StationsWith names a refused vertex as it stands in the file and fills
// the curve table's At the same way.
func TestStationsWithCurves(t *testing.T) {
	as, err := Read([]byte(`{"type":"Feature","properties":{"name":"East Branch"},"geometry":{"type":"MultiLineString","coordinates":[
		[[500000,4000000],[501000,4000000]],[[501000,4000000],[501000,4000100],[502000,4000100]]]}}`))
	if err != nil {
		t.Fatal(err)
	}
	a := as[0]
	_, _, err = StationsWith(a, Frames{}, Options{Spacing: 20, CurveRadius: 100})
	want := `alignment "East Branch": vertex 2 of part 1: a curve of radius 100.00 m turning 90.00° left needs tangents of 100.00 m, and the curve at vertex 2 of part 2 (90.00° right) needs 100.00 m: 200.00 m together, more than the 100.00 m between the two vertices; a radius of at most 50.00 m fits there, at most 50.00 m at every vertex`
	if err == nil || err.Error() != want {
		t.Errorf("error\n%v\nwant\n%s", err, want)
	}
	st, r, err := StationsWith(a, Frames{}, Options{Spacing: 20, Start: 100, CurveRadius: 50})
	if err != nil {
		t.Fatal(err)
	}
	if len(r.Curves) != 2 || r.Curves[0].At != "vertex 2 of part 1" || r.Curves[1].At != "vertex 2 of part 2" {
		t.Fatalf("curves %+v", r.Curves)
	}
	// Exact case: two 90° curves of 50 m radius meeting on the 100 m leg:
	// 950 + 25π + 25π + 950 m.
	if last, want := st[len(st)-1].Chainage, 100+1900+50*math.Pi; !relClose(last, want, 1e-12) {
		t.Errorf("end chainage %.9f, want %.9f", last, want)
	}
	// Without a radius StationsWith is Stations.
	plain, r0, err := StationsWith(a, Frames{}, Options{Spacing: 20, Start: 100})
	old, err2 := Stations(a, Frames{}, 20, 100)
	if err != nil || err2 != nil || len(plain) != len(old) || len(r0.Curves) != 0 {
		t.Fatalf("StationsWith without radius: %v %v, %d vs %d stations", err, err2, len(plain), len(old))
	}
	for i := range plain {
		if plain[i] != old[i] {
			t.Fatalf("station %d: %+v vs %+v", i, plain[i], old[i])
		}
	}
	_, _, err = StationsWith(a, Frames{}, Options{Spacing: 20, CurveRadius: -1})
	if !errors.Is(err, ErrRadius) || !strings.HasPrefix(err.Error(), `alignment "East Branch": `) {
		t.Errorf("negative radius: %v", err)
	}
}

func TestLocate(t *testing.T) {
	// The 90° left bend of TestNinetyDegreeBend: PC (800, 0), centre
	// (800, 200), PT (1000, 200); exact cases.
	r, err := FitCurves(orb.LineString{{0, 0}, {1000, 0}, {1000, 1000}}, 1, 200)
	if err != nil {
		t.Fatal(err)
	}
	q := math.Pi * 200 / 4 // a quarter of the arc: 45° of 90°
	s2 := math.Sqrt2 / 2
	for _, tc := range []struct {
		x, y, along, off float64
		anySide          bool // straight on beyond an end: no side
	}{
		{500, 0, 500, 0, false},
		{500, -30, 500, 30, false},                        // south of an east-bound straight: right
		{300, 12.5, 300, -12.5, false},                    // north: left
		{800 + 150*s2, 200 - 150*s2, 800 + q, -50, false}, // inside the left curve: left
		{800 + 250*s2, 200 - 250*s2, 800 + q, 50, false},  // outside: right
		{1010, 600, 800 + 2*q + 400, 10, false},
		{-30, -40, 0, 50, false},            // before the start: the start point, 3-4-5
		{1000, 1100, 1600 + 2*q, 100, true}, // beyond the end: the end point
	} {
		along, off := r.Locate(tc.x, tc.y)
		if tc.anySide {
			off = math.Abs(off)
		}
		if math.Abs(along-tc.along) > 1e-9 || math.Abs(off-tc.off) > 1e-9 {
			t.Errorf("Locate(%g, %g) = %.9f, %.9f; want %.9f, %.9f", tc.x, tc.y, along, off, tc.along, tc.off)
		}
	}
	if a, o := r.Locate(math.NaN(), 0); !math.IsNaN(a) || !math.IsNaN(o) {
		t.Errorf("Locate(NaN) = %v, %v; want NaN", a, o)
	}
}

func TestNearestStation(t *testing.T) {
	st, err := StationLine(lShape, 1, 100, 0)
	if err != nil {
		t.Fatal(err)
	}
	// Station 4 is (500300, 4000100); the point is 3-4-5 from it (exact).
	i, d := NearestStation(st, 500303, 4000104)
	if i != 4 || d != 5 {
		t.Errorf("NearestStation = %d, %v; want 4, 5", i, d)
	}
	if i, d := NearestStation(nil, 0, 0); i != -1 || !math.IsInf(d, 1) {
		t.Errorf("no stations: %d, %v", i, d)
	}
	if i, d := NearestStation(st, math.Inf(1), 0); i != -1 || !math.IsNaN(d) {
		t.Errorf("infinite point: %d, %v", i, d)
	}
}

func TestStationRouteRefusesBadRoutes(t *testing.T) {
	good, err := FitCurves(lShape, 1, 50)
	if err != nil {
		t.Fatal(err)
	}
	broken := *good
	broken.Elements = append([]Element(nil), good.Elements...)
	broken.Elements[1].From += 1
	for name, r := range map[string]*Route{"nil": nil, "empty": {}, "gap between elements": &broken} {
		if _, err := StationRoute(r, 10, 0); !errors.Is(err, ErrGeometry) {
			t.Errorf("%s: %v, want ErrGeometry", name, err)
		}
	}
	if _, err := StationRoute(good, 0, 0); !errors.Is(err, ErrSpacing) {
		t.Errorf("spacing 0: %v", err)
	}
}

func TestMarkString(t *testing.T) {
	for m, want := range map[Mark]string{0: "", MarkStart: "start", MarkStart | MarkPC: "start/PC", MarkPT | MarkPC: "PT/PC", MarkPT | MarkEnd: "PT/end", MarkAngle: "angle point"} {
		if got := m.String(); got != want {
			t.Errorf("%d: %q, want %q", m, got, want)
		}
	}
}
