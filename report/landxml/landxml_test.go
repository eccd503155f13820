package landxml

import (
	"bytes"
	"encoding/xml"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"canalstep/report/layers/testdata/fixture"
	"canalstep/testdata/reftool"
)

var update = flag.Bool("update", false, "rewrite report/landxml/testdata golden files from the current output")

// demo returns a document for one fictional alignment (demo data, no
// source) whose geometry has exact answers: a 100 m straight east, a 90°
// left arc of radius 100 m about (512100, 4652100), a 200 m straight north,
// a 90° right arc of radius 50 m about (512250, 4652300). Length 300 + 75π
// m; the arcs' points of intersection are (512200, 4652000) and
// (512200, 4652350), the corners of their tangents (exact analytic case).
func demo() *Document {
	p := func(e, n float64) Point { return Point{Easting: e, Northing: n} }
	return &Document{
		Date: time.Date(2024, 3, 9, 14, 30, 5, 0, time.UTC),
		Unit: Meter,
		CRS:  CRS{Name: "WGS 84 / UTM zone 33N", EPSG: 32633},
		Alignments: []Alignment{{
			Name:     fixture.HostileName,
			Desc:     "demo main canal",
			StaStart: 1000,
			Segments: []Segment{
				LineSegment(p(512000, 4652000), p(512100, 4652000)),
				ArcSegment(p(512100, 4652000), p(512200, 4652100), p(512100, 4652100), false),
				LineSegment(p(512200, 4652100), p(512200, 4652300)),
				ArcSegment(p(512200, 4652300), p(512250, 4652350), p(512250, 4652300), true),
			},
			Profile: Profile{Name: "design bed", Points: []ProfilePoint{
				{Station: 1000, Elevation: 101.25},
				{Station: 1195.4567, Elevation: 101.1816},
				{Station: 1195.4567, Elevation: 99.9816},
				{Station: 1407, Elevation: 99.9075, Desc: "grade break"},
				{Station: 1000 + 300 + 75*math.Pi, Elevation: 99.862},
			}},
			Stakes: []Stake{
				{Name: "S1", Code: "CL", Desc: "0+000", Point: p(512000, 4652000), Elevation: 101.25},
				{Name: "S2", Code: "CL", Desc: "0+100 <tangent point> & \"BC\"", Point: p(512100, 4652000), Elevation: 101.215},
				{Name: "S3", Code: "DROP", Point: p(512200, 4652100), Elevation: math.NaN()},
			},
		}},
	}
}

// mustWrite writes d twice and returns the output; see fixture.Render.
func mustWrite(tb testing.TB, d *Document) []byte {
	return fixture.Render(tb, func(w io.Writer) error { return Write(w, d) })
}

// TestGolden compares the metric demo document with testdata/demo.xml
// (rewritten by -update; checked by hand against the analytic geometry in
// demo's comment); mustWrite checks that a second write gives the same
// bytes.
func TestGolden(t *testing.T) {
	fixture.Golden(t, filepath.Join("testdata", "demo.xml"), mustWrite(t, demo()), *update)
}

func xmllint(t *testing.T, file string, args ...string) string {
	t.Helper()
	cmd := exec.Command(reftool.Need(t, "xmllint"), append(args, file)...)
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("xmllint %s %s: %v\n%s", strings.Join(args, " "), file, err, stderr.String())
	}
	return strings.TrimSuffix(string(out), "\n")
}

