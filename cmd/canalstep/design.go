package main

import (
	"math"
	"sort"
	"strconv"
	"strings"

	flag "github.com/spf13/pflag"

	"canalstep/planner"
	"canalstep/planner/earthwork"
	"canalstep/planner/hydraulics"
	"canalstep/report/textsafe"
	"canalstep/report/units"
)

// designFlags are the design flags of plan, compare and batch. Number
// flags are units.Values: they read the --units unit and hold SI, so a flag
// left at its default keeps its SI value (5 m of cut stays 5 m with
// --units us). Lists are kept as typed and converted in design().
type designFlags struct {
	sys *units.System

	flow, bottomWidth, sideSlope, roughness float64
	maxVelocity, minVelocity                float64
	dropHeights, grades, checkFlows         string
	gradeCount                              int
	startInvert, endInvert, commandMargin   float64 // NaN: not given
	fixedInverts, minWaterLevels, command   []string
	maxCut, maxFill, minReach, step         float64
	volume                                  string
	bankTopWidth, outerSlope, cutSlope      float64
	freeboard, crestWidth, transitionLength float64 // crest width and transition NaN: automatic
	transitionLoss, byEyeRise               float64
	costs                                   earthwork.Costs
	maxMemory                               string

	// given names the flags set on the command line, in the design file or
	// by an alignment's properties, for the check of required flags.
	given map[string]bool
}

// clone returns a copy whose lists and given set are its own.
func (f *designFlags) clone() *designFlags {
	c := *f
	c.fixedInverts = append([]string(nil), f.fixedInverts...)
	c.minWaterLevels = append([]string(nil), f.minWaterLevels...)
	c.command = append([]string(nil), f.command...)
	c.given = map[string]bool{}
	for k, v := range f.given {
		c.given[k] = v
	}
	return &c
}

// noteGiven records the flags of fs that were set.
func (f *designFlags) noteGiven(fs *flag.FlagSet) {
	if f.given == nil {
		f.given = map[string]bool{}
	}
	fs.Visit(func(fl *flag.Flag) { f.given[fl.Name] = true })
}

// newDesignFlags returns the flags at DefaultDesign's values.
func newDesignFlags(sys *units.System) *designFlags {
	d := planner.DefaultDesign()
	return &designFlags{sys: sys,
		dropHeights: "0.5,1.0,1.5", checkFlows: "0.25,0.5,1", gradeCount: d.GradeCount,
		startInvert: math.NaN(), endInvert: math.NaN(), commandMargin: math.NaN(),
		maxCut: d.MaxCutDepth, maxFill: d.MaxFillHeight, minReach: d.MinReach, step: d.Step,
		volume: "average-end-area", bankTopWidth: d.BankTopWidth, outerSlope: d.OuterSlope, cutSlope: d.CutSlope,
		crestWidth: math.NaN(), transitionLength: math.NaN(), byEyeRise: d.ByEyeRise, costs: d.Costs,
		maxMemory: "2GB"}
}

// value registers a units.Value flag for *p, ranged by planner.Ranges[key]
// (key "" for none); the help text ends with the accepted range.
func (f *designFlags) value(fs *flag.FlagSet, p *float64, q units.Quantity, name, key, usage string) {
	v := units.NewValue(p, q, f.sys)
	if r, ok := planner.Ranges[key]; ok {
		v.Within(r.Min, r.Max, r.MinExclusive)
		usage += "; " + v.RangeText()
	}
	fs.Var(v, name, usage)
}

