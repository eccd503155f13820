package alignment

import (
	"errors"
	"fmt"
	"math"

	"github.com/paulmach/orb"
)

// Station is one point of the stationed alignment.
type Station struct {
	// Chainage is the distance along the alignment from its start plus the
	// start chainage, in metres (grid distance in the work CRS).
	Chainage float64
	// X, Y are the station's coordinates in the DEM's CRS (from Stations),
	// or in the work CRS (from StationLine).
	X, Y float64
	// WorkX, WorkY are the coordinates in the work CRS, in its units.
	WorkX, WorkY float64
	// Lon, Lat are WGS 84 longitude and latitude in degrees; filled by
	// Stations only (zero from StationLine).
	Lon, Lat float64
	// Azimuth is the direction of travel on the segment the station lies
	// on, in radians clockwise from the work CRS's grid north, in (-π, π].
	// At a vertex it is the direction of the segment leaving it (entering
	// it, for the last vertex); on a curve, the tangent's direction.
	Azimuth float64
	// CrossAzimuth is the direction of the station's cross-section line,
	// pointing to the right of the direction of travel, in radians
	// clockwise from the work CRS's grid north: Azimuth + π/2 on a
	// straight, the bisector of the angle between the two segments at an
	// interior vertex, radial on a curve.
	CrossAzimuth float64
	// Vertex is true when the station is a fixed point of the route: a
	// vertex of the alignment (including the first and the last point),
	// or, on a route with curves, a curve's PC or PT, which take the place
	// of its vertex. Mark says which.
	Vertex bool
	// Mark names the fixed point the station stands on (start, end, angle
	// point, PC, PT); zero for a spacing station. Vertex == (Mark != 0).
	Mark Mark
	// Curve is the 1-based number (in Route.Curves) of the curve whose arc
	// the station lies on, its PC and PT included; where one curve's PT is
	// the next one's PC, the later curve. 0 on a straight. (int32 packs
	// it beside Vertex and Mark: a Station stays 112 bytes.)
	Curve int32

	// Label is the station label in the run's notation (FormatStation):
	// set by the corridor stage, empty from StationLine.
	Label string
	// Ground is the centre-line ground elevation in metres; set by the
	// corridor stage when the DEM is sampled (zero before).
	Ground float64
	// Cross is the ground across the line at the station; nil when the
	// ground is taken as level across the section.
	Cross *CrossSection
}

// CrossSection is the ground across the alignment at one station, sampled
// along the line through the station in the direction Station.CrossAzimuth.
type CrossSection struct {
	// Offsets are distances in metres from the centre line, negative to
	// the left looking downstream, strictly increasing.
	Offsets []float64
	// Levels are the ground elevations (m) at Offsets.
	Levels []float64
	// Widened is true when the first sampled width did not hold both catch
	// points and the section was sampled again twice as wide.
	Widened bool
}

// Profile is one alignment stationed and sampled: the value that flows from
// the corridor stage through the planner to every writer.
type Profile struct {
	// Name is the alignment's name as in the file; Folder its output
	// folder name (SafeName).
	Name, Folder string
	// Alignment is the source feature: its line, CRS and properties.
	Alignment Alignment
	// Stations are in chainage order, with Ground (and Cross, when DEM
	// cross-sections are used) filled.
	Stations []Station
	// WorkCRS is the projected CRS chainage is measured in, as a
	// definition PROJ reads (the DEM's CRS, or a local transverse Mercator
	// when the DEM is geographic); WorkUnitToMetre is its unit in metres.
	WorkCRS         string
	WorkUnitToMetre float64
}

// Chainages returns the stations' chainages in metres.
func (p *Profile) Chainages() []float64 {
	out := make([]float64, len(p.Stations))
	for i, s := range p.Stations {
		out[i] = s.Chainage
	}
	return out
}

// Grounds returns the stations' centre-line ground elevations in metres.
func (p *Profile) Grounds() []float64 {
	out := make([]float64, len(p.Stations))
	for i, s := range p.Stations {
		out[i] = s.Ground
	}
	return out
}

