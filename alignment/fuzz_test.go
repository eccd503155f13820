package alignment

import (
	"errors"
	"math"
	"slices"
	"strings"
	"testing"

	"github.com/paulmach/orb"
)

// FuzzRead: Read never panics; every error wraps one of its sentinels and
// is one line; every accepted alignment has at least two points, no
// repeated consecutive vertex, a name, and a folder name of its own.
func FuzzRead(f *testing.F) {
	for _, s := range []string{
		`{"type":"LineString","coordinates":[[15,36],[15.1,36.1]]}`,
		`{"type":"Feature","properties":{"name":"A"},"geometry":{"type":"LineString","coordinates":[[0,0,1],[1,1,2]]}}`,
		`{"type":"FeatureCollection","crs":{"type":"name","properties":{"name":"urn:ogc:def:crs:EPSG::32633"}},"features":[{"type":"Feature","properties":{"name":"A"},"geometry":{"type":"MultiLineString","coordinates":[[[0,0],[1,0]],[[1,0],[1,1]]]}},{"type":"Feature","properties":{"name":"a"},"geometry":{"type":"LineString","coordinates":[[0,0],[0,0],[2,2]]}}]}`,
		`{"type":"MultiLineString","coordinates":[[[0,0],[1,0]],[[2,0],[3,0]]]}`,
		`{"type":"Point","coordinates":[1,2]}`,
		`{"type":"LineString","coordinates":[[1],[2,3]]}`,
		`{"type":"LineString","coordinates":[[1,1],[1,1]]}`,
		`{"type":"FeatureCollection","features":[null,{"geometry":null},{"type":"Feature","geometry":{"type":"LineString","coordinates":[[1e308,0],[-1e308,0]]}}]}`,
		`{"type":`, `[]`, `null`, `"x"`, ``, "\xff",
	} {
		f.Add([]byte(s))
	}
	sentinels := []error{ErrNotJSON, ErrNotGeoJSON, ErrNoLine, ErrTooFewPoints, ErrDisjoint}
	f.Fuzz(func(t *testing.T, data []byte) {
		as, err := Read(data)
		if err != nil {
			checkError(t, err, sentinels...)
			return
		}
		checkAlignments(t, as)
	})
}

// checkError fails unless err is one line and wraps one of sentinels.
func checkError(t *testing.T, err error, sentinels ...error) {
	t.Helper()
	known := false
	for _, s := range sentinels {
		known = known || errors.Is(err, s)
	}
	if !known || strings.Contains(err.Error(), "\n") {
		t.Fatalf("error %q: not one line wrapping a sentinel", err)
	}
}

// checkAlignments checks what Read and ReadScheme promise of every
// alignment they return.
func checkAlignments(t *testing.T, as []Alignment) {
	t.Helper()
	keys := map[string]bool{}
	for i, a := range as {
		if len(a.Line) < 2 || a.Index != i || a.Name == "" || len(a.Positions) != len(a.Line) {
			t.Fatalf("alignment %d: %+v", i, a)
		}
		for j := 1; j < len(a.Line); j++ {
			if a.Line[j] == a.Line[j-1] {
				t.Fatalf("alignment %q: repeated vertex %d", a.Name, j)
			}
			if p, q := a.Positions[j-1], a.Positions[j]; q.Part < p.Part || (q.Part == p.Part && q.Index <= p.Index) {
				t.Fatalf("alignment %q: positions %v then %v", a.Name, p, q)
			}
		}
		k := nameKey(a.Name)
		if keys[k] {
			t.Fatalf("alignment %q: folder name %q used twice", a.Name, k)
		}
		keys[k] = true
	}
}

