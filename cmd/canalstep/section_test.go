package main

import (
	"encoding/json"
	"math"
	"strconv"
	"strings"
	"testing"
)

// runJSON runs a command with --json and decodes its output.
func runJSON(t *testing.T, args ...string) map[string]any {
	t.Helper()
	out, errs, code := runCmd(t, append(args, "--json")...)
	if code != 0 {
		t.Fatalf("canalstep %s: exit %d: %s", strings.Join(args, " "), code, errs)
	}
	var m map[string]any
	if err := json.Unmarshal([]byte(out), &m); err != nil {
		t.Fatalf("decode JSON: %v\n%s", err, out)
	}
	return m
}

func getNum(t *testing.T, m map[string]any, key string) float64 {
	t.Helper()
	v, ok := m[key].(float64)
	if !ok {
		t.Fatalf("JSON key %q missing or not a number: %v", key, m[key])
	}
	return v
}

// si1Args is case SI-1 of the reference sheet §1.8.
var si1Args = []string{"section", "--flow", "10", "--bottom-width", "3", "--side-slope", "1.5", "--roughness", "0.015", "--slope", "0.0004"}

func TestSectionValues(t *testing.T) {
	// JSON values carry 6 significant figures: tolerances below are the
	// checks' own, which are coarser.
	tests := []struct {
		name string
		args []string
		want map[string]float64
		tol  float64
		why  string
	}{
		{"SI-1", si1Args,
			map[string]float64{"normal_depth": 1.4961, "critical_depth": 0.8916, "velocity": 1.2746, "froude": 0.3976, "area": 7.8456, "top_width": 7.4882, "hydraulic_radius": 0.9347, "slope": 0.0004},
			2e-4, "reference sheet §1.8 SI-1 ([C], sheet's own computation, 4 decimals)"},
		{"Chow T1-1 in US units", []string{"section", "--units", "us", "--flow", "400", "--bottom-width", "20", "--side-slope", "2", "--roughness", "0.025", "--slope", "0.0016"},
			map[string]float64{"normal_depth": 3.36, "critical_depth": 2.15},
			0.01 / 3.36, "Chow (1959) Ch. 6 and Ch. 4 examples, printed 3.36 ft and 2.15 ft (from memory), ±0.01 ft"},
		{"T2-1 silty water with Kennedy", []string{"section", "--flow", "10", "--bottom-width", "3", "--side-slope", "1.5", "--roughness", "0.025", "--max-velocity", "1.07", "--kennedy-m", "1"},
			map[string]float64{"max_slope": 6.8953e-4, "min_slope": 3.6913e-4, "slope": 6.8953e-4, "normal_depth": 1.6890, "velocity": 1.07},
			1e-4, "reference sheet §2.3 T2-1 ([C]); 1e-4 because JSON keeps 6 figures and the sheet 5"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			m := runJSON(t, tc.args...)
			for k, want := range tc.want {
				if got := getNum(t, m, k); math.Abs(got-want) > tc.tol*math.Abs(want) {
					t.Errorf("%s = %.6g, want %.6g (%s)", k, got, want, tc.why)
				}
			}
			for _, k := range []string{"freeboard", "bank_height"} {
				getNum(t, m, k)
			}
			if getNum(t, m, "bank_height") <= getNum(t, m, "normal_depth") {
				t.Error("bank height not above the water")
			}
		})
	}
}

// TestSectionUnits: the same canal given in SI and in US units gives the
// same physical answer (conversion only at the edges; 1 ft = 0.3048 m and
// 1 cfs = 0.028316846592 m³/s exactly). JSON keeps 6 figures: 1e-5 relative.
func TestSectionUnits(t *testing.T) {
	const ft, cfs = 0.3048, 0.028316846592
	si := runJSON(t, si1Args...)
	us := runJSON(t, "section", "--units", "us",
		"--flow", formatFloat(10/cfs), "--bottom-width", formatFloat(3/ft), "--side-slope", "1.5", "--roughness", "0.015", "--slope", "0.0004")
	for _, k := range []struct {
		key    string
		factor float64
	}{{"normal_depth", ft}, {"critical_depth", ft}, {"velocity", ft}, {"area", ft * ft}, {"freeboard", ft}, {"bank_height", ft}, {"froude", 1}} {
		a, b := getNum(t, si, k.key), getNum(t, us, k.key)*k.factor
		if math.Abs(a-b) > 1e-5*math.Abs(a) {
			t.Errorf("%s: SI %.6g, US converted %.6g", k.key, a, b)
		}
	}
	if us["length_unit"] != "ft" || us["flow_unit"] != "cfs" {
		t.Errorf("US units labelled %v / %v", us["length_unit"], us["flow_unit"])
	}
}

