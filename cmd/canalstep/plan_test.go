package main

import (
	"bytes"
	"fmt"
	"io"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"canalstep/report"
	"canalstep/report/units"
)

// TestPlanEndToEnd plans one whole demo alignment and checks the folder:
// every file written; every reach's grade within the velocity-limited
// range; the optimised cost not above any feasible baseline's (issue 7:
// the optimum is at most every feasible baseline); the saving stated
// against the best feasible baseline, as that baseline's cost minus the
// plan's; the caution printed and written; the drops as a golden file.
func TestPlanEndToEnd(t *testing.T) {
	dir := t.TempDir()
	aln := writeGeoJSON(t, dir, "middle.geojson", demoLine(1, 0, "", nil))
	out := filepath.Join(dir, "out")
	stdout := mustRun(t, planArgs(t, "plan", aln, out, "--drop-heights", "0.5,1.0,1.5")...)
	folder := filepath.Join(out, "Middle_Branch")
	checkFolder(t, folder, planFiles)
	checkNoPartial(t, out, "Middle_Branch")
	if !strings.Contains(stdout, "SAFETY AND RESPONSIBILITY NOTICE") || !strings.Contains(stdout, "-> "+folder) {
		t.Errorf("stdout lacks the caution or the folder:\n%s", stdout)
	}

	sum := readSummary(t, filepath.Join(folder, "summary.json"))
	if sum["caution"] != report.SafetyNotice {
		t.Errorf("summary.json lacks the safety notice")
	}
	if sum["status"] != "optimal" {
		t.Fatalf("status %v", sum["status"])
	}
	design := sum["design"].(map[string]any)
	minS, maxS := design["min_slope"].(float64), design["max_slope"].(float64)
	total := sum["total_cost"].(float64)
	checkSaving(t, sum, stdout)
	for _, b := range sum["baselines"].([]any) {
		b := b.(map[string]any)
		if bc := b["total_cost"].(float64); b["feasible"] == true && total > bc {
			t.Errorf("optimised cost %.0f exceeds the feasible %v baseline's %.0f", total, b["method"], bc)
		}
	}

	// Grades from the written inverts. Inverts are printed to the mm, so a
	// grade over a 10 m step can be off by 1 mm / 10 m = 1e-4 through
	// rounding alone.
	rows := readCSV(t, filepath.Join(folder, "stations.csv"))
	h := rows[0]
	ch, inv, invDown, grade := column(t, h, "chainage_m"), column(t, h, "invert_m"), column(t, h, "invert_downstream_m"), column(t, h, "grade")
	rows = rows[1:]
	if len(rows) != int(sum["stations"].(float64)) {
		t.Errorf("%d station rows, summary says %v", len(rows), sum["stations"])
	}
	for i := 1; i < len(rows); i++ {
		dx := num(t, rows[i][ch]) - num(t, rows[i-1][ch])
		g := (num(t, rows[i-1][invDown]) - num(t, rows[i][inv])) / dx
		if tol := 0.0011 / dx; g < minS-tol || g > maxS+tol {
			t.Errorf("station %s: grade %.6f outside [%.6f, %.6f]", rows[i][0], g, minS, maxS)
		}
		// The grade column is the reach's grade, printed to 1e-7.
		if gc := num(t, rows[i][grade]); gc < minS-5e-8 || gc > maxS+5e-8 {
			t.Errorf("station %s: grade column %.7f outside [%.7f, %.7f]", rows[i][0], gc, minS, maxS)
		}
	}
	drops, err := os.ReadFile(filepath.Join(folder, "drops.csv"))
	if err != nil {
		t.Fatal(err)
	}
	checkGolden(t, "plan_middle_branch_drops.csv", drops)
}

