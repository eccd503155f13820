// Package landxml writes canal alignments for surveyors and road/civil
// design software as LandXML 1.2 (namespace
// http://www.landxml.org/schema/LandXML-1.2).
//
// A Document holds, per alignment, the horizontal geometry as lines and
// circular arcs (Alignment/CoordGeom with Line and Curve elements), the
// design bed profile as points of vertical intersection
// (Profile/ProfAlign/PVI) and the stake points (CgPoints/CgPoint). Inputs
// are SI: metres in a projected CRS. The writer converts every length,
// station, coordinate and elevation to the document's linear unit, which
// must be the CRS's own unit, as LandXML has one linear unit for all of
// them.
//
// Conventions of the LandXML 1.2 schema that the writer follows:
//
//   - coordinates are written northing first: "northing easting" in Start,
//     End, Center and PI, "northing easting elevation" in CgPoint (the
//     schema documents PointType's text as "north east" or
//     "north east elev");
//   - stations are plain numbers in the linear unit (no "0+000" text);
//   - a PVI's text is "station elevation".
//
// A drop (a vertical step in the bed) is given as two successive profile
// points at the same station, the higher (crest) first. The schema itself
// would accept two PVIs at one station (it types a PVI as a list of
// doubles and orders nothing), but software that reads a ProfAlign computes
// the grade between successive PVIs and divides by their station
// difference. The writer therefore puts the toe DropRun (0.001 of the
// linear unit, 1 mm) downstream of the crest: every grade is finite, and
// the step's horizontal error is below what a surveyor sets out. The two
// PVIs carry desc "drop crest" and "drop toe" unless the caller gives a
// desc.
//
// The output is the same bytes on every run: fixed decimals (Decimals), a
// fixed element and attribute order, and the date and time attributes from
// Document.Date, which the caller sets from the inputs, never from the
// clock. All text is escaped (see escape).
package landxml

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"time"
	"unicode/utf8"

	"canalstep/report/layers"
)

// Namespace is the LandXML 1.2 namespace.
const Namespace = "http://www.landxml.org/schema/LandXML-1.2"

// schemaLocation points validators at the published schema.
const schemaLocation = Namespace + " " + Namespace + "/LandXML-1.2.xsd"

// Decimals is the number of decimals of every length, station, coordinate
// and elevation written (0.1 mm, or 0.0001 ft).
const Decimals = 4

// DropRun is the station offset, in the document's linear unit, of a drop's
// toe PVI from its crest PVI.
const DropRun = 0.001

// Unit is the linear unit of a document.
type Unit int

// Linear units.
const (
	Meter        Unit = iota // metres: Units/Metric
	USSurveyFoot             // US survey feet, 1200/3937 m: Units/Imperial linearUnit="USSurveyFoot"
	Foot                     // international feet, 0.3048 m: Units/Imperial linearUnit="foot"
)

// perMetre returns how many of u make one metre. The US survey foot is
// 1200/3937 m and the international foot 0.3048 m exactly, by definition
// (NIST Handbook 44, Appendix C, from memory).
func (u Unit) perMetre() float64 {
	switch u {
	case USSurveyFoot:
		return 3937.0 / 1200.0
	case Foot:
		return 1 / 0.3048
	}
	return 1
}

// CRS names the coordinate reference system of the coordinates.
type CRS struct {
	Name string // written as name, if not ""
	EPSG int    // written as epsgCode, if > 0
	WKT  string // written as ogcWktCode, if not ""
}

// Point is a position in a projected CRS, metres.
type Point struct{ Easting, Northing float64 }

// SegmentKind is the kind of a horizontal geometry element.
type SegmentKind int

// Segment kinds.
const (
	Line SegmentKind = iota + 1 // a straight: LandXML Line
	Arc                         // a circular arc: LandXML Curve
)

// Segment is one element of an alignment's horizontal geometry.
type Segment struct {
	Kind       SegmentKind
	Start, End Point
	// Center is the centre of an Arc; Start and End must lie on one circle
	// about it (to 1 mm).
	Center Point
	// Clockwise says which way an Arc turns from Start to End (to the
	// right when true). An arc sweeps less than a full circle.
	Clockwise bool
}

// LineSegment returns a straight from a to b.
func LineSegment(a, b Point) Segment { return Segment{Kind: Line, Start: a, End: b} }

