package alignment

import (
	"errors"
	"fmt"
	"math"
	"testing"

	"github.com/paulmach/orb"
)

// eps is the tolerance for coordinates and chainages computed by one or two
// float64 operations on values below 1e7: a few ulps of 4e6 m (4e6·2^-52 ≈
// 1e-9) with margin.
const eps = 1e-8

// lShape is the exact analytic case used throughout: 300 m east, then 400 m
// north, 700 m in all (a 3-4-5 pair of legs; exact case).
var lShape = orb.LineString{{500000, 4000000}, {500300, 4000000}, {500300, 4000400}}

type st struct {
	ch     float64
	x, y   float64
	vertex bool
}

func TestStationLine(t *testing.T) {
	const east = math.Pi / 2
	tests := []struct {
		name                string
		line                orb.LineString
		unit, spacing, strt float64
		want                []st
	}{
		{
			name: "L-shape, spacing 100 m divides both legs",
			line: lShape, unit: 1, spacing: 100, strt: 0,
			want: []st{
				{0, 500000, 4000000, true}, {100, 500100, 4000000, false}, {200, 500200, 4000000, false},
				{300, 500300, 4000000, true}, {400, 500300, 4000100, false}, {500, 500300, 4000200, false},
				{600, 500300, 4000300, false}, {700, 500300, 4000400, true},
			},
		},
		{
			name: "L-shape, spacing 250 m does not divide 700 m",
			line: lShape, unit: 1, spacing: 250, strt: 0,
			want: []st{
				{0, 500000, 4000000, true}, {250, 500250, 4000000, false}, {300, 500300, 4000000, true},
				{500, 500300, 4000200, false}, {700, 500300, 4000400, true},
			},
		},
		{
			name: "L-shape, start chainage 1005 m: stations at start + k·spacing",
			line: lShape, unit: 1, spacing: 200, strt: 1005,
			want: []st{
				{1005, 500000, 4000000, true}, {1205, 500200, 4000000, false}, {1305, 500300, 4000000, true},
				{1405, 500300, 4000100, false}, {1605, 500300, 4000300, false}, {1705, 500300, 4000400, true},
			},
		},
		{
			name: "L-shape, negative start chainage",
			line: lShape, unit: 1, spacing: 350, strt: -350,
			want: []st{
				{-350, 500000, 4000000, true}, {-50, 500300, 4000000, true}, {0, 500300, 4000050, false},
				{350, 500300, 4000400, true},
			},
		},
		{
			name: "L-shape, spacing longer than the line: vertices only",
			line: lShape, unit: 1, spacing: 1000, strt: 0,
			want: []st{{0, 500000, 4000000, true}, {300, 500300, 4000000, true}, {700, 500300, 4000400, true}},
		},
		{
			// Feet CRS: the same legs are 300 ft and 400 ft; 1 ft = 0.3048 m
			// exactly (international foot, 1959 agreement). 100 ft = 30.48 m.
			name: "L-shape in a foot CRS, spacing 30.48 m = 100 ft",
			line: orb.LineString{{0, 0}, {300, 0}, {300, 400}}, unit: 0.3048, spacing: 30.48, strt: 0,
			want: []st{
				{0, 0, 0, true}, {30.48, 100, 0, false}, {60.96, 200, 0, false}, {91.44, 300, 0, true},
				{121.92, 300, 100, false}, {152.4, 300, 200, false}, {182.88, 300, 300, false}, {213.36, 300, 400, true},
			},
		},
		{
			// The vertex sits 0.4 mm past 300 m and the end 0.4 mm past
			// 400 m: both take the place of the spacing stations there.
			name: "spacing station within 1 mm of a vertex is absorbed",
			line: orb.LineString{{0, 0}, {300.0004, 0}, {300.0004, 100}}, unit: 1, spacing: 100, strt: 0,
			want: []st{
				{0, 0, 0, true}, {100, 100, 0, false}, {200, 200, 0, false}, {300.0004, 300.0004, 0, true},
				{400.0004, 300.0004, 100, true},
			},
		},
		{
			name: "repeated vertices are ignored",
			line: orb.LineString{{0, 0}, {0, 0}, {0, 30}, {0, 30}}, unit: 0, spacing: 10, strt: 0,
			want: []st{{0, 0, 0, true}, {10, 0, 10, false}, {20, 0, 20, false}, {30, 0, 30, true}},
		},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			got, err := StationLine(tt.line, tt.unit, tt.spacing, tt.strt)
			if err != nil {
				t.Fatal(err)
			}
			if len(got) != len(tt.want) {
				for _, s := range got {
					t.Logf("%+v", s)
				}
				t.Fatalf("got %d stations, want %d", len(got), len(tt.want))
			}
			for i, w := range tt.want {
				g := got[i]
				if math.Abs(g.Chainage-w.ch) > eps || math.Abs(g.X-w.x) > eps || math.Abs(g.Y-w.y) > eps || g.Vertex != w.vertex ||
					g.WorkX != g.X || g.WorkY != g.Y {
					t.Errorf("station %d = {ch %.10g x %.10g y %.10g vertex %v work %v,%v}, want {ch %g x %g y %g vertex %v} (tol %g)",
						i, g.Chainage, g.X, g.Y, g.Vertex, g.WorkX, g.WorkY, w.ch, w.x, w.y, w.vertex, eps)
				}
			}
			// The last chainage is exactly start + Length (same summation).
			if last, want := got[len(got)-1].Chainage, tt.strt+Length(tt.line, tt.unit); last != want {
				t.Errorf("last chainage %.17g, want start+Length = %.17g", last, want)
			}
		})
	}
	// Azimuths on the L-shape: east leg π/2, north leg 0; the corner
	// vertex takes the leaving (north) leg, the end the arriving one (exact).
	got, _ := StationLine(lShape, 1, 100, 0)
	for i, want := range []float64{east, east, east, 0, 0, 0, 0, 0} {
		if math.Abs(got[i].Azimuth-want) > 1e-15 {
			t.Errorf("station %d azimuth %v, want %v", i, got[i].Azimuth, want)
		}
	}
}