// checkSaving checks that summary.json states the saving against the
// cheapest feasible baseline only (issue 7): saving_against names a
// feasible baseline, the saving is its cost minus the plan's, and no other
// feasible baseline is cheaper; with no feasible baseline the saving is 0
// against "" and stdout says no saving is stated.
func checkSaving(t testing.TB, sum map[string]any, stdout string) {
	t.Helper()
	total := sum["total_cost"].(float64)
	against, _ := sum["saving_against"].(string)
	best := ""
	bestCost := math.Inf(1)
	for _, b := range sum["baselines"].([]any) {
		b := b.(map[string]any)
		if c := b["total_cost"].(float64); b["feasible"] == true && c < bestCost {
			best, bestCost = b["method"].(string), c
		}
	}
	if against != best {
		t.Errorf("saving stated against %q, the cheapest feasible baseline is %q", against, best)
	}
	saving := sum["saving"].(float64)
	if best == "" {
		if saving != 0 || sum["saving_fraction"].(float64) != 0 {
			t.Errorf("saving %v with no feasible baseline", saving)
		}
		if !strings.Contains(stdout, "no baseline meets every constraint, so no saving is stated") {
			t.Errorf("stdout does not say that no saving is stated:\n%s", stdout)
		}
		return
	}
	// Arithmetic on the same float64s: exact but for one rounding.
	if want := bestCost - total; math.Abs(saving-want) > 1e-9*bestCost {
		t.Errorf("saving %.2f, want %.2f (%s baseline %.2f − plan %.2f)", saving, want, best, bestCost, total)
	}
	if !strings.Contains(stdout, "saving against the best feasible baseline") {
		t.Errorf("stdout lacks the saving:\n%s", stdout)
	}
}

// TestPlanReproducible plans two alignments with one worker and with four
// and expects identical folders, byte for byte (plots, GeoPackage and
// report included): one alignment is a pure job, with no wall-clock time
// or scheduling order in its outputs. The provenance quotes the command
// line, so its --jobs and --out are the one allowed difference.
func TestPlanReproducible(t *testing.T) {
	dir := t.TempDir()
	aln := writeGeoJSON(t, dir, "two.geojson", demoLine(east, 2, "", nil), demoLine(west, 2, "", nil))
	var trees [2]map[string][]byte
	for k, jobs := range []string{"1", "4"} {
		out := filepath.Join(dir, "out"+jobs)
		mustRun(t, planArgs(t, "plan", aln, out, "--jobs", jobs)...)
		trees[k] = readTree(t, out)
		for name, b := range trees[k] {
			b = bytes.ReplaceAll(b, []byte(out), []byte("OUT"))
			trees[k][name] = bytes.ReplaceAll(b, []byte("--jobs "+jobs), []byte("--jobs N"))
		}
	}
	if len(trees[0]) < 2*len(planFiles) {
		t.Fatalf("only %d files written", len(trees[0]))
	}
	for name, b := range trees[0] {
		if !bytes.Equal(b, trees[1][name]) {
			t.Errorf("%s differs between --jobs 1 and --jobs 4", name)
		}
	}
	if len(trees[0]) != len(trees[1]) {
		t.Errorf("%d files with --jobs 1, %d with --jobs 4", len(trees[0]), len(trees[1]))
	}
}

// readTree reads every regular file under root, keyed by its path below
// root; the lock file, whose content names the process, is left out.
func readTree(t testing.TB, root string) map[string][]byte {
	t.Helper()
	files := map[string][]byte{}
	err := filepath.WalkDir(root, func(p string, d fs.DirEntry, err error) error {
		if err != nil || d.IsDir() || d.Name() == ".canalstep.lock" {
			return err
		}
		b, err := os.ReadFile(p)
		rel, _ := filepath.Rel(root, p)
		files[rel] = b
		return err
	})
	if err != nil {
		t.Fatal(err)
	}
	return files
}

