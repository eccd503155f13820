// Package geojson writes layer sets (report/layers) as one GeoJSON
// FeatureCollection, RFC 7946.
//
// The caller passes longitude and latitude in degrees on WGS 84, the only
// CRS RFC 7946 allows; the writer checks the ranges and writes no "crs"
// member. Two foreign members (RFC 7946 §6.1, which readers keep or
// ignore) come before the features: "caution", layers.Caution, and
// "layers", each layer's name, geometry type and fields with their type,
// unit and description.
// The output is the same bytes on every run and machine:
//
//   - one feature per line, in layer order and then feature order;
//   - coordinates with at most 8 decimals (1e-8° is about 1 mm on the
//     ground), trailing zeros dropped;
//   - each feature's properties start with "layer", the name of its layer,
//     then the layer's fields in field order; Real values are rounded to
//     their field's Decimals, NaN is null;
//   - polygon rings follow the right-hand rule of RFC 7946 §3.1.6 (exterior
//     counterclockwise, holes clockwise), reversed here where needed;
//   - text is escaped beyond what JSON needs: '<', '>' and '&' (so the file
//     can be embedded in an HTML page) and every control, format
//     (bidirectional override, zero-width) or separator character are
//     written as \u escapes, so no raw character can hide or reorder what a
//     reader of the file sees. The decoded strings are unchanged.
package geojson

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"strconv"
	"unicode/utf16"
	"unicode/utf8"

	"canalstep/report/layers"
)

// CoordDecimals is the number of decimals of a coordinate in degrees:
// 1e-8° of latitude is 1.1 mm (60 nautical miles per degree, from memory).
const CoordDecimals = 8

// Write validates ls and writes it to w as one FeatureCollection. On error
// nothing or a partial document has been written; callers stage the file
// and rename it only on success.
func Write(w io.Writer, ls []layers.Layer) error {
	if err := layers.Validate(ls); err != nil {
		return fmt.Errorf("geojson: %w", err)
	}
	for _, l := range ls {
		for k, f := range l.Features {
			if err := checkLonLat(f.Parts); err != nil {
				return fmt.Errorf("geojson: layer %q feature %d: %w", l.Name, k, err)
			}
		}
	}
	bw := bufio.NewWriterSize(w, 64<<10)
	buf := make([]byte, 0, 4096)
	buf = append(buf, `{"type":"FeatureCollection","caution":`...)
	buf = appendString(buf, layers.Caution)
	buf = appendSchema(buf, ls)
	buf = append(buf, `,"features":[`...)
	first := true
	for _, l := range ls {
		for _, f := range l.Features {
			if !first {
				buf = append(buf, ',')
			}
			first = false
			buf = append(buf, '\n')
			buf = appendFeature(buf, &l, &f)
			if len(buf) >= 32<<10 {
				if _, err := bw.Write(buf); err != nil {
					return fmt.Errorf("geojson: %w", err)
				}
				buf = buf[:0]
			}
		}
	}
	if !first {
		buf = append(buf, '\n')
	}
	buf = append(buf, "]}\n"...)
	if _, err := bw.Write(buf); err != nil {
		return fmt.Errorf("geojson: %w", err)
	}
	if err := bw.Flush(); err != nil {
		return fmt.Errorf("geojson: %w", err)
	}
	return nil
}

// checkLonLat checks that every position is a longitude in [-180, 180] and
// a latitude in [-90, 90]: projected coordinates passed by mistake fail
// here instead of making a file that maps far away. A feature spanning more
// than 180° of longitude is refused too: it crosses the antimeridian, where
// RFC 7946 §3.1.9 wants it cut in two, and no canal plan is that large.
func checkLonLat(parts [][]layers.Coord) error {
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, p := range parts {
		for _, c := range p {
			if !(c[0] >= -180 && c[0] <= 180 && c[1] >= -90 && c[1] <= 90) {
				return fmt.Errorf("position (%v, %v) is not a longitude and latitude in degrees", c[0], c[1])
			}
			lo, hi = math.Min(lo, c[0]), math.Max(hi, c[0])
		}
	}
	if hi-lo > 180 {
		return fmt.Errorf("the feature spans longitudes %v to %v: it crosses the antimeridian", lo, hi)
	}
	return nil
}