// FuzzReadScheme: ReadScheme never panics; its errors are one line and
// wrap a sentinel; what it accepts Read accepts too, with the same
// alignments; every control is in its stated range, every offtake has
// exactly one of its two levels, and Ignored is sorted without repeats
// and names no property the feature reads.
func FuzzReadScheme(f *testing.F) {
	f.Add([]byte(schemeFile))
	for _, s := range []string{
		`{"type":"Feature","properties":{"name":"A","flow":"2.5"},"geometry":{"type":"LineString","coordinates":[[0,0],[1,0]]}}`,
		`{"type":"FeatureCollection","features":[{"type":"Feature","properties":{"name":"A","corridor":"C","roughness":0.2,"curve_radius":1},"geometry":{"type":"LineString","coordinates":[[0,0],[1,0]]}},{"type":"Feature","properties":{"margin":0,"alignment":"C"},"geometry":{"type":"Point","coordinates":[0,0]}}]}`,
		`{"type":"FeatureCollection","features":[{"type":"Feature","properties":{"flow":1e400},"geometry":{"type":"LineString","coordinates":[[0,0],[1,0]]}}]}`,
		`{"type":"FeatureCollection","features":[{"type":"Feature","properties":{"command_level":1,"margin":2},"geometry":{"type":"Point","coordinates":[0,0]}}]}`,
		`{"type":"FeatureCollection","features":[{"type":"Feature","properties":{"name":null,"x":null,"":1},"geometry":{"type":"LineString","coordinates":[[0,0],[1,0]]}},{"properties":{"a":1},"geometry":{"type":"Polygon","coordinates":[]}}]}`,
		`{"type":"Point","coordinates":[1,2]}`, `{"type":"LineString","coordinates":[[1,1],[1,1]]}`, `[]`, ``,
	} {
		f.Add([]byte(s))
	}
	sentinels := []error{ErrNotJSON, ErrNotGeoJSON, ErrNoLine, ErrTooFewPoints, ErrDisjoint, ErrProperty}
	f.Fuzz(func(t *testing.T, data []byte) {
		sc, err := ReadScheme(data)
		if err != nil {
			checkError(t, err, sentinels...)
			return
		}
		checkAlignments(t, sc.Alignments)
		as, err := Read(data)
		if err != nil || len(as) != len(sc.Alignments) {
			t.Fatalf("ReadScheme took %d alignments, Read %d (%v)", len(sc.Alignments), len(as), err)
		}
		for i, a := range as {
			b := sc.Alignments[i]
			if a.Name != b.Name || !slices.Equal(a.Line, b.Line) || !slices.Equal(a.Positions, b.Positions) {
				t.Fatalf("alignment %d: Read %q %v, ReadScheme %q %v", i, a.Name, a.Line, b.Name, b.Line)
			}
			o := b.Overrides
			for _, c := range []struct {
				v  *float64
				ok bool
			}{
				{o.Flow, o.Flow == nil || *o.Flow > 0},
				{o.StartInvert, o.StartInvert == nil || math.Abs(*o.StartInvert) <= maxLevel},
				{o.EndInvert, o.EndInvert == nil || math.Abs(*o.EndInvert) <= maxLevel},
				{o.Roughness, o.Roughness == nil || (*o.Roughness > 0 && *o.Roughness <= 0.2)},
				{o.BottomWidth, o.BottomWidth == nil || *o.BottomWidth > 0},
				{o.CommandMargin, o.CommandMargin == nil || *o.CommandMargin >= 0},
				{o.CurveRadius, o.CurveRadius == nil || *o.CurveRadius >= MinRadius},
			} {
				if !c.ok || (c.v != nil && math.IsInf(*c.v, 0)) {
					t.Fatalf("alignment %q: control %v out of range in %+v", b.Name, *c.v, o)
				}
			}
		}
		for i, o := range sc.Offtakes {
			if o.Index != i || o.Name == "" || (o.CommandLevel == nil) == (o.Margin == nil) ||
				(o.Margin != nil && !(*o.Margin >= 0)) || (o.CommandLevel != nil && !(math.Abs(*o.CommandLevel) <= maxLevel)) {
				t.Fatalf("offtake %d: %+v", i, o)
			}
		}
		if !slices.IsSorted(sc.Ignored) || len(slices.Compact(slices.Clone(sc.Ignored))) != len(sc.Ignored) {
			t.Fatalf("Ignored %q not sorted and unique", sc.Ignored)
		}
		for _, k := range sc.Ignored {
			if k == "name" {
				t.Fatalf("Ignored lists %q, which every feature reads", k)
			}
		}
	})
}

