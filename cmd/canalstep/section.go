package main

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"text/tabwriter"
	"unicode/utf8"

	flag "github.com/spf13/pflag"

	"canalstep/planner"
	"canalstep/planner/hydraulics"
	"canalstep/report"
	"canalstep/report/units"
)

// canalFlags are the flags that describe a trapezoidal canal reach. They
// read the --units unit and hold SI (units.Value).
type canalFlags struct {
	bottomWidth, sideSlope, roughness, slope float64 // m, H:V, Manning n, m/m
}

func (c *canalFlags) register(n numberFlags, what string) {
	n.add(&c.bottomWidth, units.Length, "bottom-width", positive("bottom_width"), "bed width of the "+what+" (m, or ft with --units us)")
	n.add(&c.sideSlope, units.Ratio, "side-slope", planner.Ranges["side_slope"], "side slope of the "+what+", horizontal per vertical (0 = rectangle)")
	n.add(&c.roughness, units.Ratio, "roughness", planner.Ranges["roughness"], "Manning n of the "+what+" (e.g. 0.015 concrete, 0.025 earth; Chow 1959 Table 5-6)")
	n.add(&c.slope, units.Ratio, "slope", planner.Ranges["grade"], "bed slope of the "+what+", m/m")
}

// channel returns the SI channel of the flags.
func (c canalFlags) channel() hydraulics.Channel {
	return hydraulics.Channel{
		Section: hydraulics.Section{BottomWidth: c.bottomWidth, SideSlope: c.sideSlope},
		N:       c.roughness, Slope: c.slope,
	}
}

// numberFlags registers the number flags of section and drop: each reads
// a number in the --units unit, stores it in SI and refuses a value outside
// its physical range, which its help text states.
type numberFlags struct {
	fs  *flag.FlagSet
	sys *units.System
}

func (n numberFlags) add(p *float64, q units.Quantity, name string, r planner.Range, usage string) {
	v := units.NewValue(p, q, n.sys).Within(r.Min, r.Max, r.MinExclusive)
	n.fs.Var(v, name, usage+"; "+v.RangeText())
}

// positive is the planner's range of key without its minimum (zero).
func positive(key string) planner.Range {
	r := planner.Ranges[key]
	r.MinExclusive = true
	return r
}

// Ranges of the section and drop flags the planner has no range for:
// wide physical bounds that catch typing mistakes and hostile input, not
// design guidance (common practice, no source).
var (
	kennedyRange    = planner.Range{Min: 0, Max: 5, MinExclusive: true}   // Kennedy's m; real soils 0.7 to 1.3 (from memory)
	froudeRange     = planner.Range{Min: 0, Max: 10, MinExclusive: true}  // a warning threshold
	coeffRange      = planner.Range{Min: 0, Max: 10, MinExclusive: true}  // USBR freeboard C, m (1.5 to 2.5 ft in the rule)
	freeboardRange  = planner.Range{Min: 0, Max: 20, MinExclusive: true}  // m: a fixed freeboard, when given
	lengthRange     = planner.Range{Min: 0, Max: 1e6, MinExclusive: true} // m: a profile's length
	stepRange       = planner.Range{Min: 0, Max: 1e5, MinExclusive: true} // m: a profile's station interval
	holdRange       = planner.Range{Min: 0, Max: 3, MinExclusive: true}   // tailwater / sequent depth the floor is set for
	structureRange  = planner.Range{Min: 0, Max: 20}                      // m: a crest raise or basin depression, as a drop height
	notchCoeffRange = planner.Range{Min: 0, Max: 2, MinExclusive: true}   // discharge coefficient of a notch
)

// outputFlags are the --units and --json flags of a command that prints
// results.
type outputFlags struct {
	units  string
	asJSON bool
}