func formatFloat(f float64) string { return strconv.FormatFloat(f, 'g', -1, 64) }

func TestSectionExitCodes(t *testing.T) {
	base := []string{"section", "--flow", "10", "--bottom-width", "3", "--side-slope", "1.5", "--roughness", "0.025"}
	with := func(extra ...string) []string { return append(append([]string{}, base...), extra...) }
	tests := []struct {
		name     string
		args     []string
		code     int
		contains string
	}{
		{"slope", with("--slope", "0.0004"), 0, "normal depth"},
		{"velocity limits", with("--max-velocity", "1.07", "--min-velocity", "0.6"), 0, "flattest slope"},
		{"help", []string{"section", "--help"}, 0, "Usage: canalstep section"},
		{"negative flow", []string{"section", "--flow", "-1", "--bottom-width", "3", "--side-slope", "1.5", "--roughness", "0.025", "--slope", "0.001"}, 2, "-1 is outside (0, 10000] m³/s"},
		{"unparseable flow", []string{"section", "--flow", "ten", "--bottom-width", "3", "--side-slope", "1.5", "--roughness", "0.025", "--slope", "0.001"}, 2, "invalid argument"},
		{"NaN flow", []string{"section", "--flow", "NaN", "--bottom-width", "3", "--side-slope", "1.5", "--roughness", "0.025", "--slope", "0.001"}, 2, "finite"},
		{"zero width", []string{"section", "--flow", "10", "--bottom-width", "0", "--side-slope", "1.5", "--roughness", "0.025", "--slope", "0.001"}, 2, "\"--bottom-width\" flag: 0 is outside (0, 500] m"},
		{"negative side slope", []string{"section", "--flow", "10", "--bottom-width", "3", "--side-slope", "-1", "--roughness", "0.025", "--slope", "0.001"}, 2, "\"--side-slope\" flag: -1 is outside [0, 20]"},
		{"zero roughness", []string{"section", "--flow", "10", "--bottom-width", "3", "--side-slope", "1.5", "--roughness", "0", "--slope", "0.001"}, 2, "\"--roughness\" flag: 0 is outside (0, 0.2]"},
		{"zero slope", with("--slope", "0"), 2, "\"--slope\" flag: 0 is outside (0, 0.2]"},
		{"adverse slope", with("--slope", "-0.001"), 2, "\"--slope\" flag: -0.001 is outside (0, 0.2]"},
		// Absurd finite values (issue 8) are refused with the range, in the
		// --units unit: 10,000 m³/s is 353,147 cfs (1 cfs = 0.3048³ m³/s).
		{"absurd flow", []string{"section", "--flow", "1e300", "--bottom-width", "3", "--side-slope", "1.5", "--roughness", "0.025", "--slope", "0.001"}, 2, "1e300 is outside (0, 10000] m³/s"},
		{"absurd flow in cfs", []string{"section", "--units", "us", "--flow", "1e300", "--bottom-width", "3", "--side-slope", "1.5", "--roughness", "0.025", "--slope", "0.001"}, 2, "1e300 is outside (0, 353147] cfs"},
		{"absurd width", []string{"section", "--flow", "10", "--bottom-width", "1e300", "--side-slope", "1.5", "--roughness", "0.025", "--slope", "0.001"}, 2, "1e300 is outside (0, 500] m"},
		{"absurd profile length", with("--slope", "0.001", "--profile-from", "critical", "--profile-length", "1e300"), 2, "--profile-length"},
		{"infinite freeboard", with("--slope", "0.001", "--freeboard", "Inf"), 2, "not a finite number"},
		{"slope and velocity", with("--slope", "0.001", "--max-velocity", "1"), 2, "either --slope or --max-velocity"},
		{"neither", base, 2, "either --slope or --max-velocity"},
		{"missing flow", []string{"section", "--bottom-width", "3", "--side-slope", "1.5", "--roughness", "0.025", "--slope", "0.001"}, 2, "missing --flow"},
		{"permissible below non-silting", with("--max-velocity", "0.5", "--min-velocity", "0.8"), 2, "below the non-silting velocity"},
		{"bad units", with("--slope", "0.001", "--units", "furlongs"), 2, "--units must be si or us"},
		{"stray argument", with("--slope", "0.001", "extra"), 2, "unexpected argument"},
		// T2-1 clear water (reference sheet §2.3): Kennedy's S_min is above
		// S_max for 0.76 m/s: an infeasible design, exit 1.
		{"infeasible Kennedy", with("--max-velocity", "0.76", "--kennedy-m", "1"), 1, "infeasible"},
		// A non-silting velocity above critical velocity: no subcritical depth.
		{"unreachable non-silting velocity", with("--max-velocity", "6", "--min-velocity", "5"), 1, "no subcritical depth"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			out, errs, code := runCmd(t, tc.args...)
			if code != tc.code {
				t.Fatalf("exit %d, want %d; stderr %q", code, tc.code, errs)
			}
			if got := out + errs; !strings.Contains(got, tc.contains) {
				t.Errorf("output does not contain %q:\n%s", tc.contains, got)
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

func TestSectionReadable(t *testing.T) {
	out, errs, code := runCmd(t, append(append([]string{}, si1Args...), "--units", "si")...)
	if code != 0 {
		t.Fatal(errs)
	}
	for _, want := range []string{"normal depth", "1.496 m", "critical depth", "0.892 m", "1.275 m/s", "Froude number", "subcritical", "freeboard", "bank height above bed", "USBR"} {
		if !strings.Contains(out, want) {
			t.Errorf("table lacks %q:\n%s", want, out)
		}
	}
}

func TestSectionGolden(t *testing.T) {
	out, errs, code := runCmd(t, "section", "--flow", "10", "--bottom-width", "3", "--side-slope", "1.5", "--roughness", "0.025", "--max-velocity", "1.07", "--min-velocity", "0.6", "--json")
	if code != 0 {
		t.Fatal(errs)
	}
	checkGolden(t, "section_si.json", []byte(out))
	out, errs, code = runCmd(t, "section", "--units", "us", "--flow", "400", "--bottom-width", "20", "--side-slope", "2", "--roughness", "0.025", "--slope", "0.0016")
	if code != 0 {
		t.Fatal(errs)
	}
	checkGolden(t, "section_us.txt", []byte(out))
}

// TestSectionProfile: the M2 drawdown above a free overfall in SI-1 reaches
// 0.99·yn = 1.4811 m at 2,098.9 m (reference sheet §5.4 T5-2, [C]; ±2 mm),
// computed here with 500 m stations that the profile refines itself. A
// control below critical depth is a usage error.
func TestSectionProfile(t *testing.T) {
	m := runJSON(t, withArgs(si1Args, "--profile-from", "critical", "--profile-length", "2098.9", "--profile-step", "500")...)
	prof, ok := m["profile"].([]any)
	if !ok || len(prof) != 6 {
		t.Fatalf("profile = %v", m["profile"])
	}
	first := prof[0].(map[string]any)
	if c, d := getNum(t, first, "chainage"), getNum(t, first, "depth"); c != -2098.9 || math.Abs(d-1.4811) > 2e-3 {
		t.Errorf("profile starts at %v m with depth %v m, want -2098.9 m and 1.4811 m", c, d)
	}
	last := prof[len(prof)-1].(map[string]any)
	if d := getNum(t, last, "depth"); math.Abs(d-0.8916) > 1e-4 {
		t.Errorf("control depth %v m, want critical 0.8916 m", d)
	}
	if m["profile_type"] != "M2 drawdown" {
		t.Errorf("profile type %v", m["profile_type"])
	}
	m = runJSON(t, withArgs(si1Args, "--profile-from", "2.0", "--profile-length", "1000", "--profile-step", "250")...)
	if m["profile_type"] != "M1 backwater" {
		t.Errorf("profile type %v, want M1 backwater", m["profile_type"])
	}
	for _, bad := range []string{"0.5", "deep", "-1"} {
		if _, errs, code := runCmd(t, withArgs(si1Args, "--profile-from", bad)...); code != 2 {
			t.Errorf("--profile-from %s: exit %d (%s), want 2", bad, code, errs)
		}
	}
}