func (f *designFlags) register(fs *flag.FlagSet) {
	L, V, Q, R := units.Length, units.Velocity, units.Flow, units.Ratio
	f.value(fs, &f.flow, Q, "flow", "flow", "design discharge (m³/s, or cfs with --units us) (required)")
	f.value(fs, &f.bottomWidth, L, "bottom-width", "bottom_width", "bed width of the canal (required)")
	f.value(fs, &f.sideSlope, R, "side-slope", "side_slope", "inner side slope of the canal, horizontal per vertical (required; 0 = rectangle)")
	f.value(fs, &f.roughness, R, "roughness", "roughness", "Manning n (e.g. 0.025 for earth canals; Chow 1959 Table 5-6) (required)")
	f.value(fs, &f.maxVelocity, V, "max-velocity", "max_velocity", "permissible (non-eroding) mean velocity (required)")
	f.value(fs, &f.minVelocity, V, "min-velocity", "min_velocity", "non-silting mean velocity; 0 for none")
	fs.StringVar(&f.dropHeights, "drop-heights", f.dropHeights, "allowed drop heights, comma-separated; one value means a fixed height")
	fs.StringVar(&f.grades, "grades", f.grades, "candidate bed grades (m/m), comma-separated; default: --grade-count grades from the steepest the velocity allows")
	fs.IntVar(&f.gradeCount, "grade-count", f.gradeCount, "number of default candidate grades")
	f.value(fs, &f.startInvert, L, "start-invert", "level", "bed level at the first station; default: ground minus normal depth, plus the command margin there (water surface at ground level, or the margin above it)")
	f.value(fs, &f.endInvert, L, "end-invert", "level", "bed level the canal must tie into at its last station; default: free")
	fs.StringArrayVar(&f.fixedInverts, "fixed-invert", nil, "bed level held at a chainage, as [NAME@]CHAINAGE:LEVEL (e.g. a road culvert); without NAME@ it applies to every alignment; repeatable")
	fs.StringArrayVar(&f.minWaterLevels, "min-water-level", nil, "lowest design water level at a chainage, as [NAME@]CHAINAGE:LEVEL (to command an offtake); repeatable")
	f.value(fs, &f.commandMargin, L, "command-margin", "margin", "keep the design water surface at least this far above the centre-line ground from start to end (default: off)")
	fs.StringArrayVar(&f.command, "command", nil, "keep the water surface MARGIN above the ground over a chainage range, as [NAME@]FROM:TO:MARGIN; repeatable")
	f.value(fs, &f.maxCut, L, "max-cut", "max_cut", "largest cut depth, ground minus invert")
	f.value(fs, &f.maxFill, L, "max-fill", "max_fill", "largest fill height, invert minus ground")
	f.value(fs, &f.minReach, L, "min-reach", "min_reach", "shortest canal reach between one drop's outlet transition and the next drop")
	f.value(fs, &f.step, L, "step", "step", "elevation step of the optimiser's grid; drop heights must be whole steps; the optimum is global on it")
	fs.StringVar(&f.volume, "volume", f.volume, "volumes between stations: average-end-area or prismoidal")
	f.value(fs, &f.bankTopWidth, L, "bank-top-width", "bank_top_width", "top width of each bank")
	f.value(fs, &f.outerSlope, R, "outer-slope", "outer_slope", "outer slope of the banks down to the ground (fill), H:V")
	f.value(fs, &f.cutSlope, R, "cut-slope", "cut_slope", "slope of the cut above the top of bank, H:V")
	f.value(fs, &f.freeboard, L, "freeboard", "freeboard", "freeboard above the design water surface; 0: the USBR rule for unlined canals")
	f.value(fs, &f.crestWidth, L, "crest-width", "crest_width", "drop crest and basin width (default: the canal bed width)")
	f.value(fs, &f.transitionLength, L, "transition-length", "transition_length", "outlet transition length (default: 2·(top width − crest width), at least 1 m)")
	f.value(fs, &f.transitionLoss, R, "transition-loss", "transition_loss", "outlet transition loss coefficient Co for the jump check (0 is the safe side for sweep-out)")
	fs.StringVar(&f.checkFlows, "check-flows", f.checkFlows, "flows, as fractions of the design flow, at which every drop's outlet is checked")
	f.value(fs, &f.byEyeRise, L, "byeye-rise", "byeye_rise", "by-eye baseline: drop wherever the water surface would stand more than this above the ground (common practice, no source)")
	P, PL := units.PricePerVolume, units.PricePerLength
	f.value(fs, &f.costs.Cut, P, "cost-cut", "price", "price of excavation per m³ (per yd³ with --units us)")
	f.value(fs, &f.costs.Fill, P, "cost-fill", "price", "price of compacted fill per m³ (yd³)")
	f.value(fs, &f.costs.Shrinkage, R, "shrinkage", "shrinkage", "fraction of cut volume lost when compacted into fill")
	f.value(fs, &f.costs.Waste, P, "cost-waste", "price", "price of hauling surplus cut to spoil per m³ (yd³)")
	f.value(fs, &f.costs.Borrow, P, "cost-borrow", "price", "price of fill brought from borrow per m³ (yd³)")
	f.value(fs, &f.costs.DropFixed, R, "cost-drop", "price", "fixed price of one drop structure")
	f.value(fs, &f.costs.DropPerMetre, PL, "cost-drop-height", "price", "price of a drop per m (per ft) of its height")
	fs.StringVar(&f.maxMemory, "max-memory", f.maxMemory, "memory the optimiser may use per alignment, e.g. 512MB or 2GB; larger problems are refused before allocating")
}

