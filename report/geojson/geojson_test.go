package geojson

import (
	"bytes"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"unicode/utf8"

	"canalstep/report/layers"
	"canalstep/report/layers/testdata/fixture"
	"canalstep/testdata/reftool"
)

var update = flag.Bool("update", false, "rewrite report/geojson/testdata golden files from the current output")

// lonLat returns the fixture with its positions moved to longitude and
// latitude by an affine stand-in for a projection (test data only, no
// source): 1 m is 1e-5°, origin (512000, 4652000) at (15°E, 42°N).
func lonLat() []layers.Layer {
	ls := fixture.Layers()
	for i := range ls {
		for k := range ls[i].Features {
			f := &ls[i].Features[k]
			for _, p := range f.Parts {
				for q := range p {
					p[q] = layers.Coord{15 + (p[q][0]-512000)*1e-5, 42 + (p[q][1]-4652000)*1e-5}
				}
			}
		}
	}
	return ls
}

// mustWrite writes ls twice and returns the output; see fixture.Render.
func mustWrite(tb testing.TB, ls []layers.Layer) []byte {
	return fixture.Render(tb, func(w io.Writer) error { return Write(w, ls) })
}

// TestGolden compares the fixture's GeoJSON with testdata/fixture.geojson
// (rewritten by -update; checked by hand: one feature per line, the layer
// property first, the footprint ring counterclockwise, -0.0001 m written
// as 0, the NaN flow as null); mustWrite checks that a second write gives
// the same bytes.
func TestGolden(t *testing.T) {
	fixture.Golden(t, filepath.Join("testdata", "fixture.geojson"), mustWrite(t, lonLat()), *update)
}

// TestRFC7946 checks the rules of RFC 7946 that a decoder can see: a
// FeatureCollection without "crs" (§4), geometry types and nesting (§3.1),
// exterior rings counterclockwise (§3.1.6); and our own: the caution and
// layer schema members, the properties in field order after "layer".
func TestRFC7946(t *testing.T) {
	raw := mustWrite(t, lonLat())
	var doc map[string]json.RawMessage
	if err := json.Unmarshal(raw, &doc); err != nil {
		t.Fatal(err)
	}
	if _, ok := doc["crs"]; ok {
		t.Error(`the collection has a "crs" member`)
	}
	var fc struct {
		Type    string `json:"type"`
		Caution string `json:"caution"`
		Layers  []struct {
			Name     string `json:"name"`
			Geometry string `json:"geometry"`
			Fields   []struct {
				Name string `json:"name"`
				Type string `json:"type"`
				Unit string `json:"unit"`
				Doc  string `json:"doc"`
			} `json:"fields"`
		} `json:"layers"`
		Features []struct {
			Type     string `json:"type"`
			Geometry struct {
				Type        string          `json:"type"`
				Coordinates json.RawMessage `json:"coordinates"`
			} `json:"geometry"`
			Properties json.RawMessage `json:"properties"`
		} `json:"features"`
	}
	if err := json.Unmarshal(raw, &fc); err != nil {
		t.Fatal(err)
	}
	if fc.Type != "FeatureCollection" || fc.Caution != layers.Caution {
		t.Errorf("type %q, caution %q", fc.Type, fc.Caution)
	}
	for i, l := range lonLat() {
		sl := fc.Layers[i]
		if sl.Name != l.Name || sl.Geometry != l.Kind.String() || len(sl.Fields) != len(l.Fields) {
			t.Fatalf("layers[%d] = %+v, want %s %v with %d fields", i, sl, l.Name, l.Kind, len(l.Fields))
		}
		for j, f := range l.Fields {
			if g := sl.Fields[j]; g.Name != f.Name || g.Type != f.Type.String() || g.Unit != f.Unit || g.Doc != f.Doc {
				t.Errorf("layer %s field %d = %+v, want %+v", l.Name, j, g, f)
			}
		}
	}
	n := 0
	for _, l := range lonLat() {
		for range l.Features {
			f := fc.Features[n]
			n++
			if f.Type != "Feature" || f.Geometry.Type != l.Kind.String() {
				t.Errorf("feature %d: %s/%s, want Feature/%s", n-1, f.Type, f.Geometry.Type, l.Kind)
			}
			keys := propertyKeys(t, f.Properties)
			want := []string{"layer"}
			for _, fl := range l.Fields {
				want = append(want, fl.Name)
			}
			if strings.Join(keys, ",") != strings.Join(want, ",") {
				t.Errorf("feature %d properties %v, want %v", n-1, keys, want)
			}
			if l.Kind == layers.Polygon {
				var rings [][]layers.Coord
				if err := json.Unmarshal(f.Geometry.Coordinates, &rings); err != nil {
					t.Fatal(err)
				}
				if a := layers.SignedArea(rings[0]); !(a > 0) {
					t.Errorf("exterior ring area %v: not counterclockwise", a)
				}
			}
		}
	}
	if n != len(fc.Features) {
		t.Errorf("%d features, want %d", len(fc.Features), n)
	}
}