// parseCommand registers --units and --json, sets the help text (usage line,
// a paragraph about the command, then the flags), parses args and the units.
// ok is false when the command should stop (help shown, or err).
func (o *outputFlags) parseCommand(fs *flag.FlagSet, args []string, stdout io.Writer, usageLine, about string) (u report.Units, ok bool, err error) {
	fs.StringVar(&o.units, "units", "si", "units of input and output: si (m, m³/s) or us (ft, cfs)")
	fs.BoolVar(&o.asJSON, "json", false, "print JSON instead of a table")
	fs.Usage = func() {
		fmt.Fprintf(stdout, "Usage: %s\n\n%s\n\nFlags:\n", usageLine, about)
		fs.PrintDefaults()
		fmt.Fprintf(stdout, "\n%s\n", exitCodeHelp)
	}
	if ok, err := parseFlags(fs, args); !ok {
		return u, false, err
	}
	u, err = parseUnits(o.units)
	return u, err == nil, err
}

// requireFlags returns a usage error naming the first flag of names that
// was not given.
func requireFlags(fs *flag.FlagSet, names ...string) error {
	for _, n := range names {
		if !fs.Changed(n) {
			return usagef("%s: missing --%s (see 'canalstep %s --help')", fs.Name(), n, fs.Name())
		}
	}
	return nil
}

// sig6 is a float64 that JSON-encodes with six significant figures, so that
// golden files do not depend on the last bits of a platform's arithmetic.
type sig6 float64

func (n sig6) MarshalJSON() ([]byte, error) {
	f := float64(n)
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return nil, fmt.Errorf("cannot encode %g in JSON", f)
	}
	return strconv.AppendFloat(nil, f, 'g', 6, 64), nil
}

func sig6Ptr(f float64) *sig6 { n := sig6(f); return &n }

// sectionResult is the JSON output of `canalstep section`, in the units of
// --units (lengths m or ft, discharge m³/s or cfs, velocity m/s or ft/s).
type sectionResult struct {
	Units           string       `json:"units"`
	LengthUnit      string       `json:"length_unit"`
	FlowUnit        string       `json:"flow_unit"`
	Flow            sig6         `json:"flow"`
	BottomWidth     sig6         `json:"bottom_width"`
	SideSlope       sig6         `json:"side_slope"`
	Roughness       sig6         `json:"roughness"`
	Slope           sig6         `json:"slope"`
	MaxVelocity     *sig6        `json:"max_velocity,omitempty"`
	MinVelocity     *sig6        `json:"min_velocity,omitempty"`
	MaxSlope        *sig6        `json:"max_slope,omitempty"`
	MinSlope        *sig6        `json:"min_slope,omitempty"`
	NormalDepth     sig6         `json:"normal_depth"`
	CriticalDepth   sig6         `json:"critical_depth"`
	Velocity        sig6         `json:"velocity"`
	Froude          sig6         `json:"froude"`
	Regime          string       `json:"regime"`
	Area            sig6         `json:"area"`
	WettedPerimeter sig6         `json:"wetted_perimeter"`
	TopWidth        sig6         `json:"top_width"`
	HydraulicRadius sig6         `json:"hydraulic_radius"`
	HydraulicDepth  sig6         `json:"hydraulic_depth"`
	SpecificEnergy  sig6         `json:"specific_energy"`
	Freeboard       sig6         `json:"freeboard"`
	FreeboardRule   string       `json:"freeboard_rule"`
	BankHeight      sig6         `json:"bank_height"`
	ProfileType     string       `json:"profile_type,omitempty"`
	Profile         []profileRow `json:"profile,omitempty"`
	Warnings        []string     `json:"warnings"`
}

// profileRow is one station of the water-surface profile above a control.
type profileRow struct {
	Chainage  sig6 `json:"chainage"` // negative upstream of the control at 0
	Depth     sig6 `json:"depth"`
	Velocity  sig6 `json:"velocity"`
	Froude    sig6 `json:"froude"`
	Freeboard sig6 `json:"freeboard"` // below the top of bank set for normal depth
}

