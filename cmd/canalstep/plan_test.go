package main

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"canalstep/report"
	"canalstep/terrain"
)

// demoFixture writes the demo DEM (seed 7) and one demo alignment in
// projected EPSG:32634 coordinates, and returns their paths.
func demoFixture(t *testing.T, dir string, which int) (dem, aln string) {
	t.Helper()
	dem = filepath.Join(dir, "dem.tif")
	if err := terrain.WriteGeoTIFF(dem, terrain.SyntheticFan(7)); err != nil {
		t.Fatal(err)
	}
	a := terrain.DemoAlignments()[which]
	var g geoJSONLines
	xs, ys := make([]float64, len(a.Vertices)), make([]float64, len(a.Vertices))
	for i, v := range a.Vertices {
		xs[i], ys[i] = v[0], v[1]
	}
	g.add(a.Name, xs, ys)
	var b bytes.Buffer
	if err := g.write(&b); err != nil {
		t.Fatal(err)
	}
	return dem, writeFile(t, dir, "canal.geojson", b.String())
}

// demoDesignArgs are the demo's design values as flags.
var demoDesignArgs = []string{"--flow", "2.5", "--bottom-width", "2", "--side-slope", "1.5", "--roughness", "0.025",
	"--max-velocity", "0.9", "--min-velocity", "0.45", "--alignment-crs", "EPSG:32634"}

// readSummary decodes summary.json into a generic map.
func readSummary(t *testing.T, path string) map[string]any {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var m map[string]any
	if err := json.Unmarshal(b, &m); err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	return m
}

// TestPlanEndToEnd plans one demo alignment and checks what issue 4 asks of
// the outputs: every file written; every reach's grade within the
// velocity-limited range; the optimised cost not above the even-spacing
// cost; the caution printed and written; the drops as a golden file.
func TestPlanEndToEnd(t *testing.T) {
	dir := t.TempDir()
	dem, aln := demoFixture(t, dir, 1)
	out := filepath.Join(dir, "out")
	var stdout, stderr bytes.Buffer
	args := append([]string{"plan", "--dem", dem, "--alignment", aln, "--drop-heights", "0.5,1.0,1.5", "--out", out}, demoDesignArgs...)
	if err := run(context.Background(), args, &stdout, &stderr); err != nil {
		t.Fatalf("plan: %v", err)
	}
	folder := filepath.Join(out, "Middle_Branch")
	for _, f := range []string{"stations.csv", "drops.csv", "summary.json", "profile.png", "profile.svg"} {
		if fi, err := os.Stat(filepath.Join(folder, f)); err != nil || fi.Size() == 0 {
			t.Errorf("%s missing or empty: %v", f, err)
		}
	}
	if !strings.Contains(stdout.String(), "SAFETY AND RESPONSIBILITY NOTICE") || !strings.Contains(stdout.String(), "saving against even spacing") {
		t.Errorf("stdout lacks the caution or the saving:\n%s", stdout.String())
	}

	sum := readSummary(t, filepath.Join(folder, "summary.json"))
	if sum["caution"] != report.SafetyNotice {
		t.Errorf("summary.json lacks the safety notice")
	}
	design := sum["design"].(map[string]any)
	minS, maxS := design["min_slope"].(float64), design["max_slope"].(float64)
	base := sum["baseline"].(map[string]any)
	if total, btotal := sum["total_cost"].(float64), base["total_cost"].(float64); total > btotal {
		t.Errorf("optimised cost %.0f exceeds the even-spacing cost %.0f", total, btotal)
	}

	// Grades from the written inverts. Inverts are printed to the mm, so a
	// grade over a 10 m step can be off by 1 mm / 10 m = 1e-4 through rounding alone.
	rows := readCSV(t, filepath.Join(folder, "stations.csv"))[1:]
	for i := 1; i < len(rows); i++ {
		dx := num(t, rows[i][1]) - num(t, rows[i-1][1])
		g := (num(t, rows[i-1][6]) - num(t, rows[i][5])) / dx
		if tol := 0.0011 / dx; g < minS-tol || g > maxS+tol {
			t.Errorf("station %s: grade %.6f outside [%.6f, %.6f]", rows[i][0], g, minS, maxS)
		}
		// The grade column is the reach's exact grade, printed to 1e-6.
		if gc := num(t, rows[i][11]); gc < minS-5e-7 || gc > maxS+5e-7 {
			t.Errorf("station %s: grade column %.6f outside [%.6f, %.6f]", rows[i][0], gc, minS, maxS)
		}
	}
	drops, err := os.ReadFile(filepath.Join(folder, "drops.csv"))
	if err != nil {
		t.Fatal(err)
	}
	checkGolden(t, "plan_middle_branch_drops.csv", drops)
}