// propertyKeys returns the keys of a JSON object in the order written.
func propertyKeys(t *testing.T, raw json.RawMessage) []string {
	t.Helper()
	dec := json.NewDecoder(bytes.NewReader(raw))
	var keys []string
	if _, err := dec.Token(); err != nil {
		t.Fatal(err)
	}
	for dec.More() {
		k, err := dec.Token()
		if err != nil {
			t.Fatal(err)
		}
		keys = append(keys, k.(string))
		var v json.RawMessage
		if err := dec.Decode(&v); err != nil {
			t.Fatal(err)
		}
	}
	return keys
}

// TestValues checks what the properties decode to: the hostile name byte
// for byte, Real values rounded to their decimals, NaN as null.
func TestValues(t *testing.T) {
	var fc struct {
		Features []struct {
			Properties map[string]any `json:"properties"`
		} `json:"features"`
	}
	if err := json.Unmarshal(mustWrite(t, lonLat()), &fc); err != nil {
		t.Fatal(err)
	}
	p := func(i int, k string) any { return fc.Features[i].Properties[k] }
	tests := []struct {
		feature int
		key     string
		want    any
		source  string
	}{
		{0, "alignment", fixture.HostileName, "text decodes unchanged"},
		{0, "bed_slope", 0.00035, "6 decimals"},
		{0, "reaches", 3.0, "integer"},
		{1, "chainage_m", 195.457, "195.4567 to 3 decimals"},
		{2, "chainage_m", 407.0, "407.0004 to 3 decimals"},
		{3, "flow_m3s", nil, "NaN is null"},
		{6, "ground_m", 101.333, "101.33333 to 3 decimals"},
		{7, "ground_m", 0.0, "-0.0001 to 3 decimals, no minus sign"},
		{8, "area_m2", 13456.8, "13456.78 to 1 decimal"},
	}
	for _, tc := range tests {
		if got := p(tc.feature, tc.key); got != tc.want {
			t.Errorf("feature %d %s = %#v, want %#v (%s)", tc.feature, tc.key, got, tc.want, tc.source)
		}
	}
}

// TestHostileBytes checks the raw bytes: no markup, no raw control, bidi,
// zero-width or separator character, and nothing encoding/json would
// refuse.
func TestHostileBytes(t *testing.T) {
	raw := mustWrite(t, lonLat())
	if !json.Valid(raw) || !utf8.Valid(raw) {
		t.Fatal("not valid JSON in UTF-8")
	}
	if bytes.ContainsAny(raw, "<>&") {
		t.Error("raw '<', '>' or '&' in the output")
	}
	for _, r := range string(raw) {
		if r != '\n' && layers.Invisible(r) {
			t.Errorf("raw %U in the output", r)
		}
	}
	if !bytes.Contains(raw, []byte(`\u202e`)) || !bytes.Contains(raw, []byte(`\u003cscript\u003e`)) {
		t.Error("expected escapes missing")
	}
}

// TestOgrinfo opens the file with GDAL's GeoJSON reader, a reference
// reader: one layer holding all the fixture's features.
func TestOgrinfo(t *testing.T) {
	path := filepath.Join(t.TempDir(), "plan.geojson")
	if err := os.WriteFile(path, mustWrite(t, lonLat()), 0o644); err != nil {
		t.Fatal(err)
	}
	out, err := exec.Command(reftool.Need(t, "ogrinfo"), "-ro", "-so", "-al", path).CombinedOutput()
	if err != nil {
		t.Fatalf("ogrinfo: %v\n%s", err, out)
	}
	n := 0
	for _, l := range fixture.Layers() {
		n += len(l.Features)
	}
	m := regexp.MustCompile(`Feature Count: (\d+)`).FindAllSubmatch(out, -1)
	if len(m) != 1 || string(m[0][1]) != strconv.Itoa(n) {
		t.Errorf("ogrinfo:\n%s\nwant one layer of %d features", out, n)
	}
}