// CrossPoint returns the point offset metres to the right of the station
// (negative: left) along its cross-section line, in the work CRS, whose unit
// is unitToMetre metres (0 means 1).
func (s Station) CrossPoint(offset, unitToMetre float64) (x, y float64) {
	if unitToMetre == 0 {
		unitToMetre = 1
	}
	d := offset / unitToMetre
	return s.WorkX + d*math.Sin(s.CrossAzimuth), s.WorkY + d*math.Cos(s.CrossAzimuth)
}

// Transformer converts coordinates from one CRS to another, in place. x is
// longitude or easting, y latitude or northing (traditional GIS order).
// It returns an error when any point fails to transform.
type Transformer interface {
	Transform(xs, ys []float64) error
}

// TransformerFunc adapts a function to the Transformer interface.
type TransformerFunc func(xs, ys []float64) error

// Transform calls f(xs, ys).
func (f TransformerFunc) Transform(xs, ys []float64) error { return f(xs, ys) }

// Frames are the coordinate reference frames a station lives in. A nil
// Transformer is the identity: the two CRSs are the same.
type Frames struct {
	// ToWork maps the alignment's input CRS (Alignment.CRS, lon/lat by
	// default) to the projected work CRS in which chainage is measured.
	ToWork Transformer
	// WorkToDEM maps the work CRS to the DEM's CRS (identity when the DEM
	// is projected and is itself the work CRS).
	WorkToDEM Transformer
	// WorkToLonLat maps the work CRS to WGS 84 lon/lat in degrees.
	WorkToLonLat Transformer
	// WorkUnitToMetre is the length of one work CRS unit in metres:
	// 1 for metres (0 also means 1), 0.3048 for the international foot,
	// 1200/3937 for the US survey foot.
	WorkUnitToMetre float64
}

// MaxStations caps the number of stations one call may produce, so a tiny
// spacing on a long line fails cleanly instead of exhausting memory: five
// million stations (500 km at 0.1 m) take about 360 MB.
const MaxStations = 5_000_000

// MaxStart bounds the start chainage (m): a million kilometres, beyond any
// real alignment, keeping chainage resolution finer than 1e-6 m.
const MaxStart = 1e9

// absorbTolerance is how close (m of chainage) a spacing station may come
// to a vertex before the vertex takes its place, so a spacing stake is never
// set within 1 mm of a vertex stake (common practice, no source).
const absorbTolerance = 1e-3

// Errors returned by the stationing functions, wrapped with detail.
var (
	// ErrSpacing is returned for a spacing that is not a positive, finite
	// number of metres.
	ErrSpacing = errors.New("station spacing must be a positive number of metres")
	// ErrStart is returned for a start chainage that is not finite or
	// beyond ±MaxStart.
	ErrStart = errors.New("start chainage must be a finite number of metres within ±1e9")
	// ErrUnit is returned for a WorkUnitToMetre that is negative or not finite.
	ErrUnit = errors.New("work CRS unit must be a positive, finite length in metres")
	// ErrGeometry is returned for a line with non-finite coordinates or
	// length, or fewer than two distinct points.
	ErrGeometry = errors.New("alignment geometry is not usable")
	// ErrTooManyStations is returned when the spacing would produce more
	// than MaxStations stations.
	ErrTooManyStations = errors.New("too many stations")
)

// Length returns the length of line in metres, measured in its own
// (projected) CRS whose unit is unitToMetre metres (0 means 1). It is the
// sum of the segment lengths and equals the last chainage of StationLine
// minus the start chainage. Degenerate input gives 0 or a non-finite value.
func Length(line orb.LineString, unitToMetre float64) float64 {
	if unitToMetre == 0 {
		unitToMetre = 1
	}
	l := 0.0
	for i := 1; i < len(line); i++ {
		l += segLen(line[i-1], line[i], unitToMetre)
	}
	return l
}

// segLen is the length of a→b in metres.
func segLen(a, b orb.Point, u float64) float64 {
	return math.Hypot(b[0]-a[0], b[1]-a[1]) * u
}

