// Package layers is the small vector feature model that canalstep's GIS
// writers share (report/geojson, report/gpkg): named layers of points, line
// strings or polygons, each with typed attribute fields, all coordinates in
// one coordinate reference system that the caller names to the writer.
//
// The package only holds and checks data; it does no I/O and knows no CRS.
// Coordinates are X then Y: easting and northing (CRS units) in a projected
// CRS, longitude and latitude (degrees) for GeoJSON. Validate checks what
// every writer relies on, so a writer can call it first and then trust the
// layers: safe unique names, values of the declared types, finite
// coordinates, closed rings of at least four positions.
//
// Text values (alignment names typed by a user) are never trusted: Validate
// rejects what no format can carry faithfully (invalid UTF-8, NUL) and each
// writer escapes the rest as its format requires. Text cleans a string for
// the caller instead of rejecting it.
package layers

import (
	"errors"
	"fmt"
	"math"
	"strings"
	"unicode"
	"unicode/utf8"
)

// Caution is the safety notice that every plan output carries; each writer
// puts it where its format lets a reader see it.
const Caution = "Preliminary design aid only: site survey, geotechnical and structural review " +
	"and a licensed engineer's approval are required before construction; local codes govern. " +
	"Drops and hydraulic jumps are drowning hazards: fence them, sign them, allow no public access."

// Kind is the geometry kind of every feature in a layer.
type Kind int

// Geometry kinds. They map to the GeoJSON and Simple Features types of the
// same name.
const (
	Point Kind = iota + 1
	LineString
	Polygon
)

// String returns the GeoJSON / Simple Features name of k.
func (k Kind) String() string {
	switch k {
	case Point:
		return "Point"
	case LineString:
		return "LineString"
	case Polygon:
		return "Polygon"
	}
	return fmt.Sprintf("Kind(%d)", int(k))
}

// Type is the type of an attribute field.
type Type int

// Field types.
const (
	String  Type = iota + 1 // UTF-8 text
	Real                    // float64; NaN means missing (null)
	Integer                 // int64
)

// String returns the lower-case name of t.
func (t Type) String() string {
	switch t {
	case String:
		return "string"
	case Real:
		return "real"
	case Integer:
		return "integer"
	}
	return fmt.Sprintf("Type(%d)", int(t))
}

// Limits on what Validate accepts. They bound the size of what a writer
// produces from one layer set and are far above what one canal plan needs
// (common practice, no source).
const (
	MaxLayers        = 64      // layers in one set
	MaxFields        = 64      // fields in one layer
	MaxNameBytes     = 63      // bytes in a layer or field name
	MaxTextBytes     = 4096    // bytes in one text value, Unit or Doc
	MaxPositions     = 1 << 22 // positions in one feature (4,194,304)
	MaxRings         = 1 << 12 // rings in one polygon
	MaxDecimals      = 12      // decimals of a Real field
	MaxRealMagnitude = 1e15    // |value| of a Real, beyond any design quantity
)

// Field describes one attribute column.
type Field struct {
	// Name is the column name: a lower-case ASCII letter, then lower-case
	// letters, digits or '_', at most MaxNameBytes bytes. "fid", "geom" and
	// "layer" are reserved (GeoPackage's key and geometry columns, the
	// GeoJSON layer property).
	Name string
	Type Type
	// Unit is the unit symbol of the values ("m", "m/m", "m³/s"), or "" for
	// text, counts and dimensionless values.
	Unit string
	// Doc is a one-sentence description of the column. Unit and Doc are
	// written where a format has room for them (report/geojson's "layers"
	// member).
	Doc string
	// Decimals is, for a Real field, the number of decimals every writer
	// keeps: values are rounded to it (Round) before they are written, so
	// all formats carry the same numbers and the bytes do not depend on the
	// last bits of a computation. Zero means whole numbers. Other types
	// ignore it.
	Decimals int
}

// Round rounds v to f.Decimals decimals, as the writers write it: the
// float64 nearest to the decimal text FormatFixed(v, f.Decimals). NaN stays
// NaN.
func (f Field) Round(v float64) float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return v
	}
	r, _ := parseFixed(FormatFixed(nil, v, f.Decimals, false))
	return r
}

// Coord is one position: X then Y (easting, northing in a projected CRS;
// longitude, latitude in degrees for GeoJSON).
type Coord [2]float64

// Value is one attribute value. Its zero value has no type and fails
// Validate; make values with Str, Num and Int.
type Value struct {
	typ Type
	s   string
	f   float64
	i   int64
}

// Str returns a String value.
func Str(s string) Value { return Value{typ: String, s: s} }

// Num returns a Real value; NaN is a missing value, written as null.
func Num(f float64) Value { return Value{typ: Real, f: f} }

// Int returns an Integer value.
func Int(i int64) Value { return Value{typ: Integer, i: i} }

// Type returns the type of v (0 for the zero Value).
func (v Value) Type() Type { return v.typ }

// Text returns the text of a String value ("" otherwise).
func (v Value) Text() string { return v.s }

