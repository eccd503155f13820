package alignment

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"github.com/paulmach/orb"
)

// Mark says which fixed point of the route a station stands on; the zero
// value is a spacing station. Marks combine: a curve whose tangent takes
// the whole first segment starts at MarkStart|MarkPC, and two curves whose
// tangents meet share a MarkPT|MarkPC.
type Mark uint8

// The fixed points of a route.
const (
	// MarkStart is the route's first point.
	MarkStart Mark = 1 << iota
	// MarkEnd is its last point.
	MarkEnd
	// MarkAngle is an interior vertex kept as an angle point: the route
	// has no curves, or the curve there was skipped (see FitCurves).
	MarkAngle
	// MarkPC is the start of a curve (tangent to curve).
	MarkPC
	// MarkPT is the end of a curve (curve to tangent).
	MarkPT
)

// String names the marks, joined by "/" in the order a surveyor reads
// them along the line: "start", "PT", "PC", "angle point", "end"; "" for a
// spacing station.
func (m Mark) String() string {
	var parts []string
	for _, n := range []struct {
		m    Mark
		name string
	}{{MarkStart, "start"}, {MarkPT, "PT"}, {MarkPC, "PC"}, {MarkAngle, "angle point"}, {MarkEnd, "end"}} {
		if m&n.m != 0 {
			parts = append(parts, n.name)
		}
	}
	return strings.Join(parts, "/")
}

// Route is an alignment as built: straights and circular arcs, end to end,
// in a projected work CRS. FitCurves makes one; StationRoute stations it
// and Locate finds a point's chainage and offset on it.
type Route struct {
	// Line is the tangent polyline in the work CRS: the input line's
	// points without repeated consecutive ones. Its interior vertices are
	// the curves' PIs or the route's angle points.
	Line orb.LineString
	// UnitToMetre is the length of one work CRS unit in metres.
	UnitToMetre float64
	// Radius is the curve radius asked for, in metres; 0 for a polyline.
	Radius float64
	// Elements are the straights and arcs in order of travel; each starts
	// where the one before it ends. None has zero length.
	Elements []Element
	// EndMark is what the route's last point is (MarkEnd, with MarkPT
	// when the last curve's tangent takes the whole last segment).
	EndMark Mark
	// Curves is the curve table, in order of travel.
	Curves []Curve
	// Length is the length of the route in metres, the To of its last
	// element: the polyline's length less Σ(2T − L) over the curves.
	Length float64
}

// Element is one straight or circular arc of a Route.
type Element struct {
	// Start and End are the element's end points in the work CRS.
	Start, End orb.Point
	// From and To are the distances (m) along the route from its first
	// point to the element's start and end.
	From, To float64
	// StartAzimuth and EndAzimuth are the directions of travel at the
	// start and end, in radians clockwise from grid north, in (−π, π].
	StartAzimuth, EndAzimuth float64
	// Mark is what the element's start point is; never zero.
	Mark Mark
	// Curve is the 1-based number of the arc's curve in Route.Curves; 0
	// for a straight.
	Curve int32
	// Centre is the arc's centre in the work CRS (zero for a straight).
	Centre orb.Point
	// Radius is the arc's radius in metres (0 for a straight).
	Radius float64
	// Turn is the angle the arc turns through, in radians: positive to
	// the right (clockwise), negative to the left; 0 for a straight.
	Turn float64
}

// Curve is one simple circular curve of a Route: the arc that joins the two
// tangents meeting at a vertex (its PI). Lengths are in metres, points in
// the work CRS. The elements follow the classic circular-curve relations:
// T = R·tan(Δ/2), L = R·Δ, chord C = 2R·sin(Δ/2), external
// E = R·(sec(Δ/2) − 1), mid-ordinate M = R·(1 − cos(Δ/2)).
type Curve struct {
	// Vertex is the 1-based position of the PI in the line given to
	// FitCurves (repeated points counted).
	Vertex int
	// At names the vertex for people: "vertex 4" from FitCurves; from
	// StationsWith, as the vertex stands in the file (Alignment.VertexName).
	At string
	// PI, PC, PT and Centre are the intersection point (the vertex), the
	// start and end of the arc, and its centre.
	PI, PC, PT, Centre orb.Point
	// Deflection is the angle Δ between the tangents, in radians:
	// positive for a turn to the right (clockwise), negative to the left.
	Deflection float64
	// Radius is R; Tangent T (PI to PC, and PI to PT); Length the arc
	// length L; Chord the long chord C from PC to PT; External E (PI to
	// the middle of the arc); MidOrdinate M (middle of the chord to the
	// middle of the arc).
	Radius, Tangent, Length, Chord, External, MidOrdinate float64
	// PCDistance and PTDistance are the distances (m) along the route
	// from its first point to the PC and the PT; a station's chainage
	// there is the start chainage plus these.
	PCDistance, PTDistance float64
}