// runSection implements `canalstep section`: uniform flow in one canal
// section, on a given slope or on the steepest slope a velocity limit allows.
func runSection(_ context.Context, args []string, stdout, _ io.Writer) error {
	sys, _, err := preParse(args)
	if err != nil {
		return err
	}
	fs := newFlagSet("section", stdout)
	n := numberFlags{fs, &sys}
	var cf canalFlags
	var flow, maxV, minV, kennedy, fbFixed, fbC, fbMin float64
	maxFroude, profLen, profStep := hydraulics.NearCriticalFroude, 2000.0, 100.0
	L, V := units.Length, units.Velocity
	n.add(&flow, units.Flow, "flow", planner.Ranges["flow"], "design discharge (m³/s, or cfs with --units us)")
	cf.register(n, "canal")
	n.add(&maxV, V, "max-velocity", planner.Ranges["max_velocity"], "permissible (non-erosive) mean velocity; replaces --slope: the design slope is the steepest that keeps V at or below it (m/s or ft/s; e.g. Fortier & Scobey 1926)")
	n.add(&minV, V, "min-velocity", planner.Ranges["min_velocity"], "non-silting mean velocity (m/s or ft/s); gives min_slope, or a warning with --slope")
	n.add(&kennedy, units.Ratio, "kennedy-m", kennedyRange, "use Kennedy's non-silting velocity 0.55·m·y^0.64 (SI) with critical velocity ratio m instead of --min-velocity")
	n.add(&maxFroude, units.Ratio, "max-froude", froudeRange, "warn when the Froude number exceeds this (0.86: Clark County RFCD drainage manual §1100, via a secondary source)")
	n.add(&fbFixed, L, "freeboard", freeboardRange, "fixed freeboard (m or ft) instead of the USBR rule")
	n.add(&fbC, L, "freeboard-c", coeffRange, "fixed USBR coefficient C in F = sqrt(C·y) (m or ft) instead of interpolating it from the discharge")
	n.add(&fbMin, L, "min-freeboard", planner.Ranges["freeboard"], "lower bound on the freeboard (m or ft)")
	profFrom := fs.String("profile-from", "", "also compute the water-surface profile upstream of a control holding this depth (m or ft), or 'critical' for a free overfall; standard step method")
	n.add(&profLen, L, "profile-length", lengthRange, "length of the profile upstream of the control (m or ft)")
	n.add(&profStep, L, "profile-step", stepRange, "station interval of the profile (m or ft)")
	var of outputFlags
	u, ok, err := of.parseCommand(fs, args, stdout,
		"canalstep section --flow Q --bottom-width B --side-slope Z --roughness N (--slope S | --max-velocity V) [--min-velocity V] [--units si|us] [--json]",
		"Uniform flow in a trapezoidal canal: normal and critical depth, velocity, Froude number,\nfreeboard and bank height; with --max-velocity, the range of bed slopes the velocity limits allow.\nNumbers are in the --units unit; each flag's range is the physical range its value must lie in.")
	if !ok {
		return err
	}
	if err := requireFlags(fs, "flow", "bottom-width", "side-slope", "roughness"); err != nil {
		return err
	}
	if fs.Changed("slope") == fs.Changed("max-velocity") {
		return usagef("section: give either --slope or --max-velocity (the steepest slope it allows becomes the design slope)")
	}
	if fs.Changed("min-velocity") && fs.Changed("kennedy-m") {
		return usagef("section: give --min-velocity or --kennedy-m, not both")
	}
	if fs.Changed("max-velocity") && fs.Changed("min-velocity") && minV > maxV {
		return usagef("section: the permissible velocity --max-velocity %g is below the non-silting velocity --min-velocity %g; no slope can meet both", u.Velocity(maxV), u.Velocity(minV))
	}

	lm := unitLength(u)
	c := hydraulics.SI()
	ch := cf.channel()
	q := flow
	res := sectionResult{
		Units: unitsName(u), LengthUnit: u.LengthUnit(), FlowUnit: flowUnit(u),
		Flow: sig6(u.FromSI(units.Flow, q)), BottomWidth: sig6(u.Length(cf.bottomWidth)), SideSlope: sig6(cf.sideSlope), Roughness: sig6(cf.roughness),
	}
	var yn float64
	if fs.Changed("max-velocity") {
		var lim hydraulics.SlopeLimits
		if fs.Changed("kennedy-m") {
			lim, err = hydraulics.KennedySlopeLimits(c, ch.Section, q, ch.N, maxV, kennedy)
		} else {
			lim, err = hydraulics.VelocityLimitedSlopes(c, ch.Section, q, ch.N, maxV, minV)
		}
		if err != nil {
			return sectionError(err)
		}
		ch.Slope, yn = lim.MaxSlope, lim.DepthAtMax
		res.MaxVelocity, res.MaxSlope, res.MinSlope = sig6Ptr(u.Velocity(maxV)), sig6Ptr(lim.MaxSlope), sig6Ptr(lim.MinSlope)
		if lim.VelocityAtMin > 0 {
			res.MinVelocity = sig6Ptr(lim.VelocityAtMin / lm)
		}
	} else {
		if yn, err = hydraulics.NormalDepth(c, ch.Section, q, ch.N, ch.Slope); err != nil {
			return sectionError(err)
		}
		v := hydraulics.Velocity(ch.Section, q, yn)
		minVel := minV
		if fs.Changed("kennedy-m") {
			minVel = hydraulics.KennedyVelocity(kennedy, yn)
		}
		if minVel > 0 {
			res.MinVelocity = sig6Ptr(minVel / lm)
			if v < minVel {
				res.Warnings = append(res.Warnings, fmt.Sprintf("velocity %.3f %s is below the non-silting velocity %.3f %s: the canal will silt", v/lm, velocityUnit(u), minVel/lm, velocityUnit(u)))
			}
		}
	}
	yc, err := hydraulics.CriticalDepth(c, ch.Section, q)
	if err != nil {
		return sectionError(err)
	}
	s := ch.Section
	f := hydraulics.Froude(c, s, q, yn)
	rule := hydraulics.FreeboardRule{Fixed: fbFixed, C: fbC, Min: fbMin}
	fb := hydraulics.Freeboard(q, yn, rule)
	res.Slope = sig6(ch.Slope)
	res.NormalDepth, res.CriticalDepth = sig6(yn/lm), sig6(yc/lm)
	res.Velocity, res.Froude = sig6(hydraulics.Velocity(s, q, yn)/lm), sig6(f)
	res.Regime = regime(f)
	res.Area, res.WettedPerimeter, res.TopWidth = sig6(s.Area(yn)/(lm*lm)), sig6(s.WettedPerimeter(yn)/lm), sig6(s.TopWidth(yn)/lm)
	res.HydraulicRadius, res.HydraulicDepth = sig6(s.HydraulicRadius(yn)/lm), sig6(s.HydraulicDepth(yn)/lm)
	res.SpecificEnergy = sig6(hydraulics.SpecificEnergy(c, s, q, yn) / lm)
	res.Freeboard, res.BankHeight = sig6(fb/lm), sig6((yn+fb)/lm)
	res.FreeboardRule = freeboardRuleText(rule, q, u)
	if *profFrom != "" {
		if err := addProfile(&res, c, ch, q, yc, yn+fb, *profFrom, profLen, profStep, u); err != nil {
			return err
		}
	}
	if f > maxFroude {
		res.Warnings = append(res.Warnings, fmt.Sprintf("Froude number %.2f is above %.2f: near-critical flow is wavy and unstable; flatten the slope or widen the bed", f, maxFroude))
	}
	if res.Warnings == nil {
		res.Warnings = []string{}
	}
	if of.asJSON {
		return writeJSON(stdout, res)
	}
	return printSection(stdout, res, u)
}

