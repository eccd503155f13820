package alignment

import (
	"errors"
	"slices"
	"strings"
	"testing"
)

// The scheme below is invented for the test (the project's fictional
// scheme); every expected value is the input itself (exact cases).
const schemeFile = `{"type":"FeatureCollection","crs":{"type":"name","properties":{"name":"EPSG:32633"}},"features":[
 {"type":"Feature","properties":{"name":"Main canal","flow":2.5,"start_invert":101.2,"end_invert":96.4,"roughness":0.025,
   "bottom_width":1.5,"command_margin":0.15,"curve_radius":60,"corridor":"Main","fid":7,"surveyed":null},
  "geometry":{"type":"LineString","coordinates":[[500000,4000000],[501000,4000000],[501000,4000000],[501500,4000400]]}},
 {"type":"Feature","properties":{"name":"Main canal south","flow":null,"corridor":"Main","command_level":null},
  "geometry":{"type":"LineString","coordinates":[[500000,4000000],[501000,3999800],[501500,4000400]]}},
 {"type":"Feature","properties":{"name":"Offtake 1","command_level":99.8,"alignment":"Main","flow":0.3},
  "geometry":{"type":"Point","coordinates":[500700,4000010,0]}},
 {"type":"Feature","properties":{"margin":0,"alignment":"Main canal south"},
  "geometry":{"type":"Point","coordinates":[501200,3999900]}},
 {"type":"Feature","properties":{"name":"Field 12","area_ha":40},
  "geometry":{"type":"Polygon","coordinates":[[[0,0],[1,0],[1,1],[0,0]]]}},
 {"type":"Feature","properties":{"name":"note"},"geometry":null},
 {"type":"Feature","properties":null,"geometry":{"type":"MultiLineString","coordinates":[[[0,0],[10,0]],[[10,0],[10,10]]]}}
]}`

func TestReadScheme(t *testing.T) {
	sc, err := ReadScheme([]byte(schemeFile))
	if err != nil {
		t.Fatal(err)
	}
	if len(sc.Alignments) != 3 {
		t.Fatalf("%d alignments, want 3", len(sc.Alignments))
	}
	a := sc.Alignments[0]
	o := a.Overrides
	for _, c := range []struct {
		what string
		got  *float64
		want float64
	}{
		{"flow", o.Flow, 2.5}, {"start_invert", o.StartInvert, 101.2}, {"end_invert", o.EndInvert, 96.4},
		{"roughness", o.Roughness, 0.025}, {"bottom_width", o.BottomWidth, 1.5},
		{"command_margin", o.CommandMargin, 0.15}, {"curve_radius", o.CurveRadius, 60},
	} {
		if c.got == nil || *c.got != c.want {
			t.Errorf("%s = %v, want %v", c.what, c.got, c.want)
		}
	}
	if a.Name != "Main canal" || o.Corridor != "Main" || a.CRS != "EPSG:32633" || a.Feature != 1 || len(a.Line) != 3 {
		t.Errorf("alignment 0 = %+v", a)
	}
	if a.Properties["fid"] != 7.0 {
		t.Errorf("Properties[fid] = %v, want 7", a.Properties["fid"])
	}
	// The repeated vertex is dropped; the third kept point is the file's
	// fourth.
	if a.VertexName(2) != "vertex 4" {
		t.Errorf("VertexName(2) = %q, want vertex 4", a.VertexName(2))
	}
	b := sc.Alignments[1]
	if b.Overrides.Flow != nil || b.Overrides.Corridor != "Main" || b.Feature != 2 {
		t.Errorf("alignment 1 = %+v (null flow is not given)", b)
	}
	c := sc.Alignments[2]
	if c.Name != "alignment-3" || c.Feature != 7 || c.VertexName(2) != "vertex 2 of part 2" || c.Overrides != (Overrides{}) {
		t.Errorf("alignment 2 = %+v, %q", c, c.VertexName(2))
	}

	if len(sc.Offtakes) != 2 {
		t.Fatalf("%d offtakes, want 2", len(sc.Offtakes))
	}
	o1, o2 := sc.Offtakes[0], sc.Offtakes[1]
	if o1.Name != "Offtake 1" || o1.Index != 0 || o1.Feature != 3 || o1.X != 500700 || o1.Y != 4000010 ||
		o1.CommandLevel == nil || *o1.CommandLevel != 99.8 || o1.Margin != nil || o1.Alignment != "Main" {
		t.Errorf("offtake 1 = %+v", o1)
	}
	if o2.Name != "offtake-2" || o2.Feature != 4 || o2.Margin == nil || *o2.Margin != 0 || o2.CommandLevel != nil || o2.Alignment != "Main canal south" {
		t.Errorf("offtake 2 = %+v", o2)
	}
	// "flow" on a Point and "fid" on a line had values; "surveyed" and
	// "command_level" on the lines were null; the Polygon is skipped whole.
	if want := []string{"fid", "flow"}; !slices.Equal(sc.Ignored, want) {
		t.Errorf("Ignored = %q, want %q", sc.Ignored, want)
	}
	if want := []Skipped{{5, "Field 12", "Polygon"}, {6, "note", ""}}; !slices.Equal(sc.Skipped, want) {
		t.Errorf("Skipped = %+v, want %+v", sc.Skipped, want)
	}

	// Read still reads the same file, alignments only.
	as, err := Read([]byte(schemeFile))
	if err != nil || len(as) != 3 || as[0].Name != "Main canal" || as[0].Overrides.Flow != nil {
		t.Errorf("Read: %v, %+v", err, as)
	}
}