// DeflectionDegrees returns the deflection in degrees, signed as
// Deflection (positive right).
func (c Curve) DeflectionDegrees() float64 { return c.Deflection * 180 / math.Pi }

// Side returns "right" or "left", the way the curve turns.
func (c Curve) Side() string { return side(c.Deflection) }

func side(deflection float64) string {
	if deflection < 0 {
		return "left"
	}
	return "right"
}

// minExternal is the external distance (m) below which FitCurves leaves a
// vertex as an angle point instead of fitting a curve: where the arc would
// pass within 1 mm of the PI, the curve cannot be told from the angle point
// when it is set out (the same 1 mm as absorbTolerance; common practice,
// no source). This is how FitCurves reads "essentially zero deflection": it
// keeps a numerical sliver of a turn, such as rounding in collinear
// points, from becoming a curve of zero length. At R = 300 m it skips
// deflections up to about 0.30° (E ≈ R·Δ²/8).
const minExternal = 1e-3

// reversalTolerance is how close (radians) to 180° a deflection may come
// before FitCurves calls the line reversed: 1e-9 rad (0.0002″), only
// rounding; at exactly 180° the tangents are parallel and no circle
// touches both.
const reversalTolerance = 1e-9

// meetTolerance is the relative slack (of the segment length) within which
// two tangents that together exactly fill a segment are taken to meet:
// 1e-9, a micrometre a kilometre, far above float64 rounding in T and far
// below survey precision (common practice, no source).
const meetTolerance = 1e-9

// MinRadius is the smallest curve radius FitCurves takes, in metres: the
// tightest bends of small field channels are a few metres (common practice,
// no source), so a radius below 1 m is a typing or unit error. It also
// keeps every arc that FitCurves fits (external ≥ 1 mm) at least 8.9 cm
// long (L ≥ √(8·E·R)), well above chainage resolution.
const MinRadius = 1.0

// maxCurveCoord bounds the coordinates (work CRS units) of a line that
// gets curves: 1e9, beyond every projected CRS (the widest span ±4e7 m)
// and fine enough (float64 resolves 1.2e-7 units there) to place tangent
// points and centres.
const maxCurveCoord = 1e9

// Errors returned by FitCurves, wrapped with detail.
var (
	// ErrRadius is returned for a curve radius below MinRadius (other
	// than 0, for none) or not finite.
	ErrRadius = errors.New("curve radius must be a finite number of metres, at least 1 (or 0 for no curves)")
	// ErrCurveFit is matched (errors.Is) by every *CurveError.
	ErrCurveFit = errors.New("the curves do not fit the alignment")
)

// CurveError says why curves of the asked radius do not fit: the line
// turns back on itself at a vertex, or the tangents of the curves at the
// two ends of a segment are together longer than the segment (an end of
// the line, or an angle point, needs no tangent). Match it with errors.As,
// or errors.Is(err, ErrCurveFit).
type CurveError struct {
	// Vertex is the 1-based position (in the line given to FitCurves) of
	// the vertex whose curve does not fit; At names it for people.
	Vertex int
	At     string
	// Reversal is true when the line turns back on itself at Vertex; the
	// fields below are then zero but Deflection.
	Reversal bool
	// Deflection (radians, positive right) and Tangent (m) of the curve
	// at Vertex.
	Deflection, Tangent float64
	// Other is the 1-based position of the vertex at the segment's other
	// end, OtherAt its name, OtherTangent (m) its curve's tangent and
	// OtherDeflection its deflection: zero when it has no curve, and
	// OtherEnd is then "start" or "end" when it is the end of the line.
	Other                         int
	OtherAt, OtherEnd             string
	OtherDeflection, OtherTangent float64
	// Segment is the length (m) between the two vertices; Radius (m) the
	// radius asked for.
	Segment, Radius float64
	// MaxHere is the largest radius (m) whose tangents fit this segment;
	// MaxAll the largest that fits every segment of the line.
	MaxHere, MaxAll float64
}

