package survey

import (
	"bytes"
	"encoding/json"
	"encoding/xml"
	"io"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"canalstep/report/layers"
	"canalstep/report/layers/testdata/fixture"
)

// TestFootprint checks the land-take polygon of every scenario: closed,
// counterclockwise (positive shoelace area, the right-hand rule of RFC
// 7946 §3.1.6), simple (no two non-adjacent edges meet: every pair tested,
// O(n²)), its area the shoelace area, and holding every station but the
// two ends, which lie on its closing edges. On the straight alignment the
// area must equal the sum of the trapezoids between successive
// cross-sections, ½(w_i + w_{i+1})·Δs (exact plane geometry). On the sharp
// angle point the raw right catch line crosses itself, and the polygon must
// be simple all the same.
func TestFootprint(t *testing.T) {
	for key, sc := range scenarios() {
		t.Run(key, func(t *testing.T) {
			in := build(t, key, sc)
			fp, err := NewFootprint(in)
			if err != nil {
				t.Fatal(err)
			}
			ring := fp.Ring
			if len(ring) < 4 || ring[0] != ring[len(ring)-1] {
				t.Fatalf("ring of %d positions, closed %v", len(ring), len(ring) > 0 && ring[0] == ring[len(ring)-1])
			}
			u := in.unit()
			if a := layers.SignedArea(ring) * u * u; !(a > 0) || a != fp.Area {
				t.Errorf("shoelace area %v m², footprint says %v m²: want the same, positive (counterclockwise)", a, fp.Area)
			}
			if m := selfMeetings(ring); len(m) > 0 {
				t.Errorf("the ring's edges meet at %d pairs, first %v", len(m), m[0])
			}
			st := in.Result.Stations
			for i := 1; i < len(st)-1; i++ {
				if !inside(ring, layers.Coord{st[i].WorkX, st[i].WorkY}) {
					t.Errorf("station %s lies outside the footprint", st[i].Label)
				}
			}
			if fp.Stations != len(st) || fp.Beyond != 0 {
				t.Errorf("footprint through %d stations (%d beyond), want %d (0)", fp.Stations, fp.Beyond, len(st))
			}
			switch key {
			case "geographic":
				sum := 0.0
				for i := 1; i < len(st); i++ {
					w0 := st[i-1].CatchRight.Offset - st[i-1].CatchLeft.Offset
					w1 := st[i].CatchRight.Offset - st[i].CatchLeft.Offset
					sum += (w0 + w1) / 2 * (st[i].Chainage - st[i-1].Chainage)
				}
				if math.Abs(fp.Area-sum) > 1e-9*sum {
					t.Errorf("area %.6f m², the trapezoids %.6f m²", fp.Area, sum)
				}
			case "sharp":
				var raw []layers.Coord
				for i := range st {
					x, y := st[i].CrossPoint(st[i].CatchRight.Offset, u)
					raw = append(raw, layers.Coord{x, y})
				}
				raw = append(raw, raw[0]) // a closed ring, for selfMeetings
				if len(selfMeetings(raw)) == 0 {
					t.Error("the raw right catch line does not cross itself: the case tests nothing")
				}
				if len(ring) >= 2*len(st)+1 {
					t.Errorf("ring of %d positions from %d stations: no loop was cut out", len(ring), len(st))
				}
			}
			t.Logf("%s: footprint of %d positions, %.1f m²", key, len(ring), fp.Area)
		})
	}
}

// layerCounts are the feature counts each layer must have.
func layerCounts(in *Input, stakes []Stake) map[string]int {
	return map[string]int{LayerCentreline: 1, LayerDrops: len(in.Result.Drops), LayerOfftakes: len(in.Result.Command.Offtakes),
		LayerStakes: len(stakes), LayerFootprint: 1}
}

var layerOrder = []string{LayerCentreline, LayerDrops, LayerOfftakes, LayerStakes, LayerFootprint}