func writeTemp(t *testing.T, d *Document) string {
	t.Helper()
	path := filepath.Join(t.TempDir(), "plan.xml")
	if err := os.WriteFile(path, mustWrite(t, d), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// el is an XPath step that matches a LandXML element by local name (the
// document uses a default namespace, which XPath 1.0 cannot name).
func el(name string) string { return "*[local-name()='" + name + "']" }

// TestXmllint checks the demo document with libxml2's xmllint, a reference
// parser: well-formed (--noout), and its structure by XPath. No published
// copy of the LandXML 1.2 schema is packaged for Debian (apt-cache search
// landxml finds nothing), so the schema itself is not checked here; the
// expected structure follows the schema's content models (LandXML-1.2.xsd:
// LandXML, Units/Metric, Alignment, CoordGeom, Line, Curve, Profile,
// ProfAlign, PVI, CgPoints, CgPoint).
func TestXmllint(t *testing.T) {
	path := writeTemp(t, demo())
	xmllint(t, path, "--noout")
	root := "/" + el("LandXML")
	align := root + "/" + el("Alignments") + "/" + el("Alignment")
	geom := align + "/" + el("CoordGeom")
	tests := []struct {
		xpath, want, source string
	}{
		{"namespace-uri(/*)", Namespace, "LandXML 1.2 namespace"},
		{"string(" + root + "/@version)", "1.2", "the schema version"},
		{"string(" + root + "/@date)", "2024-03-09", "Document.Date"},
		{"string(" + root + "/@time)", "14:30:05", "Document.Date"},
		{"count(" + root + "/" + el("Units") + "/" + el("Metric") + "[@linearUnit='meter' and @areaUnit and @volumeUnit and @temperatureUnit and @pressureUnit])", "1", "Metric's required attributes"},
		{"string(" + root + "/" + el("CoordinateSystem") + "/@epsgCode)", "32633", "Document.CRS"},
		{"count(" + geom + "/" + el("Line") + ")", "2", "two straights"},
		{"count(" + geom + "/" + el("Curve") + ")", "2", "two arcs"},
		{"string(" + geom + "/" + el("Curve") + "[1]/@rot)", "ccw", "first arc turns left"},
		{"string(" + geom + "/" + el("Curve") + "[2]/@rot)", "cw", "second arc turns right"},
		{"string(" + geom + "/" + el("Curve") + "[1]/@radius)", "100.0000", "exact: |Start − Center|"},
		{"string(" + geom + "/" + el("Curve") + "[1]/@length)", "157.0796", "exact: 100·π/2 = 157.07963"},
		{"string(" + geom + "/" + el("Curve") + "[1]/" + el("PI") + ")", "4652000.0000 512200.0000", "exact: tangent corner, northing first"},
		{"string(" + geom + "/" + el("Curve") + "[2]/" + el("PI") + ")", "4652350.0000 512200.0000", "exact: tangent corner, northing first"},
		{"string(" + geom + "/" + el("Curve") + "[2]/@staStart)", "1457.0796", "exact: 1000 + 100 + 50π + 200"},
		{"string(" + align + "/@length)", "535.6194", "exact: 300 + 75π = 535.61945"},
		{"string(" + align + "/@staStart)", "1000.0000", "Alignment.StaStart"},
		{"count(" + align + "/" + el("Profile") + "/" + el("ProfAlign") + "[@name='design bed']/" + el("PVI") + ")", "5", "every profile point"},
		{"string(" + align + "//" + el("PVI") + "[2])", "1195.4567 101.1816", "drop crest at its station"},
		{"string(" + align + "//" + el("PVI") + "[3])", "1195.4577 99.9816", "drop toe DropRun (0.001 m) downstream"},
		{"string(" + align + "//" + el("PVI") + "[3]/@desc)", "drop toe", "default desc"},
		{"count(" + root + "/" + el("CgPoints") + "/" + el("CgPoint") + ")", "3", "every stake"},
		{"string(" + root + "/" + el("CgPoints") + "/" + el("CgPoint") + "[1])", "4652000.0000 512000.0000 101.2500", "northing easting elevation"},
		{"string(" + root + "/" + el("CgPoints") + "/" + el("CgPoint") + "[3])", "4652100.0000 512200.0000", "NaN elevation: a 2D point"},
		{"string(" + root + "/" + el("CgPoints") + "/" + el("CgPoint") + "[2]/@desc)", "0+100 <tangent point> & \"BC\"", "escaped text decodes unchanged"},
	}
	for _, tc := range tests {
		if got := xmllint(t, path, "--xpath", tc.xpath); got != tc.want {
			t.Errorf("%s = %q, want %q (%s)", tc.xpath, got, tc.want, tc.source)
		}
	}
}

// TestHostileName checks that an alignment name with markup, quotes,
// controls and bidirectional overrides comes out well-formed and decodes to
// the name with only the C0 controls XML 1.0 cannot carry (SOH, ESC)
// replaced by U+FFFD; no raw bidi or C1 character is in the file.
func TestHostileName(t *testing.T) {
	path := writeTemp(t, demo())
	raw, _ := os.ReadFile(path)
	for _, r := range []string{"\u202e", "\u202c", "\u2066", "\u2069", "\u200d", "\u0085", "\x01", "\x1b", "<script>"} {
		if bytes.Contains(raw, []byte(r)) {
			t.Errorf("the file holds %q raw", r)
		}
	}
	want := strings.NewReplacer("\x01", "\uFFFD", "\x1b", "\uFFFD").Replace(fixture.HostileName)
	got := xmllint(t, path, "--xpath", "string(//"+el("Alignment")+"/@name)")
	if got != want {
		t.Errorf("name decodes to %q, want %q", got, want)
	}
	if got := xmllint(t, path, "--xpath", "string(//"+el("CgPoints")+"/@name)"); got != want {
		t.Errorf("CgPoints name decodes to %q, want %q", got, want)
	}
}

// TestFeet checks the conversion at the edge: every length in US survey
// feet (1 m = 3937/1200 ftUS) or international feet (1 m = 1/0.3048 ft),
// by definition (from memory), and the Imperial unit names of the schema.
func TestFeet(t *testing.T) {
	for _, tc := range []struct {
		unit     Unit
		name     string
		perMetre float64
	}{
		{USSurveyFoot, "USSurveyFoot", 3937.0 / 1200.0},
		{Foot, "foot", 1 / 0.3048},
	} {
		d := demo()
		d.Unit = tc.unit
		path := writeTemp(t, d)
		xmllint(t, path, "--noout")
		if got := xmllint(t, path, "--xpath", "string(//"+el("Imperial")+"/@linearUnit)"); got != tc.name {
			t.Errorf("linearUnit %q, want %q", got, tc.name)
		}
		length, _ := strconv.ParseFloat(xmllint(t, path, "--xpath", "string(//"+el("Alignment")+"/@length)"), 64)
		if want := (300 + 75*math.Pi) * tc.perMetre; math.Abs(length-want) > 0.5e-4 {
			t.Errorf("%s: length %.4f, want %.4f (±0.5e-4, the printed resolution)", tc.name, length, want)
		}
		pvi := strings.Fields(xmllint(t, path, "--xpath", "string(//"+el("PVI")+"[3])"))
		sta, _ := strconv.ParseFloat(pvi[0], 64)
		if want := 1195.4567*tc.perMetre + DropRun; math.Abs(sta-want) > 0.5e-4 {
			t.Errorf("%s: drop toe at %.4f, want %.4f", tc.name, sta, want)
		}
	}
}

// TestGeometry checks derived arc values against exact cases, including an
// arc of 270° (no PI: its tangents meet behind it).
func TestGeometry(t *testing.T) {
	p := func(e, n float64) Point { return Point{Easting: e, Northing: n} }
	tests := []struct {
		name   string
		s      Segment
		length float64
		pi     *Point
	}{
		{"line 3-4-5", LineSegment(p(0, 0), p(3, 4)), 5, nil},
		{"quarter left", ArcSegment(p(10, 0), p(0, 10), p(0, 0), false), 5 * math.Pi, &Point{10, 10}},
		{"quarter right", ArcSegment(p(0, 10), p(10, 0), p(0, 0), true), 5 * math.Pi, &Point{10, 10}},
		{"three quarters left", ArcSegment(p(0, 10), p(10, 0), p(0, 0), false), 15 * math.Pi, nil},
		{"sixty degrees", ArcSegment(p(10, 0), p(5, 5*math.Sqrt(3)), p(0, 0), false), 10 * math.Pi / 3, &Point{10, 10 / math.Sqrt(3)}},
	}
	for _, tc := range tests {
		g, err := tc.s.geometry()
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		// 1e-9 m: double rounding in a few operations on numbers near 10.
		if math.Abs(g.length-tc.length) > 1e-9 {
			t.Errorf("%s: length %.12f, want %.12f", tc.name, g.length, tc.length)
		}
		switch {
		case (g.pi == nil) != (tc.pi == nil):
			t.Errorf("%s: PI %v, want %v", tc.name, g.pi, tc.pi)
		case g.pi != nil && math.Hypot(g.pi.Easting-tc.pi.Easting, g.pi.Northing-tc.pi.Northing) > 1e-9:
			t.Errorf("%s: PI %v, want %v", tc.name, *g.pi, *tc.pi)
		}
	}
}

// TestInvalid checks that bad documents are refused with a message naming
// the fault, and that nothing is written.
func TestInvalid(t *testing.T) {
	tests := []struct {
		name   string
		change func(d *Document)
		want   string
	}{
		{"gap between segments", func(d *Document) { d.Alignments[0].Segments[2].Start.Easting += 0.01 }, "segment 2 starts 0.0100 m"},
		{"radius mismatch", func(d *Document) { d.Alignments[0].Segments[1].Center.Northing += 1 }, "from the centre"},
		{"zero-length line", func(d *Document) {
			a := &d.Alignments[0]
			a.Segments = append([]Segment{LineSegment(a.Segments[0].Start, a.Segments[0].Start)}, a.Segments...)
		}, "zero length"},
		{"rising step", func(d *Document) { d.Alignments[0].Profile.Points[2].Elevation = 102 }, "rises"},
		{"three points at a station", func(d *Document) {
			pts := d.Alignments[0].Profile.Points
			d.Alignments[0].Profile.Points = append(pts[:3:3], append([]ProfilePoint{{Station: 1195.4567, Elevation: 99}}, pts[3:]...)...)
		}, "three points"},
		{"station going back", func(d *Document) { d.Alignments[0].Profile.Points[3].Station = 1100 }, "not downstream"},
		{"point after a drop within its run", func(d *Document) { d.Alignments[0].Profile.Points[3].Station = 1195.4570 }, "not downstream"},
		{"station off the alignment", func(d *Document) { d.Alignments[0].Profile.Points[4].Station = 1600 }, "off the alignment"},
		{"one profile point", func(d *Document) { d.Alignments[0].Profile.Points = d.Alignments[0].Profile.Points[:1] }, "2 to"},
		{"duplicate stake name", func(d *Document) { d.Alignments[0].Stakes[2].Name = "S1" }, "used again"},
		{"NUL in a name", func(d *Document) { d.Alignments[0].Name = "a\x00b" }, "NUL"},
		{"invalid UTF-8", func(d *Document) { d.Alignments[0].Stakes[0].Desc = "\xff" }, "UTF-8"},
		{"no name", func(d *Document) { d.Alignments[0].Name = "" }, "no name"},
		{"NaN coordinate", func(d *Document) { d.Alignments[0].Stakes[0].Easting = math.NaN() }, "not finite"},
		{"unknown unit", func(d *Document) { d.Unit = 7 }, "unknown unit"},
		{"no segments", func(d *Document) { d.Alignments[0].Segments = nil }, "0 segments"},
	}
	for _, tc := range tests {
		d := demo()
		tc.change(d)
		var b bytes.Buffer
		err := Write(&b, d)
		if err == nil || !errors.Is(err, ErrInvalid) || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: error %v, want ErrInvalid containing %q", tc.name, err, tc.want)
		}
		if b.Len() != 0 {
			t.Errorf("%s: %d bytes written", tc.name, b.Len())
		}
	}
}

// decodeAttr parses <a v="…"/> with Go's XML decoder and returns v.
func decodeAttr(doc []byte) (string, error) {
	dec := xml.NewDecoder(bytes.NewReader(doc))
	for {
		tok, err := dec.Token()
		if err == io.EOF {
			return "", errors.New("no element")
		}
		if err != nil {
			return "", err
		}
		if se, ok := tok.(xml.StartElement); ok {
			return se.Attr[0].Value, nil
		}
	}
}

// FuzzEscape checks, for any text CheckText accepts, that the escaped
// attribute is well-formed XML, decodes to the text with only the
// characters XML 1.0 cannot carry replaced by U+FFFD, and holds no raw
// invisible character.
func FuzzEscape(f *testing.F) {
	for _, s := range []string{fixture.HostileName, "", "plain", "a\"b'c<d>e&f", "\t\n\r", "\uFFFE\uFFFF", "\U0001F30A\u2028"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		if strings.IndexByte(s, 0) >= 0 || !utf8Valid(s) {
			t.Skip()
		}
		doc := append(escape([]byte(`<a v="`), s), `"/>`...)
		got, err := decodeAttr(doc)
		if err != nil {
			t.Fatalf("%q escapes to ill-formed %q: %v", s, doc, err)
		}
		want := strings.Map(func(r rune) rune {
			if r < 0x20 && r != '\t' && r != '\n' && r != '\r' || r == 0xFFFE || r == 0xFFFF {
				return '\uFFFD'
			}
			return r
		}, s)
		if got != want {
			t.Fatalf("%q decodes to %q, want %q", s, got, want)
		}
		for _, r := range string(doc) {
			if r != '\uFFFD' && (r < 0x20 || r >= 0x7f && r <= 0x9f || r == '\u202e' || r == '\u2028') {
				t.Fatalf("%q escapes to %q holding %U raw", s, doc, r)
			}
		}
	})
}

