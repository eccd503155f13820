package alignment

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"
	"unicode/utf8"
)

// Scheme is what one GeoJSON file holds for a canal scheme: its
// alignments, with their own controls, and the offtakes they serve.
type Scheme struct {
	// Alignments are read as Read reads them, with Overrides filled.
	Alignments []Alignment
	// Offtakes are the file's Point features, in file order.
	Offtakes []Offtake
	// Ignored are the names of properties that had a value (not null)
	// where ReadScheme does not read them: unknown names, or a known name
	// on the other kind of feature ("flow" on a Point). Each once, sorted
	// by byte value; names are as written, so print them quoted.
	Ignored []string
	// Skipped are the features that are neither a line nor a Point
	// (Polygons, MultiPoints, ...) or have no geometry, in file order.
	Skipped []Skipped
}

// Skipped is a feature ReadScheme passed over.
type Skipped struct {
	// Feature is its 1-based position in the file; Name its "name"
	// property ("" when it has none).
	Feature int
	Name    string
	// Type is its geometry type as written, "" for a null geometry.
	Type string
}

// Overrides are an alignment's own design controls, read from its
// feature's properties; a nil pointer (or "") is a control not given,
// which the run's setting then supplies. Values are SI.
type Overrides struct {
	// Flow is the design flow in m³/s (property "flow"; > 0).
	Flow *float64
	// StartInvert and EndInvert are the bed levels in metres at the first
	// and the last point ("start_invert", "end_invert"; within ±10,000 m).
	StartInvert, EndInvert *float64
	// Roughness is Manning's n ("roughness"; in (0, 0.2]).
	Roughness *float64
	// BottomWidth is the bed width in metres ("bottom_width"; > 0).
	BottomWidth *float64
	// CommandMargin is how far in metres the water surface must stand
	// above the ground it commands ("command_margin"; ≥ 0).
	CommandMargin *float64
	// CurveRadius is the horizontal curve radius in metres
	// ("curve_radius"; at least MinRadius, 1 m; see FitCurves).
	CurveRadius *float64
	// Corridor names the canal this alignment is one route of
	// ("corridor"): alignments sharing it are alternatives to each other.
	Corridor string
}

// Offtake is a point where water leaves the canal: the canal's water
// surface must reach a level there to command the land beyond it.
type Offtake struct {
	// Name is the "name" property, else "offtake-<n>" with n the 1-based
	// position among the file's offtakes.
	Name string
	// Index is the 0-based position among the offtakes; Feature the
	// 1-based position of its feature in the file.
	Index, Feature int
	// X, Y are the point in the file's CRS (the same as the lines').
	X, Y float64
	// Exactly one of CommandLevel and Margin is set. CommandLevel is the
	// lowest water level in metres the canal must hold at the offtake
	// ("command_level"; within ±10,000 m); Margin is the height in metres
	// above the ground at the offtake ("margin"; ≥ 0).
	CommandLevel, Margin *float64
	// Alignment is the "alignment" property: the name of the alignment,
	// or of the corridor, that the offtake serves ("" when not given).
	Alignment string
	// Properties are the feature's properties.
	Properties map[string]any
}

// ErrProperty is matched (errors.Is) by every *PropertyError.
var ErrProperty = errors.New("a feature property is not usable")

// PropertyError is a property ReadScheme cannot use: of the wrong type,
// out of range, or missing where needed.
type PropertyError struct {
	// Feature is the 1-based position of the feature; Name its "name"
	// property ("" when it has none or it is the faulty one).
	Feature int
	Name    string
	// Property is the property at fault.
	Property string
	// Problem says what is wrong, in words that follow the feature.
	Problem string
}

// Error words the problem on one line, naming the feature.
func (e *PropertyError) Error() string {
	if e.Name != "" {
		return fmt.Sprintf("feature %d (%q): %s", e.Feature, e.Name, e.Problem)
	}
	return fmt.Sprintf("feature %d: %s", e.Feature, e.Problem)
}

// Is reports whether target is ErrProperty.
func (e *PropertyError) Is(target error) bool { return target == ErrProperty }