func TestStationLineErrors(t *testing.T) {
	tests := []struct {
		name                string
		line                orb.LineString
		unit, spacing, strt float64
		want                error
	}{
		{"spacing 0", lShape, 1, 0, 0, ErrSpacing},
		{"spacing negative", lShape, 1, -10, 0, ErrSpacing},
		{"spacing NaN", lShape, 1, math.NaN(), 0, ErrSpacing},
		{"spacing +Inf", lShape, 1, math.Inf(1), 0, ErrSpacing},
		{"start NaN", lShape, 1, 10, math.NaN(), ErrStart},
		{"start -Inf", lShape, 1, 10, math.Inf(-1), ErrStart},
		{"start beyond 1e9 m", lShape, 1, 10, 1.5e9, ErrStart},
		{"too short for its chainage", orb.LineString{{0, 0}, {1e-8, 0}}, 1, 10, 1e9, ErrGeometry},
		{"unit negative", lShape, -1, 10, 0, ErrUnit},
		{"unit NaN", lShape, math.NaN(), 10, 0, ErrUnit},
		{"unit +Inf", lShape, math.Inf(1), 10, 0, ErrUnit},
		{"one point", orb.LineString{{1, 1}}, 1, 10, 0, ErrTooFewPoints},
		{"no points", nil, 1, 10, 0, ErrGeometry},
		{"repeated point only", orb.LineString{{1, 1}, {1, 1}}, 1, 10, 0, ErrTooFewPoints},
		{"NaN vertex", orb.LineString{{0, 0}, {math.NaN(), 1}}, 1, 10, 0, ErrGeometry},
		{"length overflows", orb.LineString{{-1e308, 0}, {1e308, 0}}, 1, 10, 0, ErrGeometry},
		{"too many stations", lShape, 1, 1e-6, 0, ErrTooManyStations},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := StationLine(tt.line, tt.unit, tt.spacing, tt.strt)
			if !errors.Is(err, tt.want) {
				t.Errorf("StationLine error = %v, want %v", err, tt.want)
			}
		})
	}
}

func TestLength(t *testing.T) {
	// 3-4-5 triangle legs and the L-shape (exact cases).
	for _, tt := range []struct {
		line orb.LineString
		unit float64
		want float64
	}{
		{orb.LineString{{0, 0}, {3, 4}}, 1, 5},
		{orb.LineString{{0, 0}, {3, 4}, {3, 4}, {6, 8}}, 0, 10},
		{lShape, 1, 700},
		{orb.LineString{{0, 0}, {3, 4}}, 0.3048, 1.524},
		{orb.LineString{{0, 0}}, 1, 0},
	} {
		if got := Length(tt.line, tt.unit); math.Abs(got-tt.want) > 1e-12 {
			t.Errorf("Length(%v, %v) = %v, want %v", tt.line, tt.unit, got, tt.want)
		}
	}
}