// TestCompare runs compare on one alignment with three alternatives: every
// alternative has a row, the combined set costs no more than either of its
// single heights (it contains each as a special case), and the chart is
// written.
func TestCompare(t *testing.T) {
	stdout, folder := runEast(t, "compare", east4, "--alternatives", "1.0;1.5;1.0,1.5")
	rows := readCSV(t, filepath.Join(folder, "alternatives.csv"))
	if len(rows) != 4 {
		t.Fatalf("%d rows, want a header and 3 alternatives", len(rows))
	}
	tc, st := column(t, rows[0], "total_cost"), column(t, rows[0], "status")
	for _, r := range rows[1:] {
		if r[st] != "optimal" {
			t.Fatalf("alternative %s: %s", r[0], r[st])
		}
	}
	cost := func(r []string) float64 { return num(t, r[tc]) }
	if c := cost(rows[3]); c > cost(rows[1])+0.5 || c > cost(rows[2])+0.5 { // costs printed to whole units
		t.Errorf("combined set costs %.0f, more than a single height (%.0f, %.0f)", c, cost(rows[1]), cost(rows[2]))
	}
	checkFolder(t, folder, []string{"alternatives.csv", "alternatives.png", ".canalstep-folder"})
	if !strings.Contains(stdout, "<- least cost") {
		t.Errorf("stdout does not mark the least-cost alternative:\n%s", stdout)
	}
}

// TestPlanBadInput checks bad plan inputs: one clear line on stderr, exit
// status 2, no output folder.
func TestPlanBadInput(t *testing.T) {
	dir := t.TempDir()
	aln := writeGeoJSON(t, dir, "east.geojson", demoLine(east, east4, "", nil))
	badKey := writeFile(t, dir, "bad.toml", "flow = 2.5\nmax_slpoe = 0.001\n")
	cases := []struct {
		name    string
		extra   []string
		wantMsg string
	}{
		{"empty drop heights", []string{"--drop-heights", ""}, "--drop-heights is empty"},
		{"negative drop height", []string{"--drop-heights", "0.5,-1"}, "--drop-heights: -1 is outside (0, 20] m"},
		{"drop height not a number", []string{"--drop-heights", "one"}, "not a number"},
		{"grade outside the velocity limits", []string{"--grades", "0.01"}, "grade"},
		{"start invert far above ground", []string{"--start-invert", "600"}, "start invert"},
		{"control beyond the alignment", []string{"--fixed-invert", "99999:300"}, "beyond"},
		{"negative cost", []string{"--cost-cut", "-4"}, "-4 is outside [0, 1e+09] per m³"},
		{"min velocity above max", []string{"--min-velocity", "1.2"}, "below --max-velocity"},
		{"unknown design key", []string{"--design", badKey}, "unknown key \"max_slpoe\""},
		{"bad control syntax", []string{"--min-water-level", "1200"}, "CHAINAGE:LEVEL"},
		{"bad ground model", []string{"--ground", "sloping"}, "--ground must be auto, level or cross-sections"},
		{"bad memory size", []string{"--max-memory", "lots"}, "--max-memory"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			out := filepath.Join(t.TempDir(), "out")
			stdout, stderr, code := runCmd(t, planArgs(t, "plan", aln, out, c.extra...)...)
			t.Log(stderr)
			if code != 2 {
				t.Errorf("exit status %d, want 2 (%s)", code, stderr)
			}
			checkOneLine(t, stderr, c.wantMsg)
			checkNoPartial(t, out)
			_ = stdout
		})
	}
}

// checkOneLine fails unless stderr is exactly one line holding want.
func checkOneLine(t testing.TB, stderr, want string) {
	t.Helper()
	if strings.Count(stderr, "\n") != 1 || !strings.HasSuffix(stderr, "\n") {
		t.Errorf("stderr is not one line: %q", stderr)
	}
	if !strings.Contains(stderr, want) {
		t.Errorf("stderr %q does not contain %q", stderr, want)
	}
}

