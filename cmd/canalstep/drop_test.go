package main

import (
	"math"
	"strings"
	"testing"

	"canalstep/report"
)

// t42Args is drop T4-2 of the reference sheet §4.3: SI-1 canal on both
// sides, bed fall 1.2 m, crest and basin 3.0 m wide, 10 m³/s.
var t42Args = []string{"drop", "--flow", "10", "--width", "3", "--height", "1.2",
	"--bottom-width", "3", "--side-slope", "1.5", "--roughness", "0.015", "--slope", "0.0004"}

func withArgs(base []string, extra ...string) []string {
	return append(append([]string{}, base...), extra...)
}

func TestDropT42(t *testing.T) {
	// Depression for TW = Rand y2 at the design flow only (hold ratio 1):
	// d_s 0.475 m with Co = 0 and 0.429 m with Co = 0.5 (straight-line
	// outlet), reference sheet §4.3 ([C], sheet's own computation); ±2e-3 m
	// as the sheet states for nested bisections. Energy loss = bed fall
	// exactly (§3.4, same canal on both sides).
	for _, tc := range []struct {
		transition string
		ds, lb     float64
	}{{"none", 0.475, 14.60}, {"straight-line", 0.429, 14.48}} {
		m := runJSON(t, withArgs(t42Args, "--flows", "1", "--hold-ratio", "1", "--transition", tc.transition)...)
		for _, c := range []struct {
			key       string
			want, tol float64
		}{
			{"basin_depression", tc.ds, 2e-3},
			{"basin_length", tc.lb, 0.01},
			{"crest_raise", 0.0153, 1e-4},
			{"critical_depth", 1.0424, 1e-4},
			{"energy_loss", 1.2, 1e-5},
			{"dissipated_power_kw", 117.7, 0.05},
		} {
			if got := getNum(t, m, c.key); math.Abs(got-c.want) > c.tol {
				t.Errorf("%s: %s = %.5g, sheet %.5g ± %g", tc.transition, c.key, got, c.want, c.tol)
			}
		}
		for _, k := range []string{"drop_number", "critical_depth", "impact_length", "pool_depth", "toe_depth", "sequent_depth", "jump_length", "basin_length", "energy_loss"} {
			getNum(t, m, k)
		}
		flows, ok := m["flows"].([]any)
		if !ok || len(flows) != 1 {
			t.Fatalf("flows = %v", m["flows"])
		}
		f := flows[0].(map[string]any)
		if f["jump_state"] != "in_basin" || math.Abs(getNum(t, f, "tailwater_depth")-getNum(t, m, "sequent_depth")) > 1e-3 {
			t.Errorf("design flow check %v", f)
		}
	}
}

// TestDropStates: with the basin floor fixed at the downstream bed the
// T4-2 jump is swept out at every default flow and each check names the
// depression it needs (0.475 m at the design flow, sheet §4.3); with a
// designed floor none is swept out and the low flows drown.
func TestDropStates(t *testing.T) {
	m := runJSON(t, withArgs(t42Args, "--depression", "0")...)
	flows := m["flows"].([]any)
	if len(flows) != 3 {
		t.Fatalf("%d flows, want the default 0.25, 0.5, 1", len(flows))
	}
	for _, fv := range flows {
		f := fv.(map[string]any)
		if f["jump_state"] != "swept_out" {
			t.Errorf("flow %v: %v, want swept_out", f["flow"], f["jump_state"])
		}
	}
	if got := getNum(t, flows[2].(map[string]any), "required_depression"); math.Abs(got-0.475) > 2e-3 {
		t.Errorf("required depression at design flow %.4f m, sheet 0.475", got)
	}
	m = runJSON(t, t42Args...)
	states := map[string]int{}
	for _, fv := range m["flows"].([]any) {
		f := fv.(map[string]any)
		states[f["jump_state"].(string)]++
		if getNum(t, f, "tailwater_ratio") < 1.1-1e-5 {
			t.Errorf("flow %v: TW/y2 %v below the 1.10 the floor was designed for", f["flow"], f["tailwater_ratio"])
		}
	}
	if states["swept_out"] != 0 || states["drowned"] == 0 {
		t.Errorf("states %v: want none swept out and the low flow drowned", states)
	}
}