// Error words the failure on one line, with the figures and the largest
// radius that would fit.
func (e *CurveError) Error() string {
	if e.Reversal {
		return fmt.Sprintf("%s: the line turns back on itself (deflection %.2f°), so no curve can join its tangents; remove the spike or split the alignment there",
			e.At, math.Abs(e.Deflection)*180/math.Pi)
	}
	var b strings.Builder
	fmt.Fprintf(&b, "%s: a curve of radius %s turning %.2f° %s needs tangents of %s", e.At, metres(e.Radius),
		math.Abs(e.Deflection)*180/math.Pi, side(e.Deflection), metres(e.Tangent))
	switch {
	case e.OtherTangent > 0:
		fmt.Fprintf(&b, ", and the curve at %s (%.2f° %s) needs %s: %s together, more than the %s between the two vertices",
			e.OtherAt, math.Abs(e.OtherDeflection)*180/math.Pi, side(e.OtherDeflection), metres(e.OtherTangent),
			metres(e.Tangent+e.OtherTangent), metres(e.Segment))
	case e.OtherEnd != "":
		fmt.Fprintf(&b, ", more than the %s to the %s of the line (%s)", metres(e.Segment), e.OtherEnd, e.OtherAt)
	default:
		fmt.Fprintf(&b, ", more than the %s to %s (an angle point, no curve)", metres(e.Segment), e.OtherAt)
	}
	switch {
	case e.MaxHere < MinRadius:
		b.WriteString("; not even a 1 m radius fits there: move or remove a vertex")
	case e.MaxAll < MinRadius:
		fmt.Fprintf(&b, "; a radius of at most %s fits there, but not even 1 m fits every vertex", metresDown(e.MaxHere))
	default:
		fmt.Fprintf(&b, "; a radius of at most %s fits there, at most %s at every vertex", metresDown(e.MaxHere), metresDown(e.MaxAll))
	}
	return b.String()
}

// Is reports whether target is ErrCurveFit.
func (e *CurveError) Is(target error) bool { return target == ErrCurveFit }

// metres formats a length for a message: centimetres from 1 cm to
// 10,000 km, two significant digits below and four beyond (a hostile line
// can make figures tiny or huge).
func metres(v float64) string {
	if a := math.Abs(v); a < 1e10 && (a >= 0.01 || a == 0) {
		return fmt.Sprintf("%.2f m", v)
	} else if a < 0.01 {
		return fmt.Sprintf("%.2g m", v)
	}
	return fmt.Sprintf("%.4g m", v)
}

// metresDown is metres rounded down to the centimetre, for limits: a
// radius printed as fitting must fit.
func metresDown(v float64) string {
	if math.Abs(v) < 1e10 {
		return metres(math.Floor(v*100) / 100)
	}
	return metres(v)
}