// sectionError turns a hydraulics error into the command's error: invalid
// input is a usage error (exit 2), an infeasible design a plain error
// (exit 1).
func sectionError(err error) error {
	if errors.Is(err, hydraulics.ErrInvalid) {
		return usageError{err}
	}
	if errors.Is(err, hydraulics.ErrInfeasible) {
		return fmt.Errorf("no feasible canal slope: %w", err)
	}
	return err
}

func regime(f float64) string {
	switch {
	case f < 1:
		return "subcritical"
	case f > 1:
		return "supercritical"
	}
	return "critical"
}

func unitsName(u report.Units) string {
	if u == report.US {
		return "us"
	}
	return "si"
}

// freeboardRuleText names the freeboard rule and its source.
func freeboardRuleText(r hydraulics.FreeboardRule, q float64, u report.Units) string {
	lm := unitLength(u)
	var s string
	switch {
	case r.Fixed > 0:
		return "fixed by --freeboard"
	case r.C > 0:
		s = fmt.Sprintf("USBR F = sqrt(C·y) with C = %.3f %s set by --freeboard-c", r.C/lm, u.LengthUnit())
	default:
		s = fmt.Sprintf("USBR F = sqrt(C·y), C = %.3f %s interpolated in log Q between 1.5 ft at 20 cfs and 2.5 ft at 3000 cfs (Chow 1959 ch. 7 citing USBR)",
			hydraulics.USBRFreeboardCoefficient(q)/lm, u.LengthUnit())
	}
	if r.Min > 0 {
		s += fmt.Sprintf(", at least %.3f %s", r.Min/lm, u.LengthUnit())
	}
	return s
}