// TestPlanUSUnits plans the same canal in SI and in US units (flow in cfs,
// lengths in ft, prices per yd³ and per ft of drop) and expects the same
// physical plan: the same drop count and total cost within 0.1 % (the
// conversions are exact by definition: 1 ft = 0.3048 m, 1 yd³ =
// 0.764554857984 m³, 1 cfs = 0.3048³ m³/s; only the decimal strings the
// test passes round).
func TestPlanUSUnits(t *testing.T) {
	dir := t.TempDir()
	aln := writeGeoJSON(t, dir, "east.geojson", demoLine(east, east4, "", nil))
	ft := func(m float64) string { return fmt.Sprintf("%.10g", m/units.FootM) }
	perYd3 := func(p float64) string { return fmt.Sprintf("%.10g", p*units.CubicYardM3) }
	si := planArgs(t, "plan", aln, filepath.Join(dir, "si"))
	us := []string{"plan", "--dem", demoDEM(t), "--alignment", aln, "--out", filepath.Join(dir, "us"), "--units", "us",
		"--flow", fmt.Sprintf("%.10g", 2.5/units.CfsM3), "--bottom-width", ft(2), "--side-slope", "1.5", "--roughness", "0.025",
		"--max-velocity", ft(0.9), "--min-velocity", ft(0.45), "--alignment-crs", "EPSG:32634",
		"--spacing", ft(10), "--drop-heights", ft(0.5) + "," + ft(1) + "," + ft(1.5), "--step", ft(0.01),
		"--max-cut", ft(5), "--max-fill", ft(2), "--min-reach", ft(30), "--bank-top-width", ft(3),
		"--cost-cut", perYd3(4), "--cost-fill", perYd3(6), "--cost-waste", perYd3(2), "--cost-borrow", perYd3(8),
		"--cost-drop-height", fmt.Sprintf("%.10g", 10000*units.FootM)}
	for _, args := range [][]string{si, us} {
		mustRun(t, args...)
	}
	a := readSummary(t, filepath.Join(dir, "si", "East_Branch", "summary.json"))
	b := readSummary(t, filepath.Join(dir, "us", "East_Branch", "summary.json"))
	if a["drop_count"] != b["drop_count"] {
		t.Errorf("drop count SI %v, US %v", a["drop_count"], b["drop_count"])
	}
	ca, cb := a["total_cost"].(float64), b["total_cost"].(float64)
	if math.Abs(ca-cb) > 1e-3*ca {
		t.Errorf("total cost SI %.2f, US %.2f", ca, cb)
	}
	rows := readCSV(t, filepath.Join(dir, "us", "East_Branch", "stations.csv"))
	column(t, rows[0], "ground_ft")
	column(t, rows[0], "cum_cut_yd3")
	// 1,180.67 m is 3,873.59 ft: the last 100-ft station is 38+73.59.
	if last := rows[len(rows)-1][0]; !strings.Contains(last, "+") || len(strings.Split(last, "+")[1]) != 5 || !strings.HasPrefix(last, "38+7") {
		t.Errorf("US station label %q is not a 100-ft station like 38+73.59", last)
	}
}

// TestUSDefaultsStaySI checks that with --units us a flag left at its
// default keeps its SI value (5 m of cut is not read as 5 ft), while a value
// given is read in feet or per cubic yard (1 ft = 0.3048 m, 1 yd³ =
// 0.764554857984 m³, exact by definition).
func TestUSDefaultsStaySI(t *testing.T) {
	base := []string{"--units", "us", "--flow", "100", "--bottom-width", "6", "--side-slope", "1.5", "--roughness", "0.025", "--max-velocity", "3"}
	for _, c := range []struct {
		extra            []string
		wantCut, wantFee float64 // max cut depth, m; cut price per m³
	}{
		{nil, 5, 4},
		{[]string{"--max-cut", "10", "--cost-cut", "3"}, 3.048, 3 / units.CubicYardM3},
	} {
		args := append(append([]string{}, base...), c.extra...)
		s, err := newPlanSetup("plan", args, io.Discard)
		if err != nil {
			t.Fatal(err)
		}
		if ok, err := s.parse(args); !ok || err != nil {
			t.Fatalf("parse %v: %v", c.extra, err)
		}
		d, err := s.design.design("plan")
		if err != nil {
			t.Fatal(err)
		}
		if got := d.MaxCutDepth; math.Abs(got-c.wantCut) > 1e-12 {
			t.Errorf("%v: max cut %.6f m, want %.6f m", c.extra, got, c.wantCut)
		}
		if got := d.Costs.Cut; math.Abs(got-c.wantFee) > 1e-12 {
			t.Errorf("%v: cut price %.6f per m³, want %.6f", c.extra, got, c.wantFee)
		}
		if got, want := d.Flow, 100*units.CfsM3; math.Abs(got-want) > 1e-12 {
			t.Errorf("flow %.9f m³/s, want %.9f", got, want)
		}
	}
}