// TestGPKG writes plan.geojson and plan.gpkg of the projected plan (in
// EPSG:32634) and the geographic one (in EPSG:4326) and checks them with
// GDAL's own tools as a user would: ogrinfo lists the five layers with
// their geometry types and feature counts; ogr2ogr's RFC 7946 GeoJSON of
// each layer (reprojected to WGS 84 by PROJ) matches plan.geojson within
// 1e-7° (the tolerance, about 1 cm), feature by feature, with the
// same properties (numbers to 1e-9 relative: both come from the same
// rounded value and ogr2ogr prints 15 significant digits).
func TestGPKG(t *testing.T) {
	for _, key := range []string{"projected", "geographic"} {
		t.Run(key, func(t *testing.T) {
			in := build(t, key, scenarios()[key])
			stakes := stakesOf(t, in)
			dir := t.TempDir()
			path := filepath.Join(dir, GPKGFile)
			if err := WritePlanGPKG(path, in, stakes); err != nil {
				t.Fatal(err)
			}
			var ours bytes.Buffer
			if err := WritePlanGeoJSON(&ours, in, stakes); err != nil {
				t.Fatal(err)
			}
			counts := layerCounts(in, stakes)
			list := run(t, "", "ogrinfo", "-ro", "-q", path)
			kinds := map[string]string{LayerCentreline: "Line String", LayerDrops: "Point", LayerOfftakes: "Point", LayerStakes: "Point", LayerFootprint: "Polygon"}
			for k, name := range layerOrder {
				if want := strconv.Itoa(k+1) + ": " + name + " (" + kinds[name] + ")"; !strings.Contains(list, want) {
					t.Errorf("ogrinfo lists\n%s\nwithout %q", list, want)
				}
			}
			re := regexp.MustCompile(`Feature Count: (\d+)`)
			sections := strings.Split(run(t, "", "ogrinfo", "-ro", "-so", "-al", path), "\nLayer name: ")[1:]
			if len(sections) != len(layerOrder) {
				t.Fatalf("ogrinfo -so -al shows %d layers, want %d", len(sections), len(layerOrder))
			}
			for k, name := range layerOrder {
				info := sections[k]
				if got, _, _ := strings.Cut(info, "\n"); got != name {
					t.Errorf("layer %d is %q, want %q", k, got, name)
				}
				m := re.FindStringSubmatch(info)
				if m == nil || m[1] != strconv.Itoa(counts[name]) {
					t.Errorf("layer %s: ogrinfo feature count %v, want %d", name, m, counts[name])
				}
				epsg := map[string]string{"projected": `ID["EPSG",32634]`, "geographic": `ID["EPSG",4326]`}[key]
				if !strings.Contains(info, epsg) {
					t.Errorf("layer %s: ogrinfo shows no %s", name, epsg)
				}
			}
			var mine featureCollection
			if err := json.Unmarshal(ours.Bytes(), &mine); err != nil {
				t.Fatal(err)
			}
			next, worst := 0, 0.0
			for _, name := range layerOrder {
				out := run(t, "", "ogr2ogr", "-f", "GeoJSON", "-lco", "RFC7946=YES", "-lco", "COORDINATE_PRECISION=10", "/vsistdout/", path, name)
				var theirs featureCollection
				if err := json.Unmarshal([]byte(out), &theirs); err != nil {
					t.Fatalf("layer %s: %v", name, err)
				}
				if len(theirs.Features) != counts[name] {
					t.Fatalf("layer %s: ogr2ogr wrote %d features, want %d", name, len(theirs.Features), counts[name])
				}
				for k, tf := range theirs.Features {
					mf := mine.Features[next]
					next++
					if mf.Properties["layer"] != name || tf.Geometry.Type != mf.Geometry.Type {
						t.Fatalf("feature %d: ours %v %s, ogr2ogr %s %s", next-1, mf.Properties["layer"], mf.Geometry.Type, name, tf.Geometry.Type)
					}
					a, b := flatten(t, tf.Geometry.Coordinates), flatten(t, mf.Geometry.Coordinates)
					if len(a) != len(b) {
						t.Fatalf("layer %s feature %d: %d numbers, ours %d", name, k, len(a), len(b))
					}
					for i := range a {
						d := math.Abs(a[i] - b[i])
						worst = math.Max(worst, d)
						if d > 1e-7 {
							t.Errorf("layer %s feature %d coordinate %d: ogr2ogr %.10f, ours %.10f", name, k, i, a[i], b[i])
						}
					}
					for f, tv := range tf.Properties {
						mv := mf.Properties[f]
						x, xok := tv.(float64)
						y, yok := mv.(float64)
						if xok && yok && math.Abs(x-y) <= 1e-9*math.Max(1, math.Abs(x)) {
							continue
						}
						if tv != mv {
							t.Errorf("layer %s feature %d %s: ogr2ogr %v, ours %v", name, k, f, tv, mv)
						}
					}
				}
			}
			if next != len(mine.Features) {
				t.Errorf("plan.geojson has %d features, plan.gpkg %d", len(mine.Features), next)
			}
			t.Logf("%s: %d features; largest coordinate difference ogr2ogr vs plan.geojson %.3g°", key, next, worst)
		})
	}
}