// ArcSegment returns a circular arc from a to b about centre c.
func ArcSegment(a, b, c Point, clockwise bool) Segment {
	return Segment{Kind: Arc, Start: a, End: b, Center: c, Clockwise: clockwise}
}

// ProfilePoint is one point of the design bed profile: a grade break, or
// one side of a drop (two points at one station, crest first).
type ProfilePoint struct {
	Station   float64 // m along the alignment, from Alignment.StaStart
	Elevation float64 // m
	Desc      string  // written as desc, if not ""
}

// Profile is the design bed profile of an alignment.
type Profile struct {
	Name   string // the ProfAlign's name, required when there are points
	Desc   string
	Points []ProfilePoint // none, or at least two, stations non-decreasing
}

// Stake is one stake point for setting out.
type Stake struct {
	Name string // unique in the document
	Code string // point code, written as code if not ""
	Desc string // written as desc if not ""
	Point
	Elevation float64 // m; NaN writes a 2D point
}

// Alignment is one canal centreline.
type Alignment struct {
	Name     string  // required
	Desc     string  // written as desc, if not ""
	StaStart float64 // m: station of the first point
	Segments []Segment
	Profile  Profile
	Stakes   []Stake // written as a CgPoints group named after the alignment
}

// Document is one LandXML file.
type Document struct {
	// Date gives the date and time attributes (in UTC). Set it from the
	// inputs, never from the clock.
	Date       time.Time
	Unit       Unit
	CRS        CRS
	Version    string // canalstep's version, written in Application if not ""
	Alignments []Alignment
}

// Limits on a document (common practice, no source): far above one
// project's needs, they bound the output.
const (
	MaxAlignments  = 10000
	MaxSegments    = 1 << 20 // per alignment
	MaxPoints      = 1 << 22 // profile points or stakes per alignment
	maxCoordinate  = 1e9     // m: |easting|, |northing|, |station|, |elevation|
	closeTolerance = 0.001   // m: gap allowed between segments; radius mismatch of an arc
)

// ErrInvalid is wrapped by every error about the document's content.
var ErrInvalid = errors.New("landxml: invalid document")

// Write validates d and writes it to w. Nothing is written when d is
// invalid; an error from w may leave a partial document, so callers stage
// the file and rename it only on success.
func Write(w io.Writer, d *Document) error {
	if err := d.validate(); err != nil {
		return err
	}
	e := encoder{w: bufio.NewWriterSize(w, 64<<10), k: d.Unit.perMetre()}
	e.document(d)
	if e.err != nil {
		return fmt.Errorf("landxml: %w", e.err)
	}
	if err := e.w.Flush(); err != nil {
		return fmt.Errorf("landxml: %w", err)
	}
	return nil
}

func invalid(format string, args ...any) error {
	return fmt.Errorf("%w: "+format, append([]any{ErrInvalid}, args...)...)
}

func (d *Document) validate() error {
	if d.Unit < Meter || d.Unit > Foot {
		return invalid("unknown unit %d", int(d.Unit))
	}
	if y := d.Date.UTC().Year(); y < 1 || y > 9999 {
		return invalid("date %v outside years 1 to 9999", d.Date)
	}
	if d.CRS.EPSG < 0 {
		return invalid("EPSG code %d", d.CRS.EPSG)
	}
	for _, s := range []string{d.CRS.Name, d.CRS.WKT, d.Version} {
		if err := layers.CheckText(s); err != nil {
			return invalid("%v", err)
		}
	}
	if len(d.Alignments) > MaxAlignments {
		return invalid("%d alignments, at most %d", len(d.Alignments), MaxAlignments)
	}
	names := map[string]string{}
	for i := range d.Alignments {
		a := &d.Alignments[i]
		if err := a.validate(d.Unit.perMetre(), names); err != nil {
			return invalid("alignment %d %q: %v", i, a.Name, err)
		}
	}
	return nil
}

func finite(vs ...float64) bool {
	for _, v := range vs {
		if math.IsNaN(v) || math.Abs(v) > maxCoordinate {
			return false
		}
	}
	return true
}