// maxLevel bounds levels (m): from memory, land on Earth spans about
// −430 m (the Dead Sea shore) to 8,849 m (Everest); a canal level beyond
// ±10 km is a unit or typing error.
const maxLevel = 1e4

// numberProp describes one numeric property: its name, its unit for
// messages, and its range.
type numberProp struct {
	key, unit string
	ok        func(float64) bool
	rangeText string // "must be ..." when ok fails
	field     func(*Overrides) **float64
}

var lineNumbers = []numberProp{
	{"flow", "m³/s", func(v float64) bool { return v > 0 }, "must be more than 0 m³/s", func(o *Overrides) **float64 { return &o.Flow }},
	{"start_invert", "m", level, "must lie within ±10000 m", func(o *Overrides) **float64 { return &o.StartInvert }},
	{"end_invert", "m", level, "must lie within ±10000 m", func(o *Overrides) **float64 { return &o.EndInvert }},
	{"roughness", "Manning's n", func(v float64) bool { return v > 0 && v <= 0.2 }, "must be a Manning's n more than 0 and at most 0.2", func(o *Overrides) **float64 { return &o.Roughness }},
	{"bottom_width", "m", func(v float64) bool { return v > 0 }, "must be more than 0 m", func(o *Overrides) **float64 { return &o.BottomWidth }},
	{"command_margin", "m", func(v float64) bool { return v >= 0 }, "must be 0 m or more", func(o *Overrides) **float64 { return &o.CommandMargin }},
	{"curve_radius", "m", func(v float64) bool { return v >= MinRadius }, "must be at least 1 m", func(o *Overrides) **float64 { return &o.CurveRadius }},
}

func level(v float64) bool { return math.Abs(v) <= maxLevel }

// Property names each kind of feature reads.
var (
	lineKeys  = map[string]bool{"name": true, "corridor": true}
	pointKeys = map[string]bool{"name": true, "command_level": true, "margin": true, "alignment": true}
)

func init() {
	for _, p := range lineNumbers {
		lineKeys[p.key] = true
	}
}

// ReadScheme parses a GeoJSON document as Read does and reads, besides the
// alignments, the controls in their properties (Overrides) and the
// offtakes (Point features). A property of the wrong type or out of range
// is an error naming the feature and the property (a *PropertyError); a
// null property is one not given. Numbers must be JSON numbers, strings
// JSON strings. An offtake has exactly one of "command_level" and
// "margin"; its "alignment", when given, must be the name of an alignment
// in the file (after Read's renaming of duplicates) or a corridor. Other
// geometries are skipped (Scheme.Skipped), unknown properties listed
// (Scheme.Ignored). Property names are matched exactly, case included.
func ReadScheme(data []byte) (Scheme, error) {
	var sc Scheme
	ignored := map[string]bool{}
	crs, err := walk(data, func(f rawFeature) error {
		props, err := rawProps(f)
		if err != nil {
			return err
		}
		g, present, err := f.geometryObject()
		if err != nil {
			return err
		}
		if g.Type != "LineString" && g.Type != "MultiLineString" && g.Type != "Point" {
			s := Skipped{Feature: f.n}
			if present {
				s.Type = g.Type
			}
			if raw, ok := props["name"]; ok && kind(raw) == "string" {
				_ = json.Unmarshal(raw, &s.Name)
				s.Name = strings.TrimSpace(s.Name)
			}
			sc.Skipped = append(sc.Skipped, s)
			return nil
		}
		name, err := stringProp(props, "name", f.n, "")
		if err != nil {
			return err
		}
		line, pos, ok, err := readGeometry(g, f.what(name))
		if err != nil {
			return err
		}
		var known map[string]bool
		switch {
		case ok:
			a, err := schemeAlignment(props, f.n, name)
			if err != nil {
				return err
			}
			a.Line, a.Positions = line, pos
			sc.Alignments = append(sc.Alignments, a)
			known = lineKeys
		default: // a Point
			o, err := schemeOfftake(g, props, f.n, name)
			if err != nil {
				return err
			}
			o.Index = len(sc.Offtakes)
			if o.Name == "" {
				o.Name = "offtake-" + strconv.Itoa(o.Index+1)
			}
			sc.Offtakes = append(sc.Offtakes, o)
			known = pointKeys
		}
		for k, v := range props {
			if !known[k] && !isNull(v) {
				ignored[k] = true
			}
		}
		return nil
	})
	if err != nil {
		return Scheme{}, err
	}
	if sc.Alignments, err = finish(sc.Alignments, crs); err != nil {
		return Scheme{}, err
	}
	if err := checkServed(sc); err != nil {
		return Scheme{}, err
	}
	for k := range ignored {
		sc.Ignored = append(sc.Ignored, k)
	}
	slices.Sort(sc.Ignored)
	return sc, nil
}

