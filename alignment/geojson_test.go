package alignment

import (
	"errors"
	"slices"
	"strings"
	"testing"

	"github.com/paulmach/orb"
)

// Inputs follow RFC 7946 (Butler et al., "The GeoJSON Format", IETF 2016):
// §3.1.4 LineString, §3.1.5 MultiLineString, §3.2 Feature, §3.3
// FeatureCollection; the legacy "crs" member is from the 2008 GeoJSON
// specification (§3.1 named CRS). Expected values are the inputs themselves
// (exact cases).
func TestRead(t *testing.T) {
	type want struct {
		name    string
		feature int
		crs     string
		line    orb.LineString
	}
	tests := []struct {
		name    string
		in      string
		want    []want
		wantErr error
		errHas  string
	}{
		{
			name: "bare LineString",
			in:   `{"type":"LineString","coordinates":[[15,36],[15.1,36.1]]}`,
			want: []want{{"alignment-1", 1, "", orb.LineString{{15, 36}, {15.1, 36.1}}}},
		},
		{
			name: "Feature with name, Z dropped",
			in: `{"type":"Feature","properties":{"name":" Main canal "},
			      "geometry":{"type":"LineString","coordinates":[[15,36,120.5],[15.1,36.1,118]]}}`,
			want: []want{{"Main canal", 1, "", orb.LineString{{15, 36}, {15.1, 36.1}}}},
		},
		{
			name: "FeatureCollection with 3 alignments, a point and a null geometry skipped",
			in: `{"type":"FeatureCollection","features":[
			  {"type":"Feature","properties":{"name":"North"},"geometry":{"type":"LineString","coordinates":[[0,0],[1,0]]}},
			  {"type":"Feature","properties":{"name":"offtake"},"geometry":{"type":"Point","coordinates":[0,0]}},
			  {"type":"Feature","properties":{"name":42},"geometry":{"type":"LineString","coordinates":[[0,1],[1,1]]}},
			  {"type":"Feature","properties":null,"geometry":null},
			  {"type":"Feature","properties":{"name":"South"},"geometry":{"type":"MultiLineString","coordinates":[[[0,2],[1,2]],[[1,2],[2,2]]]}}
			]}`,
			want: []want{
				{"North", 1, "", orb.LineString{{0, 0}, {1, 0}}},
				{"alignment-2", 3, "", orb.LineString{{0, 1}, {1, 1}}},
				{"South", 5, "", orb.LineString{{0, 2}, {1, 2}, {2, 2}}},
			},
		},
		{
			name: "MultiLineString joined within 1 mm (projected)",
			in: `{"type":"MultiLineString","crs":{"type":"name","properties":{"name":"urn:ogc:def:crs:EPSG::32633"}},
			      "coordinates":[[[500000,4000000],[500100,4000000]],[[500100.0005,4000000],[500100,4000050]]]}`,
			want: []want{{"alignment-1", 1, "EPSG:32633", orb.LineString{{500000, 4000000}, {500100, 4000000}, {500100, 4000050}}}},
		},
		{
			name: "MultiLineString with an empty part",
			in:   `{"type":"MultiLineString","coordinates":[[],[[0,0],[1,0]],[],[[1,0],[1,1]]]}`,
			want: []want{{"alignment-1", 1, "", orb.LineString{{0, 0}, {1, 0}, {1, 1}}}},
		},
		{
			name:    "MultiLineString disjoint (projected, 5 m gap)",
			in:      `{"type":"MultiLineString","coordinates":[[[500000,4000000],[500100,4000000]],[[500105,4000000],[500200,4000000]]]}`,
			wantErr: ErrDisjoint,
			errHas:  "part 2 starts 5 CRS units from the end of part 1",
		},
		{
			name:    "MultiLineString disjoint (lon/lat, 1e-6 degree gap)",
			in:      `{"type":"Feature","properties":{"name":"West"},"geometry":{"type":"MultiLineString","coordinates":[[[15,36],[15.1,36]],[[15.100001,36],[15.2,36]]]}}`,
			wantErr: ErrDisjoint,
			errHas:  `feature 1 ("West"): MultiLineString parts do not join end to start: part 2`,
		},
		{
			name: "MultiLineString joined (lon/lat, 1e-9 degree gap)",
			in:   `{"type":"MultiLineString","coordinates":[[[15,36],[15.1,36]],[[15.100000001,36],[15.2,36]]]}`,
			want: []want{{"alignment-1", 1, "", orb.LineString{{15, 36}, {15.1, 36}, {15.2, 36}}}},
		},
		{
			name:    "MultiLineString part reversed is refused",
			in:      `{"type":"MultiLineString","coordinates":[[[0,0],[10,0]],[[20,0],[10,0]]]}`,
			wantErr: ErrDisjoint,
		},
		{
			name:    "Point only",
			in:      `{"type":"Point","coordinates":[15,36]}`,
			wantErr: ErrNoLine,
			errHas:  "no LineString or MultiLineString geometry found",
		},
		{
			name:    "FeatureCollection of points only",
			in:      `{"type":"FeatureCollection","features":[{"type":"Feature","properties":{},"geometry":{"type":"Point","coordinates":[1,2]}}]}`,
			wantErr: ErrNoLine,
		},
		{
			name:    "empty FeatureCollection",
			in:      `{"type":"FeatureCollection","features":[]}`,
			wantErr: ErrNoLine,
		},
		{
			name:    "GeometryCollection",
			in:      `{"type":"GeometryCollection","geometries":[{"type":"LineString","coordinates":[[0,0],[1,1]]}]}`,
			wantErr: ErrNoLine,
			errHas:  "own Feature",
		},
		{
			name:    "not JSON",
			in:      "{\"type\": \"LineString\",\n \"coordinates\": [[0,0],[1,1]]",
			wantErr: ErrNotJSON,
			errHas:  "alignment file is not valid JSON: line 2",
		},
		{
			name:    "not JSON: CSV",
			in:      "station,x,y\n0,1,2\n",
			wantErr: ErrNotJSON,
			errHas:  "line 1, column 1",
		},
		{
			name:    "empty file",
			in:      " \n",
			wantErr: ErrNotJSON,
			errHas:  "alignment file is not valid JSON: the file is empty",
		},
		{
			name: "UTF-8 byte order mark ignored (RFC 8259 §8.1)",
			in:   "\xef\xbb\xbf" + `{"type":"LineString","coordinates":[[0,0],[1,1]]}`,
			want: []want{{"alignment-1", 1, "", orb.LineString{{0, 0}, {1, 1}}}},
		},
		{
			name:    "JSON array at the top",
			in:      `[[0,0],[1,1]]`,
			wantErr: ErrNotGeoJSON,
		},
		{
			name:    "unknown type",
			in:      `{"type":"Route","coordinates":[[0,0],[1,1]]}`,
			wantErr: ErrNotGeoJSON,
			errHas:  `"type" is "Route"`,
		},
		{
			name:    "position with one number",
			in:      `{"type":"LineString","coordinates":[[0,0],[1]]}`,
			wantErr: ErrNotGeoJSON,
			errHas:  "position 2 has 1 number(s)",
		},
		{
			name:    "coordinates are strings",
			in:      `{"type":"LineString","coordinates":[["0","0"],["1","1"]]}`,
			wantErr: ErrNotGeoJSON,
			errHas:  "coordinates",
		},
		{
			name: "repeated vertices dropped",
			in:   `{"type":"LineString","coordinates":[[0,0],[0,0],[3,4],[3,4],[3,4],[6,8]]}`,
			want: []want{{"alignment-1", 1, "", orb.LineString{{0, 0}, {3, 4}, {6, 8}}}},
		},
		{
			name:    "fewer than two distinct points",
			in:      `{"type":"Feature","properties":{"name":"Stub"},"geometry":{"type":"LineString","coordinates":[[5,5],[5,5],[5,5]]}}`,
			wantErr: ErrTooFewPoints,
			errHas:  `alignment "Stub": fewer than two distinct points`,
		},
		{
			name:    "single point LineString",
			in:      `{"type":"LineString","coordinates":[[5,5]]}`,
			wantErr: ErrTooFewPoints,
			errHas:  `alignment "alignment-1"`,
		},
		{
			name:    "null coordinates",
			in:      `{"type":"LineString","coordinates":null}`,
			wantErr: ErrTooFewPoints,
		},
		{
			name: "legacy crs EPSG name",
			in:   `{"type":"FeatureCollection","crs":{"type":"name","properties":{"name":"EPSG:2227"}},"features":[{"type":"Feature","properties":{"name":"A"},"geometry":{"type":"LineString","coordinates":[[6000000,2000000],[6000100,2000000]]}}]}`,
			want: []want{{"A", 1, "EPSG:2227", orb.LineString{{6000000, 2000000}, {6000100, 2000000}}}},
		},
		{
			name: "legacy crs CRS84 URN",
			in:   `{"type":"LineString","crs":{"type":"name","properties":{"name":"urn:ogc:def:crs:OGC:1.3:CRS84"}},"coordinates":[[0,0],[1,1]]}`,
			want: []want{{"alignment-1", 1, "OGC:CRS84", orb.LineString{{0, 0}, {1, 1}}}},
		},
		{
			name: "legacy crs old EPSG type",
			in:   `{"type":"LineString","crs":{"type":"EPSG","properties":{"code":32633}},"coordinates":[[0,0],[1,1]]}`,
			want: []want{{"alignment-1", 1, "EPSG:32633", orb.LineString{{0, 0}, {1, 1}}}},
		},
		{
			name: "legacy crs other name kept as written",
			in:   `{"type":"LineString","crs":{"type":"name","properties":{"name":"+proj=utm +zone=33 +datum=WGS84"}},"coordinates":[[0,0],[1,1]]}`,
			want: []want{{"alignment-1", 1, "+proj=utm +zone=33 +datum=WGS84", orb.LineString{{0, 0}, {1, 1}}}},
		},
		{
			name: "legacy crs null",
			in:   `{"type":"LineString","crs":null,"coordinates":[[0,0],[1,1]]}`,
			want: []want{{"alignment-1", 1, "", orb.LineString{{0, 0}, {1, 1}}}},
		},
		{
			name:    "legacy crs link is refused",
			in:      `{"type":"LineString","crs":{"type":"link","properties":{"href":"http://example.com/crs/42"}},"coordinates":[[0,0],[1,1]]}`,
			wantErr: ErrNotGeoJSON,
			errHas:  `"crs" member is not understood`,
		},
		{
			name: "duplicate names get -2, -3, skipping names taken later",
			in: `{"type":"FeatureCollection","features":[
			  {"type":"Feature","properties":{"name":"A"},"geometry":{"type":"LineString","coordinates":[[0,0],[1,0]]}},
			  {"type":"Feature","properties":{"name":"a"},"geometry":{"type":"LineString","coordinates":[[0,1],[1,1]]}},
			  {"type":"Feature","properties":{"name":"A-2"},"geometry":{"type":"LineString","coordinates":[[0,2],[1,2]]}},
			  {"type":"Feature","properties":{"name":"A"},"geometry":{"type":"LineString","coordinates":[[0,3],[1,3]]}},
			  {"type":"Feature","properties":{"name":"A/B"},"geometry":{"type":"LineString","coordinates":[[0,4],[1,4]]}},
			  {"type":"Feature","properties":{"name":"A B"},"geometry":{"type":"LineString","coordinates":[[0,5],[1,5]]}}
			]}`,
			want: []want{
				{"A", 1, "", orb.LineString{{0, 0}, {1, 0}}},
				{"a-3", 2, "", orb.LineString{{0, 1}, {1, 1}}},
				{"A-2", 3, "", orb.LineString{{0, 2}, {1, 2}}},
				{"A-4", 4, "", orb.LineString{{0, 3}, {1, 3}}},
				{"A/B", 5, "", orb.LineString{{0, 4}, {1, 4}}},
				{"A B-2", 6, "", orb.LineString{{0, 5}, {1, 5}}},
			},
		},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			got, err := Read([]byte(tt.in))
			if tt.wantErr != nil || tt.errHas != "" {
				if err == nil {
					t.Fatalf("Read: no error, want %v", tt.wantErr)
				}
				if tt.wantErr != nil && !errors.Is(err, tt.wantErr) {
					t.Errorf("Read error = %v, want errors.Is %v", err, tt.wantErr)
				}
				if !strings.Contains(err.Error(), tt.errHas) {
					t.Errorf("Read error = %q, want it to contain %q", err, tt.errHas)
				}
				if strings.Contains(err.Error(), "\n") {
					t.Errorf("Read error spans lines: %q", err)
				}
				return
			}
			if err != nil {
				t.Fatalf("Read: %v", err)
			}
			if len(got) != len(tt.want) {
				t.Fatalf("Read gave %d alignments, want %d: %+v", len(got), len(tt.want), got)
			}
			for i, w := range tt.want {
				g := got[i]
				if g.Name != w.name || g.Index != i || g.Feature != w.feature || g.CRS != w.crs || !slices.Equal(g.Line, w.line) {
					t.Errorf("alignment %d = {Name:%q Index:%d Feature:%d CRS:%q Line:%v}, want {%q %d %d %q %v}",
						i, g.Name, g.Index, g.Feature, g.CRS, g.Line, w.name, i, w.feature, w.crs, w.line)
				}
			}
		})
	}
}

