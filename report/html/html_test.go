package html_test

import (
	"bytes"
	"encoding/xml"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"sync"
	"testing"

	"canalstep/planner"
	"canalstep/report"
	"canalstep/report/html"
	"canalstep/report/units"
)

var update = flag.Bool("update", false, "rewrite the golden report under testdata/")

// goldenFixture is the golden report's plan: 1.3 km of the fictional
// scheme (seed 9) with an offtake, where the even-spacing baseline breaks
// constraints and the by-eye one does not, and a comparison of four
// drop-height sets.
// It is planned once and shared by the tests, which only read it.
func goldenFixture(tb testing.TB) (fixture, []planner.Alternative) {
	golden.once.Do(func() {
		golden.f = newFixture(tb, 131, 9, 0, "Main canal", "North offtake")
		golden.alts = planner.Compare(golden.f.problem, [][]float64{{0.5}, {1.5}, {0.2}}, 2)
	})
	return golden.f, golden.alts
}

var golden struct {
	once sync.Once
	f    fixture
	alts []planner.Alternative
}

func write(tb testing.TB, r html.Report) []byte {
	tb.Helper()
	var b bytes.Buffer
	if err := html.Write(&b, r); err != nil {
		tb.Fatal(err)
	}
	return b.Bytes()
}

func TestGolden(t *testing.T) {
	f, alts := goldenFixture(t)
	// The fixture must show what the golden is there to show.
	if f.err != nil || f.result.EvenSpacing.Feasible || !f.result.ByEye.Feasible {
		t.Fatalf("fixture changed: plan error %v, even spacing feasible %v, by eye feasible %v",
			f.err, f.result.EvenSpacing.Feasible, f.result.ByEye.Feasible)
	}
	got := write(t, f.report(t, units.SI, alts))
	path := filepath.Join("testdata", "report_si.html")
	if *update {
		if err := os.WriteFile(path, got, 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test ./report/html/ -update to write it)", err)
	}
	if !bytes.Equal(got, want) {
		gotPath := path + ".got"
		_ = os.WriteFile(gotPath, got, 0o644)
		t.Errorf("report differs from %s at line %d; wrote %s (run with -update if the change is meant)", path, firstDiff(got, want), gotPath)
	}
}

// firstDiff returns the first line (1-based) where a and b differ.
func firstDiff(a, b []byte) int {
	la, lb := bytes.Split(a, []byte("\n")), bytes.Split(b, []byte("\n"))
	for i := range min(len(la), len(lb)) {
		if !bytes.Equal(la[i], lb[i]) {
			return i + 1
		}
	}
	return min(len(la), len(lb)) + 1
}

// TestDeterministic writes one report from several goroutines at once:
// every copy has the same bytes (no wall-clock time, no map order, no
// state shared between calls).
func TestDeterministic(t *testing.T) {
	f, alts := goldenFixture(t)
	r := f.report(t, units.US, alts)
	want := write(t, r)
	var wg sync.WaitGroup
	outs := make([][]byte, 4)
	for i := range outs {
		wg.Add(1)
		go func() {
			defer wg.Done()
			var b bytes.Buffer
			if err := html.Write(&b, r); err != nil {
				t.Error(err)
			}
			outs[i] = b.Bytes()
		}()
	}
	wg.Wait()
	for i, o := range outs {
		if !bytes.Equal(o, want) {
			t.Errorf("copy %d differs from the first at line %d", i, firstDiff(o, want))
		}
	}
}

// node is an element of the parsed report.
type node struct {
	name  string
	attrs map[string]string
	text  string // text directly inside, decoded
}

// parse reads the report as XML (the writer emits polyglot HTML5) and
// returns its elements in document order; a syntax error fails the test.
func parse(t *testing.T, doc []byte) []node {
	t.Helper()
	d := xml.NewDecoder(bytes.NewReader(doc))
	d.Strict = true
	var out []node
	var open []int
	for {
		tok, err := d.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			line := bytes.Count(doc[:d.InputOffset()], []byte("\n")) + 1
			t.Fatalf("the report is not well-formed at line %d: %v", line, err)
		}
		switch x := tok.(type) {
		case xml.StartElement:
			n := node{name: strings.ToLower(x.Name.Local), attrs: map[string]string{}}
			for _, a := range x.Attr {
				n.attrs[strings.ToLower(a.Name.Local)] = a.Value
			}
			out = append(out, n)
			open = append(open, len(out)-1)
		case xml.EndElement:
			open = open[:len(open)-1]
		case xml.CharData:
			if len(open) > 0 {
				out[open[len(open)-1]].text += string(x)
			}
		}
	}
	return out
}

