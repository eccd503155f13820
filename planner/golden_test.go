package planner

import (
	"bytes"
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"testing"
)

var update = flag.Bool("update", false, "rewrite the golden files in testdata")

// formatPlan writes a plan at fixed precision (inverts to the millimetre)
// so that the golden file is stable across machines.
func formatPlan(res *Result) []byte {
	var b bytes.Buffer
	fmt.Fprintln(&b, "chainage ground invert invert_down water_surface top_of_bank cut_depth fill_height cut_area fill_area cum_cut cum_fill velocity")
	for _, s := range res.Stations {
		fmt.Fprintf(&b, "%.2f %.3f %.3f %.3f %.3f %.3f %.3f %.3f %.3f %.3f %.1f %.1f %.3f\n", s.Chainage, s.Ground, s.Invert, s.InvertDown,
			s.WaterSurface, s.TopOfBank, s.CutDepth, s.FillHeight, s.CutArea, s.FillArea, s.CumCut, s.CumFill, s.Velocity)
	}
	fmt.Fprintln(&b, "drop chainage height upstream_invert basin_floor downstream_invert basin_length end_sill jump_state")
	for _, d := range res.Drops {
		fmt.Fprintf(&b, "drop %.2f %.2f %.3f %.3f %.3f %.3f %.3f %s\n", d.Chainage, d.Height, d.UpstreamInvert, d.BasinFloor,
			d.DownstreamInvert, d.BasinLength, d.EndSill, d.JumpState)
	}
	for _, r := range res.Reaches {
		fmt.Fprintf(&b, "reach %.2f %.2f grade %.7f\n", r.From, r.To, r.Grade)
	}
	t := res.Totals
	fmt.Fprintf(&b, "totals drops %d cut %.1f fill %.1f earthwork %.0f drops %.0f total %.0f\n", t.DropCount, t.CutVolume, t.FillVolume,
		t.EarthworkCost, t.DropCost, t.TotalCost)
	for _, bl := range res.Baselines() {
		fmt.Fprintf(&b, "baseline %s drops %d total %.0f feasible %v\n", bl.Method, bl.Totals.DropCount, bl.Totals.TotalCost, bl.Feasible)
	}
	return b.Bytes()
}

func TestPlanGolden(t *testing.T) {
	res, err := Optimize(testProblem(80, 5))
	if err != nil {
		t.Fatal(err)
	}
	got := formatPlan(res)
	golden := filepath.Join("testdata", "plan80.golden")
	if *update {
		if err := os.WriteFile(golden, got, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	want, err := os.ReadFile(golden)
	if err != nil {
		t.Fatalf("%v (run go test -run TestPlanGolden -update to create it)", err)
	}
	if !bytes.Equal(got, want) {
		out := filepath.Join(t.TempDir(), "plan80.got")
		_ = os.WriteFile(out, got, 0o644)
		t.Errorf("plan differs from %s; got written to %s (rerun with -update if the change is intended)", golden, out)
	}
}