// rawProps decodes a feature's properties member into raw values.
func rawProps(f rawFeature) (map[string]json.RawMessage, error) {
	if len(f.props) == 0 || string(f.props) == "null" {
		return nil, nil
	}
	var props map[string]json.RawMessage
	if err := json.Unmarshal(f.props, &props); err != nil {
		return nil, fmt.Errorf("%w: feature %d: \"properties\" must be an object or null", ErrNotGeoJSON, f.n)
	}
	return props, nil
}

// schemeAlignment reads an alignment's controls; Line is left to the caller.
func schemeAlignment(props map[string]json.RawMessage, n int, name string) (Alignment, error) {
	a := Alignment{Name: name, Feature: n, Properties: anyProps(props)}
	for _, p := range lineNumbers {
		v, err := numberValue(props, p, n, name)
		if err != nil {
			return a, err
		}
		*p.field(&a.Overrides) = v
	}
	c, err := stringProp(props, "corridor", n, name)
	a.Overrides.Corridor = c
	return a, err
}

// Offtake properties, as numberProps (field unused).
var (
	commandLevelProp = numberProp{key: "command_level", unit: "m", ok: level, rangeText: "must lie within ±10000 m"}
	marginProp       = numberProp{key: "margin", unit: "m", ok: func(v float64) bool { return v >= 0 }, rangeText: "must be 0 m or more"}
)

// schemeOfftake reads a Point feature as an offtake.
func schemeOfftake(g object, props map[string]json.RawMessage, n int, name string) (Offtake, error) {
	o := Offtake{Name: name, Feature: n, Properties: anyProps(props)}
	var pos []float64
	if err := unmarshalCoords(g.Coordinates, &pos); err != nil {
		return o, fmt.Errorf("%w: %s: %v", ErrNotGeoJSON, rawFeature{n: n}.what(name), err)
	}
	if len(pos) < 2 {
		return o, fmt.Errorf("%w: %s: a Point needs at least x and y, got %d number(s)", ErrNotGeoJSON, rawFeature{n: n}.what(name), len(pos))
	}
	o.X, o.Y = pos[0], pos[1]
	var err error
	if o.CommandLevel, err = numberValue(props, commandLevelProp, n, name); err != nil {
		return o, err
	}
	if o.Margin, err = numberValue(props, marginProp, n, name); err != nil {
		return o, err
	}
	switch {
	case o.CommandLevel != nil && o.Margin != nil:
		return o, &PropertyError{Feature: n, Name: name, Property: "margin",
			Problem: `an offtake takes either "command_level" or "margin", not both; remove one`}
	case o.CommandLevel == nil && o.Margin == nil:
		return o, &PropertyError{Feature: n, Name: name, Property: "command_level",
			Problem: `a Point is read as an offtake and needs a "command_level" (the lowest water level there, m) or a "margin" (m above the ground there); give one, or take the point out of the file`}
	}
	o.Alignment, err = stringProp(props, "alignment", n, name)
	return o, err
}

// checkServed refuses an offtake whose "alignment" names nothing in the file.
func checkServed(sc Scheme) error {
	names := map[string]bool{}
	var list []string
	for _, a := range sc.Alignments {
		names[a.Name] = true
		list = append(list, strconv.Quote(a.Name))
		if c := a.Overrides.Corridor; c != "" && !names[c] {
			names[c] = true
			list = append(list, strconv.Quote(c)+" (corridor)")
		}
	}
	if len(list) > 5 {
		list = append(list[:5], fmt.Sprintf("%d more", len(list)-5))
	}
	for _, o := range sc.Offtakes {
		if o.Alignment != "" && !names[o.Alignment] {
			return &PropertyError{Feature: o.Feature, Name: o.Name, Property: "alignment",
				Problem: fmt.Sprintf(`property "alignment" is %s, which names no alignment or corridor in the file (%s)`,
					quoteCut(o.Alignment), strings.Join(list, ", "))}
		}
	}
	return nil
}