// TestPlanReproducible plans the same input twice, with one worker and with
// four, and expects identical bytes: one alignment is a pure job, with no
// wall-clock time or scheduling order in its outputs.
func TestPlanReproducible(t *testing.T) {
	dir := t.TempDir()
	dem, aln := demoFixture(t, dir, 2)
	var got [2][]byte
	for k, jobs := range []string{"1", "4"} {
		out := filepath.Join(dir, "out"+jobs)
		args := append([]string{"plan", "--dem", dem, "--alignment", aln, "--jobs", jobs, "--out", out}, demoDesignArgs...)
		var stdout, stderr bytes.Buffer
		if err := run(context.Background(), args, &stdout, &stderr); err != nil {
			t.Fatalf("plan --jobs %s: %v", jobs, err)
		}
		var all []byte
		for _, f := range []string{"stations.csv", "drops.csv", "summary.json", "profile.svg"} {
			b, err := os.ReadFile(filepath.Join(out, "East_Branch", f))
			if err != nil {
				t.Fatal(err)
			}
			all = append(all, b...)
		}
		got[k] = all
	}
	if !bytes.Equal(got[0], got[1]) {
		t.Errorf("outputs differ between --jobs 1 and --jobs 4")
	}
}

// TestCompare runs compare on one alignment with three alternatives: every
// feasible alternative has a row, the combined set costs no more than any
// single height of it (it contains each as a special case), and the chart is
// written.
func TestCompare(t *testing.T) {
	dir := t.TempDir()
	dem, aln := demoFixture(t, dir, 2)
	out := filepath.Join(dir, "out")
	args := append([]string{"compare", "--dem", dem, "--alignment", aln, "--alternatives", "1.0;1.5;1.0,1.5", "--out", out}, demoDesignArgs...)
	var stdout, stderr bytes.Buffer
	if err := run(context.Background(), args, &stdout, &stderr); err != nil {
		t.Fatalf("compare: %v", err)
	}
	rows := readCSV(t, filepath.Join(out, "East_Branch", "alternatives.csv"))
	if len(rows) != 4 {
		t.Fatalf("%d rows, want a header and 3 alternatives", len(rows))
	}
	cost := func(r []string) float64 { return num(t, r[8]) }
	if c := cost(rows[3]); c > cost(rows[1])+0.5 || c > cost(rows[2])+0.5 { // costs printed to whole units
		t.Errorf("combined set costs %.0f, more than a single height (%.0f, %.0f)", c, cost(rows[1]), cost(rows[2]))
	}
	if _, err := os.Stat(filepath.Join(out, "East_Branch", "alternatives.png")); err != nil {
		t.Errorf("chart: %v", err)
	}
	if !strings.Contains(stdout.String(), "<- least cost") {
		t.Errorf("stdout does not mark the least-cost alternative:\n%s", stdout.String())
	}
}

// TestPlanBadInput checks issue 4's bad inputs: one clear line, a non-zero
// exit, no output folder.
func TestPlanBadInput(t *testing.T) {
	dir := t.TempDir()
	dem, aln := demoFixture(t, dir, 2)
	badKey := writeFile(t, dir, "bad.toml", "flow = 2.5\nmax_slpoe = 0.001\n")
	cases := []struct {
		name     string
		extra    []string
		wantCode int
		wantMsg  string
	}{
		{"empty drop heights", []string{"--drop-heights", ""}, 2, "--drop-heights is empty"},
		{"negative drop height", []string{"--drop-heights", "0.5,-1"}, 2, "not positive"},
		{"drop height not a number", []string{"--drop-heights", "one"}, 2, "not a number"},
		{"grade outside the velocity limits", []string{"--grades", "0.01"}, 2, "grade"},
		{"start invert far above ground", []string{"--start-invert", "600"}, 2, "start invert"},
		{"control beyond the alignment", []string{"--fixed-invert", "99999:300"}, 2, "beyond"},
		{"negative cost", []string{"--cost-cut", "-4"}, 2, "price and cannot be negative"},
		{"min velocity above max", []string{"--min-velocity", "1.2"}, 2, "below --max-velocity"},
		{"unknown design key", []string{"--design", badKey}, 2, "unknown key \"max_slpoe\""},
		{"bad control syntax", []string{"--min-water-level", "1200"}, 2, "CHAINAGE:LEVEL"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			out := filepath.Join(t.TempDir(), "out")
			args := append([]string{"plan", "--dem", dem, "--alignment", aln, "--out", out}, demoDesignArgs...)
			args = append(args, c.extra...)
			var stdout, stderr bytes.Buffer
			err := run(context.Background(), args, &stdout, &stderr)
			if err == nil {
				t.Fatalf("no error")
			}
			msg := oneLine(err)
			t.Log(msg)
			if got := exitCode(err); got != c.wantCode {
				t.Errorf("exit status %d, want %d (%s)", got, c.wantCode, msg)
			}
			if !strings.Contains(msg, c.wantMsg) {
				t.Errorf("message %q does not contain %q", msg, c.wantMsg)
			}
			if _, err := os.Stat(out); !os.IsNotExist(err) {
				t.Errorf("output folder exists after a failed run")
			}
		})
	}
}