// FitCurves builds the route of line, a polyline in a projected work CRS
// whose unit is unitToMetre metres (0 means 1), with a simple circular
// curve of radius metres at each interior vertex. radius 0 gives the
// polyline itself: straights and angle points, no curves.
//
// At a vertex with deflection Δ the curve's tangents are T = R·tan(|Δ|/2)
// long and its arc L = R·|Δ|. A vertex whose curve would pass within 1 mm
// of it (external E < 1 mm, see minExternal) is kept as an angle point.
// FitCurves refuses, with a *CurveError naming the vertex and the figures,
// a line that turns back on itself (Δ = 180°) and any segment whose two
// tangents (the start and end of the line and angle points take none) are
// together longer than it; tangents that exactly fill a segment (within
// 1e-9 of it) meet there, the PT of one curve being the PC of the next.
// Repeated consecutive points are ignored; vertices are numbered by their
// position in line, repeats counted.
func FitCurves(line orb.LineString, unitToMetre, radius float64) (*Route, error) {
	unit, err := checkUnit(unitToMetre)
	if err != nil {
		return nil, err
	}
	if radius != 0 && (!(radius >= MinRadius) || math.IsInf(radius, 0)) {
		return nil, fmt.Errorf("%w (got %v)", ErrRadius, radius)
	}
	pts, pos, err := cleanLine(line)
	if err != nil {
		return nil, err
	}
	if radius > 0 {
		for i, p := range pts {
			if !(math.Abs(p[0]) <= maxCurveCoord && math.Abs(p[1]) <= maxCurveCoord) {
				return nil, fmt.Errorf("%w: %s is (%v, %v), beyond ±1e9 CRS units; curves need the line in a projected CRS",
					ErrGeometry, vertexName(pos[i]), p[0], p[1])
			}
		}
	}
	n := len(pts)
	seg := make([]float64, n-1) // segment lengths (m)
	az := make([]float64, n-1)  // segment azimuths
	length := 0.0
	for i := range seg {
		seg[i] = segLen(pts[i], pts[i+1], unit)
		az[i] = azimuth(pts[i], pts[i+1])
		length += seg[i]
	}
	if math.IsInf(length, 0) || math.IsNaN(length) {
		return nil, fmt.Errorf("%w: its length overflows", ErrGeometry)
	}
	if !(length > 0) {
		return nil, fmt.Errorf("%w: its length is zero", ErrGeometry)
	}
	if radius > 0 && length > MaxStart {
		return nil, fmt.Errorf("%w: its length %.4g m is beyond the 1e9 m that curves are fitted to", ErrGeometry, length)
	}

	// defl[i] is the deflection at vertex i; tanH[i] = T/R there, 0 where
	// the vertex stays an angle point (and at both ends).
	defl := make([]float64, n)
	tanH := make([]float64, n)
	if radius > 0 {
		for i := 1; i < n-1; i++ {
			d := math.Remainder(az[i]-az[i-1], 2*math.Pi)
			defl[i] = d
			if math.Abs(d) > math.Pi-reversalTolerance {
				return nil, &CurveError{Vertex: pos[i], At: vertexName(pos[i]), Reversal: true, Deflection: d}
			}
			h := math.Abs(d) / 2
			if t := math.Tan(h); radius*t*math.Tan(h/2) >= minExternal { // E = T·tan(Δ/4)
				tanH[i] = t
			}
		}
		if err := checkTangents(seg, defl, tanH, pos, radius); err != nil {
			return nil, err
		}
	}
	return buildRoute(pts, pos, seg, az, defl, tanH, unit, radius), nil
}

// checkTangents refuses the first segment whose tangents overlap.
func checkTangents(seg, defl, tanH []float64, pos []int, radius float64) error {
	maxAll := math.Inf(1)
	for i, s := range seg {
		if t := tanH[i] + tanH[i+1]; t > 0 {
			maxAll = min(maxAll, s/t)
		}
	}
	n := len(tanH)
	for i, s := range seg {
		ta, tb := radius*tanH[i], radius*tanH[i+1]
		if !(ta+tb > s*(1+meetTolerance)) {
			continue
		}
		e := &CurveError{Segment: s, Radius: radius, MaxHere: s / (tanH[i] + tanH[i+1]), MaxAll: maxAll}
		a, b := i, i+1 // a carries a curve; b is the other end
		if ta == 0 {
			a, b = b, a
		}
		e.Vertex, e.At, e.Deflection, e.Tangent = pos[a], vertexName(pos[a]), defl[a], radius*tanH[a]
		e.Other, e.OtherAt = pos[b], vertexName(pos[b])
		if tanH[b] > 0 {
			e.OtherDeflection, e.OtherTangent = defl[b], radius*tanH[b]
		}
		switch b {
		case 0:
			e.OtherEnd = "start"
		case n - 1:
			e.OtherEnd = "end"
		}
		return e
	}
	return nil
}

// vertexName is the default name of the vertex at 1-based position p.
func vertexName(p int) string { return fmt.Sprintf("vertex %d", p) }