// TestWellFormed checks the golden report's structure: a doctype, one
// html element with a language, a character set, a title; no script, no
// event handler, no external reference of any kind (src, href other than
// a fragment, url() other than a fragment); unique ids and fragment links
// that resolve.
func TestWellFormed(t *testing.T) {
	f, alts := goldenFixture(t)
	doc := write(t, f.report(t, units.SI, alts))
	if !bytes.HasPrefix(doc, []byte("<!DOCTYPE html>\n")) {
		t.Error("the report does not start with the HTML5 doctype")
	}
	nodes := parse(t, doc)
	ids := map[string]bool{}
	var hrefs []string
	counts := map[string]int{}
	for _, n := range nodes {
		counts[n.name]++
		if n.name == "script" || n.name == "iframe" || n.name == "object" || n.name == "embed" || n.name == "link" || n.name == "img" {
			t.Errorf("the report has a <%s> element", n.name)
		}
		for k, v := range n.attrs {
			switch {
			case strings.HasPrefix(k, "on"):
				t.Errorf("<%s> has an event handler %s", n.name, k)
			case k == "src" || k == "srcset" || k == "action" || k == "formaction":
				t.Errorf("<%s> loads %s=%q", n.name, k, v)
			case k == "href":
				if !strings.HasPrefix(v, "#") {
					t.Errorf("<%s> links outside the report: %q", n.name, v)
				}
				hrefs = append(hrefs, v[1:])
			case k == "id":
				if ids[v] {
					t.Errorf("id %q is used twice", v)
				}
				ids[v] = true
			}
		}
		if n.name == "html" && n.attrs["lang"] == "" {
			t.Error("<html> has no lang")
		}
	}
	for _, h := range hrefs {
		if !ids[h] {
			t.Errorf("link to #%s has no target", h)
		}
	}
	for _, name := range []string{"html", "head", "body", "title", "h1"} {
		if counts[name] != 1 {
			t.Errorf("%d <%s> elements, want 1", counts[name], name)
		}
	}
	if !bytes.Contains(doc, []byte(`<meta charset="utf-8"/>`)) {
		t.Error("no character set")
	}
	for _, m := range regexp.MustCompile(`url\(([^)]*)\)`).FindAllSubmatch(doc, -1) {
		if !bytes.HasPrefix(m[1], []byte("#")) {
			t.Errorf("url(%s) refers outside the report", m[1])
		}
	}
	// The only absolute URIs are the two XML namespace names, which are
	// never fetched.
	for _, m := range regexp.MustCompile(`[a-z]+://[^"' <)]*`).FindAll(doc, -1) {
		if s := string(m); s != "http://www.w3.org/1999/xhtml" && s != "http://www.w3.org/2000/svg" {
			t.Errorf("absolute URI %q in the report", s)
		}
	}
	if counts["svg"] < 4 {
		t.Errorf("%d inline SVG figures, want the long-section sheets, the mass haul and cross-sections", counts["svg"])
	}
}

// hostile is user text meant to break out of the markup or fool a
// reader: a script element, both quotes, an ampersand, a terminal escape
// sequence and a right-to-left override (Unicode's bidi control that
// reorders what a reader sees).
const hostile = "<script>alert(1)</script> \"q\" 'a' & b\x1b[31m\u202eevil"

// shown is hostile as the report must show it: the markup as text, the
// escape and the override as visible escapes (textsafe.Clip).
const shown = `<script>alert(1)</script> "q" 'a' & b\x1b[31m\u202eevil`

func TestHostileText(t *testing.T) {
	f := newFixture(t, 61, 9, 0, hostile, hostile+" offtake")
	r := f.report(t, units.SI, []planner.Alternative{{DropHeights: []float64{0.2}, Err: fmt.Errorf("%w: %s", planner.ErrInput, hostile)}})
	r.Provenance = provenance(t, hostile, "canalstep plan --out "+hostile, "PROJCS[\""+hostile+"\"]\nUNIT[\"metre\",1]")
	r.Provenance.Version = hostile
	r.Provenance.Inputs[0].Role = hostile
	doc := write(t, r)
	for _, bad := range []string{"<script", "\x1b", "\u202e"} {
		if bytes.Contains(bytes.ToLower(doc), []byte(bad)) {
			t.Errorf("the report carries %q unescaped", bad)
		}
	}
	nodes := parse(t, doc)
	seen := map[string]int{}
	for _, n := range nodes {
		if n.name == "script" {
			t.Fatal("the report has a <script> element")
		}
		if strings.Contains(n.text, shown) {
			seen[n.name]++
		}
		for k, v := range n.attrs {
			if strings.Contains(v, "alert(") {
				t.Errorf("user text reached attribute %s of <%s>: %q", k, n.name, v)
			}
		}
	}
	// The name in the title, the heading, the provenance table; the
	// offtake in its table; paths and the role in the inputs table; the
	// error of the alternative.
	if seen["title"] != 1 || seen["h1"] != 1 {
		t.Errorf("the name is not shown escaped in the title and heading: %v", seen)
	}
	if seen["td"] < 6 {
		t.Errorf("user text shown escaped in %d table cells, want at least 6 (name, version, command line, role, paths, offtake, error): %v", seen["td"], seen)
	}
}