// appendSchema appends the "layers" member: per layer its name, geometry
// type and fields with their type, unit and description, so a reader of the
// properties knows what each number measures.
func appendSchema(b []byte, ls []layers.Layer) []byte {
	b = append(b, `,"layers":[`...)
	for i, l := range ls {
		if i > 0 {
			b = append(b, ',')
		}
		b = append(b, `{"name":`...)
		b = appendString(b, l.Name)
		b = append(b, `,"geometry":"`...)
		b = append(b, l.Kind.String()...)
		b = append(b, `","fields":[`...)
		for j, f := range l.Fields {
			if j > 0 {
				b = append(b, ',')
			}
			b = append(b, `{"name":`...)
			b = appendString(b, f.Name)
			b = append(b, `,"type":"`...)
			b = append(b, f.Type.String()...)
			b = append(b, `","unit":`...)
			b = appendString(b, f.Unit)
			b = append(b, `,"doc":`...)
			b = appendString(b, f.Doc)
			b = append(b, '}')
		}
		b = append(b, "]}"...)
	}
	return append(b, ']')
}

func appendFeature(b []byte, l *layers.Layer, f *layers.Feature) []byte {
	b = append(b, `{"type":"Feature","geometry":{"type":"`...)
	b = append(b, l.Kind.String()...)
	b = append(b, `","coordinates":`...)
	switch l.Kind {
	case layers.Point:
		b = appendPosition(b, f.Parts[0][0])
	case layers.LineString:
		b = appendPositions(b, f.Parts[0])
	case layers.Polygon:
		b = append(b, '[')
		for i, r := range layers.Oriented(f.Parts) {
			if i > 0 {
				b = append(b, ',')
			}
			b = appendPositions(b, r)
		}
		b = append(b, ']')
	}
	b = append(b, `},"properties":{"layer":`...)
	b = appendString(b, l.Name)
	for j, fld := range l.Fields {
		b = append(b, ',', '"')
		b = append(b, fld.Name...) // names are [a-z][a-z0-9_]*, validated
		b = append(b, '"', ':')
		v := f.Values[j]
		switch fld.Type {
		case layers.String:
			b = appendString(b, v.Text())
		case layers.Real:
			if v.Missing() {
				b = append(b, "null"...)
			} else {
				b = layers.FormatFixed(b, v.Real(), fld.Decimals, true)
			}
		case layers.Integer:
			b = strconv.AppendInt(b, v.Int(), 10)
		}
	}
	return append(b, "}}"...)
}

func appendPositions(b []byte, cs []layers.Coord) []byte {
	b = append(b, '[')
	for i, c := range cs {
		if i > 0 {
			b = append(b, ',')
		}
		b = appendPosition(b, c)
	}
	return append(b, ']')
}

func appendPosition(b []byte, c layers.Coord) []byte {
	b = append(b, '[')
	b = layers.FormatFixed(b, c[0], CoordDecimals, true)
	b = append(b, ',')
	b = layers.FormatFixed(b, c[1], CoordDecimals, true)
	return append(b, ']')
}

const hex = "0123456789abcdef"

// appendString appends s as a JSON string. s is valid UTF-8 without NUL
// (layers.Validate). Besides '"' and '\\', it escapes '<', '>', '&' and
// every layers.Invisible character as \uXXXX (a UTF-16 surrogate pair
// above U+FFFF, RFC 8259 §7), so the raw bytes carry no markup and nothing that reorders or
// hides text.
func appendString(b []byte, s string) []byte {
	b = append(b, '"')
	for _, r := range s {
		switch {
		case r == '"':
			b = append(b, '\\', '"')
		case r == '\\':
			b = append(b, '\\', '\\')
		case r == '\n':
			b = append(b, '\\', 'n')
		case r == '\t':
			b = append(b, '\\', 't')
		case r == '\r':
			b = append(b, '\\', 'r')
		case r == '<' || r == '>' || r == '&' || layers.Invisible(r):
			if r > 0xFFFF {
				r1, r2 := utf16.EncodeRune(r)
				b = appendU(b, r1)
				b = appendU(b, r2)
			} else {
				b = appendU(b, r)
			}
		default:
			b = utf8.AppendRune(b, r)
		}
	}
	return append(b, '"')
}

func appendU(b []byte, r rune) []byte {
	return append(b, '\\', 'u', hex[r>>12&0xF], hex[r>>8&0xF], hex[r>>4&0xF], hex[r&0xF])
}