func (a *Alignment) validate(k float64, names map[string]string) error {
	if a.Name == "" {
		return errors.New("no name")
	}
	for _, s := range []string{a.Name, a.Desc, a.Profile.Name, a.Profile.Desc} {
		if err := layers.CheckText(s); err != nil {
			return err
		}
	}
	if !finite(a.StaStart) {
		return fmt.Errorf("start station %v is not a finite number below %g m", a.StaStart, maxCoordinate)
	}
	if len(a.Segments) == 0 || len(a.Segments) > MaxSegments {
		return fmt.Errorf("%d segments, want 1 to %d", len(a.Segments), MaxSegments)
	}
	length := 0.0
	for i, s := range a.Segments {
		g, err := s.geometry()
		if err != nil {
			return fmt.Errorf("segment %d: %v", i, err)
		}
		if i > 0 {
			prev := a.Segments[i-1].End
			if gap := math.Hypot(s.Start.Easting-prev.Easting, s.Start.Northing-prev.Northing); !(gap <= closeTolerance) {
				return fmt.Errorf("segment %d starts %.4f m from where segment %d ends", i, gap, i-1)
			}
		}
		length += g.length
	}
	if err := a.Profile.validate(a.StaStart, a.StaStart+length, k); err != nil {
		return fmt.Errorf("profile: %v", err)
	}
	if len(a.Stakes) > MaxPoints {
		return fmt.Errorf("%d stakes, at most %d", len(a.Stakes), MaxPoints)
	}
	for i, s := range a.Stakes {
		if s.Name == "" {
			return fmt.Errorf("stake %d has no name", i)
		}
		for _, t := range []string{s.Name, s.Code, s.Desc} {
			if err := layers.CheckText(t); err != nil {
				return fmt.Errorf("stake %d: %v", i, err)
			}
		}
		if !finite(s.Easting, s.Northing) || !math.IsNaN(s.Elevation) && !finite(s.Elevation) {
			return fmt.Errorf("stake %q: position (%v, %v, %v) is not finite", s.Name, s.Easting, s.Northing, s.Elevation)
		}
		if other, ok := names[s.Name]; ok {
			return fmt.Errorf("stake name %q is used again (first in %q): surveyors' controllers need unique point names", s.Name, other)
		}
		names[s.Name] = a.Name
	}
	return nil
}

// validate checks the profile against the alignment's stations [from, to]
// (m) and the stations as written (k units per metre, Decimals decimals):
// they must increase strictly once each drop's toe is moved DropRun
// downstream.
func (p *Profile) validate(from, to, k float64) error {
	n := len(p.Points)
	if n == 0 {
		return nil
	}
	if n == 1 || n > MaxPoints {
		return fmt.Errorf("%d points, want none or 2 to %d", n, MaxPoints)
	}
	if p.Name == "" {
		return errors.New("no name")
	}
	tol := closeTolerance + DropRun/k
	prev := math.Inf(-1)
	for i, q := range p.Points {
		if err := layers.CheckText(q.Desc); err != nil {
			return fmt.Errorf("point %d: %v", i, err)
		}
		if !finite(q.Station, q.Elevation) {
			return fmt.Errorf("point %d (%v, %v) is not finite", i, q.Station, q.Elevation)
		}
		if q.Station < from-tol || q.Station > to+tol {
			return fmt.Errorf("point %d at station %.4f m lies off the alignment (%.4f to %.4f m)", i, q.Station, from, to)
		}
		if i > 0 && q.Station == p.Points[i-1].Station {
			if i > 1 && p.Points[i-2].Station == q.Station {
				return fmt.Errorf("three points at station %.4f m", q.Station)
			}
			if !(q.Elevation < p.Points[i-1].Elevation) {
				return fmt.Errorf("the step at station %.4f m rises (%.4f to %.4f m); a drop's crest comes first", q.Station, p.Points[i-1].Elevation, q.Elevation)
			}
		}
		s := round(p.fileStation(i, k))
		if !(s > prev) {
			return fmt.Errorf("point %d at station %.4f m is not downstream of point %d once written (%.*f after %.*f)", i, q.Station, i-1, Decimals, s, Decimals, prev)
		}
		prev = s
	}
	return nil
}

// fileStation returns point i's station in the file's unit: a drop's toe
// (the second of two points at one station) moves DropRun downstream.
func (p *Profile) fileStation(i int, k float64) float64 {
	s := p.Points[i].Station * k
	if i > 0 && p.Points[i-1].Station == p.Points[i].Station {
		s += DropRun
	}
	return s
}

func round(v float64) float64 {
	r, _ := strconv.ParseFloat(strconv.FormatFloat(v, 'f', Decimals, 64), 64)
	return r
}

