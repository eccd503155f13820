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
	// Positions[i] is where Line[i] stands in the file (nil for an
	// Alignment not read from a file); see VertexName.
	Positions []Position
	// Overrides are the alignment's own controls from its properties,
	// filled by ReadScheme only (all unset from Read).
	Overrides Overrides
}

// Position is where a vertex of an alignment stands in its file.
type Position struct {
	// Part is the 1-based part of a MultiLineString; 0 for a LineString.
	Part int
	// Index is the 1-based position of the vertex in its LineString or
	// part. Where parts join, the joint is the end of the earlier part.
	Index int
}

// String names the position for people: "vertex 4", or "vertex 2 of part
// 3" in a MultiLineString.
func (p Position) String() string {
	if p.Part > 0 {
		return fmt.Sprintf("vertex %d of part %d", p.Index, p.Part)
	}
	return vertexName(p.Index)
}

// VertexName names a.Line[i] for messages as it stands in the file
// (Positions), or "vertex i+1" when the positions are not known.
func (a Alignment) VertexName(i int) string {
	if i >= 0 && i < len(a.Positions) && len(a.Positions) == len(a.Line) {
		return a.Positions[i].String()
	}
	return vertexName(i + 1)
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
	var out []Alignment
	crs, err := walk(data, func(f rawFeature) error {
		var props map[string]any
		if len(f.props) > 0 {
			if err := json.Unmarshal(f.props, &props); err != nil {
				return fmt.Errorf("%w: feature %d: \"properties\" must be an object or null", ErrNotGeoJSON, f.n)
			}
		}
		g, _, err := f.geometryObject()
		if err != nil {
			return err
		}
		line, pos, ok, err := readGeometry(g, f.what(propName(props)))
		if ok {
			out = append(out, Alignment{Name: propName(props), Feature: f.n, Line: line, Properties: props, Positions: pos})
		}
		return err
	})
	if err != nil {
		return nil, err
	}
	return finish(out, crs)
}

// rawFeature is one object of a GeoJSON file that may hold an alignment
// or an offtake: a Feature, or the file's lone bare geometry.
type rawFeature struct {
	n               int // 1-based position in the collection; 1 for a lone object
	props, geometry json.RawMessage
	bare            *object // the geometry itself, for a bare geometry
}

// what names the feature in messages: "feature 3 (\"East Branch\")",
// "feature 3", or "" for a bare geometry.
func (f rawFeature) what(name string) string {
	switch {
	case f.bare != nil:
		return ""
	case name != "":
		return fmt.Sprintf("feature %d (%q)", f.n, name)
	}
	return fmt.Sprintf("feature %d", f.n)
}

// geometryObject decodes the feature's geometry; present is false when it
// is null or missing.
func (f rawFeature) geometryObject() (g object, present bool, err error) {
	if f.bare != nil {
		return *f.bare, true, nil
	}
	if len(f.geometry) == 0 || string(f.geometry) == "null" {
		return g, false, nil
	}
	if err := json.Unmarshal(f.geometry, &g); err != nil {
		return g, false, fmt.Errorf("%w: feature %d: \"geometry\" must be an object or null", ErrNotGeoJSON, f.n)
	}
	return g, true, nil
}

// walk checks that data is a GeoJSON object and calls each for every
// Feature of a FeatureCollection, for a lone Feature, or for a lone line
// geometry, in file order, stopping at the first error. It returns the
// file's legacy CRS (see Alignment.CRS).
func walk(data []byte, each func(rawFeature) error) (string, error) {
	// RFC 8259 §8.1 lets a parser ignore a byte order mark; some Windows
	// tools write one.
	data = bytes.TrimPrefix(data, []byte("\xef\xbb\xbf"))
	if len(bytes.TrimSpace(data)) == 0 {
		return "", fmt.Errorf("%w: the file is empty", ErrNotJSON)
	}
	if !json.Valid(data) {
		return "", notJSON(data)
	}
	if t := bytes.TrimLeft(data, " \t\r\n"); len(t) == 0 || t[0] != '{' {
		return "", fmt.Errorf("%w: the top level must be an object with a \"type\" member", ErrNotGeoJSON)
	}
	var top object
	if err := json.Unmarshal(data, &top); err != nil {
		return "", fmt.Errorf("%w: %s", ErrNotGeoJSON, describe(err))
	}
	crs, err := legacyCRS(top.CRS)
	if err != nil {
		return "", err
	}
	switch top.Type {
	case "FeatureCollection":
		for i, raw := range top.Features {
			var f object
			if err := json.Unmarshal(raw, &f); err != nil {
				return "", fmt.Errorf("%w: feature %d: %s", ErrNotGeoJSON, i+1, describe(err))
			}
			if err := each(rawFeature{n: i + 1, props: f.Properties, geometry: f.Geometry}); err != nil {
				return "", err
			}
		}
	case "Feature":
		if err := each(rawFeature{n: 1, props: top.Properties, geometry: top.Geometry}); err != nil {
			return "", err
		}
	case "LineString", "MultiLineString":
		if err := each(rawFeature{n: 1, bare: &top}); err != nil {
			return "", err
		}
	case "Point", "MultiPoint", "Polygon", "MultiPolygon":
	case "GeometryCollection":
		return "", fmt.Errorf("%w (a GeometryCollection is not read: put each alignment in its own Feature)", ErrNoLine)
	default:
		return "", fmt.Errorf("%w: \"type\" is %q; want FeatureCollection, Feature, LineString or MultiLineString", ErrNotGeoJSON, top.Type)
	}
	return crs, nil
}