func writeJSON(w io.Writer, v any) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(v)
}

// table prints label/value rows aligned in two columns, with optional
// headings between groups of rows.
type table struct{ rows [][2]string }

func (t *table) add(label, format string, a ...any) {
	t.rows = append(t.rows, [2]string{label, fmt.Sprintf(format, a...)})
}

// heading adds a line that starts a group of rows.
func (t *table) heading(title string) { t.rows = append(t.rows, [2]string{title, "\x00"}) }

func (t *table) write(w io.Writer) error {
	width := 0
	for _, r := range t.rows {
		if r[1] != "\x00" {
			width = max(width, utf8.RuneCountInString(r[0]))
		}
	}
	for _, r := range t.rows {
		var err error
		if r[1] == "\x00" {
			_, err = fmt.Fprintln(w, r[0])
		} else {
			_, err = fmt.Fprintf(w, "  %s%s  %s\n", r[0], strings.Repeat(" ", width-utf8.RuneCountInString(r[0])), r[1])
		}
		if err != nil {
			return err
		}
	}
	return nil
}

func writeWarnings(w io.Writer, warnings []string) {
	if len(warnings) == 0 {
		return
	}
	fmt.Fprintln(w, "Warnings:")
	for _, s := range warnings {
		fmt.Fprintf(w, "  - %s\n", s)
	}
}

