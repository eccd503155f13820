package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestDemo runs `canalstep demo` end to end, as scripts/demo.sh does, and
// checks that every alignment of the fictional scheme got every deliverable
// of each step, that every plan commands its land and states its saving
// against the best feasible baseline only, and that the run printed the
// commands, the caution and the comparison.
func TestDemo(t *testing.T) {
	if testing.Short() {
		t.Skip("the demo plans three canals; skipped with -short")
	}
	out := filepath.Join(t.TempDir(), "demo")
	stdout := mustRun(t, "demo", "--out", out)
	for _, in := range []string{"dem.tif", "canals.geojson", "design.toml"} {
		if _, err := os.Stat(filepath.Join(out, "inputs", in)); err != nil {
			t.Errorf("input %s: %v", in, err)
		}
	}
	canals := []string{"West_Branch", "Middle_Branch", "East_Branch"}
	for step, files := range map[string][]string{
		"profile": {"ground.csv", "ground.png", ".canalstep-folder"},
		"plan":    planFiles,
		"compare": {"alternatives.csv", "alternatives.png", ".canalstep-folder"},
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
	for _, want := range []string{"$ canalstep profile", "$ canalstep plan", "$ canalstep compare",
		"saving against the best feasible baseline", "<- least cost", "SAFETY AND RESPONSIBILITY NOTICE"} {
		if !strings.Contains(stdout, want) {
			t.Errorf("demo output lacks %q", want)
		}
	}
}