// TestPlanUSUnits plans the same canal in SI and in US units (flow in cfs,
// lengths in ft, prices per yd³ and per ft of drop) and expects the same
// physical plan: same drop count and the same total cost within 0.1 %
// (the conversions are exact; the optimiser's 1 cm step becomes 0.0328 ft,
// which is the same grid).
func TestPlanUSUnits(t *testing.T) {
	dir := t.TempDir()
	dem, aln := demoFixture(t, dir, 2)
	ft := func(m float64) string { return fmt.Sprintf("%.10g", m/report.FootM) }
	si := append([]string{"plan", "--dem", dem, "--alignment", aln, "--out", filepath.Join(dir, "si")}, demoDesignArgs...)
	us := []string{"plan", "--dem", dem, "--alignment", aln, "--out", filepath.Join(dir, "us"), "--units", "us",
		"--flow", fmt.Sprintf("%.10g", 2.5/CfsM3), "--bottom-width", ft(2), "--side-slope", "1.5", "--roughness", "0.025",
		"--max-velocity", ft(0.9), "--min-velocity", ft(0.45), "--alignment-crs", "EPSG:32634",
		"--spacing", ft(10), "--drop-heights", ft(0.5) + "," + ft(1) + "," + ft(1.5), "--step", ft(0.01),
		"--max-cut", ft(5), "--max-fill", ft(2), "--min-reach", ft(30), "--bank-top-width", ft(3),
		"--cost-cut", fmt.Sprintf("%.10g", 4*report.CubicYardM3), "--cost-fill", fmt.Sprintf("%.10g", 6*report.CubicYardM3),
		"--cost-waste", fmt.Sprintf("%.10g", 2*report.CubicYardM3), "--cost-borrow", fmt.Sprintf("%.10g", 8*report.CubicYardM3),
		"--cost-drop-height", fmt.Sprintf("%.10g", 10000*report.FootM)}
	for _, args := range [][]string{si, us} {
		var stdout, stderr bytes.Buffer
		if err := run(context.Background(), args, &stdout, &stderr); err != nil {
			t.Fatalf("%v: %v", args[len(args)-1], err)
		}
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
	if last := rows[len(rows)-1][0]; !strings.Contains(last, "+") || len(strings.Split(last, "+")[1]) != 5 {
		t.Errorf("US station label %q is not a 100-ft station like 119+59.09", last)
	}
}

// TestUSDefaultsStaySI checks that with --units us a flag left at its
// default keeps its SI value (5 m of cut is not read as 5 ft), while a value
// given is read in feet (1 ft = 0.3048 m, 1 yd³ = 0.764554857984 m³, exact
// by definition).
func TestUSDefaultsStaySI(t *testing.T) {
	base := []string{"--units", "us", "--flow", "100", "--bottom-width", "6", "--side-slope", "1.5", "--roughness", "0.025", "--max-velocity", "3"}
	for _, c := range []struct {
		extra            []string
		wantCut, wantFee float64 // max cut depth, m; cut price per m³
	}{
		{nil, 5, 4},
		{[]string{"--max-cut", "10", "--cost-cut", "3"}, 3.048, 3 / report.CubicYardM3},
	} {
		fs := newFlagSet("plan", io.Discard)
		var f planFlags
		f.register(fs)
		setup, ok, err := f.parse(fs, append(append([]string{}, base...), c.extra...))
		if !ok || err != nil {
			t.Fatalf("parse %v: %v", c.extra, err)
		}
		if got := setup.problem.MaxCutDepth; math.Abs(got-c.wantCut) > 1e-12 {
			t.Errorf("%v: max cut %.6f m, want %.6f m", c.extra, got, c.wantCut)
		}
		if got := setup.problem.Costs.Cut; math.Abs(got-c.wantFee) > 1e-12 {
			t.Errorf("%v: cut price %.6f per m³, want %.6f", c.extra, got, c.wantFee)
		}
	}
}