// numberValue reads an optional numeric property; nil when absent or null.
func numberValue(props map[string]json.RawMessage, p numberProp, n int, name string) (*float64, error) {
	raw, ok := props[p.key]
	if !ok || isNull(raw) {
		return nil, nil
	}
	fail := func(problem string) (*float64, error) {
		return nil, &PropertyError{Feature: n, Name: name, Property: p.key,
			Problem: fmt.Sprintf("property %q %s, got %s", p.key, problem, describeValue(raw))}
	}
	if kind(raw) != "number" {
		return fail(fmt.Sprintf("must be a number (%s)", p.unit))
	}
	v, err := strconv.ParseFloat(string(bytes.TrimSpace(raw)), 64)
	if err != nil || math.IsInf(v, 0) {
		return fail(fmt.Sprintf("must be a finite number (%s)", p.unit))
	}
	if !p.ok(v) {
		return fail(p.rangeText)
	}
	return &v, nil
}

// stringProp reads an optional string property, trimmed; "" when absent,
// null or blank. name is the feature's name for messages ("" when the
// property read is the name itself).
func stringProp(props map[string]json.RawMessage, key string, n int, name string) (string, error) {
	raw, ok := props[key]
	if !ok || isNull(raw) {
		return "", nil
	}
	var s string
	if kind(raw) != "string" || json.Unmarshal(raw, &s) != nil {
		return "", &PropertyError{Feature: n, Name: name, Property: key,
			Problem: fmt.Sprintf("property %q must be a string, got %s", key, describeValue(raw))}
	}
	return strings.TrimSpace(s), nil
}

func isNull(raw json.RawMessage) bool { return string(bytes.TrimSpace(raw)) == "null" }

// kind is the JSON type of a valid raw value.
func kind(raw json.RawMessage) string {
	t := bytes.TrimSpace(raw)
	if len(t) == 0 {
		return ""
	}
	switch t[0] {
	case '"':
		return "string"
	case 't', 'f':
		return "boolean"
	case 'n':
		return "null"
	case '[':
		return "array"
	case '{':
		return "object"
	}
	return "number"
}

// describeValue words a raw JSON value for a message, cut short.
func describeValue(raw json.RawMessage) string {
	t := bytes.TrimSpace(raw)
	switch kind(raw) {
	case "string":
		var s string
		_ = json.Unmarshal(t, &s)
		return "the string " + quoteCut(s)
	case "boolean":
		return "the boolean " + string(t)
	case "array":
		return "an array"
	case "object":
		return "an object"
	}
	return "the number " + cut(string(t))
}

// maxQuoted is how many characters of a value a message repeats.
const maxQuoted = 40

// cut shortens s to maxQuoted characters, marking the cut with "…".
func cut(s string) string {
	if utf8.RuneCountInString(s) <= maxQuoted {
		return s
	}
	r := []rune(s)
	return string(r[:maxQuoted]) + "…"
}

// quoteCut quotes s for a message, cut short; control characters are
// escaped, so the message stays one line.
func quoteCut(s string) string { return strconv.Quote(cut(s)) }

// anyProps decodes raw property values for Alignment.Properties and
// Offtake.Properties; a number beyond float64 is kept as a json.Number.
func anyProps(props map[string]json.RawMessage) map[string]any {
	if props == nil {
		return nil
	}
	out := make(map[string]any, len(props))
	for k, raw := range props {
		var v any
		if err := json.Unmarshal(raw, &v); err != nil {
			d := json.NewDecoder(bytes.NewReader(raw))
			d.UseNumber()
			_ = d.Decode(&v) // raw is valid JSON, so this succeeds
		}
		out[k] = v
	}
	return out
}
