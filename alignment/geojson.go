package alignment

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/paulmach/orb"
)

// Alignment is one canal route read from a GeoJSON file.
type Alignment struct {
	// Name is the feature's "name" property, else "alignment-<n>" with n
	// the 1-based position among the file's alignments. Names are unique
	// within a file, even after SafeName and case folding (see Read).
	Name string
	// Index is the 0-based position among the alignments of the file.
	Index int
	// Feature is the 1-based position of the feature in a
	// FeatureCollection, or 1 for a file holding a lone Feature or geometry.
	Feature int
	// Line is the route in the input CRS, in the file's order, without
	// repeated consecutive vertices; at least two distinct points. A third
	// coordinate (elevation) in the file is ignored.
	Line orb.LineString
	// CRS is the file's legacy "crs" member as a name GDAL understands
	// ("EPSG:32633", "OGC:CRS84", or the name as written), or "" when the
	// file has none, which per RFC 7946 means WGS 84 lon/lat.
	CRS string
	// Properties are the feature's properties (nil for a bare geometry).
	Properties map[string]any
}

// Errors returned by Read, wrapped with detail; test them with errors.Is.
var (
	// ErrNotJSON is returned when the file is not valid JSON at all.
	ErrNotJSON = errors.New("alignment file is not valid JSON")
	// ErrNotGeoJSON is returned for JSON that is not a GeoJSON object, or
	// whose members have the wrong shape.
	ErrNotGeoJSON = errors.New("alignment file is not GeoJSON")
	// ErrNoLine is returned when the file holds no line geometry.
	ErrNoLine = errors.New("no LineString or MultiLineString geometry found")
	// ErrTooFewPoints is returned for a line with fewer than two distinct points.
	ErrTooFewPoints = errors.New("fewer than two distinct points")
	// ErrDisjoint is returned for a MultiLineString whose parts do not
	// join end to start.
	ErrDisjoint = errors.New("MultiLineString parts do not join end to start")
)

// Tolerances for joining MultiLineString parts: a part must start within
// this distance of the end of the part before it.
const (
	// joinToleranceDeg is used when every coordinate looks like lon/lat:
	// 1e-8 degree is about 1.1 mm of latitude (common practice, no source:
	// digitising tools snap shared vertices exactly; this only forgives
	// rounding in coordinate output).
	joinToleranceDeg = 1e-8
	// joinToleranceProjected is used otherwise: 1 mm in metre CRSs
	// (0.3 mm in foot CRSs), survey precision (common practice, no source).
	joinToleranceProjected = 1e-3
)

// object holds the members of any GeoJSON object that Read looks at.
type object struct {
	Type        string            `json:"type"`
	CRS         json.RawMessage   `json:"crs"`
	Features    []json.RawMessage `json:"features"`
	Geometry    json.RawMessage   `json:"geometry"`
	Properties  json.RawMessage   `json:"properties"`
	Coordinates json.RawMessage   `json:"coordinates"`
}

// Read parses a GeoJSON document (RFC 7946) holding one or more alignments:
// a bare LineString or MultiLineString, a Feature, or a FeatureCollection in
// which every Feature with a line geometry is one alignment and other
// features are skipped. A MultiLineString is accepted only when each part
// starts where the previous part ends (within 1e-8 degree for lon/lat
// coordinates, 1e-3 CRS units otherwise); its parts are joined into one line.
// Repeated consecutive vertices are dropped. A leading UTF-8 byte order
// mark is ignored.
//
// Only the top-level legacy "crs" member is read; see Alignment.CRS.
// Duplicate names get a suffix -2, -3, ... in file order, so that each
// alignment's SafeName is unique even on a case-insensitive file system.
func Read(data []byte) ([]Alignment, error) {
	// RFC 8259 §8.1 lets a parser ignore a byte order mark; some Windows
	// tools write one.
	data = bytes.TrimPrefix(data, []byte("\xef\xbb\xbf"))
	if len(bytes.TrimSpace(data)) == 0 {
		return nil, fmt.Errorf("%w: the file is empty", ErrNotJSON)
	}
	if !json.Valid(data) {
		return nil, notJSON(data)
	}
	if t := bytes.TrimLeft(data, " \t\r\n"); len(t) == 0 || t[0] != '{' {
		return nil, fmt.Errorf("%w: the top level must be an object with a \"type\" member", ErrNotGeoJSON)
	}
	var top object
	if err := json.Unmarshal(data, &top); err != nil {
		return nil, fmt.Errorf("%w: %s", ErrNotGeoJSON, describe(err))
	}
	crs, err := legacyCRS(top.CRS)
	if err != nil {
		return nil, err
	}

	var out []Alignment
	add := func(feature int, name string, props map[string]any, line orb.LineString) {
		out = append(out, Alignment{Name: name, Index: len(out), Feature: feature, Line: line, CRS: crs, Properties: props})
	}
	switch top.Type {
	case "FeatureCollection":
		for i, raw := range top.Features {
			var f object
			if err := json.Unmarshal(raw, &f); err != nil {
				return nil, fmt.Errorf("%w: feature %d: %s", ErrNotGeoJSON, i+1, describe(err))
			}
			props, line, ok, err := readFeature(f, i+1)
			if err != nil {
				return nil, err
			}
			if ok {
				add(i+1, propName(props), props, line)
			}
		}
	case "Feature":
		props, line, ok, err := readFeature(top, 1)
		if err != nil {
			return nil, err
		}
		if ok {
			add(1, propName(props), props, line)
		}
	case "LineString", "MultiLineString":
		line, ok, err := readGeometry(top, "")
		if err != nil {
			return nil, err
		}
		if ok {
			add(1, "", nil, line)
		}
	case "Point", "MultiPoint", "Polygon", "MultiPolygon":
	case "GeometryCollection":
		return nil, fmt.Errorf("%w (a GeometryCollection is not read: put each alignment in its own Feature)", ErrNoLine)
	default:
		return nil, fmt.Errorf("%w: \"type\" is %q; want FeatureCollection, Feature, LineString or MultiLineString", ErrNotGeoJSON, top.Type)
	}
	if len(out) == 0 {
		return nil, ErrNoLine
	}
	for i := range out {
		if out[i].Name == "" {
			out[i].Name = "alignment-" + strconv.Itoa(i+1)
		}
	}
	uniqueNames(out)
	for _, a := range out {
		if len(a.Line) < 2 {
			return nil, fmt.Errorf("alignment %q: %w", a.Name, ErrTooFewPoints)
		}
	}
	return out, nil
}