func printSection(w io.Writer, r sectionResult, u report.Units) error {
	L, Q, V := u.LengthUnit(), flowUnit(u), velocityUnit(u)
	S := L + "/" + L // slope
	fmt.Fprintf(w, "Canal section, uniform flow (%s units)\n", strings.ToUpper(r.Units))
	var t table
	t.add("discharge", "%.4g %s", float64(r.Flow), Q)
	t.add("bottom width", "%.3f %s", float64(r.BottomWidth), L)
	t.add("side slope", "%g H : 1 V", float64(r.SideSlope))
	t.add("Manning n", "%.4g", float64(r.Roughness))
	if r.MaxSlope != nil {
		t.add("permissible velocity", "%.3f %s", float64(*r.MaxVelocity), V)
		t.add("steepest slope (V at limit)", "%.4e %s", float64(*r.MaxSlope), S)
		if r.MinVelocity != nil {
			t.add("non-silting velocity", "%.3f %s", float64(*r.MinVelocity), V)
			t.add("flattest slope (V at limit)", "%.4e %s", float64(*r.MinSlope), S)
		} else {
			t.add("flattest slope", "no lower velocity limit given")
		}
		t.add("design slope (steepest)", "%.4e %s", float64(r.Slope), S)
	} else {
		t.add("bed slope", "%.4e %s", float64(r.Slope), S)
	}
	t.add("normal depth", "%.3f %s", float64(r.NormalDepth), L)
	t.add("critical depth", "%.3f %s", float64(r.CriticalDepth), L)
	t.add("mean velocity", "%.3f %s", float64(r.Velocity), V)
	t.add("Froude number", "%.3f (%s)", float64(r.Froude), r.Regime)
	t.add("flow area", "%.3f %s²", float64(r.Area), L)
	t.add("wetted perimeter", "%.3f %s", float64(r.WettedPerimeter), L)
	t.add("top width", "%.3f %s", float64(r.TopWidth), L)
	t.add("hydraulic radius", "%.3f %s", float64(r.HydraulicRadius), L)
	t.add("hydraulic depth", "%.3f %s", float64(r.HydraulicDepth), L)
	t.add("specific energy", "%.3f %s", float64(r.SpecificEnergy), L)
	t.add("freeboard", "%.3f %s", float64(r.Freeboard), L)
	t.add("bank height above bed", "%.3f %s", float64(r.BankHeight), L)
	if err := t.write(w); err != nil {
		return err
	}
	fmt.Fprintf(w, "Freeboard rule: %s.\n", r.FreeboardRule)
	if len(r.Profile) > 0 {
		fmt.Fprintf(w, "Water-surface profile (%s), standard step upstream of the control at chainage 0:\n", r.ProfileType)
		tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
		fmt.Fprintf(tw, "  chainage (%s)\tdepth (%s)\tvelocity (%s)\tFroude\tfreeboard (%s)\t\n", L, L, V, L)
		for _, p := range r.Profile {
			fmt.Fprintf(tw, "  %.1f\t%.3f\t%.3f\t%.3f\t%.3f\t\n", float64(p.Chainage), float64(p.Depth), float64(p.Velocity), float64(p.Froude), float64(p.Freeboard))
		}
		if err := tw.Flush(); err != nil {
			return err
		}
	}
	writeWarnings(w, r.Warnings)
	return nil
}

// addProfile computes the standard-step profile from a control depth (a
// number in the output length unit, or "critical") over length metres at
// step-metre stations, against a top of bank bank metres above the bed.
func addProfile(res *sectionResult, c hydraulics.Consts, ch hydraulics.Channel, q, yc, bank float64, from string, length, step float64, u report.Units) error {
	lm := unitLength(u)
	start := yc
	if !strings.EqualFold(from, "critical") {
		v, err := strconv.ParseFloat(from, 64)
		if err != nil || !(v > 0) || math.IsInf(v, 0) {
			return usagef("--profile-from must be a positive depth or 'critical', got %q", from)
		}
		start = v * lm
		if start < yc {
			return usagef("--profile-from %g %s is below the critical depth %.3f %s: the profile would be supercritical", v, u.LengthUnit(), yc/lm, u.LengthUnit())
		}
	}
	if length/step > 100000 {
		return usagef("--profile-length / --profile-step gives more than 100000 stations")
	}
	var chainages []float64
	for x := -length; x < -1e-9*length; x += step {
		chainages = append(chainages, x)
	}
	chainages = append(chainages, 0)
	pts, err := hydraulics.WaterSurfaceProfile(c, ch, q, start, chainages, bank)
	if err != nil {
		return sectionError(err)
	}
	yn, _ := hydraulics.NormalDepth(c, ch.Section, q, ch.N, ch.Slope)
	switch {
	case start > yn*(1+1e-9):
		res.ProfileType = "M1 backwater"
	case start < yn*(1-1e-9):
		res.ProfileType = "M2 drawdown"
	default:
		res.ProfileType = "uniform"
	}
	if yn < yc {
		res.ProfileType = "steep-slope profile"
	}
	overtopped := false
	for _, p := range pts {
		res.Profile = append(res.Profile, profileRow{
			Chainage: sig6(p.Chainage / lm), Depth: sig6(p.Depth / lm), Velocity: sig6(p.Velocity / lm),
			Froude: sig6(p.Froude), Freeboard: sig6(p.Freeboard / lm),
		})
		overtopped = overtopped || p.Freeboard < 0
	}
	if overtopped {
		res.Warnings = append(res.Warnings, "the water-surface profile rises above the top of bank: the banks are overtopped")
	}
	return nil
}