// TestLandXML checks plan.xml with xmllint (well-formed; no Debian package
// carries the LandXML 1.2 schema, so its structure is checked by XPath):
// one Line per straight and one Curve per fitted curve (none without a
// radius), the curves' radius the one asked for, two PVIs per reach, one
// CgPoint per stake, and the CRS: EPSG 32634 for the projected DEM, the
// local transverse Mercator as WKT for the geographic one.
func TestLandXML(t *testing.T) {
	for _, key := range []string{"projected", "geographic"} {
		t.Run(key, func(t *testing.T) {
			in := build(t, key, scenarios()[key])
			stakes := stakesOf(t, in)
			path := writeXML(t, in)
			run(t, "", "xmllint", "--noout", path)
			count := func(xpath string) int {
				out := run(t, "", "xmllint", "--xpath", "count("+xpath+")", path)
				n, err := strconv.Atoi(strings.TrimSpace(out))
				if err != nil {
					t.Fatalf("xmllint count(%s): %q", xpath, out)
				}
				return n
			}
			el := func(name string) string { return "//*[local-name()='" + name + "']" }
			curves, lines := 0, 0
			for _, e := range in.Corridor.Route.Elements {
				if e.Curve != 0 {
					curves++
				} else if e.To > e.From {
					lines++
				}
			}
			if key == "projected" && curves == 0 {
				t.Fatal("the projected scenario fits no curve: the check tests nothing")
			}
			for _, c := range []struct {
				xpath string
				want  int
			}{
				{el("Curve"), len(in.Corridor.Route.Curves)}, {el("Curve"), curves}, {el("Line"), lines},
				{el("Curve") + "[@radius='" + strconv.FormatFloat(in.Corridor.Route.Radius, 'f', 4, 64) + "']", curves},
				{el("PVI"), 2 * len(in.Result.Reaches)}, {el("PVI") + "[@desc='drop crest']", len(in.Result.Drops)},
				{el("CgPoint"), len(stakes)}, {el("CgPoint") + "[@code='catch_left']", len(in.Result.Stations)},
			} {
				if got := count(c.xpath); got != c.want {
					t.Errorf("count(%s) = %d, want %d", c.xpath, got, c.want)
				}
			}
			cs := run(t, "", "xmllint", "--xpath", "string("+el("CoordinateSystem")+"/@epsgCode)", path)
			wkt := run(t, "", "xmllint", "--xpath", "string("+el("CoordinateSystem")+"/@ogcWktCode)", path)
			switch key {
			case "projected":
				if strings.TrimSpace(cs) != "32634" {
					t.Errorf("epsgCode %q, want 32634", cs)
				}
			case "geographic":
				if strings.TrimSpace(cs) != "" || !strings.Contains(wkt, "Transverse_Mercator") {
					t.Errorf("epsgCode %q, WKT %.80q: want the local transverse Mercator", cs, wkt)
				}
			}
			t.Logf("%s: %d lines, %d curves, %d PVIs, %d CgPoints", key, lines, curves, 2*len(in.Result.Reaches), len(stakes))
		})
	}
}

func writeXML(t *testing.T, in *Input) string {
	t.Helper()
	st := dirStager(t.TempDir())
	if err := WriteFiles(st, in); err != nil {
		t.Fatal(err)
	}
	return filepath.Join(string(st), LandXMLFile)
}

// dirStager writes files straight into a folder.
type dirStager string

func (d dirStager) Path(name string) (string, error) { return filepath.Join(string(d), name), nil }