// notJSON describes where data stops being JSON.
func notJSON(data []byte) error {
	var v any
	err := json.Unmarshal(data, &v)
	var se *json.SyntaxError
	if errors.As(err, &se) {
		// Offset counts the bytes read, including the offending one.
		off := int(min(max(se.Offset-1, 0), int64(len(data))))
		line := 1 + bytes.Count(data[:off], []byte("\n"))
		col := off - bytes.LastIndexByte(data[:off], '\n')
		return fmt.Errorf("%w: line %d, column %d: %v", ErrNotJSON, line, col, se)
	}
	if err == nil {
		err = errors.New("invalid input")
	}
	return fmt.Errorf("%w: %v", ErrNotJSON, err)
}

// describe turns a decoding error into words without Go type names.
func describe(err error) string {
	var te *json.UnmarshalTypeError
	if errors.As(err, &te) {
		if te.Field != "" {
			return fmt.Sprintf("member %q holds a JSON %s where GeoJSON wants something else", te.Field, te.Value)
		}
		return fmt.Sprintf("found a JSON %s where GeoJSON wants something else", te.Value)
	}
	return err.Error()
}

// readFeature returns a Feature's properties and its line; ok is false
// when the feature has no line geometry.
func readFeature(f object, n int) (props map[string]any, line orb.LineString, ok bool, err error) {
	if len(f.Properties) > 0 {
		if err := json.Unmarshal(f.Properties, &props); err != nil {
			return nil, nil, false, fmt.Errorf("%w: feature %d: \"properties\" must be an object or null", ErrNotGeoJSON, n)
		}
	}
	if len(f.Geometry) == 0 || string(f.Geometry) == "null" {
		return props, nil, false, nil
	}
	var g object
	if err := json.Unmarshal(f.Geometry, &g); err != nil {
		return nil, nil, false, fmt.Errorf("%w: feature %d: \"geometry\" must be an object or null", ErrNotGeoJSON, n)
	}
	what := fmt.Sprintf("feature %d", n)
	if name := propName(props); name != "" {
		what = fmt.Sprintf("feature %d (%q)", n, name)
	}
	line, ok, err = readGeometry(g, what)
	return props, line, ok, err
}

// propName returns the "name" property when it is a non-blank string.
func propName(props map[string]any) string {
	s, _ := props["name"].(string)
	return strings.TrimSpace(s)
}

// readGeometry decodes a LineString or MultiLineString geometry object;
// ok is false for other geometry types. what names the geometry in errors.
func readGeometry(g object, what string) (orb.LineString, bool, error) {
	fail := func(err error) error {
		if what != "" {
			return fmt.Errorf("%w: %s: %v", ErrNotGeoJSON, what, err)
		}
		return fmt.Errorf("%w: %v", ErrNotGeoJSON, err)
	}
	switch g.Type {
	case "LineString":
		var pos [][]float64
		if err := unmarshalCoords(g.Coordinates, &pos); err != nil {
			return nil, false, fail(err)
		}
		line, err := positions(pos)
		if err != nil {
			return nil, false, fail(err)
		}
		return dropRepeats(line), true, nil
	case "MultiLineString":
		var parts [][][]float64
		if err := unmarshalCoords(g.Coordinates, &parts); err != nil {
			return nil, false, fail(err)
		}
		lines := make([]orb.LineString, 0, len(parts))
		for i, p := range parts {
			line, err := positions(p)
			if err != nil {
				return nil, false, fail(fmt.Errorf("part %d: %v", i+1, err))
			}
			lines = append(lines, line)
		}
		line, err := joinParts(lines)
		if err != nil {
			if what != "" {
				return nil, false, fmt.Errorf("%s: %w", what, err)
			}
			return nil, false, err
		}
		return dropRepeats(line), true, nil
	}
	return nil, false, nil
}