// Real returns the number of a Real value (0 otherwise).
func (v Value) Real() float64 { return v.f }

// Int returns the number of an Integer value (0 otherwise).
func (v Value) Int() int64 { return v.i }

// Missing reports whether v is a Real NaN, which writers write as null.
func (v Value) Missing() bool { return v.typ == Real && math.IsNaN(v.f) }

// Feature is one geometry with its attribute values in field order.
type Feature struct {
	// Parts holds the geometry: for a Point layer one part with one
	// position; for a LineString layer one part of at least two distinct
	// positions; for a Polygon layer the exterior ring and then any holes,
	// each closed (last position equal to the first) with at least four
	// positions. Writers orient rings themselves (Oriented).
	Parts [][]Coord
	// Values holds one value per field of the layer, in field order.
	Values []Value
}

// PointFeature returns a point feature.
func PointFeature(c Coord, values ...Value) Feature {
	return Feature{Parts: [][]Coord{{c}}, Values: values}
}

// LineFeature returns a line-string feature.
func LineFeature(line []Coord, values ...Value) Feature {
	return Feature{Parts: [][]Coord{line}, Values: values}
}

// PolygonFeature returns a polygon feature: the exterior ring, then holes.
func PolygonFeature(rings [][]Coord, values ...Value) Feature {
	return Feature{Parts: rings, Values: values}
}

// Layer is a named set of features of one geometry kind sharing one schema.
type Layer struct {
	// Name follows the rules of Field.Name, and may not start with
	// "gpkg_", "rtree_" or "sqlite_" (names GeoPackage and SQLite keep).
	Name     string
	Kind     Kind
	Fields   []Field
	Features []Feature
}

// ErrInvalid is wrapped by every error Validate returns.
var ErrInvalid = errors.New("layers: invalid layer set")

// Validate checks a layer set for what every writer relies on and returns
// an error wrapping ErrInvalid that names the layer, feature and field at
// fault. Layer names must be unique. It does not check that polygon rings
// are simple or that holes lie inside their exterior ring.
func Validate(ls []Layer) error {
	if len(ls) > MaxLayers {
		return fmt.Errorf("%w: %d layers, at most %d", ErrInvalid, len(ls), MaxLayers)
	}
	seen := make(map[string]bool, len(ls))
	for i := range ls {
		l := &ls[i]
		if err := l.validate(); err != nil {
			return fmt.Errorf("%w: layer %d %s", ErrInvalid, i, err)
		}
		if seen[l.Name] {
			return fmt.Errorf("%w: layer name %q used twice", ErrInvalid, l.Name)
		}
		seen[l.Name] = true
	}
	return nil
}

func (l *Layer) validate() error {
	if err := checkName(l.Name); err != nil {
		return fmt.Errorf("name: %w", err)
	}
	for _, p := range []string{"gpkg_", "rtree_", "sqlite_"} {
		if strings.HasPrefix(l.Name, p) {
			return fmt.Errorf("name %q: the prefix %q is reserved", l.Name, p)
		}
	}
	if l.Kind < Point || l.Kind > Polygon {
		return fmt.Errorf("%q: unknown geometry kind %d", l.Name, int(l.Kind))
	}
	if len(l.Fields) > MaxFields {
		return fmt.Errorf("%q: %d fields, at most %d", l.Name, len(l.Fields), MaxFields)
	}
	seen := make(map[string]bool, len(l.Fields))
	for j, f := range l.Fields {
		if err := f.validate(); err != nil {
			return fmt.Errorf("%q field %d: %w", l.Name, j, err)
		}
		if seen[f.Name] {
			return fmt.Errorf("%q: field name %q used twice", l.Name, f.Name)
		}
		seen[f.Name] = true
	}
	for k := range l.Features {
		if err := l.validateFeature(&l.Features[k]); err != nil {
			return fmt.Errorf("%q feature %d: %w", l.Name, k, err)
		}
	}
	return nil
}

func (f Field) validate() error {
	if err := checkName(f.Name); err != nil {
		return fmt.Errorf("name: %w", err)
	}
	switch strings.ToLower(f.Name) {
	case "fid", "geom", "layer":
		return fmt.Errorf("name %q is reserved", f.Name)
	}
	if f.Type < String || f.Type > Integer {
		return fmt.Errorf("%q: unknown type %d", f.Name, int(f.Type))
	}
	if f.Type == Real && (f.Decimals < 0 || f.Decimals > MaxDecimals) {
		return fmt.Errorf("%q: %d decimals, want 0 to %d", f.Name, f.Decimals, MaxDecimals)
	}
	if err := CheckText(f.Unit); err != nil {
		return fmt.Errorf("%q unit: %w", f.Name, err)
	}
	if err := CheckText(f.Doc); err != nil {
		return fmt.Errorf("%q doc: %w", f.Name, err)
	}
	return nil
}