// TestUnitsUS checks US customary output against exact conversions: the
// international foot is 0.3048 m and the cubic foot 0.028316846592 m³ by
// definition (international yard and pound agreement, 1959), so 1 m³/s is
// 35.3147 cfs, 1.5 m is 4.921 ft and 1300 m is 4265.09 ft, station
// 42+65.09.
func TestUnitsUS(t *testing.T) {
	f, alts := goldenFixture(t)
	text := domText(parse(t, write(t, f.report(t, units.US, alts))))
	for _, want := range []string{
		"35.315 cfs",           // design flow 1 m³/s
		"4.921 ft",             // a 1.5 m drop
		"42+65.09",             // the last station, 1300 m
		"3000 ft of alignment", // the sheet length
		"every 300 ft",         // the band interval
		"per yd³",              // unit prices
		"US customary",         // the unit system named
		"Water surface (ft)",   // the data band
	} {
		if !strings.Contains(text, want) {
			t.Errorf("US report lacks %q", want)
		}
	}
	for _, bad := range []string{" m³/s", "0+000.00", " m³ "} {
		if strings.Contains(text, bad) {
			t.Errorf("US report shows the SI %q", bad)
		}
	}
}

// domText joins the text of every element.
func domText(nodes []node) string {
	var b strings.Builder
	for _, n := range nodes {
		b.WriteString(n.text)
		b.WriteByte('\n')
	}
	return b.String()
}

// TestNoFeasibleBaseline: with a 0.15 m command margin on the fictional
// ground (seed 3) neither baseline holds every constraint; the report says
// so instead of stating a saving, and lists what each breaks.
func TestNoFeasibleBaseline(t *testing.T) {
	f := newFixture(t, 131, 3, 0.15, "Branch canal", "East offtake")
	if f.err != nil || f.result.BestBaseline() != nil {
		t.Fatalf("fixture changed: plan error %v, best baseline %v", f.err, f.result.BestBaseline())
	}
	text := domText(parse(t, write(t, f.report(t, units.SI, nil))))
	for _, want := range []string{"Neither baseline meets every constraint, so no saving is stated", "none stated (no feasible baseline)",
		"Even spacing breaks", "By eye breaks"} {
		if !strings.Contains(text, want) {
			t.Errorf("report lacks %q", want)
		}
	}
	if strings.Contains(text, "Saving: the plan costs") {
		t.Error("a saving is stated against an infeasible baseline")
	}
	for _, b := range f.result.Baselines() {
		for _, v := range b.Violations {
			if w := report.FormatViolation(v, units.SI); !strings.Contains(text, w) {
				t.Errorf("broken constraint %q is not listed", w)
			}
		}
	}
}

// TestInfeasiblePlan: drops of 0.2 m only cannot follow the fictional
// ground; the report gives the conflicts, the ground and the baseline, and
// no drop sheets.
func TestInfeasiblePlan(t *testing.T) {
	st := ground(131, 9)
	d := design(st, "North offtake", 0)
	d.DropHeights = []float64{0.2}
	res, err := planner.Optimize(planner.Problem{Stations: st, Design: d})
	var ie *planner.InfeasibleError
	if !errors.As(err, &ie) || res == nil {
		t.Fatalf("want an infeasible plan, got %v", err)
	}
	f := fixture{profile: nil, result: res, err: err}
	text := domText(parse(t, write(t, f.reportNamed(t, "Main canal", units.SI))))
	for _, want := range []string{"Status: no feasible plan", report.ErrorText(err, units.SI), "There is no feasible plan, so no saving is stated.",
		"the sheets show the ground and the baseline's bed only"} {
		if !strings.Contains(text, want) {
			t.Errorf("report lacks %q", want)
		}
	}
	if strings.Contains(text, "Drop sheets") {
		t.Error("an infeasible plan has drop sheets")
	}
}