// unmarshalCoords decodes a "coordinates" member; a missing or null member
// decodes to no positions.
func unmarshalCoords(raw json.RawMessage, v any) error {
	if len(raw) == 0 {
		return nil
	}
	if err := json.Unmarshal(raw, v); err != nil {
		return fmt.Errorf("bad \"coordinates\": %s", describe(err))
	}
	return nil
}

// positions converts GeoJSON positions to points, keeping x and y.
func positions(pos [][]float64) (orb.LineString, error) {
	line := make(orb.LineString, len(pos))
	for i, p := range pos {
		if len(p) < 2 {
			return nil, fmt.Errorf("position %d has %d number(s); a position needs at least x and y", i+1, len(p))
		}
		line[i] = orb.Point{p[0], p[1]}
	}
	return line, nil
}

// joinParts joins MultiLineString parts that each start where the previous
// one ends. Empty parts are ignored.
func joinParts(parts []orb.LineString) (orb.LineString, error) {
	tol := joinToleranceProjected
	all := make(orb.LineString, 0)
	for _, p := range parts {
		all = append(all, p...)
	}
	if LooksGeographic(all) {
		tol = joinToleranceDeg
	}
	var out orb.LineString
	prev := 0
	for i, p := range parts {
		if len(p) == 0 {
			continue
		}
		if len(out) > 0 {
			end, start := out[len(out)-1], p[0]
			gap := math.Hypot(start[0]-end[0], start[1]-end[1])
			if !(gap <= tol) {
				return nil, fmt.Errorf("%w: part %d starts %.6g CRS units from the end of part %d (tolerance %g); join the parts or make each its own Feature",
					ErrDisjoint, i+1, gap, prev, tol)
			}
			p = p[1:]
		}
		out = append(out, p...)
		prev = i + 1
	}
	return out, nil
}

// dropRepeats removes repeated consecutive vertices, in place.
func dropRepeats(line orb.LineString) orb.LineString {
	if len(line) == 0 {
		return line
	}
	out := line[:1]
	for _, p := range line[1:] {
		if p != out[len(out)-1] {
			out = append(out, p)
		}
	}
	return out
}

// legacyCRS interprets the pre-RFC 7946 "crs" member:
// {"type":"name","properties":{"name":"urn:ogc:def:crs:EPSG::32633"}}, and
// the older {"type":"EPSG","properties":{"code":32633}}.
func legacyCRS(raw json.RawMessage) (string, error) {
	if len(raw) == 0 || string(raw) == "null" {
		return "", nil
	}
	var c struct {
		Type       string `json:"type"`
		Properties struct {
			Name string          `json:"name"`
			Code json.RawMessage `json:"code"`
		} `json:"properties"`
	}
	if err := json.Unmarshal(raw, &c); err != nil {
		return "", fmt.Errorf("%w: the \"crs\" member is malformed: %s", ErrNotGeoJSON, describe(err))
	}
	switch strings.ToLower(c.Type) {
	case "name":
		if name := strings.TrimSpace(c.Properties.Name); name != "" {
			return crsName(name), nil
		}
	case "epsg":
		code := strings.Trim(string(c.Properties.Code), `"`)
		if n, err := strconv.Atoi(code); err == nil && n > 0 {
			return "EPSG:" + strconv.Itoa(n), nil
		}
	}
	return "", fmt.Errorf("%w: the \"crs\" member is not understood (want {\"type\":\"name\",\"properties\":{\"name\":\"EPSG:<code>\"}}); remove it and give the CRS on the command line", ErrNotGeoJSON)
}

// crsName normalises common spellings of a CRS name: OGC URNs and
// EPSG:code become "EPSG:<code>", CRS84 becomes "OGC:CRS84"; anything else
// is returned as written, for GDAL to interpret.
func crsName(name string) string {
	u := strings.ToUpper(name)
	if strings.HasSuffix(u, "CRS84") && (u == "CRS84" || strings.HasPrefix(u, "URN:OGC:DEF:CRS:OGC") || u == "OGC:CRS84") {
		return "OGC:CRS84"
	}
	for _, prefix := range []string{"URN:OGC:DEF:CRS:EPSG:", "EPSG:"} {
		if rest, ok := strings.CutPrefix(u, prefix); ok {
			// URNs may carry a version between the colons: EPSG:6.6:4326 or EPSG::4326.
			if i := strings.LastIndexByte(rest, ':'); i >= 0 {
				rest = rest[i+1:]
			}
			if n, err := strconv.Atoi(rest); err == nil && n > 0 {
				return "EPSG:" + strconv.Itoa(n)
			}
		}
	}
	return name
}
