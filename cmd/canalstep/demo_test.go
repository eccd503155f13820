package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestDemo runs `canalstep demo` end to end, as scripts/demo.sh does, and
// checks that every alignment of the fictional scheme (the main canal, three
// branches and a second route of one) got every deliverable of each step,
// that every plan commands its land and states its saving against the best
// feasible baseline only, that the batch indexed every canal × alternative,
// and that the run printed the commands, the caution and the paths of the
// report and the index.
func TestDemo(t *testing.T) {
	if testing.Short() {
		t.Skip("the demo plans three canals; skipped with -short")
	}
	t.Parallel()
	out := filepath.Join(t.TempDir(), "demo")
	stdout := mustRun(t, "demo", "--out", out)
	for _, in := range []string{"dem.tif", "canals.geojson", "design.toml", "job.toml"} {
		if _, err := os.Stat(filepath.Join(out, "inputs", in)); err != nil {
			t.Errorf("input %s: %v", in, err)
		}
	}
	canals := []string{"West_Branch", "Middle_Branch", "East_Branch", "Main_Canal", "Middle_Branch_east_route"}
	for step, files := range map[string][]string{
		"profile": {"ground.csv", "ground.png", ".canalstep-folder"},
		"plan":    planFiles,
	} {
		for _, canal := range canals {
			checkFolder(t, filepath.Join(out, step, canal), files)
		}
		checkNoPartial(t, filepath.Join(out, step), canals...)
	}
	for _, canal := range canals {
		sum := readSummary(t, filepath.Join(out, "plan", canal, "summary.json"))
		checkSaving(t, sum, stdout)
		// The demo's design file asks for cross-sections and a 0.15 m
		// command margin (demo.go).
		if g := sum["design"].(map[string]any)["ground_model"]; g != "cross_sections" {
			t.Errorf("%s: ground model %v, want cross_sections", canal, g)
		}
		if share := sum["command"].(map[string]any)["share_above_ground"]; share != 1.0 {
			t.Errorf("%s: water surface above ground at a share %v of stations, want all", canal, share)
		}
	}
	// The batch: every canal × the three alternatives of job.toml, indexed.
	rows := readCSV(t, filepath.Join(out, "batch", "index.csv"))
	if len(rows) != 1+len(canals)*3 {
		t.Errorf("batch index has %d rows, want a header and %d jobs", len(rows), len(canals)*3)
	}
	for _, f := range []string{"index.csv", "index.html"} {
		if _, err := os.Stat(filepath.Join(out, "batch", f)); err != nil {
			t.Errorf("batch %s: %v", f, err)
		}
	}
	for _, want := range []string{"$ canalstep profile", "$ canalstep plan", "$ canalstep batch",
		"saving against the best feasible baseline", "SAFETY AND RESPONSIBILITY NOTICE",
		filepath.Join(out, "plan", "Main_Canal", "report.html"), filepath.Join(out, "batch", "index.html")} {
		if !strings.Contains(stdout, want) {
			t.Errorf("demo output lacks %q", want)
		}
	}
}