func (d dirStager) WriteFile(name string, write func(io.Writer) error) error {
	f, err := os.Create(filepath.Join(string(d), name))
	if err != nil {
		return err
	}
	if err := write(f); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

// TestHostileName writes every deliverable of a plan whose alignment (and
// offtake) names carry markup, quotes, controls, bidirectional overrides
// and zero-width characters, and expects them escaped everywhere: no raw
// markup in plan.geojson or plan.xml, no raw control or invisible character
// in stakes.csv's header, and the names read back unchanged (GeoJSON, the
// GeoPackage through ogr2ogr) or with only the characters XML 1.0 cannot
// carry replaced (plan.xml).
func TestHostileName(t *testing.T) {
	in := build(t, "projected", scenarios()["projected"])
	dir := t.TempDir()
	if err := WriteFiles(dirStager(dir), in); err != nil {
		t.Fatal(err)
	}
	read := func(name string) string {
		b, err := os.ReadFile(filepath.Join(dir, name))
		if err != nil {
			t.Fatal(err)
		}
		return string(b)
	}
	for _, name := range []string{GeoJSONFile, LandXMLFile} {
		text := read(name)
		for _, bad := range []string{"<script>", "<b>", "\x1b", "\u202e", "\u200d", "\x01"} {
			if strings.Contains(text, bad) {
				t.Errorf("%s holds %q raw", name, bad)
			}
		}
	}
	csvText := read(StakesFile)
	tab := readTable(t, csvText)
	for _, c := range tab.comments {
		if strings.ContainsAny(c, "\x1b\x01\t\u202e\u200d\u0085") {
			t.Errorf("stakes.csv header line %q holds a raw control or invisible character", c)
		}
	}
	if !strings.Contains(tab.comments[0], `<script>alert("x")</script>`) || !strings.Contains(tab.comments[0], `\x1b`) {
		t.Errorf("stakes.csv names the alignment as %q", tab.comments[0])
	}
	var fc featureCollection
	if err := json.Unmarshal([]byte(read(GeoJSONFile)), &fc); err != nil {
		t.Fatal(err)
	}
	if got := fc.Features[0].Properties["alignment"]; got != fixture.HostileName {
		t.Errorf("plan.geojson alignment %q, want %q", got, fixture.HostileName)
	}
	out := run(t, "", "ogr2ogr", "-f", "GeoJSON", "/vsistdout/", filepath.Join(dir, GPKGFile), LayerOfftakes)
	var off featureCollection
	if err := json.Unmarshal([]byte(out), &off); err != nil {
		t.Fatal(err)
	}
	if got := off.Features[0].Properties["name"]; got != "Turnout <b>&\"4\"\u202e" {
		t.Errorf("plan.gpkg offtake name %q", got)
	}
	var doc struct {
		Alignments struct {
			Alignment struct {
				Name string `xml:"name,attr"`
			}
		}
	}
	if err := xml.Unmarshal([]byte(read(LandXMLFile)), &doc); err != nil {
		t.Fatal(err)
	}
	want := strings.Map(func(r rune) rune {
		if r < 0x20 && r != '\t' && r != '\n' && r != '\r' {
			return '\uFFFD' // XML 1.0 cannot carry these C0 controls (XML 1.0 §2.2)
		}
		return r
	}, fixture.HostileName)
	if doc.Alignments.Alignment.Name != want {
		t.Errorf("plan.xml alignment name %q, want %q", doc.Alignments.Alignment.Name, want)
	}
	run(t, "", "xmllint", "--noout", filepath.Join(dir, LandXMLFile))
}

// TestMissingCatch takes a plan whose catch points are missing at one
// station (a NaN offset) and lie beyond the sampled section at another:
// the first is left out of the stake list and the footprint, which stays
// simple and closed; the second is staked with a note and counted.
func TestMissingCatch(t *testing.T) {
	in := build(t, "geographic", scenarios()["geographic"])
	r := *in.Result
	r.Plan.Stations = append(r.Plan.Stations[:0:0], in.Result.Stations...)
	r.Stations[20].CatchLeft.Offset = math.NaN()
	r.Stations[40].CatchRight.Found = false
	bad := *in
	bad.Result = &r
	st := stakesOf(t, &bad)
	if len(st) != len(stakesOf(t, in))-1 {
		t.Errorf("%d stakes, want one fewer than %d", len(st), len(stakesOf(t, in)))
	}
	noted := 0
	for _, s := range st {
		if s.Chainage == r.Stations[20].Chainage && s.Kind == CatchLeft {
			t.Errorf("a catch point %s without an offset was staked", s.ID)
		}
		if s.Note == noteCatchBeyond {
			noted++
			if s.Kind != CatchRight || s.Chainage != r.Stations[40].Chainage {
				t.Errorf("%s carries the note", s.ID)
			}
		}
	}
	if noted != 1 {
		t.Errorf("%d stakes noted beyond the section, want 1", noted)
	}
	fp, err := NewFootprint(&bad)
	if err != nil {
		t.Fatal(err)
	}
	if fp.Stations != len(r.Stations)-1 || fp.Beyond != 1 || len(fp.Ring) != 2*fp.Stations+1 {
		t.Errorf("footprint through %d stations (%d beyond) with %d positions; want %d (1), %d", fp.Stations, fp.Beyond, len(fp.Ring), len(r.Stations)-1, 2*len(r.Stations)-1)
	}
	if m := selfMeetings(fp.Ring); len(m) > 0 || !(fp.Area > 0) {
		t.Errorf("ring meets itself at %v, area %v", m, fp.Area)
	}
	ls, err := Layers(&bad, st, LonLat)
	if err != nil {
		t.Fatal(err)
	}
	if err := layers.Validate(ls); err != nil {
		t.Error(err)
	}
}