func TestReadKeepsProperties(t *testing.T) {
	in := `{"type":"Feature","properties":{"name":"A","design_flow_m3s":1.5},"geometry":{"type":"LineString","coordinates":[[0,0],[1,0]]}}`
	got, err := Read([]byte(in))
	if err != nil {
		t.Fatal(err)
	}
	// 1.5 is the value in the input (exact).
	if q, _ := got[0].Properties["design_flow_m3s"].(float64); q != 1.5 {
		t.Errorf("Properties[design_flow_m3s] = %v, want 1.5", got[0].Properties["design_flow_m3s"])
	}
}

func TestCRSName(t *testing.T) {
	// Spellings from the 2008 GeoJSON specification §3.1.1 (the URN
	// forms) and OGC 07-092r1 (URN syntax with an optional version);
	// expected names are GDAL's user-input forms (common practice).
	for in, want := range map[string]string{
		"urn:ogc:def:crs:EPSG::32633":   "EPSG:32633",
		"urn:ogc:def:crs:EPSG:6.6:4326": "EPSG:4326",
		"EPSG:2227":                     "EPSG:2227",
		"epsg:3857":                     "EPSG:3857",
		"urn:ogc:def:crs:OGC:1.3:CRS84": "OGC:CRS84",
		"urn:ogc:def:crs:OGC::CRS84":    "OGC:CRS84",
		"CRS84":                         "OGC:CRS84",
		"ESRI:102003":                   "ESRI:102003",
		"EPSG:abc":                      "EPSG:abc",
	} {
		if got := crsName(in); got != want {
			t.Errorf("crsName(%q) = %q, want %q", in, got, want)
		}
	}
}