// TestNotPlanned: an input error before the optimiser leaves provenance,
// the error and the safety notice, twice.
func TestNotPlanned(t *testing.T) {
	f := fixture{err: fmt.Errorf("%w: design flow 0 is outside (0, 10000] m³/s", planner.ErrInput)}
	doc := write(t, f.reportNamed(t, "Main canal", units.SI))
	text := domText(parse(t, doc))
	for _, want := range []string{"Status: not planned", "design flow 0 is outside", "Provenance"} {
		if !strings.Contains(text, want) {
			t.Errorf("report lacks %q", want)
		}
	}
	if n := strings.Count(text, "SAFETY AND RESPONSIBILITY NOTICE"); n != 2 {
		t.Errorf("safety notice shown %d times, want 2 (under the title and at the end)", n)
	}
}

func TestNoCaution(t *testing.T) {
	f := fixture{err: planner.ErrInput}
	r := f.reportNamed(t, "x", units.SI)
	r.Caution = " \n"
	if err := html.Write(io.Discard, r); !errors.Is(err, html.ErrNoCaution) {
		t.Errorf("Write without a caution: %v, want ErrNoCaution", err)
	}
}

// reportNamed is report for a fixture without a profile.
func (f fixture) reportNamed(tb testing.TB, name string, u units.System) html.Report {
	r := html.Report{Name: name, Result: f.result, PlanErr: f.err, Units: u, Caution: report.SafetyNotice, Words: report.Words(u)}
	r.Provenance = provenance(tb, "inputs", "canalstep plan", "EPSG:32633")
	return r
}

// TestCrossSectionAreas checks the cut and fill the cross-section figures
// shade against the planner's areas at every station: on the DEM
// cross-sections of the fixture and on level ground. The planner
// integrates ground minus design exactly (planner/earthwork); the figure's
// regions are polygons whose shoelace areas are an independent sum, so
// the two agree to rounding (tolerance 1e-9 m² plus 1e-9 relative).
func TestCrossSectionAreas(t *testing.T) {
	f := newFixture(t, 131, 9, 0, "Main canal", "North offtake")
	level := f.problem
	level.Stations = append(level.Stations[:0:0], level.Stations...)
	for i := range level.Stations {
		level.Stations[i].Cross = nil
	}
	lr, err := planner.Optimize(level)
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		name string
		res  *planner.Result
	}{{"cross-sections", f.result}, {"level", lr}} {
		if c.name == "cross-sections" && c.res.Record.Ground != "cross_sections" {
			t.Fatalf("fixture is not planned on cross-sections: %s", c.res.Record.Ground)
		}
		for i := range c.res.Stations {
			s := &c.res.Stations[i]
			cut, fill := html.SectionAreas(s, c.res.Record.Template)
			for _, x := range []struct {
				what      string
				got, want float64
			}{{"cut", cut, s.CutArea}, {"fill", fill, s.FillArea}} {
				if d := x.got - x.want; d > 1e-9+1e-9*x.want || d < -(1e-9+1e-9*x.want) {
					t.Errorf("%s, station %s: shaded %s %.9f m², planner %.9f m²", c.name, s.Label, x.what, x.got, x.want)
				}
			}
		}
	}
}

// TestMassHaul: the last ordinate is the whole cut less shrinkage minus
// the whole fill, Σ(cut·(1 − s) − fill) = C·(1 − s) − F (the sum is
// linear), and the report states it in the user's volume unit.
func TestMassHaul(t *testing.T) {
	f := newFixture(t, 131, 9, 0, "Main canal", "North offtake")
	s := f.result.Record.Costs.Shrinkage
	m := html.MassOrdinates(&f.result.Plan, s)
	want := f.result.Totals.CutVolume*(1-s) - f.result.Totals.FillVolume
	if d := m[len(m)-1] - want; d > 1e-6 || d < -1e-6 {
		t.Errorf("last ordinate %.6f m³, want %.6f m³", m[len(m)-1], want)
	}
	if m[0] != 0 {
		t.Errorf("first ordinate %g m³, want 0", m[0])
	}
	for _, u := range []units.System{units.SI, units.US} {
		text := domText(parse(t, write(t, f.report(t, u, nil))))
		end := "At the end: " + groupedInt(u.Volume(want)) + " " + u.Symbol(units.Volume)
		if !strings.Contains(text, end) {
			t.Errorf("%v report lacks %q", u, end)
		}
	}
}

// groupedInt prints v rounded to a whole number with comma groups.
func groupedInt(v float64) string {
	s := strconv.FormatFloat(v, 'f', 0, 64)
	neg := strings.HasPrefix(s, "-")
	s = strings.TrimPrefix(s, "-")
	var b strings.Builder
	for i, c := range s {
		if i > 0 && (len(s)-i)%3 == 0 {
			b.WriteByte(',')
		}
		b.WriteRune(c)
	}
	if neg {
		return "-" + b.String()
	}
	return b.String()
}