func utf8Valid(s string) bool { return strings.ToValidUTF8(s, "") == s }

// FuzzProfile writes the demo alignment with fuzzed profile points: no
// panic, and whatever is accepted is well-formed with strictly increasing
// PVI stations.
func FuzzProfile(f *testing.F) {
	f.Add(1000.0, 101.0, 1200.0, 100.5, 1200.0, 99.0, 1500.0, 98.0)
	f.Add(1000.0, 101.0, 1000.0, 100.0, 1000.0005, 99.0, 1535.6, 98.0)
	f.Add(math.NaN(), 0.0, math.Inf(1), 0.0, -1e300, 1e300, 0.0, 0.0)
	f.Fuzz(func(t *testing.T, s0, z0, s1, z1, s2, z2, s3, z3 float64) {
		d := demo()
		d.Alignments[0].Profile.Points = []ProfilePoint{{s0, z0, ""}, {s1, z1, ""}, {s2, z2, ""}, {s3, z3, ""}}
		var b bytes.Buffer
		if err := Write(&b, d); err != nil {
			if !errors.Is(err, ErrInvalid) {
				t.Fatalf("error %v does not wrap ErrInvalid", err)
			}
			return
		}
		dec := xml.NewDecoder(&b)
		prev := math.Inf(-1)
		inPVI := false
		for {
			tok, err := dec.Token()
			if err == io.EOF {
				break
			}
			if err != nil {
				t.Fatalf("ill-formed output: %v", err)
			}
			switch x := tok.(type) {
			case xml.StartElement:
				inPVI = x.Name.Local == "PVI"
			case xml.EndElement:
				inPVI = false
			case xml.CharData:
				if !inPVI {
					continue
				}
				var sta, z float64
				if _, err := fmt.Sscan(string(x), &sta, &z); err != nil {
					t.Fatalf("PVI %q: %v", x, err)
				}
				if !(sta > prev) {
					t.Fatalf("PVI station %v after %v", sta, prev)
				}
				prev = sta
			}
		}
	})
}

// BenchmarkWrite10000Points writes one alignment with 10,000 stake points
// and 10,000 PVIs.
func BenchmarkWrite10000Points(b *testing.B) {
	d := demo()
	a := &d.Alignments[0]
	a.Stakes = make([]Stake, 10000)
	a.Profile.Points = make([]ProfilePoint, 10000)
	for i := range a.Stakes {
		a.Stakes[i] = Stake{Name: fmt.Sprintf("S%d", i), Code: "CL", Point: Point{512000 + 0.05*float64(i), 4652000}, Elevation: 101 - 1e-4*float64(i)}
		a.Profile.Points[i] = ProfilePoint{Station: 1000 + 0.05*float64(i), Elevation: 101 - 1e-4*float64(i)}
	}
	b.ReportAllocs()
	for b.Loop() {
		if err := Write(io.Discard, d); err != nil {
			b.Fatal(err)
		}
	}
}
