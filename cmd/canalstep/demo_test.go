package main

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestDemo runs `canalstep demo` end to end, as scripts/demo.sh does, and
// checks that every alignment of the fictional scheme got every deliverable
// and that the run printed the commands, the caution and the comparison.
func TestDemo(t *testing.T) {
	if testing.Short() {
		t.Skip("the demo plans three canals; skipped with -short")
	}
	out := filepath.Join(t.TempDir(), "demo")
	var stdout, stderr bytes.Buffer
	if err := run(context.Background(), []string{"demo", "--out", out}, &stdout, &stderr); err != nil {
		t.Fatalf("demo: %v\n%s", err, stdout.String())
	}
	for _, in := range []string{"dem.tif", "canals.geojson", "design.toml"} {
		if _, err := os.Stat(filepath.Join(out, "inputs", in)); err != nil {
			t.Errorf("input %s: %v", in, err)
		}
	}
	files := []string{"ground.csv", "ground.png", "stations.csv", "drops.csv", "summary.json",
		"profile.png", "profile.svg", "alternatives.csv", "alternatives.png"}
	for _, canal := range []string{"West_Branch", "Middle_Branch", "East_Branch"} {
		for _, f := range files {
			if fi, err := os.Stat(filepath.Join(out, canal, f)); err != nil || fi.Size() == 0 {
				t.Errorf("%s/%s missing or empty (%v)", canal, f, err)
			}
		}
	}
	for _, want := range []string{"$ canalstep profile", "$ canalstep plan", "$ canalstep compare",
		"saving against even spacing", "<- least cost", "SAFETY AND RESPONSIBILITY NOTICE"} {
		if !strings.Contains(stdout.String(), want) {
			t.Errorf("demo output lacks %q", want)
		}
	}
}