// StationLine stations a line given in a projected work CRS whose unit is
// unitToMetre metres (0 means 1). It returns, in order of chainage:
//
//   - every vertex (Vertex true), the first at chainage start and the last
//     at start + Length(line, unitToMetre);
//   - a station at each chainage start + k·spacing (k = 1, 2, ...) that lies
//     strictly inside the line, except that a vertex within 1 mm takes its
//     place.
//
// spacing is in metres; start must lie within ±MaxStart. Chainage is
// strictly increasing: where two points would round to the same float64
// chainage (only possible with vertices closer than about 1e-16 of the
// chainage) the later one is dropped, except the last vertex, which always
// ends the list. Repeated consecutive
// vertices are ignored. X, Y and WorkX, WorkY are set to the station's
// coordinates in the work CRS. It is StationRoute on the polyline
// (FitCurves with radius 0).
func StationLine(line orb.LineString, unitToMetre, spacing, start float64) ([]Station, error) {
	unit, err := checkUnit(unitToMetre)
	if err != nil {
		return nil, err
	}
	if err := checkSpacing(spacing, start); err != nil {
		return nil, err
	}
	r, err := FitCurves(line, unit, 0)
	if err != nil {
		return nil, err
	}
	return StationRoute(r, spacing, start)
}

// StationRoute stations a route (from FitCurves) along its straights and
// arcs. It returns, in order of chainage:
//
//   - every fixed point of the route (Vertex true, Mark saying which): its
//     start at chainage start, its end at start + r.Length, each angle
//     point, and the PC and PT of every curve, which take the place of the
//     curve's vertex (no longer on the route);
//   - a station at each chainage start + k·spacing (k = 1, 2, ...) strictly
//     inside the route, except that a fixed point within 1 mm takes its
//     place.
//
// On a straight, Azimuth is the straight's direction and CrossAzimuth
// Azimuth + π/2; at an angle point, as StationLine. On an arc, Azimuth is
// the tangent's direction and CrossAzimuth is radial, pointing to the right
// of travel (towards the centre on a right-hand curve). spacing is in
// metres; start within ±MaxStart. Chainage is strictly increasing, as in
// StationLine. On a route without curves the result is StationLine's.
func StationRoute(r *Route, spacing, start float64) ([]Station, error) {
	if err := checkSpacing(spacing, start); err != nil {
		return nil, err
	}
	if err := r.check(); err != nil {
		return nil, err
	}
	els := r.Elements
	nb := len(els) + 1 // fixed points: the elements' starts and the route's end
	length := r.Length
	regular := math.Ceil(length/spacing) - 1 // spacing stations strictly inside
	if regular < 0 {
		regular = 0
	}
	if regular+float64(nb) > MaxStations {
		return nil, fmt.Errorf("%w: spacing %g m on a %.3f m alignment gives about %.0f stations; the limit is %d, so use a spacing of at least %.3g m",
			ErrTooManyStations, spacing, length, regular+float64(nb), MaxStations, length/(MaxStations-float64(nb)))
	}
	// at[j] is the distance (m) from the route's start to fixed point j.
	at := func(j int) float64 {
		if j == len(els) {
			return els[j-1].To
		}
		return els[j].From
	}

	out := make([]Station, 0, int(regular)+nb)
	emit := func(s Station, last bool) {
		n := len(out)
		if n > 0 && !(s.Chainage > out[n-1].Chainage) {
			if !last {
				return
			}
			out = out[:n-1] // the end always closes the list
		}
		out = append(out, s)
	}
	fixed := func(j int) Station {
		s := Station{Chainage: start + at(j), Vertex: true}
		var p orb.Point
		if j < len(els) {
			p, s.Azimuth, s.Mark, s.Curve = els[j].Start, els[j].StartAzimuth, els[j].Mark, els[j].Curve
		} else {
			p, s.Azimuth, s.Mark = els[j-1].End, els[j-1].EndAzimuth, r.EndMark
		}
		s.CrossAzimuth = s.Azimuth + math.Pi/2
		if j > 0 && j < len(els) {
			s.CrossAzimuth = bisector(els[j-1].EndAzimuth, s.Azimuth)
		}
		if s.Curve == 0 && j > 0 {
			s.Curve = els[j-1].Curve // the PT of a curve
		}
		s.X, s.Y, s.WorkX, s.WorkY = p[0], p[1], p[0], p[1]
		return s
	}

	emit(fixed(0), false)
	seg := 1 // next fixed point ahead
	for k := 1.0; k <= regular; k++ {
		d := k * spacing
		for seg < nb-1 && at(seg) <= d+absorbTolerance {
			emit(fixed(seg), false)
			seg++
		}
		if d-at(seg-1) <= absorbTolerance || at(seg)-d <= absorbTolerance {
			continue // a fixed point stands here
		}
		s := els[seg-1].station(d, r.UnitToMetre)
		s.Chainage = start + d
		emit(s, false)
	}
	for ; seg < nb; seg++ {
		emit(fixed(seg), seg == nb-1)
	}
	if len(out) < 2 {
		return nil, fmt.Errorf("%w: its length %g m is below the chainage resolution at %g m", ErrGeometry, length, start)
	}
	return out, nil
}