// buildRoute lays out the elements: a straight along each segment between
// the tangent points, an arc at each vertex with a curve.
func buildRoute(pts orb.LineString, pos []int, seg, az, defl, tanH []float64, unit, radius float64) *Route {
	n := len(pts)
	r := &Route{Line: pts, UnitToMetre: unit, Radius: radius}
	cur, dist, mark := pts[0], 0.0, MarkStart
	add := func(e Element) {
		e.Start, e.From, e.Mark = cur, dist, mark
		r.Elements = append(r.Elements, e)
		cur, dist = e.End, e.To
	}
	prevT := 0.0 // tangent (m) the previous curve took from this segment
	for i := 1; i < n; i++ {
		t := radius * tanH[i]
		if i == n-1 {
			t = 0
		}
		a := az[i-1]
		end := pts[i]
		if t > 0 {
			end = offset(pts[i], a+math.Pi, t/unit)
		}
		// A straight that the tangents leave shorter than the meeting
		// slack, or below chainage resolution, is no straight: the curves
		// meet. Between angle points every segment is a straight, as
		// StationLine has always taken it.
		if l := seg[i-1] - prevT - t; (l > seg[i-1]*meetTolerance && dist+l > dist) || (prevT == 0 && t == 0) {
			add(Element{End: end, To: dist + l, StartAzimuth: a, EndAzimuth: a})
			mark = 0
		}
		if i == n-1 {
			break
		}
		if t == 0 {
			mark |= MarkAngle
			cur = pts[i] // exact, whatever the straight's rounding
			prevT = 0
			continue
		}
		mark |= MarkPC
		d := defl[i]
		sgn := math.Copysign(1, d)
		out := az[i]
		rw := radius / unit
		centre := offset(cur, a+sgn*math.Pi/2, rw)
		pt := offset(pts[i], out, t/unit)
		h := math.Abs(d) / 2
		c := Curve{
			Vertex: pos[i], At: vertexName(pos[i]), PI: pts[i], PC: cur, PT: pt, Centre: centre,
			Deflection: d, Radius: radius, Tangent: t, Length: radius * math.Abs(d),
			Chord: 2 * radius * math.Sin(h), External: t * math.Tan(h/2), MidOrdinate: 2 * radius * math.Sin(h/2) * math.Sin(h/2),
			PCDistance: dist,
		}
		add(Element{End: pt, To: dist + c.Length, StartAzimuth: a, EndAzimuth: out,
			Curve: int32(len(r.Curves) + 1), Centre: centre, Radius: radius, Turn: d})
		c.PTDistance = dist
		r.Curves = append(r.Curves, c)
		mark = MarkPT
		prevT = t
	}
	r.EndMark = mark | MarkEnd
	r.Length = dist
	return r
}

// offset returns p moved d work units in direction az.
func offset(p orb.Point, az, d float64) orb.Point {
	return orb.Point{p[0] + d*math.Sin(az), p[1] + d*math.Cos(az)}
}

// cleanLine drops repeated consecutive points and refuses non-finite ones.
// pos[i] is the 1-based position in line of the kept point i.
func cleanLine(line orb.LineString) (orb.LineString, []int, error) {
	pts := make(orb.LineString, 0, len(line))
	pos := make([]int, 0, len(line))
	for i, p := range line {
		if math.IsNaN(p[0]) || math.IsNaN(p[1]) || math.IsInf(p[0], 0) || math.IsInf(p[1], 0) {
			return nil, nil, fmt.Errorf("%w: vertex %d is (%v, %v)", ErrGeometry, i+1, p[0], p[1])
		}
		if len(pts) == 0 || p != pts[len(pts)-1] {
			pts = append(pts, p)
			pos = append(pos, i+1)
		}
	}
	if len(pts) < 2 {
		return nil, nil, fmt.Errorf("%w: %w", ErrGeometry, ErrTooFewPoints)
	}
	return pts, pos, nil
}

// checkUnit validates a work CRS unit length; 0 means 1.
func checkUnit(u float64) (float64, error) {
	switch {
	case u == 0:
		return 1, nil
	case !(u > 0) || math.IsInf(u, 0):
		return 0, fmt.Errorf("%w (got %v)", ErrUnit, u)
	}
	return u, nil
}