// parseList reads a comma-separated list of numbers of quantity q in the
// user's units, each within planner.Ranges[key], and returns them in SI.
func (f *designFlags) parseList(name, s string, q units.Quantity, key, example string) ([]float64, error) {
	if strings.TrimSpace(s) == "" {
		return nil, usagef("--%s is empty; give numbers such as %s", name, example)
	}
	r := planner.Ranges[key]
	var out []float64
	for _, p := range strings.Split(s, ",") {
		p = strings.TrimSpace(p)
		v, err := strconv.ParseFloat(p, 64)
		if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, usagef("--%s: %q is not a number; give numbers such as %s", name, textsafe.Clip(p, 80), example)
		}
		si := f.sys.ToSI(q, v)
		if !r.Contains(si) {
			return nil, usagef("--%s: %g is outside %s", name, v, rangeIn(r, q, *f.sys))
		}
		out = append(out, si)
	}
	return out, nil
}

// rangeIn prints a planner range in the user's units.
func rangeIn(r planner.Range, q units.Quantity, sys units.System) string {
	open := "["
	if r.MinExclusive {
		open = "("
	}
	g := func(x float64) string { return strconv.FormatFloat(sys.FromSI(q, x), 'g', 6, 64) }
	s := open + g(r.Min) + ", " + g(r.Max) + "]"
	if sym := sys.Symbol(q); sym != "" {
		s += " " + sym
	}
	return s
}

// scoped is a chainage control given on the command line, for one
// alignment (Name) or for all (Name "").
type scoped struct {
	name  string
	value []float64 // SI: chainage, level or from, to, margin
}

// parseScoped reads [NAME@]A:B[:C] items; each part is a length in the
// user's units.
func (f *designFlags) parseScoped(flagName string, items []string, parts int, example string) ([]scoped, error) {
	var out []scoped
	for _, it := range items {
		name, rest := "", it
		if at := strings.LastIndex(it, "@"); at >= 0 {
			name, rest = strings.TrimSpace(it[:at]), it[at+1:]
			if name == "" {
				return nil, usagef("--%s %q: the alignment name before @ is empty", flagName, textsafe.Clip(it, 80))
			}
		}
		fields := strings.Split(rest, ":")
		if len(fields) != parts {
			return nil, usagef("--%s %q: write %s", flagName, textsafe.Clip(it, 80), example)
		}
		vals := make([]float64, parts)
		for k, s := range fields {
			v, err := strconv.ParseFloat(strings.TrimSpace(s), 64)
			if err != nil || math.IsNaN(v) || math.IsInf(v, 0) || math.Abs(v) > 1e9 {
				return nil, usagef("--%s %q: write %s", flagName, textsafe.Clip(it, 80), example)
			}
			vals[k] = f.sys.ToSI(units.Length, v)
		}
		out = append(out, scoped{name: name, value: vals})
	}
	return out, nil
}