// station is the point of e at distance d (m) from the route's start,
// From ≤ d ≤ To, in a work CRS of unit u metres; Chainage is left to the
// caller.
func (e *Element) station(d, u float64) Station {
	if e.Curve == 0 {
		a, b := e.Start, e.End
		t := (d - e.From) / (e.To - e.From)
		x, y := a[0]+t*(b[0]-a[0]), a[1]+t*(b[1]-a[1])
		return Station{X: x, Y: y, WorkX: x, WorkY: y, Azimuth: e.StartAzimuth, CrossAzimuth: e.StartAzimuth + math.Pi/2}
	}
	// Turned through (d − From)/R radians from the start, about the centre.
	sgn := math.Copysign(1, e.Turn)
	turn := sgn * (d - e.From) / e.Radius
	theta := math.Atan2(e.Start[0]-e.Centre[0], e.Start[1]-e.Centre[1]) + turn
	p := offset(e.Centre, theta, e.Radius/u)
	az := normAzimuth(e.StartAzimuth + turn)
	return Station{X: p[0], Y: p[1], WorkX: p[0], WorkY: p[1], Azimuth: az, CrossAzimuth: az + math.Pi/2, Curve: e.Curve}
}

// normAzimuth brings an angle into (−π, π].
func normAzimuth(a float64) float64 {
	a = math.Remainder(a, 2*math.Pi)
	if a <= -math.Pi {
		a += 2 * math.Pi
	}
	return a
}

// check refuses a route that FitCurves would not have made: nil, empty,
// or with element distances that are not finite and end to end. (A
// straight may be shorter than chainage resolution, From == To: vertices
// of a polyline closer than that, which StationLine has always taken.)
func (r *Route) check() error {
	if r == nil || len(r.Elements) == 0 {
		return fmt.Errorf("%w: the route has no elements", ErrGeometry)
	}
	if _, err := checkUnit(r.UnitToMetre); err != nil || r.UnitToMetre == 0 {
		return fmt.Errorf("%w: the route's unit is %v m", ErrGeometry, r.UnitToMetre)
	}
	prev := 0.0
	for i, e := range r.Elements {
		if e.From != prev || !(e.To >= e.From) || math.IsInf(e.To, 0) || (e.Curve != 0 && !(e.Radius > 0 && e.To > e.From)) {
			return fmt.Errorf("%w: route element %d runs from %v m to %v m", ErrGeometry, i+1, e.From, e.To)
		}
		prev = e.To
	}
	if r.Length != prev {
		return fmt.Errorf("%w: the route's length %v m is not its last element's end %v m", ErrGeometry, r.Length, prev)
	}
	return nil
}

// azimuth is the grid bearing of a→b in radians clockwise from north.
func azimuth(a, b orb.Point) float64 {
	return math.Atan2(b[0]-a[0], b[1]-a[1])
}

// bisector returns the direction (radians clockwise from north) that halves
// the angle between the incoming segment's normal and the outgoing one's,
// pointing right of travel: the cross-section direction at a vertex.
func bisector(in, out float64) float64 {
	d := math.Remainder(out-in, 2*math.Pi) // turn at the vertex, in (−π, π]
	return in + d/2 + math.Pi/2
}