// finish numbers and names the alignments read from a file whose legacy
// CRS is crs: default names, unique folder names, at least one line of two
// points.
func finish(out []Alignment, crs string) ([]Alignment, error) {
	if len(out) == 0 {
		return nil, ErrNoLine
	}
	for i := range out {
		out[i].Index, out[i].CRS = i, crs
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

// propName returns the "name" property when it is a non-blank string.
func propName(props map[string]any) string {
	s, _ := props["name"].(string)
	return strings.TrimSpace(s)
}

// readGeometry decodes a LineString or MultiLineString geometry object
// and where each of its kept vertices stands in the file; ok is false for
// other geometry types. what names the geometry in errors.
func readGeometry(g object, what string) (orb.LineString, []Position, bool, error) {
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
			return nil, nil, false, fail(err)
		}
		line, err := positions(pos, 0)
		if err != nil {
			return nil, nil, false, fail(err)
		}
		line.drop()
		return line.pts, line.pos, true, nil
	case "MultiLineString":
		var parts [][][]float64
		if err := unmarshalCoords(g.Coordinates, &parts); err != nil {
			return nil, nil, false, fail(err)
		}
		lines := make([]placed, 0, len(parts))
		for i, p := range parts {
			line, err := positions(p, i+1)
			if err != nil {
				return nil, nil, false, fail(fmt.Errorf("part %d: %v", i+1, err))
			}
			lines = append(lines, line)
		}
		line, err := joinParts(lines)
		if err != nil {
			if what != "" {
				return nil, nil, false, fmt.Errorf("%s: %w", what, err)
			}
			return nil, nil, false, err
		}
		line.drop()
		return line.pts, line.pos, true, nil
	}
	return nil, nil, false, nil
}

// placed is a line with the file position of each of its points.
type placed struct {
	pts orb.LineString
	pos []Position
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

// positions converts GeoJSON positions to points, keeping x and y; part is
// the 1-based part of a MultiLineString, 0 for a LineString.
func positions(pos [][]float64, part int) (placed, error) {
	l := placed{pts: make(orb.LineString, len(pos)), pos: make([]Position, len(pos))}
	for i, p := range pos {
		if len(p) < 2 {
			return placed{}, fmt.Errorf("position %d has %d number(s); a position needs at least x and y", i+1, len(p))
		}
		l.pts[i] = orb.Point{p[0], p[1]}
		l.pos[i] = Position{Part: part, Index: i + 1}
	}
	return l, nil
}

// joinParts joins MultiLineString parts that each start where the previous
// one ends. Empty parts are ignored.
func joinParts(parts []placed) (placed, error) {
	tol := joinToleranceProjected
	all := make(orb.LineString, 0)
	for _, p := range parts {
		all = append(all, p.pts...)
	}
	if LooksGeographic(all) {
		tol = joinToleranceDeg
	}
	var out placed
	prev := 0
	for i, p := range parts {
		if len(p.pts) == 0 {
			continue
		}
		if len(out.pts) > 0 {
			end, start := out.pts[len(out.pts)-1], p.pts[0]
			gap := math.Hypot(start[0]-end[0], start[1]-end[1])
			if !(gap <= tol) {
				return placed{}, fmt.Errorf("%w: part %d starts %.6g CRS units from the end of part %d (tolerance %g); join the parts or make each its own Feature",
					ErrDisjoint, i+1, gap, prev, tol)
			}
			p.pts, p.pos = p.pts[1:], p.pos[1:]
		}
		out.pts = append(out.pts, p.pts...)
		out.pos = append(out.pos, p.pos...)
		prev = i + 1
	}
	return out, nil
}

// drop removes repeated consecutive vertices in place, keeping the first
// of each run.
func (l *placed) drop() {
	if len(l.pts) == 0 {
		return
	}
	n := 1
	for i := 1; i < len(l.pts); i++ {
		if l.pts[i] != l.pts[n-1] {
			l.pts[n], l.pos[n] = l.pts[i], l.pos[i]
			n++
		}
	}
	l.pts, l.pos = l.pts[:n], l.pos[:n]
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
