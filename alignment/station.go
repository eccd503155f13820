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
	// it, for the last vertex).
	Azimuth float64
	// CrossAzimuth is the direction of the station's cross-section line,
	// pointing to the right of the direction of travel, in radians
	// clockwise from the work CRS's grid north: Azimuth + π/2 on a
	// straight, the bisector of the angle between the two segments at an
	// interior vertex.
	CrossAzimuth float64
	// Vertex is true when the station is a vertex of the alignment
	// (including the first and the last point).
	Vertex bool

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
// coordinates in the work CRS.
func StationLine(line orb.LineString, unitToMetre, spacing, start float64) ([]Station, error) {
	switch {
	case unitToMetre == 0:
		unitToMetre = 1
	case !(unitToMetre > 0) || math.IsInf(unitToMetre, 0):
		return nil, fmt.Errorf("%w (got %v)", ErrUnit, unitToMetre)
	}
	if !(spacing > 0) || math.IsInf(spacing, 0) {
		return nil, fmt.Errorf("%w (got %v)", ErrSpacing, spacing)
	}
	if !(math.Abs(start) <= MaxStart) {
		return nil, fmt.Errorf("%w (got %v)", ErrStart, start)
	}
	pts := make(orb.LineString, 0, len(line))
	for i, p := range line {
		if math.IsNaN(p[0]) || math.IsNaN(p[1]) || math.IsInf(p[0], 0) || math.IsInf(p[1], 0) {
			return nil, fmt.Errorf("%w: vertex %d is (%v, %v)", ErrGeometry, i+1, p[0], p[1])
		}
		if len(pts) == 0 || p != pts[len(pts)-1] {
			pts = append(pts, p)
		}
	}
	if len(pts) < 2 {
		return nil, fmt.Errorf("%w: %w", ErrGeometry, ErrTooFewPoints)
	}
	// dist[i] is the distance (m) from the first vertex to vertex i,
	// accumulated exactly as Length does.
	dist := make([]float64, len(pts))
	for i := 1; i < len(pts); i++ {
		dist[i] = dist[i-1] + segLen(pts[i-1], pts[i], unitToMetre)
	}
	length := dist[len(dist)-1]
	if math.IsInf(length, 0) || math.IsNaN(length) {
		return nil, fmt.Errorf("%w: its length overflows", ErrGeometry)
	}
	if !(length > 0) {
		return nil, fmt.Errorf("%w: its length is zero", ErrGeometry)
	}
	regular := math.Ceil(length/spacing) - 1 // spacing stations strictly inside
	if regular < 0 {
		regular = 0
	}
	if regular+float64(len(pts)) > MaxStations {
		return nil, fmt.Errorf("%w: spacing %g m on a %.3f m alignment gives about %.0f stations; the limit is %d, so use a spacing of at least %.3g m",
			ErrTooManyStations, spacing, length, regular+float64(len(pts)), MaxStations, length/(MaxStations-float64(len(pts))))
	}

	out := make([]Station, 0, int(regular)+len(pts))
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
	// az[i] is the azimuth of the segment from vertex i to vertex i+1.
	az := make([]float64, len(pts)-1)
	for i := range az {
		az[i] = azimuth(pts[i], pts[i+1])
	}
	vertex := func(i int) Station {
		p := pts[i]
		a := az[min(i, len(az)-1)]
		cross := a + math.Pi/2
		if i > 0 && i < len(az) {
			cross = bisector(az[i-1], a)
		}
		return Station{Chainage: start + dist[i], X: p[0], Y: p[1], WorkX: p[0], WorkY: p[1],
			Azimuth: a, CrossAzimuth: cross, Vertex: true}
	}

	emit(vertex(0), false)
	seg := 1 // next vertex ahead
	for k := 1.0; k <= regular; k++ {
		d := k * spacing
		for seg < len(pts)-1 && dist[seg] <= d+absorbTolerance {
			emit(vertex(seg), false)
			seg++
		}
		if d-dist[seg-1] <= absorbTolerance || dist[seg]-d <= absorbTolerance {
			continue // a vertex stands here
		}
		a, b := pts[seg-1], pts[seg]
		t := (d - dist[seg-1]) / (dist[seg] - dist[seg-1])
		x, y := a[0]+t*(b[0]-a[0]), a[1]+t*(b[1]-a[1])
		emit(Station{Chainage: start + d, X: x, Y: y, WorkX: x, WorkY: y, Azimuth: az[seg-1], CrossAzimuth: az[seg-1] + math.Pi/2}, false)
	}
	for ; seg < len(pts); seg++ {
		emit(vertex(seg), seg == len(pts)-1)
	}
	if len(out) < 2 {
		return nil, fmt.Errorf("%w: its length %g m is below the chainage resolution at %g m", ErrGeometry, length, start)
	}
	return out, nil
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

// Stations stations alignment a: it transforms the line to the work CRS
// (f.ToWork), stations it there with StationLine (spacing and start
// chainage in metres), then fills X, Y in the DEM's CRS (f.WorkToDEM) and
// Lon, Lat (f.WorkToLonLat). Errors name the alignment.
func Stations(a Alignment, f Frames, spacing, start float64) ([]Station, error) {
	xs := make([]float64, len(a.Line))
	ys := make([]float64, len(a.Line))
	for i, p := range a.Line {
		xs[i], ys[i] = p[0], p[1]
	}
	if f.ToWork != nil {
		if err := f.ToWork.Transform(xs, ys); err != nil {
			return nil, fmt.Errorf("alignment %q: transform to the work CRS: %w", a.Name, err)
		}
	}
	work := make(orb.LineString, len(xs))
	for i := range xs {
		work[i] = orb.Point{xs[i], ys[i]}
	}
	st, err := StationLine(work, f.WorkUnitToMetre, spacing, start)
	if err != nil {
		return nil, fmt.Errorf("alignment %q: %w", a.Name, err)
	}
	xs, ys = make([]float64, len(st)), make([]float64, len(st))
	if err := apply(f.WorkToDEM, st, xs, ys, func(s *Station, x, y float64) { s.X, s.Y = x, y }); err != nil {
		return nil, fmt.Errorf("alignment %q: transform stations to the DEM CRS: %w", a.Name, err)
	}
	if err := apply(f.WorkToLonLat, st, xs, ys, func(s *Station, x, y float64) { s.Lon, s.Lat = x, y }); err != nil {
		return nil, fmt.Errorf("alignment %q: transform stations to lon/lat: %w", a.Name, err)
	}
	return st, nil
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
