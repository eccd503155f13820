package main

import (
	"math"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// Issue 7's end-to-end checks: command of the land, per-alignment controls,
// the ground model, the saving against the best feasible baseline only,
// and the bad inputs it lists.

// TestCommandMargin plans a demo alignment with --command-margin 0.1 and
// checks every row of stations.csv: the water surface stands at least
// 0.1 m above the ground (issue 7's check; to 1 mm, the print rounding of
// the two levels), and the summary and stdout say the water surface is
// above the ground at every station.
func TestCommandMargin(t *testing.T) {
	stdout, folder := runEast(t, "plan", 3, "--command-margin", "0.1")
	rows := readCSV(t, filepath.Join(folder, "stations.csv"))
	ws, g, m := column(t, rows[0], "water_surface_m"), column(t, rows[0], "ground_m"), column(t, rows[0], "margin_m")
	low := 0
	for _, r := range rows[1:] {
		if d := num(t, r[ws]) - num(t, r[g]); d < 0.1-0.001 {
			t.Errorf("station %s: water surface %s m is %.3f m above the ground %s m, want at least 0.1 m", r[0], r[ws], d, r[g])
		}
		if num(t, r[m]) < 0.1-0.0005 { // the margin column is WS − ground, printed to the mm
			low++
		}
	}
	if low > 0 {
		t.Errorf("%d stations print a margin below 0.100 m", low)
	}
	sum := readSummary(t, filepath.Join(folder, "summary.json"))
	if s := sum["command"].(map[string]any)["share_above_ground"]; s != 1.0 {
		t.Errorf("share of stations above ground %v, want 1", s)
	}
	if !strings.Contains(stdout, "water surface at or above the ground at 100 % of stations") {
		t.Errorf("stdout does not give the command share:\n%s", stdout)
	}
}

// TestPerAlignmentControls plans two alignments in one run, each with its
// own controls, and checks that each control reached its alignment only:
// a GeoJSON flow property, a [alignment."NAME"] table (over the
// alignment's property for the same key), a NAME@ control, a control for
// every alignment (stdout says so), a chainage control inside a table; and
// that unknown properties are listed once each as ignored.
func TestPerAlignmentControls(t *testing.T) {
	dir := t.TempDir()
	aln := writeGeoJSON(t, dir, "two.geojson",
		demoLine(east, 3, "", map[string]any{"flow": 2.0, "roughness": 0.03, "colour": "blue"}),
		demoLine(west, 2, "", map[string]any{"colour": "red", "remarks": "survey 2019", "start_invert": nil}))
	design := writeFile(t, dir, "design.toml", `
[alignment."East Branch"]
roughness = 0.028
min_water_level = ["300:0"]

[alignment."West Branch"]
bottom_width = 2.5
`)
	out := filepath.Join(dir, "out")
	// Water levels of 0 m are met by any plan on this ground (400 m and
	// up): they show where a control went without changing the plans.
	stdout := mustRun(t, planArgs(t, "plan", aln, out, "--design", design,
		"--min-water-level", "East Branch@100:0", "--min-water-level", "200:0")...)
	type want struct {
		flow, roughness, width float64
		minWL                  []float64 // chainages
	}
	for name, w := range map[string]want{
		// The flags give flow 2.5, n 0.025, bed 2 m (designArgs).
		"East_Branch": {2.0, 0.028, 2, []float64{100, 200, 300}},
		"West_Branch": {2.5, 0.025, 2.5, []float64{200}},
	} {
		d := readSummary(t, filepath.Join(out, name, "summary.json"))["design"].(map[string]any)
		for k, v := range map[string]float64{"flow": w.flow, "roughness": w.roughness, "bottom_width": w.width} {
			if got := d[k].(float64); math.Abs(got-v) > 1e-12 {
				t.Errorf("%s: design %s %v, want %v", name, k, got, v)
			}
		}
		var got []float64
		for _, c := range d["min_water_levels"].([]any) {
			got = append(got, field(t, c, "chainage"))
		}
		if !sameSet(got, w.minWL) {
			t.Errorf("%s: lowest water levels at %v, want %v", name, got, w.minWL)
		}
	}
	if !strings.Contains(stdout, "controls given without NAME@ apply to every alignment") {
		t.Errorf("stdout does not say that a control applies to every alignment:\n%s", stdout)
	}
	ignored := regexp.MustCompile(`(?m)^ignored GeoJSON properties.*$`).FindAllString(stdout, -1)
	if len(ignored) != 1 {
		t.Fatalf("%d lines of ignored properties, want 1:\n%s", len(ignored), stdout)
	}
	for _, p := range []string{`"colour"`, `"remarks"`} {
		if n := strings.Count(ignored[0], p); n != 1 {
			t.Errorf("%s listed %d times in %q, want once", p, n, ignored[0])
		}
	}
	if strings.Contains(ignored[0], "start_invert") {
		t.Errorf("a known property given as null is listed as ignored: %q", ignored[0])
	}
}

// field returns the number key of a JSON object; planner.Control carries
// no JSON tags yet, so its fields are also looked up capitalised.
func field(t testing.TB, obj any, key string) float64 {
	t.Helper()
	m := obj.(map[string]any)
	v, ok := m[key].(float64)
	if !ok {
		v, ok = m[strings.ToUpper(key[:1])+key[1:]].(float64)
	}
	if !ok {
		t.Fatalf("no number %q in %v", key, m)
	}
	return v
}

func sameSet(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	seen := map[float64]int{}
	for _, x := range a {
		seen[x]++
	}
	for _, x := range b {
		if seen[x] == 0 {
			return false
		}
		seen[x]--
	}
	return true
}

// TestGroundModel: --ground cross-sections runs and is recorded as
// ground_model "cross_sections", with catch points left (negative offset)
// and right (positive) of the centre line at every station; --ground level
// keeps level ground.
func TestGroundModel(t *testing.T) {
	dir := t.TempDir()
	aln := writeGeoJSON(t, dir, "east.geojson", demoLine(east, 2, "", nil))
	for _, c := range []struct{ flag, model, words string }{
		{"cross-sections", "cross_sections", "earthwork on DEM cross-sections"},
		{"level", "level", "earthwork on level ground across the line"},
	} {
		out := filepath.Join(dir, c.flag)
		stdout := mustRun(t, planArgs(t, "plan", aln, out, "--ground", c.flag)...)
		folder := filepath.Join(out, "East_Branch")
		if g := readSummary(t, filepath.Join(folder, "summary.json"))["design"].(map[string]any)["ground_model"]; g != c.model {
			t.Errorf("--ground %s: ground_model %v, want %s", c.flag, g, c.model)
		}
		if !strings.Contains(stdout, c.words) {
			t.Errorf("--ground %s: stdout lacks %q", c.flag, c.words)
		}
		rows := readCSV(t, filepath.Join(folder, "stations.csv"))
		l, r := column(t, rows[0], "catch_left_m"), column(t, rows[0], "catch_right_m")
		for _, row := range rows[1:] {
			if !(num(t, row[l]) < 0 && num(t, row[r]) > 0) {
				t.Errorf("--ground %s: station %s catch points %s, %s: want left < 0 < right", c.flag, row[0], row[l], row[r])
				break
			}
		}
	}
}

// TestSavingAgainstFeasibleBaseline checks that the saving is stated
// against the cheapest feasible baseline only (issue 7), in three cases on
// the same ground: the default (by eye is feasible); a by-eye rise of 10 m,
// which drowns the by-eye profile in fill so that only even spacing is
// feasible; and a command margin on top, which even spacing cannot hold
// either, so that no saving is stated. The cases' feasibility is checked,
// not assumed.
func TestSavingAgainstFeasibleBaseline(t *testing.T) {
	dir := t.TempDir()
	aln := writeGeoJSON(t, dir, "east.geojson", demoLine(east, 3, "", nil))
	for _, c := range []struct {
		name  string
		extra []string
		want  string
	}{
		{"default", nil, "by_eye"},
		{"by eye infeasible", []string{"--byeye-rise", "10"}, "even_spacing"},
		{"none feasible", []string{"--byeye-rise", "10", "--command-margin", "0.15"}, ""},
	} {
		out := filepath.Join(dir, strings.ReplaceAll(c.name, " ", "_"))
		stdout := mustRun(t, planArgs(t, "plan", aln, out, c.extra...)...)
		sum := readSummary(t, filepath.Join(out, "East_Branch", "summary.json"))
		checkSaving(t, sum, stdout)
		if got := sum["saving_against"]; got != c.want {
			t.Errorf("%s: saving stated against %q, want %q", c.name, got, c.want)
		}
	}
}

// TestIssue7BadInput: each bad input issue 7 lists ends in one line on
// stderr, exit status 2 for bad input and 1 for a design no profile can
// meet, and no alignment folder or staging left in --out.
func TestIssue7BadInput(t *testing.T) {
	dir := t.TempDir()
	east4Line := demoLine(east, east4, "", nil)
	aln := writeGeoJSON(t, dir, "east.geojson", east4Line)
	// E1 stands beside the East Branch after its fifth vertex: hundreds of
	// metres from the head reach's end.
	far := writeGeoJSON(t, dir, "far.geojson", east4Line, demoOfftake(t, "East Branch", "East Branch"))
	wrongType := writeGeoJSON(t, dir, "wrong.geojson", demoLine(east, east4, "", map[string]any{"flow": "2.5"}))
	badTable := writeFile(t, dir, "table.toml", "[alignment.\"East Branch\"]\nflow = 2\nmax_slpoe = 1\n")
	noSuch := writeFile(t, dir, "nosuch.toml", "[alignment.\"North Branch\"]\nflow = 2\n")
	syntax := writeFile(t, dir, "syntax.toml", "flow = 2.5\nbottom_width = [\n")
	cases := []struct {
		name string
		aln  string
		args []string
		code int
		want []string // on stderr
	}{
		// A water surface 3 m above the ground from the start needs the bed
		// 3 − 0.849 = 2.151 m above the ground at the head, past the 2 m
		// fill limit by 0.15 m. 0.849 m is the depth at the 0.9 m/s limit
		// (continuity: A = Q/V = 2.778 m² = (2 + 1.5 y) y, y = 0.8487 m;
		// analytic). The default start invert puts the water surface at
		// the margin, so the head is where it fails.
		{"command margin no profile meets", aln, []string{"--command-margin", "3"}, 1, []string{"no feasible profile", "at 0+000.00", "0.15 m", "--max-fill"}},
		// Over a stretch: the line names a station inside it and a shortage.
		{"command range no profile meets", aln, []string{"--command", "500:600:3"}, 1, []string{"no feasible profile", "command"}},
		{"offtake too far", far, nil, 2, []string{"offtake \"East Branch turnout E1\"", "more than 100 m"}},
		{"property of the wrong type", wrongType, nil, 2, []string{`property "flow" must be a number`}},
		{"NAME@ for no alignment", aln, []string{"--fixed-invert", "North Branch@100:450"}, 2, []string{`"North Branch"`}},
		{"table for no alignment", aln, []string{"--design", noSuch}, 2, []string{`"North Branch"`}},
		{"unknown key in a table", aln, []string{"--design", badTable}, 2, []string{`unknown key "max_slpoe"`, `[alignment."East Branch"]`}},
		{"TOML syntax error", aln, []string{"--design", syntax}, 2, []string{"design file"}},
		{"two fixed inverts at one station", aln, []string{"--fixed-invert", "100:450", "--fixed-invert", "100:449"}, 2, []string{"both stand at chainage 100"}},
		{"fixed invert and water level at one station", aln, []string{"--fixed-invert", "100:460", "--min-water-level", "100:470"}, 2, []string{"both stand at chainage 100"}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			out := filepath.Join(t.TempDir(), "out")
			stdout, stderr, code := runCmd(t, planArgs(t, "plan", c.aln, out, c.args...)...)
			t.Log(stderr)
			if code != c.code {
				t.Errorf("exit status %d, want %d\n%s", code, c.code, stdout)
			}
			for _, w := range c.want {
				checkOneLine(t, stderr, w)
			}
			if strings.HasPrefix(c.name, "command range") {
				checkShortage(t, stderr, 500, 600)
			}
			checkNoPartial(t, out)
		})
	}
}

// checkShortage checks that an infeasibility line names a station within
// [from, to] m, where the command asked for more than the limits allow,
// and a positive shortage in metres.
func checkShortage(t testing.TB, line string, from, to float64) {
	t.Helper()
	m := regexp.MustCompile(`cannot be met (?:at|from) (\d+)\+(\d{3}\.\d{2})`).FindStringSubmatch(line)
	if m == nil {
		t.Fatalf("no station named in %q", line)
	}
	if ch := 1000*num(t, m[1]) + num(t, m[2]); ch < from || ch > to {
		t.Errorf("the conflict is named at chainage %.2f m, outside the commanded %.0f to %.0f m", ch, from, to)
	}
	sh := regexp.MustCompile(`(\d+\.\d+) m (?:above|higher|below|short)`).FindStringSubmatch(line)
	if sh == nil || !(num(t, sh[1]) > 0) {
		t.Errorf("no positive shortage in metres in %q", line)
	}
}