// FuzzRoute: FitCurves and StationRoute never panic; a route is no longer
// than its polyline, shorter by Σ(2T − L); its stations keep StationLine's
// invariants, lie on the route (Locate finds them there) and, on an arc,
// R from the centre.
func FuzzRoute(f *testing.F) {
	f.Add(0.0, 0.0, 1000.0, 0.0, 1000.0, 1000.0, 2000.0, 1000.0, 1.0, 200.0, 20.0, 0.0)
	f.Add(0.0, 0.0, 1000.0, 0.0, 1000.0, 400.0, 2000.0, 400.0, 1.0, 200.0, 20.0, 100.0)
	f.Add(500000.0, 4e6, 500100.0, 4e6, 500050.0, 4e6, 500050.0, 4e6+80, 0.3048, 10.0, 3.0, -50.0)
	f.Add(0.0, 0.0, 1.0, 1e-9, 2.0, 0.0, 3.0, 1e-9, 1.0, 1e6, 0.1, 0.0)
	f.Add(0.0, 0.0, 0.0, 0.0, 1.0, 1.0, 1.0, 1.0, 0.0, 1e308, 0.5, 1e9)
	f.Add(1e300, 1e300, -1e300, -1e300, 0.0, 0.0, 1.0, 5.0, 1.0, 1e-300, 1e299, 0.0)
	f.Fuzz(func(t *testing.T, x0, y0, x1, y1, x2, y2, x3, y3, unit, radius, spacing, start float64) {
		line := orb.LineString{{x0, y0}, {x1, y1}, {x2, y2}, {x3, y3}}
		r, err := FitCurves(line, unit, radius)
		if err != nil {
			checkError(t, err, ErrUnit, ErrRadius, ErrGeometry, ErrCurveFit)
			return
		}
		u := r.UnitToMetre
		poly := Length(line, u)
		saved, scale := 0.0, 0.0
		for _, p := range line {
			scale = max(scale, math.Abs(p[0]), math.Abs(p[1]))
		}
		for _, c := range r.Curves {
			if !(c.Tangent > 0) || !(c.Length > 0) || !(c.PTDistance > c.PCDistance) || c.External < minExternal {
				t.Fatalf("curve %+v", c)
			}
			saved += 2*c.Tangent - c.Length
		}
		// Rounding: the coordinates carry about 1e-16 of the line's extent
		// each; allow 1e-12 of it per vertex, and 1e-9 of the polyline for
		// tangents that meet (meetTolerance).
		tol := (1e-9*poly + 1e-12*scale*u) * 4
		if !(r.Length <= poly+tol) || math.Abs(poly-saved-r.Length) > tol {
			t.Fatalf("route %v m, polyline %v m, Σ(2T − L) %v m (tol %g)", r.Length, poly, saved, tol)
		}
		if !(spacing > 0) || r.Length/spacing > 2e5 {
			t.Skip("too many stations for a fuzz iteration")
		}
		st, err := StationRoute(r, spacing, start)
		if err != nil {
			for _, s := range []error{ErrSpacing, ErrStart, ErrGeometry, ErrTooManyStations} {
				if errors.Is(err, s) {
					return
				}
			}
			t.Fatalf("StationRoute error %v", err)
		}
		if st[0].Chainage != start || st[0].Mark&MarkStart == 0 || st[len(st)-1].Chainage != start+r.Length || st[len(st)-1].Mark&MarkEnd == 0 {
			t.Fatalf("first %+v, last %+v; want the start at %v and the end at %v", st[0], st[len(st)-1], start, start+r.Length)
		}
		for i, s := range st {
			if i > 0 && !(s.Chainage > st[i-1].Chainage) {
				t.Fatalf("chainage not increasing at %d: %v then %v", i, st[i-1].Chainage, s.Chainage)
			}
			if s.Vertex != (s.Mark != 0) {
				t.Fatalf("station %d: vertex %v, mark %q", i, s.Vertex, s.Mark)
			}
			if _, off := r.Locate(s.WorkX, s.WorkY); !(math.Abs(off) <= tol) {
				t.Fatalf("station %d %+v lies %v m off the route (tol %g)", i, s, off, tol)
			}
			if s.Curve != 0 {
				c := r.Curves[s.Curve-1]
				d := math.Hypot(s.WorkX-c.Centre[0], s.WorkY-c.Centre[1]) * u
				if math.Abs(d-c.Radius) > 1e-9*c.Radius+tol {
					t.Fatalf("station %d on curve %d lies %v m from its centre, radius %v m", i, s.Curve, d, c.Radius)
				}
			}
		}
	})
}