// arcGeometry is what the writer derives from a segment, in metres.
type arcGeometry struct {
	length float64
	radius float64 // Arc only
	pi     *Point  // Arc only: intersection of the end tangents; nil when the arc sweeps 180° or more
}

// geometry checks a segment and derives its length and, for an arc, its
// radius and point of intersection:
//
//	R = |Start − Center|,  Δ = sweep angle in the direction of turn,
//	L = R·Δ,  PI = Center + R/cos(Δ/2) · (unit vector along the bisector)
//
// (circular curve geometry, exact analytic case, from memory). For Δ ≥ 180°
// the tangents do not meet ahead of the arc and PI is left out (the schema
// makes it optional).
func (s Segment) geometry() (arcGeometry, error) {
	if !finite(s.Start.Easting, s.Start.Northing, s.End.Easting, s.End.Northing) {
		return arcGeometry{}, fmt.Errorf("ends (%v, %v) are not finite", s.Start, s.End)
	}
	switch s.Kind {
	case Line:
		l := math.Hypot(s.End.Easting-s.Start.Easting, s.End.Northing-s.Start.Northing)
		if !(l > 0) {
			return arcGeometry{}, errors.New("a line of zero length")
		}
		return arcGeometry{length: l}, nil
	case Arc:
	default:
		return arcGeometry{}, fmt.Errorf("unknown kind %d", int(s.Kind))
	}
	c := s.Center
	if !finite(c.Easting, c.Northing) {
		return arcGeometry{}, fmt.Errorf("centre %v is not finite", c)
	}
	r := math.Hypot(s.Start.Easting-c.Easting, s.Start.Northing-c.Northing)
	r2 := math.Hypot(s.End.Easting-c.Easting, s.End.Northing-c.Northing)
	if !(r > closeTolerance) {
		return arcGeometry{}, fmt.Errorf("an arc of radius %.4f m", r)
	}
	if math.Abs(r-r2) > closeTolerance+1e-9*r {
		return arcGeometry{}, fmt.Errorf("start and end lie %.4f and %.4f m from the centre", r, r2)
	}
	a0 := math.Atan2(s.Start.Northing-c.Northing, s.Start.Easting-c.Easting)
	a1 := math.Atan2(s.End.Northing-c.Northing, s.End.Easting-c.Easting)
	sweep := a1 - a0 // counterclockwise
	if s.Clockwise {
		sweep = -sweep
	}
	sweep = math.Mod(sweep+4*math.Pi, 2*math.Pi)
	if !(sweep*r > closeTolerance) {
		return arcGeometry{}, errors.New("an arc of zero length (start equals end; a full circle is not an alignment element)")
	}
	g := arcGeometry{length: r * sweep, radius: r}
	if sweep < math.Pi-1e-9 {
		mid := a0 + sweep/2
		if s.Clockwise {
			mid = a0 - sweep/2
		}
		d := r / math.Cos(sweep/2)
		g.pi = &Point{Easting: c.Easting + d*math.Cos(mid), Northing: c.Northing + d*math.Sin(mid)}
	}
	return g, nil
}

// caution is the safety notice every plan output carries.
const caution = "<!-- " + layers.Caution + " -->\n"

// encoder writes the document; it keeps the first write error.
type encoder struct {
	w   *bufio.Writer
	k   float64 // file units per metre
	buf []byte
	err error
}

func (e *encoder) raw(s string) {
	if e.err == nil {
		_, e.err = e.w.WriteString(s)
	}
}

func (e *encoder) bytes(b []byte) {
	if e.err == nil {
		_, e.err = e.w.Write(b)
	}
}

// attr writes ` name="value"` with value escaped.
func (e *encoder) attr(name, value string) {
	e.buf = append(e.buf[:0], ' ')
	e.buf = append(e.buf, name...)
	e.buf = append(e.buf, '=', '"')
	e.buf = escape(e.buf, value)
	e.buf = append(e.buf, '"')
	e.bytes(e.buf)
}

// num writes ` name="v"` for a length in metres, converted to file units.
func (e *encoder) num(name string, metres float64) {
	e.buf = append(e.buf[:0], ' ')
	e.buf = append(e.buf, name...)
	e.buf = append(e.buf, '=', '"')
	e.buf = layers.FormatFixed(e.buf, metres*e.k, Decimals, false)
	e.buf = append(e.buf, '"')
	e.bytes(e.buf)
}