// controls are the command line's chainage controls, each for one
// alignment or for all.
type controls struct {
	fixed, minWL, command []scoped
}

func (f *designFlags) controls() (controls, error) {
	var c controls
	var err error
	if c.fixed, err = f.parseScoped("fixed-invert", f.fixedInverts, 2, "[NAME@]CHAINAGE:LEVEL, e.g. 1250:352.40"); err != nil {
		return c, err
	}
	if c.minWL, err = f.parseScoped("min-water-level", f.minWaterLevels, 2, "[NAME@]CHAINAGE:LEVEL, e.g. 2000:9.80"); err != nil {
		return c, err
	}
	if c.command, err = f.parseScoped("command", f.command, 3, "[NAME@]FROM:TO:MARGIN, e.g. 0:1500:0.15"); err != nil {
		return c, err
	}
	return c, nil
}

// names returns the alignment names the controls are scoped to.
func (c controls) names() []string {
	var out []string
	for _, set := range [][]scoped{c.fixed, c.minWL, c.command} {
		for _, s := range set {
			if s.name != "" {
				out = append(out, s.name)
			}
		}
	}
	sort.Strings(out)
	return out
}

// global reports whether some control applies to every alignment.
func (c controls) global() bool {
	for _, set := range [][]scoped{c.fixed, c.minWL, c.command} {
		for _, s := range set {
			if s.name == "" {
				return true
			}
		}
	}
	return false
}

// forAlignment adds to d the controls that apply to the alignment called
// name, of corridor corridor ("" for none): those for every alignment and
// those scoped to either name.
func (c controls) forAlignment(d *planner.Design, name, corridor string) {
	applies := func(s scoped) bool { return s.name == "" || s.name == name || (corridor != "" && s.name == corridor) }
	for _, s := range c.fixed {
		if applies(s) {
			d.FixedInverts = append(d.FixedInverts, planner.Control{Chainage: s.value[0], Level: s.value[1]})
		}
	}
	for _, s := range c.minWL {
		if applies(s) {
			d.MinWaterLevels = append(d.MinWaterLevels, planner.Control{Chainage: s.value[0], Level: s.value[1]})
		}
	}
	for _, s := range c.command {
		if applies(s) {
			d.Command = append(d.Command, planner.CommandRange{From: s.value[0], To: s.value[1], Margin: s.value[2]})
		}
	}
}

// parseBytes reads a memory size: 512MB, 2GB, 1.5GiB, or a number of bytes.
func parseBytes(name, s string) (int64, error) {
	t := strings.ToUpper(strings.TrimSpace(s))
	mult := 1.0
	for _, u := range []struct {
		suffix string
		m      float64
	}{{"GIB", 1 << 30}, {"MIB", 1 << 20}, {"KIB", 1 << 10}, {"GB", 1e9}, {"MB", 1e6}, {"KB", 1e3}, {"B", 1}} {
		if strings.HasSuffix(t, u.suffix) {
			t, mult = strings.TrimSpace(strings.TrimSuffix(t, u.suffix)), u.m
			break
		}
	}
	v, err := strconv.ParseFloat(t, 64)
	if err != nil || !(v*mult >= 1e6) || v*mult > 1e12 {
		return 0, usagef("--%s %q: give a size from 1MB to 1TB, e.g. 2GB", name, textsafe.Clip(s, 80))
	}
	return int64(v * mult), nil
}