// Stations stations alignment a as a polyline: StationsWith without
// curves, the route dropped.
func Stations(a Alignment, f Frames, spacing, start float64) ([]Station, error) {
	st, _, err := StationsWith(a, f, Options{Spacing: spacing, Start: start})
	return st, err
}

// Options control StationsWith.
type Options struct {
	// Spacing is the station spacing in metres (> 0).
	Spacing float64
	// Start is the chainage of the alignment's first point in metres
	// (within ±MaxStart).
	Start float64
	// CurveRadius is the radius in metres of the circular curve fitted at
	// every vertex (see FitCurves); 0 keeps the alignment a polyline.
	CurveRadius float64
}

// StationsWith stations alignment a: it transforms the line to the work
// CRS (f.ToWork), builds its route there with FitCurves (o.CurveRadius),
// stations the route with StationRoute (o.Spacing, o.Start), then fills X,
// Y in the DEM's CRS (f.WorkToDEM) and Lon, Lat (f.WorkToLonLat). It
// returns the route too, in the work CRS, with its curve table; each
// Curve.At names the vertex as it stands in the file (a.VertexName).
// Errors name the alignment, and a *CurveError the vertex as in the file.
func StationsWith(a Alignment, f Frames, o Options) ([]Station, *Route, error) {
	xs := make([]float64, len(a.Line))
	ys := make([]float64, len(a.Line))
	for i, p := range a.Line {
		xs[i], ys[i] = p[0], p[1]
	}
	if f.ToWork != nil {
		if err := f.ToWork.Transform(xs, ys); err != nil {
			return nil, nil, fmt.Errorf("alignment %q: transform to the work CRS: %w", a.Name, err)
		}
	}
	work := make(orb.LineString, len(xs))
	for i := range xs {
		work[i] = orb.Point{xs[i], ys[i]}
	}
	fail := func(err error) ([]Station, *Route, error) {
		return nil, nil, fmt.Errorf("alignment %q: %w", a.Name, err)
	}
	unit, err := checkUnit(f.WorkUnitToMetre)
	if err != nil {
		return fail(err)
	}
	if err := checkSpacing(o.Spacing, o.Start); err != nil {
		return fail(err)
	}
	r, err := FitCurves(work, unit, o.CurveRadius)
	if err != nil {
		var ce *CurveError
		if errors.As(err, &ce) {
			ce.At = a.VertexName(ce.Vertex - 1)
			if ce.Other > 0 {
				ce.OtherAt = a.VertexName(ce.Other - 1)
			}
		}
		return fail(err)
	}
	for i := range r.Curves {
		r.Curves[i].At = a.VertexName(r.Curves[i].Vertex - 1)
	}
	st, err := StationRoute(r, o.Spacing, o.Start)
	if err != nil {
		return fail(err)
	}
	xs, ys = make([]float64, len(st)), make([]float64, len(st))
	if err := apply(f.WorkToDEM, st, xs, ys, func(s *Station, x, y float64) { s.X, s.Y = x, y }); err != nil {
		return nil, nil, fmt.Errorf("alignment %q: transform stations to the DEM CRS: %w", a.Name, err)
	}
	if err := apply(f.WorkToLonLat, st, xs, ys, func(s *Station, x, y float64) { s.Lon, s.Lat = x, y }); err != nil {
		return nil, nil, fmt.Errorf("alignment %q: transform stations to lon/lat: %w", a.Name, err)
	}
	return st, r, nil
}

// apply transforms the work coordinates of st through t (nil: identity),
// using xs, ys as scratch, and stores the results with set.
func apply(t Transformer, st []Station, xs, ys []float64, set func(*Station, float64, float64)) error {
	for i, s := range st {
		xs[i], ys[i] = s.WorkX, s.WorkY
	}
	if t != nil {
		if err := t.Transform(xs, ys); err != nil {
			return err
		}
	}
	for i := range st {
		set(&st[i], xs[i], ys[i])
	}
	return nil
}