func (l *Layer) validateFeature(ft *Feature) error {
	if len(ft.Values) != len(l.Fields) {
		return fmt.Errorf("%d values for %d fields", len(ft.Values), len(l.Fields))
	}
	for j, v := range ft.Values {
		f := l.Fields[j]
		if v.typ != f.Type {
			return fmt.Errorf("field %q: value of type %v, want %v", f.Name, v.typ, f.Type)
		}
		switch v.typ {
		case String:
			if err := CheckText(v.s); err != nil {
				return fmt.Errorf("field %q: %w", f.Name, err)
			}
		case Real:
			if math.IsInf(v.f, 0) || math.Abs(v.f) > MaxRealMagnitude {
				return fmt.Errorf("field %q: value %v out of range (finite, |v| <= %g, NaN for missing)", f.Name, v.f, MaxRealMagnitude)
			}
		}
	}
	switch l.Kind {
	case Point:
		if len(ft.Parts) != 1 || len(ft.Parts[0]) != 1 {
			return errors.New("a point needs exactly one part of one position")
		}
		return checkCoords(ft.Parts[0])
	case LineString:
		if len(ft.Parts) != 1 {
			return fmt.Errorf("a line string needs exactly one part, got %d", len(ft.Parts))
		}
		line := ft.Parts[0]
		if len(line) > MaxPositions {
			return fmt.Errorf("%d positions, at most %d", len(line), MaxPositions)
		}
		if err := checkCoords(line); err != nil {
			return err
		}
		for _, c := range line[1:] {
			if c != line[0] {
				return nil
			}
		}
		return errors.New("a line string needs at least two distinct positions")
	}
	if len(ft.Parts) == 0 || len(ft.Parts) > MaxRings {
		return fmt.Errorf("a polygon needs 1 to %d rings, got %d", MaxRings, len(ft.Parts))
	}
	for r, ring := range ft.Parts {
		if len(ring) < 4 || len(ring) > MaxPositions {
			return fmt.Errorf("ring %d: %d positions, want 4 to %d", r, len(ring), MaxPositions)
		}
		if err := checkCoords(ring); err != nil {
			return fmt.Errorf("ring %d: %w", r, err)
		}
		if ring[0] != ring[len(ring)-1] {
			return fmt.Errorf("ring %d is not closed: first position %v, last %v", r, ring[0], ring[len(ring)-1])
		}
		if a := SignedArea(ring); a == 0 || math.IsNaN(a) {
			return fmt.Errorf("ring %d encloses no area", r)
		}
	}
	return nil
}

func checkCoords(cs []Coord) error {
	for i, c := range cs {
		if math.IsNaN(c[0]) || math.IsInf(c[0], 0) || math.IsNaN(c[1]) || math.IsInf(c[1], 0) {
			return fmt.Errorf("position %d (%v, %v) is not finite", i, c[0], c[1])
		}
	}
	return nil
}

// checkName checks a layer or field name: [a-z][a-z0-9_]*, at most
// MaxNameBytes. Such names need no quoting or escaping in SQL, JSON or
// file names.
func checkName(s string) error {
	if s == "" {
		return errors.New("empty")
	}
	if len(s) > MaxNameBytes {
		return fmt.Errorf("%d bytes, at most %d", len(s), MaxNameBytes)
	}
	for i := 0; i < len(s); i++ {
		c := s[i]
		ok := 'a' <= c && c <= 'z' || i > 0 && ('0' <= c && c <= '9' || c == '_')
		if !ok {
			return fmt.Errorf("%q: use a lower-case letter, then lower-case letters, digits or '_'", s)
		}
	}
	return nil
}

// CheckText reports whether s can be carried by every writer: valid UTF-8,
// no NUL (GeoPackage text goes through GDAL's C strings, which end at NUL;
// XML 1.0 cannot carry it at all) and at most MaxTextBytes bytes.
func CheckText(s string) error {
	if len(s) > MaxTextBytes {
		return fmt.Errorf("text of %d bytes, at most %d", len(s), MaxTextBytes)
	}
	if !utf8.ValidString(s) {
		return fmt.Errorf("text %q is not valid UTF-8", s)
	}
	if strings.IndexByte(s, 0) >= 0 {
		return fmt.Errorf("text %q contains a NUL character", s)
	}
	return nil
}

// Text returns s made acceptable to CheckText: invalid UTF-8 and NUL become
// U+FFFD, and text longer than MaxTextBytes is cut at a character boundary.
// Other characters are kept; writers escape them.
func Text(s string) string {
	if CheckText(s) == nil {
		return s
	}
	var b strings.Builder
	for _, r := range strings.ToValidUTF8(s, "\uFFFD") {
		if r == 0 {
			r = utf8.RuneError
		}
		if b.Len()+utf8.RuneLen(r) > MaxTextBytes {
			break
		}
		b.WriteRune(r)
	}
	return b.String()
}

// Invisible reports whether r is a character that text formats write as an
// escape rather than raw: control characters (C0, DEL, C1), format
// characters (bidirectional overrides and isolates such as U+202E, zero-width
// characters, the byte-order mark) and the line and paragraph separators.
// Written raw they can hide or reorder the text a reader sees.
func Invisible(r rune) bool {
	return unicode.IsControl(r) || unicode.Is(unicode.Cf, r) || r == '\u2028' || r == '\u2029'
}