// coords writes the text of a PointType element: northing first.
func (e *encoder) coords(tag string, p Point, elev float64) {
	e.buf = append(e.buf[:0], '<')
	e.buf = append(e.buf, tag...)
	e.buf = append(e.buf, '>')
	e.buf = e.appendPoint(e.buf, p, elev)
	e.buf = append(e.buf, "</"...)
	e.buf = append(e.buf, tag...)
	e.buf = append(e.buf, '>')
	e.bytes(e.buf)
}

func (e *encoder) appendPoint(b []byte, p Point, elev float64) []byte {
	b = layers.FormatFixed(b, p.Northing*e.k, Decimals, false)
	b = append(b, ' ')
	b = layers.FormatFixed(b, p.Easting*e.k, Decimals, false)
	if !math.IsNaN(elev) {
		b = append(b, ' ')
		b = layers.FormatFixed(b, elev*e.k, Decimals, false)
	}
	return b
}

func (e *encoder) document(d *Document) {
	t := d.Date.UTC()
	e.raw(`<?xml version="1.0" encoding="UTF-8"?>` + "\n" + caution)
	e.raw(`<LandXML xmlns="` + Namespace + `" xmlns:xsi="http://www.w3.org/2001/XMLSchema-instance"`)
	e.attr("xsi:schemaLocation", schemaLocation)
	e.attr("version", "1.2")
	e.attr("date", t.Format("2006-01-02"))
	e.attr("time", t.Format("15:04:05"))
	e.attr("language", "English")
	e.attr("readOnly", "false")
	e.raw(">\n  <Units>\n")
	switch d.Unit {
	case Meter:
		e.raw(`    <Metric linearUnit="meter" areaUnit="squareMeter" volumeUnit="cubicMeter"`)
	case USSurveyFoot:
		e.raw(`    <Imperial linearUnit="USSurveyFoot" areaUnit="squareFoot" volumeUnit="cubicYard"`)
	case Foot:
		e.raw(`    <Imperial linearUnit="foot" areaUnit="squareFoot" volumeUnit="cubicYard"`)
	}
	if d.Unit == Meter {
		e.raw(` temperatureUnit="celsius" pressureUnit="milliBars"`)
	} else {
		e.raw(` temperatureUnit="fahrenheit" pressureUnit="inchHG"`)
	}
	e.raw(` angularUnit="decimal degrees" directionUnit="decimal degrees"/>` + "\n  </Units>\n")
	if d.CRS != (CRS{}) {
		e.raw("  <CoordinateSystem")
		if d.CRS.Name != "" {
			e.attr("name", d.CRS.Name)
		}
		if d.CRS.EPSG > 0 {
			e.attr("epsgCode", strconv.Itoa(d.CRS.EPSG))
		}
		if d.CRS.WKT != "" {
			e.attr("ogcWktCode", d.CRS.WKT)
		}
		e.raw("/>\n")
	}
	e.raw(`  <Application name="canalstep" desc="irrigation canal design aid: preliminary design only"`)
	if d.Version != "" {
		e.attr("version", d.Version)
	}
	e.raw("/>\n")
	if len(d.Alignments) > 0 {
		e.raw("  <Alignments>\n")
		for i := range d.Alignments {
			e.alignment(&d.Alignments[i])
		}
		e.raw("  </Alignments>\n")
	}
	for i := range d.Alignments {
		a := &d.Alignments[i]
		if len(a.Stakes) == 0 {
			continue
		}
		e.raw("  <CgPoints")
		e.attr("name", a.Name)
		e.attr("desc", "stake points")
		e.raw(">\n")
		for _, s := range a.Stakes {
			e.raw("    <CgPoint")
			e.attr("name", s.Name)
			if s.Code != "" {
				e.attr("code", s.Code)
			}
			if s.Desc != "" {
				e.attr("desc", s.Desc)
			}
			e.buf = append(e.buf[:0], '>')
			e.buf = e.appendPoint(e.buf, s.Point, s.Elevation)
			e.buf = append(e.buf, "</CgPoint>\n"...)
			e.bytes(e.buf)
		}
		e.raw("  </CgPoints>\n")
	}
	e.raw("</LandXML>\n")
}