func TestReadSchemeErrors(t *testing.T) {
	line := func(props string) string {
		return `{"type":"FeatureCollection","features":[{"type":"Feature","properties":{"name":"A"},"geometry":{"type":"LineString","coordinates":[[0,0],[1,0]]}},
		 {"type":"Feature","properties":` + props + `,"geometry":{"type":"LineString","coordinates":[[0,1],[1,1]]}}]}`
	}
	point := func(props string) string {
		return `{"type":"FeatureCollection","features":[{"type":"Feature","properties":{"name":"A","corridor":"C"},"geometry":{"type":"LineString","coordinates":[[0,0],[1,0]]}},
		 {"type":"Feature","properties":` + props + `,"geometry":{"type":"Point","coordinates":[0.5,0.1]}}]}`
	}
	tests := []struct {
		name, in string
		want     error
		msg      string
	}{
		{"flow as a string", line(`{"name":"East Branch","flow":"2.5"}`), ErrProperty,
			`feature 2 ("East Branch"): property "flow" must be a number (m³/s), got the string "2.5"`},
		{"flow zero", line(`{"name":"East Branch","flow":0}`), ErrProperty,
			`feature 2 ("East Branch"): property "flow" must be more than 0 m³/s, got the number 0`},
		{"flow negative", line(`{"flow":-2}`), ErrProperty, `feature 2: property "flow" must be more than 0 m³/s, got the number -2`},
		{"flow beyond float64", line(`{"flow":1e400}`), ErrProperty, `feature 2: property "flow" must be a finite number (m³/s), got the number 1e400`},
		{"flow a boolean", line(`{"flow":true}`), ErrProperty, `feature 2: property "flow" must be a number (m³/s), got the boolean true`},
		{"flow an array", line(`{"flow":[1]}`), ErrProperty, `feature 2: property "flow" must be a number (m³/s), got an array`},
		{"flow an object", line(`{"flow":{"v":1}}`), ErrProperty, `feature 2: property "flow" must be a number (m³/s), got an object`},
		{"start_invert out of range", line(`{"start_invert":12000}`), ErrProperty, `feature 2: property "start_invert" must lie within ±10000 m, got the number 12000`},
		{"end_invert a string", line(`{"end_invert":"96.4 m"}`), ErrProperty, `feature 2: property "end_invert" must be a number (m), got the string "96.4 m"`},
		{"roughness too high", line(`{"roughness":0.25}`), ErrProperty, `feature 2: property "roughness" must be a Manning's n more than 0 and at most 0.2, got the number 0.25`},
		{"roughness zero", line(`{"roughness":0}`), ErrProperty, `feature 2: property "roughness" must be a Manning's n more than 0 and at most 0.2, got the number 0`},
		{"bottom_width zero", line(`{"bottom_width":0}`), ErrProperty, `feature 2: property "bottom_width" must be more than 0 m, got the number 0`},
		{"command_margin negative", line(`{"command_margin":-0.1}`), ErrProperty, `feature 2: property "command_margin" must be 0 m or more, got the number -0.1`},
		{"curve_radius zero", line(`{"curve_radius":0}`), ErrProperty, `feature 2: property "curve_radius" must be at least 1 m, got the number 0`},
		{"curve_radius below 1 m", line(`{"curve_radius":0.5}`), ErrProperty, `feature 2: property "curve_radius" must be at least 1 m, got the number 0.5`},
		{"corridor a number", line(`{"corridor":3}`), ErrProperty, `feature 2: property "corridor" must be a string, got the number 3`},
		{"name a number", line(`{"name":42}`), ErrProperty, `feature 2: property "name" must be a string, got the number 42`},
		{"long string cut", line(`{"flow":"` + strings.Repeat("x", 100) + `"}`), ErrProperty,
			`feature 2: property "flow" must be a number (m³/s), got the string "` + strings.Repeat("x", 40) + `…"`},
		{"control characters escaped", line(`{"name":"A\nB","flow":"\u0007"}`), ErrProperty,
			`feature 2 ("A\nB"): property "flow" must be a number (m³/s), got the string "\a"`},
		{"properties not an object", line(`[1]`), ErrNotGeoJSON, `alignment file is not GeoJSON: feature 2: "properties" must be an object or null`},

		{"offtake with both", point(`{"name":"O","command_level":99,"margin":0.2}`), ErrProperty,
			`feature 2 ("O"): an offtake takes either "command_level" or "margin", not both; remove one`},
		{"offtake with neither", point(`{"name":"O","margin":null}`), ErrProperty,
			`feature 2 ("O"): a Point is read as an offtake and needs a "command_level" (the lowest water level there, m) or a "margin" (m above the ground there); give one, or take the point out of the file`},
		{"offtake without properties", point(`null`), ErrProperty, ""},
		{"offtake margin negative", point(`{"margin":-1}`), ErrProperty, `feature 2: property "margin" must be 0 m or more, got the number -1`},
		{"offtake command_level a string", point(`{"command_level":"high"}`), ErrProperty, `feature 2: property "command_level" must be a number (m), got the string "high"`},
		{"offtake command_level out of range", point(`{"command_level":-1e5}`), ErrProperty, `feature 2: property "command_level" must lie within ±10000 m, got the number -1e5`},
		{"offtake alignment unknown", point(`{"name":"O","margin":0.2,"alignment":"Est Branch"}`), ErrProperty,
			`feature 2 ("O"): property "alignment" is "Est Branch", which names no alignment or corridor in the file ("A", "C" (corridor))`},
		{"offtake alignment a number", point(`{"margin":0.2,"alignment":1}`), ErrProperty, `feature 2: property "alignment" must be a string, got the number 1`},
		{"offtake with one coordinate", `{"type":"FeatureCollection","features":[{"type":"Feature","properties":{"margin":1},"geometry":{"type":"Point","coordinates":[1]}}]}`,
			ErrNotGeoJSON, `alignment file is not GeoJSON: feature 1: a Point needs at least x and y, got 1 number(s)`},
		{"offtake coordinates not numbers", `{"type":"FeatureCollection","features":[{"type":"Feature","properties":{"margin":1},"geometry":{"type":"Point","coordinates":"x"}}]}`,
			ErrNotGeoJSON, ""},
		{"only offtakes", `{"type":"FeatureCollection","features":[{"type":"Feature","properties":{"margin":1},"geometry":{"type":"Point","coordinates":[1,2]}}]}`,
			ErrNoLine, ""},
		{"bare point", `{"type":"Point","coordinates":[1,2]}`, ErrNoLine, ""},
		{"not JSON", `{"type":`, ErrNotJSON, ""},
		{"disjoint parts", `{"type":"MultiLineString","coordinates":[[[0,0],[1,0]],[[2,0],[3,0]]]}`, ErrDisjoint, ""},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := ReadScheme([]byte(tt.in))
			if !errors.Is(err, tt.want) {
				t.Fatalf("error %v, want %v", err, tt.want)
			}
			if tt.msg != "" && err.Error() != tt.msg {
				t.Errorf("message\n%s\nwant\n%s", err, tt.msg)
			}
			if strings.Contains(err.Error(), "\n") {
				t.Errorf("message spans lines: %q", err)
			}
		})
	}
}

// Read stays lenient where ReadScheme is strict: a wrong-typed property is
// kept as it is, and a number name gives the default name.
func TestReadIgnoresControls(t *testing.T) {
	as, err := Read([]byte(`{"type":"Feature","properties":{"name":42,"flow":"2.5"},"geometry":{"type":"LineString","coordinates":[[0,0],[1,0]]}}`))
	if err != nil || as[0].Name != "alignment-1" || as[0].Properties["flow"] != "2.5" {
		t.Errorf("Read: %v %+v", err, as)
	}
}

func TestAnyPropsKeepsHugeNumbers(t *testing.T) {
	sc, err := ReadScheme([]byte(`{"type":"Feature","properties":{"area":1e400,"list":[1,2]},"geometry":{"type":"LineString","coordinates":[[0,0],[1,0]]}}`))
	if err != nil {
		t.Fatal(err)
	}
	if got := sc.Alignments[0].Properties["area"]; got == nil || got.(interface{ String() string }).String() != "1e400" {
		t.Errorf("area = %#v, want json.Number 1e400", got)
	}
	if !slices.Equal(sc.Ignored, []string{"area", "list"}) {
		t.Errorf("Ignored = %q", sc.Ignored)
	}
}