// checkSpacing validates a station spacing and a start chainage.
func checkSpacing(spacing, start float64) error {
	if !(spacing > 0) || math.IsInf(spacing, 0) {
		return fmt.Errorf("%w (got %v)", ErrSpacing, spacing)
	}
	if !(math.Abs(start) <= MaxStart) {
		return fmt.Errorf("%w (got %v)", ErrStart, start)
	}
	return nil
}

// Locate finds the point of the route nearest to (x, y), given in the work
// CRS. It returns its distance along the route from the first point
// (m; the chainage is the start chainage plus this) and the signed
// distance from it to (x, y) in metres, positive to the right of travel.
// On a straight and on an arc the nearest point is the foot of the
// perpendicular (the radial, on an arc) where that falls on the element;
// beyond the route's ends it is the end point. Both are NaN for a
// non-finite point or an empty route.
func (r *Route) Locate(x, y float64) (along, offset float64) {
	along, offset = math.NaN(), math.NaN()
	if r == nil || math.IsNaN(x) || math.IsNaN(y) || math.IsInf(x, 0) || math.IsInf(y, 0) {
		return along, offset
	}
	u := r.UnitToMetre
	if u == 0 {
		u = 1
	}
	p := orb.Point{x, y}
	best := math.Inf(1)
	for i := range r.Elements {
		a, foot, az := r.Elements[i].nearest(p, u)
		dx, dy := p[0]-foot[0], p[1]-foot[1]
		if d := math.Hypot(dx, dy); d < best {
			best, along, offset = d, a, d*u
			// The cross product of the direction of travel and foot→p is
			// positive when p lies to the left.
			if math.Sin(az)*dy-math.Cos(az)*dx > 0 {
				offset = -offset
			}
		}
	}
	return along, offset
}

// nearest returns the point of e nearest to p: its distance along the
// route (m), the point, and the direction of travel there.
func (e *Element) nearest(p orb.Point, u float64) (along float64, foot orb.Point, az float64) {
	a, b := e.Start, e.End
	if e.Curve == 0 {
		dx, dy := b[0]-a[0], b[1]-a[1]
		t := 0.0
		if l := math.Hypot(dx, dy); l > 0 { // hypot: no overflow on huge lines
			t = min(max(((p[0]-a[0])*(dx/l)+(p[1]-a[1])*(dy/l))/l, 0), 1)
		}
		return e.From + t*(e.To-e.From), orb.Point{a[0] + t*dx, a[1] + t*dy}, e.StartAzimuth
	}
	sgn := math.Copysign(1, e.Turn)
	theta0 := math.Atan2(a[0]-e.Centre[0], a[1]-e.Centre[1])
	phi := math.Mod(sgn*(math.Atan2(p[0]-e.Centre[0], p[1]-e.Centre[1])-theta0), 2*math.Pi)
	if phi < 0 {
		phi += 2 * math.Pi
	}
	if phi <= math.Abs(e.Turn) {
		return e.From + phi*e.Radius, offset(e.Centre, theta0+sgn*phi, e.Radius/u), normAzimuth(e.StartAzimuth + sgn*phi)
	}
	if math.Hypot(p[0]-a[0], p[1]-a[1]) <= math.Hypot(p[0]-b[0], p[1]-b[1]) {
		return e.From, a, e.StartAzimuth
	}
	return e.To, b, e.EndAzimuth
}

// NearestStation returns the index of the station nearest to (x, y) in the
// work CRS (WorkX, WorkY) and its distance in work CRS units; the first of
// equally near stations. It returns −1 and +Inf for no stations, −1 and
// NaN for a point that is not finite. For the distance to the line itself
// (between stations, and along arcs), use Route.Locate.
func NearestStation(st []Station, x, y float64) (index int, distance float64) {
	if math.IsNaN(x) || math.IsNaN(y) || math.IsInf(x, 0) || math.IsInf(y, 0) {
		return -1, math.NaN()
	}
	index, distance = -1, math.Inf(1)
	for i, s := range st {
		if d := math.Hypot(s.WorkX-x, s.WorkY-y); d < distance {
			index, distance = i, d
		}
	}
	return index, distance
}