func (e *encoder) alignment(a *Alignment) {
	geoms := make([]arcGeometry, len(a.Segments))
	length := 0.0
	for i, s := range a.Segments {
		geoms[i], _ = s.geometry() // validated
		length += geoms[i].length
	}
	e.raw("    <Alignment")
	e.attr("name", a.Name)
	e.num("length", length)
	e.num("staStart", a.StaStart)
	if a.Desc != "" {
		e.attr("desc", a.Desc)
	}
	e.raw(">\n      <CoordGeom>\n")
	sta := a.StaStart
	for i, s := range a.Segments {
		g := geoms[i]
		if s.Kind == Line {
			e.raw("        <Line")
			e.num("staStart", sta)
			e.num("length", g.length)
			e.raw(">")
			e.coords("Start", s.Start, math.NaN())
			e.coords("End", s.End, math.NaN())
			e.raw("</Line>\n")
		} else {
			e.raw("        <Curve")
			if s.Clockwise {
				e.attr("rot", "cw")
			} else {
				e.attr("rot", "ccw")
			}
			e.attr("crvType", "arc")
			e.num("staStart", sta)
			e.num("length", g.length)
			e.num("radius", g.radius)
			e.raw(">")
			e.coords("Start", s.Start, math.NaN())
			e.coords("Center", s.Center, math.NaN())
			e.coords("End", s.End, math.NaN())
			if g.pi != nil {
				e.coords("PI", *g.pi, math.NaN())
			}
			e.raw("</Curve>\n")
		}
		sta += g.length
	}
	e.raw("      </CoordGeom>\n")
	p := &a.Profile
	if len(p.Points) > 0 {
		e.raw("      <Profile")
		e.attr("name", p.Name)
		e.raw(">\n        <ProfAlign")
		e.attr("name", p.Name)
		if p.Desc != "" {
			e.attr("desc", p.Desc)
		}
		e.raw(">\n")
		for i, q := range p.Points {
			desc := q.Desc
			if desc == "" && i+1 < len(p.Points) && p.Points[i+1].Station == q.Station {
				desc = "drop crest"
			}
			if desc == "" && i > 0 && p.Points[i-1].Station == q.Station {
				desc = "drop toe"
			}
			e.raw("          <PVI")
			if desc != "" {
				e.attr("desc", desc)
			}
			e.buf = append(e.buf[:0], '>')
			e.buf = layers.FormatFixed(e.buf, p.fileStation(i, e.k), Decimals, false)
			e.buf = append(e.buf, ' ')
			e.buf = layers.FormatFixed(e.buf, q.Elevation*e.k, Decimals, false)
			e.buf = append(e.buf, "</PVI>\n"...)
			e.bytes(e.buf)
		}
		e.raw("        </ProfAlign>\n      </Profile>\n")
	}
	e.raw("    </Alignment>\n")
}

// escape appends s (valid UTF-8 without NUL, layers.CheckText) as XML 1.0
// attribute text:
//
//   - & < > " ' as the predefined entities;
//   - tab, line feed and carriage return as character references, so that
//     attribute-value normalisation (XML 1.0 §3.3.3) keeps them;
//   - the other C0 controls and U+FFFE/U+FFFF, which XML 1.0 cannot carry
//     even as references (§2.2, Char), as U+FFFD;
//   - C1 controls, format characters (bidirectional overrides and
//     isolates, zero-width characters) and the line and paragraph
//     separators (layers.Invisible) as character references, so no raw
//     character hides or reorders the text; a parser returns them
//     unchanged.
func escape(b []byte, s string) []byte {
	for _, r := range s {
		switch {
		case r == '&':
			b = append(b, "&amp;"...)
		case r == '<':
			b = append(b, "&lt;"...)
		case r == '>':
			b = append(b, "&gt;"...)
		case r == '"':
			b = append(b, "&quot;"...)
		case r == '\'':
			b = append(b, "&apos;"...)
		case r == '\t' || r == '\n' || r == '\r':
			b = append(b, "&#x"...)
			b = strconv.AppendInt(b, int64(r), 16)
			b = append(b, ';')
		case r < 0x20 || r == 0xFFFE || r == 0xFFFF:
			b = utf8.AppendRune(b, utf8.RuneError)
		case layers.Invisible(r):
			b = append(b, "&#x"...)
			b = strconv.AppendInt(b, int64(r), 16)
			b = append(b, ';')
		default:
			b = utf8.AppendRune(b, r)
		}
	}
	return b
}