// FuzzStation: StationLine never panics; it either returns a validation
// error or stations whose chainage strictly increases from start to
// start + length (tolerance in checkStations).
func FuzzStation(f *testing.F) {
	f.Add(500000.0, 4000000.0, 500300.0, 4000000.0, 500300.0, 4000400.0, 1.0, 100.0, 0.0)
	f.Add(0.0, 0.0, 300.0, 0.0, 300.0, 400.0, 0.3048, 30.48, -12.5)
	f.Add(0.0, 0.0, 0.0, 0.0, 1.0, 1.0, 0.0, 0.7, 1e6)
	f.Add(0.0, 0.0, 1e-300, 0.0, 2e-300, 0.0, 1.0, 1e-310, 0.0)
	f.Add(1e300, 1e300, -1e300, -1e300, 0.0, 0.0, 1.0, 1e299, 0.0)
	f.Add(0.0, 0.0, 1.0, 0.0, 1.0, 1e-9, 1.0, 0.5, 1e20)
	f.Add(0.0, 0.0, 10.0, 0.0, 20.0, 0.0, 1.0, 5.0, 1e17)
	f.Fuzz(func(t *testing.T, x0, y0, x1, y1, x2, y2, unit, spacing, start float64) {
		line := orb.LineString{{x0, y0}, {x1, y1}, {x2, y2}}
		u := unit
		if u == 0 {
			u = 1
		}
		if n := Length(line, u) / spacing; n > 2e5 {
			t.Skip("too many stations for a fuzz iteration")
		}
		got, err := StationLine(line, unit, spacing, start)
		if err != nil {
			for _, s := range []error{ErrUnit, ErrSpacing, ErrStart, ErrGeometry, ErrTooManyStations} {
				if errors.Is(err, s) {
					return
				}
			}
			t.Fatalf("unexpected error %v", err)
		}
		if err := checkStations(line, unit, spacing, start, got); err != nil {
			t.Fatal(err)
		}
		if last, want := got[len(got)-1].Chainage, start+Length(line, unit); last != want {
			t.Fatalf("last chainage %v, want start + Length = %v exactly", last, want)
		}
	})
}

// FuzzParseStation: ParseStation never panics; what it accepts is a finite
// chainage whose label parses back to the same label.
func FuzzParseStation(f *testing.F) {
	for _, s := range []string{"1+250.00", "12+50.00", "-0+012.30", "0+000", "1+250.123456789", "999999999+999.99", "1+25", "+", "-", "1e3+000", " 7+07.07 "} {
		f.Add(s, false)
		f.Add(s, true)
	}
	f.Fuzz(func(t *testing.T, s string, us bool) {
		v, err := ParseStation(s, us)
		if err != nil {
			return
		}
		unit := 1.0
		if us {
			unit = FootM
		}
		if math.IsNaN(v) || math.IsInf(v, 0) || math.Abs(v) >= maxLabelUnits*unit {
			t.Fatalf("ParseStation(%q) = %v", s, v)
		}
		label := FormatStation(v, us)
		v2, err := ParseStation(label, us)
		if err != nil {
			t.Fatalf("ParseStation(FormatStation(%v) = %q): %v", v, label, err)
		}
		// Labels round to hundredths of the unit; allow a relative 1e-12 for
		// the float conversions.
		if math.Abs(v2-v) > 0.005*unit+1e-12*math.Abs(v) {
			t.Fatalf("%q → %v → %q → %v: moved more than half a hundredth", s, v, label, v2)
		}
		if again := FormatStation(v2, us); again != label {
			t.Fatalf("%q → %q → %q: label not stable", s, label, again)
		}
	})
}

// FuzzFormatStation: every label FormatStation writes for a chainage in
// range parses back, and formats to itself.
func FuzzFormatStation(f *testing.F) {
	for _, v := range []float64{0, 1250, 381, -12.3, 999.995, 0.005, 1e11, -0.004} {
		f.Add(v, false)
		f.Add(v, true)
	}
	f.Fuzz(func(t *testing.T, v float64, us bool) {
		label := FormatStation(v, us)
		unit := 1.0
		if us {
			unit = FootM
		}
		if math.IsNaN(v) || math.Abs(v) >= maxLabelUnits*unit*(1-1e-9) {
			return
		}
		got, err := ParseStation(label, us)
		if err != nil {
			t.Fatalf("ParseStation(FormatStation(%v) = %q): %v", v, label, err)
		}
		if back := FormatStation(got, us); back != label {
			t.Fatalf("%v → %q → %v → %q", v, label, got, back)
		}
	})
}

// FuzzSafeName: every name becomes a safe, stable folder name.
func FuzzSafeName(f *testing.F) {
	for _, s := range []string{"Main canal", "../x", "..", "", "CON", "a\x00b", strings.Repeat("é", 60)} {
		f.Add(s)
	}
	f.Fuzz(checkSafeName)
}