func TestDropExitCodes(t *testing.T) {
	tests := []struct {
		name     string
		args     []string
		code     int
		contains string
	}{
		{"design", t42Args, 0, "Outlet check"},
		{"help", []string{"drop", "-h"}, 0, "Usage: canalstep drop"},
		{"zero width", withArgs(t42Args, "--width", "0"), 2, "\"--width\" flag: 0 is outside (0, 500] m"},
		{"negative height", withArgs(t42Args, "--height", "-1"), 2, "\"--height\" flag: -1 is outside (0, 20] m"},
		// Issue 8: a 1e300 m drop printed Inf and NaN with exit status 0.
		{"absurd height", withArgs(t42Args, "--height", "1e300"), 2, "\"--height\" flag: 1e300 is outside (0, 20] m"},
		{"absurd height as JSON", withArgs(t42Args, "--height", "1e300", "--json"), 2, "1e300 is outside (0, 20] m"},
		{"absurd height in feet", withArgs(t42Args, "--units", "us", "--height", "1e300"), 2, "1e300 is outside (0, 65.6168] ft"},
		{"absurd flow", withArgs(t42Args, "--flow", "1e300"), 2, "1e300 is outside (0, 10000] m³/s"},
		{"absurd hold ratio", withArgs(t42Args, "--hold-ratio", "1e300"), 2, "--hold-ratio"},
		{"absurd crest raise", withArgs(t42Args, "--crest-raise", "1e300"), 2, "--crest-raise"},
		{"zero flow", withArgs(t42Args, "--flow", "0"), 2, "\"--flow\" flag: 0 is outside (0, 10000] m³/s"},
		{"bad number", withArgs(t42Args, "--height", "1.2m"), 2, "invalid argument"},
		{"zero slope", withArgs(t42Args, "--slope", "0"), 2, "\"--slope\" flag: 0 is outside (0, 0.2]"},
		{"negative side slope", withArgs(t42Args, "--side-slope", "-2"), 2, "\"--side-slope\" flag: -2 is outside [0, 20]"},
		{"unknown transition", withArgs(t42Args, "--transition", "rounded"), 2, "unknown transition type"},
		{"bad flow list", withArgs(t42Args, "--flows", "0.5,half"), 2, "not a number"},
		{"zero flow fraction", withArgs(t42Args, "--flows", "0,1"), 2, "--flows: 0 is outside (0, 2]"},
		{"empty flow list", withArgs(t42Args, "--flows", ""), 2, "--flows is empty"},
		{"negative depression", withArgs(t42Args, "--depression", "-0.5"), 2, "\"--depression\" flag: -0.5 is outside [0, 20] m"},
		// A supercritical canal below gives no tailwater: infeasible, exit 1.
		{"steep canal below", withArgs(t42Args, "--slope", "0.02"), 1, "steep"},
		{"missing canal", []string{"drop", "--flow", "10", "--width", "3", "--height", "1.2"}, 2, "missing --bottom-width"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			out, errs, code := runCmd(t, tc.args...)
			if code != tc.code {
				t.Fatalf("exit %d, want %d; stderr %q", code, tc.code, errs)
			}
			if !strings.Contains(out+errs, tc.contains) {
				t.Errorf("output lacks %q:\n%s%s", tc.contains, out, errs)
			}
			if tc.code != 0 {
				checkOneLine(t, errs, tc.contains)
				if out != "" {
					t.Errorf("error case wrote to stdout: %q", out)
				}
			}
		})
	}
}

func TestDropReadable(t *testing.T) {
	out, errs, code := runCmd(t, withArgs(t42Args, "--units", "us", "--flow", "353.147", "--width", "9.8425", "--height", "3.937",
		"--bottom-width", "9.8425")...)
	if code != 0 {
		t.Fatal(errs)
	}
	for _, want := range []string{"cfs", " ft", "drop number D_N", "basin length", "Outlet check", "Warnings:"} {
		if !strings.Contains(out, want) {
			t.Errorf("readable output lacks %q", want)
		}
	}
	if !strings.HasSuffix(strings.TrimSpace(out), strings.TrimSpace(report.SafetyNotice)) {
		t.Errorf("readable drop output does not end with the safety notice:\n%s", out)
	}
}

func TestDropGolden(t *testing.T) {
	out, errs, code := runCmd(t, withArgs(t42Args, "--json", "--transition", "warped")...)
	if code != 0 {
		t.Fatal(errs)
	}
	checkGolden(t, "drop_si.json", []byte(out))
	out, errs, code = runCmd(t, withArgs(t42Args, "--depression", "0")...)
	if code != 0 {
		t.Fatal(errs)
	}
	checkGolden(t, "drop_swept_out.txt", []byte(out))
}

func FuzzParseFlows(f *testing.F) {
	for _, s := range []string{"0.25,0.5,1", "1", " 0.5 , 1.5 ", "", ",", "0,1", "-1", "NaN", "1e309", "1,,2", "0x1p-2", "abc"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		v, err := parseFlows(s)
		if err != nil {
			if exitCode(err) != 2 {
				t.Fatalf("parseFlows(%q): error %v is not a usage error", s, err)
			}
			return
		}
		if len(v) == 0 || len(v) != strings.Count(s, ",")+1 {
			t.Fatalf("parseFlows(%q) = %v: wrong count", s, v)
		}
		for _, x := range v {
			if !(x > 0) || math.IsInf(x, 0) {
				t.Fatalf("parseFlows(%q) gave %v", s, x)
			}
		}
	})
}

// TestDropNotch: the control notch for SI-1 matching normal depth at 10 and
// 5 m³/s with the sheet's placeholder Cd = 0.70 (not a calibrated value) has
// a 1.4490 m sill and sides 0.9982 H:V (reference sheet §4.5 T4-3, [C];
// 1e-4 relative, the JSON keeps 6 figures). Without --notch-cd there is no
// notch: the coefficient has no default.
func TestDropNotch(t *testing.T) {
	m := runJSON(t, withArgs(t42Args, "--notch-cd", "0.70")...)
	n, ok := m["notch"].(map[string]any)
	if !ok {
		t.Fatalf("no notch in %v", m)
	}
	if w, f := getNum(t, n, "sill_width"), getNum(t, n, "side_flare"); math.Abs(w-1.4490) > 1e-4*1.449 || math.Abs(f-0.9982) > 1e-4 {
		t.Errorf("notch sill %v m, sides %v; sheet 1.4490 m, 0.9982", w, f)
	}
	if _, ok := runJSON(t, t42Args...)["notch"]; ok {
		t.Error("notch designed without a coefficient")
	}
	if _, _, code := runCmd(t, withArgs(t42Args, "--notch-cd", "0")...); code != 2 {
		t.Errorf("--notch-cd 0: exit %d, want 2", code)
	}
}