func TestStations(t *testing.T) {
	// Input in kilometres; ToWork scales to metres, WorkToDEM shifts by
	// (+10, -20) m, lon/lat left as identity (nil). All exact cases.
	a := Alignment{Name: "Test reach", Line: orb.LineString{{500, 4000}, {500.3, 4000}, {500.3, 4000.4}}}
	f := Frames{
		ToWork: TransformerFunc(func(xs, ys []float64) error {
			for i := range xs {
				xs[i], ys[i] = xs[i]*1000, ys[i]*1000
			}
			return nil
		}),
		WorkToDEM: TransformerFunc(func(xs, ys []float64) error {
			for i := range xs {
				xs[i], ys[i] = xs[i]+10, ys[i]-20
			}
			return nil
		}),
	}
	got, err := Stations(a, f, 100, 0)
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != 8 {
		t.Fatalf("got %d stations, want 8", len(got))
	}
	// Station 4 is at chainage 400 m, (500300, 4000100) in the work CRS.
	s := got[4]
	tol := 1e-6 // km→m scaling of 500.3 is not exact in binary; error ~1e-10 m
	if math.Abs(s.Chainage-400) > tol || math.Abs(s.WorkX-500300) > tol || math.Abs(s.WorkY-4000100) > tol ||
		math.Abs(s.X-500310) > tol || math.Abs(s.Y-4000080) > tol || s.Lon != s.WorkX || s.Lat != s.WorkY {
		t.Errorf("station 4 = %+v, want chainage 400, work (500300, 4000100), DEM (500310, 4000080), lon/lat = work", s)
	}

	boom := errors.New("point 2 failed to transform")
	f.WorkToLonLat = TransformerFunc(func(xs, ys []float64) error { return boom })
	_, err = Stations(a, f, 100, 0)
	if !errors.Is(err, boom) || err.Error() != `alignment "Test reach": transform stations to lon/lat: point 2 failed to transform` {
		t.Errorf("Stations error = %v, want the lon/lat transform error naming the alignment", err)
	}
	_, err = Stations(a, Frames{}, -1, 0)
	if !errors.Is(err, ErrSpacing) || err.Error()[:21] != `alignment "Test reach` {
		t.Errorf("Stations error = %v, want ErrSpacing naming the alignment", err)
	}
}

// checkStations checks the invariants every station list must keep. tol is
// the allowed difference (m) between the last chainage and start plus an
// independently summed length.
func checkStations(line orb.LineString, unit, spacing, start float64, got []Station) error {
	if unit == 0 {
		unit = 1
	}
	if len(got) < 2 {
		return fmt.Errorf("%d stations, want at least 2", len(got))
	}
	if got[0].Chainage != start || !got[0].Vertex {
		return fmt.Errorf("first station %+v, want a vertex at chainage %v", got[0], start)
	}
	for i := 1; i < len(got); i++ {
		if !(got[i].Chainage > got[i-1].Chainage) {
			return fmt.Errorf("chainage not strictly increasing at %d: %v then %v", i, got[i-1].Chainage, got[i].Chainage)
		}
	}
	// Independent length: sum of hypotenuses in metres.
	l := 0.0
	for i := 1; i < len(line); i++ {
		l += math.Hypot(line[i][0]-line[i-1][0], line[i][1]-line[i-1][1]) * unit
	}
	// Tolerance: summation error of n terms is below n·2^-52 of the
	// total, plus rounding of start + length (common practice, no source).
	tol := 1e-12*(math.Abs(start)+l)*float64(len(line)) + 1e-300
	last := got[len(got)-1]
	if math.Abs(last.Chainage-(start+l)) > tol || !last.Vertex {
		return fmt.Errorf("last station %+v, want a vertex at chainage %v (tol %g)", last, start+l, tol)
	}
	// Where chainage has resolution to spare, no gap exceeds the spacing
	// (plus the 1 mm a vertex may absorb).
	if math.Abs(start)+l < 1e9 && spacing >= 1e-3 {
		for i := 1; i < len(got); i++ {
			if gap := got[i].Chainage - got[i-1].Chainage; gap > spacing*(1+1e-9)+absorbTolerance {
				return fmt.Errorf("gap %v m between stations %d and %d exceeds spacing %v m", gap, i-1, i, spacing)
			}
		}
	}
	return nil
}

func TestStationInvariantsOnZigzag(t *testing.T) {
	// A deterministic zigzag with uneven legs; invariants only.
	line := zigzag(40, 123.456)
	for _, spacing := range []float64{0.7, 1, 10, 25, 333.3, 1e4} {
		got, err := StationLine(line, 1, spacing, 12.5)
		if err != nil {
			t.Fatal(err)
		}
		if err := checkStations(line, 1, spacing, 12.5, got); err != nil {
			t.Errorf("spacing %v: %v", spacing, err)
		}
	}
}

// zigzag returns a line of n legs alternating north-east and south-east,
// leg i being leg·(1 + i mod 3) metres long, starting at (500000, 4000000).
func zigzag(n int, leg float64) orb.LineString {
	line := orb.LineString{{500000, 4000000}}
	for i := range n {
		d := leg * float64(1+i%3) / math.Sqrt2
		p := line[len(line)-1]
		if i%2 == 0 {
			line = append(line, orb.Point{p[0] + d, p[1] + d})
		} else {
			line = append(line, orb.Point{p[0] + d, p[1] - d})
		}
	}
	return line
}