// TestRefused checks that projected coordinates, a line across the
// antimeridian and invalid layers are refused before anything is written.
func TestRefused(t *testing.T) {
	var b bytes.Buffer
	err := Write(&b, fixture.Layers()) // metres, not degrees
	if err == nil || !strings.Contains(err.Error(), "not a longitude and latitude") {
		t.Errorf("projected input: error %v", err)
	}
	ls := lonLat()
	ls[0].Features[0].Parts[0][1] = layers.Coord{-179.5, 42}
	ls[0].Features[0].Parts[0][2] = layers.Coord{179.5, 42}
	if err := Write(&b, ls); err == nil || !strings.Contains(err.Error(), "antimeridian") {
		t.Errorf("line across the antimeridian: error %v", err)
	}
	ls = lonLat()
	ls[0].Features[0].Values[1] = layers.Num(math.Inf(1))
	if err := Write(&b, ls); !errors.Is(err, layers.ErrInvalid) {
		t.Errorf("infinite value: error %v, want ErrInvalid", err)
	}
	if b.Len() != 0 {
		t.Errorf("%d bytes written", b.Len())
	}
}

// TestEmpty checks the collection without features.
func TestEmpty(t *testing.T) {
	got := string(mustWrite(t, nil))
	want := `{"type":"FeatureCollection","caution":"` + layers.Caution + `","layers":[],"features":[]}` + "\n"
	if got != want {
		t.Errorf("got %q, want %q", got, want)
	}
}

// FuzzAppendString checks that any text CheckText accepts decodes back
// unchanged with encoding/json and leaves no markup or invisible character
// raw.
func FuzzAppendString(f *testing.F) {
	for _, s := range []string{fixture.HostileName, "", `"\`, "\u2028\u2029", "\U000E0001tag", "é³"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		if layers.CheckText(s) != nil {
			t.Skip()
		}
		b := appendString(nil, s)
		var got string
		if err := json.Unmarshal(b, &got); err != nil {
			t.Fatalf("%q encodes to invalid JSON %q: %v", s, b, err)
		}
		if got != s {
			t.Fatalf("%q round-trips to %q", s, got)
		}
		if bytes.ContainsAny(b, "<>&") {
			t.Fatalf("%q encodes to %q with markup", s, b)
		}
		for _, r := range string(b) {
			if layers.Invisible(r) {
				t.Fatalf("%q encodes to %q with %U raw", s, b, r)
			}
		}
	})
}

// Example writes one stake point.
func ExampleWrite() {
	stakes := layers.Layer{
		Name: "stakes", Kind: layers.Point,
		Fields: []layers.Field{
			{Name: "label", Type: layers.String, Doc: "station label"},
			{Name: "invert_m", Type: layers.Real, Unit: "m", Doc: "bed elevation", Decimals: 3},
		},
		Features: []layers.Feature{layers.PointFeature(layers.Coord{15.123456789, 42.5}, layers.Str("0+100"), layers.Num(101.2154))},
	}
	var b bytes.Buffer
	if err := Write(&b, []layers.Layer{stakes}); err != nil {
		fmt.Println(err)
	}
	fmt.Print(strings.Replace(b.String(), layers.Caution, "…", 1))
	// Output:
	// {"type":"FeatureCollection","caution":"…","layers":[{"name":"stakes","geometry":"Point","fields":[{"name":"label","type":"string","unit":"","doc":"station label"},{"name":"invert_m","type":"real","unit":"m","doc":"bed elevation"}]}],"features":[
	// {"type":"Feature","geometry":{"type":"Point","coordinates":[15.12345679,42.5]},"properties":{"layer":"stakes","label":"0+100","invert_m":101.215}}
	// ]}
}

// BenchmarkWrite10000Points writes one layer of 10,000 stake points with
// four fields.
func BenchmarkWrite10000Points(b *testing.B) {
	ls := []layers.Layer{lonLat()[3]}
	pts := make([]layers.Feature, 10000)
	for i := range pts {
		pts[i] = layers.PointFeature(layers.Coord{15 + 1e-5*float64(i), 42 + 0.5e-5*float64(i)},
			layers.Str(fmt.Sprintf("%d+%03d", i/1000, i%1000)), layers.Num(float64(i)), layers.Num(100-0.0003*float64(i)), layers.Num(101.5))
	}
	ls[0].Features = pts
	b.ReportAllocs()
	for b.Loop() {
		if err := Write(io.Discard, ls); err != nil {
			b.Fatal(err)
		}
	}
}