// design builds the planner design from the flags (without the chainage
// controls, which are per alignment). cmd names the command for messages.
func (f *designFlags) design(cmd string) (planner.Design, error) {
	for _, n := range []string{"flow", "bottom-width", "side-slope", "roughness", "max-velocity"} {
		if !f.given[n] {
			return planner.Design{}, usagef("%s: missing --%s (give it as a flag, in the design file, or as the alignment's GeoJSON property; see 'canalstep %s --help')", cmd, n, cmd)
		}
	}
	d := planner.DefaultDesign()
	d.Flow, d.Roughness = f.flow, f.roughness
	d.Section = hydraulics.Section{BottomWidth: f.bottomWidth, SideSlope: f.sideSlope}
	d.MaxVelocity, d.MinVelocity = f.maxVelocity, f.minVelocity
	if d.MinVelocity > 0 && d.MinVelocity >= d.MaxVelocity {
		return d, usagef("--min-velocity %s must be below --max-velocity %s", f.sys.Format(units.Velocity, d.MinVelocity, 3), f.sys.Format(units.Velocity, d.MaxVelocity, 3))
	}
	var err error
	// A list left at its default keeps its SI values, as every default
	// does: 0.5, 1.0 and 1.5 m, not ft, with --units us.
	heightSys := f.sys
	if !f.given["drop-heights"] {
		si := units.SI
		heightSys = &si
	}
	if d.DropHeights, err = (&designFlags{sys: heightSys}).parseList("drop-heights", f.dropHeights, units.Length, "drop_height", "0.5,1.0,1.5"); err != nil {
		return d, err
	}
	if f.grades != "" {
		if d.Grades, err = f.parseList("grades", f.grades, units.Ratio, "grade", "0.0004,0.0003"); err != nil {
			return d, err
		}
	}
	if r := planner.Ranges["grade_count"]; !r.Contains(float64(f.gradeCount)) {
		return d, usagef("--grade-count %d is outside %s", f.gradeCount, r)
	}
	d.GradeCount = f.gradeCount
	if d.CheckFlows, err = f.parseList("check-flows", f.checkFlows, units.Ratio, "check_flow", "0.25,0.5,1"); err != nil {
		return d, err
	}
	if !math.IsNaN(f.startInvert) {
		d.StartInvert = ptr(f.startInvert)
	}
	if !math.IsNaN(f.endInvert) {
		d.EndInvert = ptr(f.endInvert)
	}
	if !math.IsNaN(f.commandMargin) {
		d.Command = []planner.CommandRange{{From: math.Inf(-1), To: math.Inf(1), Margin: f.commandMargin}}
	}
	d.MaxCutDepth, d.MaxFillHeight, d.MinReach, d.Step = f.maxCut, f.maxFill, f.minReach, f.step
	if !f.given["step"] && *f.sys == units.US && f.given["drop-heights"] {
		// Drop heights given in feet are whole steps of 0.01 ft, not of
		// 1 cm: the grid follows the unit the heights were given in.
		d.Step = units.US.ToSI(units.Length, 0.01)
	}
	switch f.volume {
	case "average-end-area", "aea":
		d.Volume = earthwork.AverageEndArea
	case "prismoidal":
		d.Volume = earthwork.Prismoidal
	default:
		return d, usagef("--volume must be average-end-area or prismoidal, got %q", textsafe.Clip(f.volume, 80))
	}
	d.BankTopWidth, d.OuterSlope, d.CutSlope = f.bankTopWidth, f.outerSlope, f.cutSlope
	d.Freeboard = hydraulics.FreeboardRule{Fixed: f.freeboard}
	if !math.IsNaN(f.crestWidth) {
		d.CrestWidth = ptr(f.crestWidth)
	}
	if !math.IsNaN(f.transitionLength) {
		d.TransitionLength = ptr(f.transitionLength)
	}
	d.TransitionLoss, d.ByEyeRise, d.Costs = f.transitionLoss, f.byEyeRise, f.costs
	if d.MaxMemory, err = parseBytes("max-memory", f.maxMemory); err != nil {
		return d, err
	}
	if err := d.Validate(); err != nil {
		return d, usageError{err}
	}
	return d, nil
}

func ptr(x float64) *float64 { return &x }
