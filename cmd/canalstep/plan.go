package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"runtime"
	"slices"
	"sort"
	"strconv"
	"strings"
	"sync"

	"github.com/BurntSushi/toml"
	flag "github.com/spf13/pflag"

	"canalstep/alignment"
	"canalstep/planner"
	"canalstep/planner/hydraulics"
	"canalstep/report"
)

// planFlags are the design flags shared by plan and compare, in the units of
// --units (lengths m or ft, discharge m³/s or cfs, velocity m/s or ft/s,
// prices per m³ or per yd³ and per m or per ft of drop height).
type planFlags struct {
	ground                                       groundFlags
	flow, bottomWidth, sideSlope, roughness      float64
	maxVelocity, minVelocity                     float64
	dropHeights, grades                          string
	startInvert, endInvert                       float64
	fixedInverts, minWaterLevels                 []string
	maxCut, maxFill, minReach, step              float64
	volume                                       string
	bankTopWidth, outerSlope, cutSlope           float64
	freeboard, crestWidth, transitionLoss        float64
	checkFlows                                   string
	costCut, costFill, shrinkage                 float64
	costWaste, costBorrow, dropFixed, dropPerLen float64
	design, out, units                           string
	jobs                                         int
}

func (f *planFlags) register(fs *flag.FlagSet) {
	f.ground.register(fs)
	fs.Float64Var(&f.flow, "flow", 0, "design discharge (m³/s, or cfs with --units us) (required)")
	fs.Float64Var(&f.bottomWidth, "bottom-width", 0, "bed width of the canal (required)")
	fs.Float64Var(&f.sideSlope, "side-slope", 0, "inner side slope of the canal, horizontal per vertical (required; 0 = rectangle)")
	fs.Float64Var(&f.roughness, "roughness", 0, "Manning n (e.g. 0.025 for earth canals; Chow 1959 Table 5-6) (required)")
	fs.Float64Var(&f.maxVelocity, "max-velocity", 0, "permissible (non-eroding) mean velocity (m/s or ft/s) (required)")
	fs.Float64Var(&f.minVelocity, "min-velocity", 0, "non-silting mean velocity (m/s or ft/s); 0 for none")
	fs.StringVar(&f.dropHeights, "drop-heights", "0.5,1.0,1.5", "allowed drop heights, comma-separated; one value means a fixed height")
	fs.StringVar(&f.grades, "grades", "", "candidate bed grades (m/m), comma-separated; default: five grades from the steepest the velocity allows")
	fs.Float64Var(&f.startInvert, "start-invert", math.NaN(), "bed level at the first station; default: ground minus normal depth (water surface at ground level)")
	fs.Float64Var(&f.endInvert, "end-invert", math.NaN(), "bed level the canal must tie into at its last station; default: free")
	fs.StringSliceVar(&f.fixedInverts, "fixed-invert", nil, "bed level held at a chainage, as CHAINAGE:LEVEL (e.g. a road culvert); repeatable")
	fs.StringSliceVar(&f.minWaterLevels, "min-water-level", nil, "lowest design water level at a chainage, as CHAINAGE:LEVEL (to command an offtake); repeatable")
	fs.Float64Var(&f.maxCut, "max-cut", planner.DefaultMaxCutDepth, "largest cut depth, ground minus invert")
	fs.Float64Var(&f.maxFill, "max-fill", planner.DefaultMaxFillHeight, "largest fill height, invert minus ground")
	fs.Float64Var(&f.minReach, "min-reach", planner.DefaultMinReach, "shortest canal reach between one drop's outlet transition and the next drop")
	fs.Float64Var(&f.step, "step", 0.01, "elevation step of the optimiser's grid, m (ft with --units us); drop heights must be whole steps; the optimum is global on it")
	fs.StringVar(&f.volume, "volume", "average-end-area", "volumes between stations: average-end-area or prismoidal")
	fs.Float64Var(&f.bankTopWidth, "bank-top-width", planner.DefaultBankTopWidth, "top width of each bank")
	fs.Float64Var(&f.outerSlope, "outer-slope", planner.DefaultOuterSlope, "outer slope of the banks down to the ground (fill), H:V")
	fs.Float64Var(&f.cutSlope, "cut-slope", planner.DefaultCutSlope, "slope of the cut above the top of bank, H:V")
	fs.Float64Var(&f.freeboard, "freeboard", 0, "freeboard above the design water surface; 0: the USBR rule for unlined canals")
	fs.Float64Var(&f.crestWidth, "crest-width", 0, "drop crest and basin width; 0: the canal bed width")
	fs.Float64Var(&f.transitionLoss, "transition-loss", 0, "outlet transition loss coefficient Co for the jump check (0 is the safe side for sweep-out)")
	fs.StringVar(&f.checkFlows, "check-flows", "0.25,0.5,1", "flows, as fractions of the design flow, at which every drop's outlet is checked")
	def := planner.DefaultCosts()
	fs.Float64Var(&f.costCut, "cost-cut", def.Cut, "price of excavation per m³ (per yd³ with --units us)")
	fs.Float64Var(&f.costFill, "cost-fill", def.Fill, "price of compacted fill per m³ (yd³)")
	fs.Float64Var(&f.shrinkage, "shrinkage", def.Shrinkage, "fraction of cut volume lost when compacted into fill, 0 to <1")
	fs.Float64Var(&f.costWaste, "cost-waste", def.Waste, "price of hauling surplus cut to spoil per m³ (yd³)")
	fs.Float64Var(&f.costBorrow, "cost-borrow", def.Borrow, "price of fill brought from borrow per m³ (yd³)")
	fs.Float64Var(&f.dropFixed, "cost-drop", def.DropFixed, "fixed price of one drop structure")
	fs.Float64Var(&f.dropPerLen, "cost-drop-height", def.DropPerMetre, "price of a drop per m (per ft) of its height")
	// Defaults of unit-bearing flags are SI; say so in the help.
	for name, unit := range map[string]string{"max-cut": "m", "max-fill": "m", "min-reach": "m",
		"bank-top-width": "m", "cost-cut": "per m³", "cost-fill": "per m³", "cost-waste": "per m³",
		"cost-borrow": "per m³", "cost-drop-height": "per m"} {
		fs.Lookup(name).DefValue += " " + unit
	}
	fs.StringVar(&f.design, "design", "", "TOML file of design values; its keys are these flags' names with _ for - (flags given on the command line win)")
	fs.StringVar(&f.out, "out", "canalstep-out", "output folder; each alignment gets a sub-folder named after it")
	fs.StringVar(&f.units, "units", "si", "units of values given and printed: si (m, m³/s) or us (ft, cfs)")
	fs.IntVar(&f.jobs, "jobs", 0, "alignments planned at once; 0: one per CPU")
}

// applyDesignFile fills every flag not given on the command line from the
// TOML file named by --design. Keys are flag names with _ for -; an unknown
// key is an error.
func applyDesignFile(fs *flag.FlagSet, path string) error {
	var values map[string]any
	if _, err := toml.DecodeFile(path, &values); err != nil {
		return fmt.Errorf("design file %s: %w", path, err)
	}
	keys := make([]string, 0, len(values))
	for k := range values {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		name := strings.ReplaceAll(k, "_", "-")
		fl := fs.Lookup(name)
		if fl == nil || name == "design" {
			return usagef("design file %s: unknown key %q (keys are the flag names of 'canalstep %s --help' with _ for -)", path, k, fs.Name())
		}
		if fl.Changed {
			continue // the command line wins
		}
		var items []string
		switch v := values[k].(type) {
		case []any:
			for _, e := range v {
				items = append(items, fmt.Sprint(e))
			}
		default:
			items = []string{fmt.Sprint(v)}
		}
		if err := fs.Set(name, strings.Join(items, ",")); err != nil {
			return usagef("design file %s: %s = %v: %v", path, k, values[k], err)
		}
	}
	return nil
}

// parseNumberList reads a comma-separated list of finite positive numbers
// for the flag name; example shows the user a valid list ("numbers such as
// 0.5,1.0" unless it says otherwise).
func parseNumberList(name, s, example string) ([]float64, error) {
	if !strings.Contains(example, " ") {
		example = "numbers such as " + example
	}
	if strings.TrimSpace(s) == "" {
		return nil, usagef("--%s is empty; give %s", name, example)
	}
	var out []float64
	for _, p := range strings.Split(s, ",") {
		p = strings.TrimSpace(p)
		v, err := strconv.ParseFloat(p, 64)
		if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, usagef("--%s: %q is not a number; give %s", name, p, example)
		}
		if v <= 0 {
			return nil, usagef("--%s: %g is not positive", name, v)
		}
		out = append(out, v)
	}
	return out, nil
}

// parseControls reads CHAINAGE:LEVEL pairs, both in the input length unit.
func parseControls(name string, items []string, lengthM float64) ([]planner.Control, error) {
	var out []planner.Control
	for _, it := range items {
		ch, lv, ok := strings.Cut(it, ":")
		c, err1 := strconv.ParseFloat(strings.TrimSpace(ch), 64)
		l, err2 := strconv.ParseFloat(strings.TrimSpace(lv), 64)
		if !ok || err1 != nil || err2 != nil || math.IsNaN(c+l) || math.IsInf(c+l, 0) {
			return nil, usagef("--%s %q: write CHAINAGE:LEVEL, e.g. 1250:352.40", name, it)
		}
		out = append(out, planner.Control{Chainage: c * lengthM, Level: l * lengthM})
	}
	return out, nil
}

// parse reads the command line and the --design file into a setup. It
// reports whether the command should go on (not after --help or an error).
func (f *planFlags) parse(fs *flag.FlagSet, args []string) (planSetup, bool, error) {
	if ok, err := parseFlags(fs, args); !ok {
		return planSetup{}, false, err
	}
	if f.design != "" {
		if err := applyDesignFile(fs, f.design); err != nil {
			return planSetup{}, false, err
		}
	}
	setup, err := f.buildSetup(fs)
	return setup, err == nil, err
}

// planSetup is everything one alignment's plan needs besides its ground and
// its drop heights: the problem's design part, the settings, the units.
type planSetup struct {
	problem  planner.Problem // DropHeights filled per alternative
	settings planner.Settings
	units    report.Units
}

// buildSetup checks the design flags and converts them to SI. The ground
// profile is added per alignment by problemFor.
func (f *planFlags) buildSetup(fs *flag.FlagSet) (planSetup, error) {
	u, err := parseUnits(f.units)
	if err != nil {
		return planSetup{}, err
	}
	if err := requireFlags(fs, "flow", "bottom-width", "side-slope", "roughness", "max-velocity"); err != nil {
		return planSetup{}, err
	}
	for _, c := range []struct {
		name      string
		v         float64
		allowZero bool
	}{
		{"flow", f.flow, false}, {"bottom-width", f.bottomWidth, false}, {"side-slope", f.sideSlope, true},
		{"roughness", f.roughness, false}, {"max-velocity", f.maxVelocity, false}, {"min-velocity", f.minVelocity, true},
		{"max-cut", f.maxCut, false}, {"max-fill", f.maxFill, true}, {"min-reach", f.minReach, true}, {"step", f.step, false},
		{"bank-top-width", f.bankTopWidth, true}, {"outer-slope", f.outerSlope, true}, {"cut-slope", f.cutSlope, true},
		{"freeboard", f.freeboard, true}, {"crest-width", f.crestWidth, true}, {"transition-loss", f.transitionLoss, true},
		{"cost-cut", f.costCut, true}, {"cost-fill", f.costFill, true}, {"shrinkage", f.shrinkage, true},
		{"cost-waste", f.costWaste, true}, {"cost-borrow", f.costBorrow, true}, {"cost-drop", f.dropFixed, true},
		{"cost-drop-height", f.dropPerLen, true},
	} {
		if err := checkNumber(c.name, c.v, c.allowZero); err != nil {
			if strings.HasPrefix(c.name, "cost") && c.v < 0 {
				return planSetup{}, usagef("--%s is a price and cannot be negative, got %g", c.name, c.v)
			}
			return planSetup{}, err
		}
	}
	if f.shrinkage >= 1 {
		return planSetup{}, usagef("--shrinkage is a fraction below 1, got %g", f.shrinkage)
	}
	if f.minVelocity > 0 && f.minVelocity >= f.maxVelocity {
		return planSetup{}, usagef("--min-velocity %g must be below --max-velocity %g", f.minVelocity, f.maxVelocity)
	}
	L, V := unitLength(u), unitVolume(u)
	// si converts a flag value given in the --units unit to SI (factor: SI
	// per input unit). Defaults are SI values already: a flag left at its
	// default keeps it, so --units us does not turn 5 m into 5 ft.
	si := func(name string, v, factor float64) float64 {
		if fs.Changed(name) {
			return v * factor
		}
		return v
	}
	var vol planner.VolumeMethod
	switch f.volume {
	case "average-end-area", "aea":
		vol = planner.AverageEndArea
	case "prismoidal":
		vol = planner.Prismoidal
	default:
		return planSetup{}, usagef("--volume must be average-end-area or prismoidal, got %q", f.volume)
	}
	checks, err := parseNumberList("check-flows", f.checkFlows, "0.25,0.5,1")
	if err != nil {
		return planSetup{}, err
	}
	p := planner.Problem{
		Flow:        f.flow * unitFlow(u),
		Section:     hydraulics.Section{BottomWidth: f.bottomWidth * L, SideSlope: f.sideSlope},
		Roughness:   f.roughness,
		MaxVelocity: f.maxVelocity * L,
		MinVelocity: f.minVelocity * L,
		MaxCutDepth: si("max-cut", f.maxCut, L), MaxFillHeight: si("max-fill", f.maxFill, L),
		MinReach: si("min-reach", f.minReach, L),
		Template: &planner.Template{BedWidth: f.bottomWidth * L, SideSlope: f.sideSlope,
			BankTopWidth: si("bank-top-width", f.bankTopWidth, L), OuterSlope: f.outerSlope, CutSlope: f.cutSlope},
		Costs: &planner.Costs{
			Cut: si("cost-cut", f.costCut, 1/V), Fill: si("cost-fill", f.costFill, 1/V), Shrinkage: f.shrinkage,
			Waste: si("cost-waste", f.costWaste, 1/V), Borrow: si("cost-borrow", f.costBorrow, 1/V),
			DropFixed: f.dropFixed, DropPerMetre: si("cost-drop-height", f.dropPerLen, 1/L),
		},
	}
	if f.maxFill == 0 {
		// Zero would mean the default to the planner; the user asked for no fill.
		p.MaxFillHeight = 1e-9
	}
	if f.minReach == 0 {
		p.MinReach = 1e-9
	}
	if f.grades != "" {
		if p.Grades, err = parseNumberList("grades", f.grades, "0.0004,0.0003"); err != nil {
			return planSetup{}, err
		}
	}
	if !math.IsNaN(f.startInvert) {
		v := f.startInvert * L
		p.StartInvert = &v
	}
	if !math.IsNaN(f.endInvert) {
		v := f.endInvert * L
		p.EndInvert = &v
	}
	if p.FixedInverts, err = parseControls("fixed-invert", f.fixedInverts, L); err != nil {
		return planSetup{}, err
	}
	if p.MinWaterLevels, err = parseControls("min-water-level", f.minWaterLevels, L); err != nil {
		return planSetup{}, err
	}
	s := planner.Settings{
		// The step defaults to 0.01 of the unit system: 1 cm, or 0.01 ft.
		Step: f.step * L, Volume: vol, CrestWidth: f.crestWidth * L,
		TransitionLoss: f.transitionLoss, CheckFlows: checks,
		Freeboard: hydraulics.FreeboardRule{Fixed: f.freeboard * L},
	}
	return planSetup{problem: p, settings: s, units: u}, nil
}

// unitVolume is one input volume unit in m³: m³, or yd³ in US units (prices
// per cubic yard are the US trade's custom).
func unitVolume(u report.Units) float64 {
	if u == report.US {
		return report.CubicYardM3
	}
	return 1
}

// problemFor is the setup's problem on one alignment's ground with the
// given drop heights (m).
func (s planSetup) problemFor(p profile, heights []float64) planner.Problem {
	q := s.problem
	q.Chainage = p.chainages()
	q.Ground = p.ground
	q.DropHeights = heights
	return q
}

// forEach runs fn for every index below n on up to jobs goroutines (0: one
// per CPU) and returns the first error by index, so the outcome does not
// depend on scheduling.
func forEach(n, jobs int, fn func(i int) error) error {
	if jobs <= 0 {
		jobs = runtime.GOMAXPROCS(0)
	}
	errs := make([]error, n)
	var wg sync.WaitGroup
	next := make(chan int)
	for range min(jobs, n) {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range next {
				errs[i] = fn(i)
			}
		}()
	}
	for i := range n {
		next <- i
	}
	close(next)
	wg.Wait()
	return errors.Join(errs...)
}

// planError turns a planner error into the CLI's message: infeasible plans
// name the alignment, the binding constraints and the chainage range; input
// errors are usage errors.
func planError(name string, err error, u report.Units) error {
	var ie *planner.InfeasibleError
	if errors.As(err, &ie) {
		return fmt.Errorf("alignment %q: no feasible profile: %s between %s and %s%s", name,
			strings.Join(ie.Constraints, ", "), report.StationLabel(ie.From, u), report.StationLabel(ie.To, u), hintText(ie.Hint))
	}
	if errors.Is(err, planner.ErrInput) {
		return usageError{fmt.Errorf("alignment %q: %w", name, err)}
	}
	return fmt.Errorf("alignment %q: %w", name, err)
}

func hintText(h string) string {
	if h == "" {
		return ""
	}
	return "; " + h
}

// runPlan implements `canalstep plan`.
func runPlan(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("plan", stdout)
	var f planFlags
	f.register(fs)
	fs.Usage = func() {
		fmt.Fprintln(stdout, "Usage: canalstep plan --dem DEM --alignment FILE --flow Q --bottom-width B --side-slope Z --roughness N --max-velocity V [flags]")
		fmt.Fprintln(stdout, "\nPlaces drops on the sampled ground at least cost within the velocity limits and writes, per alignment,")
		fmt.Fprintln(stdout, "DIR/<name>/stations.csv, drops.csv, summary.json, profile.png and profile.svg.\n\nFlags:")
		fs.PrintDefaults()
	}
	setup, ok, err := f.parse(fs, args)
	if !ok {
		return err
	}
	heights, err := parseNumberList("drop-heights", f.dropHeights, "0.5,1.0,1.5")
	if err != nil {
		return err
	}
	u := setup.units
	heights = scale(heights, unitLength(u))
	set, err := loadProfiles(f.ground, u)
	if err != nil {
		return err
	}
	results := make([]*planner.Result, len(set.profiles))
	err = forEach(len(set.profiles), f.jobs, func(i int) error {
		if err := ctx.Err(); err != nil {
			return err
		}
		p := set.profiles[i]
		r, err := planner.Optimize(setup.problemFor(p, heights), &setup.settings)
		if err != nil {
			return planError(p.name, err, u)
		}
		results[i] = r
		return nil
	})
	if err != nil {
		return err
	}
	for i, p := range set.profiles {
		if err := writePlan(filepath.Join(f.out, p.folder), p, results[i], u); err != nil {
			return err
		}
		printPlanSummary(stdout, p, results[i], u, filepath.Join(f.out, p.folder))
	}
	fmt.Fprintf(stdout, "\n%s\n", report.SafetyNotice)
	return nil
}

func scale(vs []float64, k float64) []float64 {
	out := make([]float64, len(vs))
	for i, v := range vs {
		out[i] = v * k
	}
	return out
}

// writePlan writes one alignment's plan files through a staging folder.
func writePlan(dir string, p profile, r *planner.Result, u report.Units) error {
	st, err := report.NewStaging(dir)
	if err != nil {
		return err
	}
	defer st.Discard()
	files := []struct {
		name  string
		write func(io.Writer) error
	}{
		{"stations.csv", func(w io.Writer) error { return report.WriteStationsCSV(w, p.stations, &r.Plan, u) }},
		{"drops.csv", func(w io.Writer) error { return report.WriteDropsCSV(w, p.stations, r, u) }},
		{"summary.json", func(w io.Writer) error { return report.WriteSummaryJSON(w, report.NewSummary(p.name, r)) }},
	}
	for _, fl := range files {
		if err := report.WriteFileAtomic(st.Path(fl.name), fl.write); err != nil {
			return err
		}
	}
	ls := report.NewLongSection(p.name, r, u)
	for _, name := range []string{"profile.png", "profile.svg"} {
		if err := report.WriteLongSection(st.Path(name), ls); err != nil {
			return fmt.Errorf("alignment %q: %w", p.name, err)
		}
	}
	return st.Commit()
}

// printPlanSummary prints the short summary of one plan.
func printPlanSummary(w io.Writer, p profile, r *planner.Result, u report.Units, dir string) {
	t := r.Totals
	vu := u.VolumeUnit()
	fmt.Fprintf(w, "\n%s: %d stations, %s long -> %s\n", p.name, len(p.stations),
		alignment.FormatChainage(p.stations[len(p.stations)-1].Chainage-p.stations[0].Chainage, u == report.US), dir)
	fmt.Fprintf(w, "  optimised:    %3d drops, cut %10.0f %s, fill %10.0f %s, total cost %12.0f\n",
		t.DropCount, u.Volume(t.CutVolume), vu, u.Volume(t.FillVolume), vu, t.TotalCost)
	if b := r.Baseline; b != nil {
		bt := b.Totals
		fmt.Fprintf(w, "  even spacing: %3d drops, cut %10.0f %s, fill %10.0f %s, total cost %12.0f%s\n",
			bt.DropCount, u.Volume(bt.CutVolume), vu, u.Volume(bt.FillVolume), vu, bt.TotalCost, feasibleNote(b, u))
		if bt.TotalCost > 0 {
			fmt.Fprintf(w, "  saving against even spacing: %.0f (%.1f %%)\n", bt.TotalCost-t.TotalCost, 100*(bt.TotalCost-t.TotalCost)/bt.TotalCost)
		}
	}
	var drowned, swept []string
	for _, d := range r.Drops {
		var isDrowned, isSwept bool
		for _, c := range d.Checks {
			isDrowned = isDrowned || c.JumpState == hydraulics.Drowned
			isSwept = isSwept || c.JumpState == hydraulics.SweptOut
		}
		if isDrowned {
			drowned = append(drowned, report.StationLabel(d.Chainage, u))
		}
		if isSwept {
			swept = append(swept, report.StationLabel(d.Chainage, u))
		}
	}
	if len(swept) > 0 {
		fmt.Fprintf(w, "  JUMP SWEPT OUT at some checked flow (redesign the basin): %s\n", listOf(swept, 12))
	}
	if len(drowned) > 0 {
		fmt.Fprintf(w, "  drowned jump at some checked flow (drowning hazard: fence, sign, no public access): %s\n", listOf(drowned, 12))
	}
	fmt.Fprintf(w, "  velocity %.2f to %.2f %s, max cut %.2f %s, max fill %.2f %s, %d warnings (see summary.json)\n",
		u.Velocity(t.MinVelocity), u.Velocity(t.MaxVelocity), u.VelocityUnit(),
		u.Length(t.MaxCutDepth), u.LengthUnit(), u.Length(t.MaxFillHeight), u.LengthUnit(), len(r.Warnings))
}

// listOf joins up to max items and says how many more there are.
func listOf(items []string, max int) string {
	if len(items) <= max {
		return strings.Join(items, ", ")
	}
	return fmt.Sprintf("%s and %d more", strings.Join(items[:max], ", "), len(items)-max)
}

func feasibleNote(b *planner.Baseline, u report.Units) string {
	if b.Feasible {
		return ""
	}
	if u == report.SI {
		return " (breaks: " + strings.Join(b.Violations, "; ") + ")"
	}
	// The planner words its violations in SI; in US units name only the
	// constraints here and leave the SI detail to summary.json.
	var kinds []string
	for _, v := range b.Violations {
		k := v
		if i := strings.IndexAny(v, "0123456789-"); i > 0 {
			k = strings.TrimSpace(v[:i])
		}
		if !slices.Contains(kinds, k) {
			kinds = append(kinds, k)
		}
	}
	return " (breaks: " + strings.Join(kinds, "; ") + "; details in summary.json)"
}

// parseAlternatives reads --alternatives: drop-height sets separated by
// semicolons, heights within a set by commas ("0.5;1.0;0.5,1.0,1.5").
func parseAlternatives(s string) ([][]float64, error) {
	if strings.TrimSpace(s) == "" {
		return nil, usagef("--alternatives is empty; give drop-height sets such as \"0.5;1.0;1.5;0.5,1.0,1.5\"")
	}
	var out [][]float64
	for _, set := range strings.Split(s, ";") {
		hs, err := parseNumberList("alternatives", set, "drop-height sets such as \"0.5;1.0;0.5,1.0\"")
		if err != nil {
			return nil, err
		}
		out = append(out, hs)
	}
	return out, nil
}

// runCompare implements `canalstep compare`: plan every alignment once per
// drop-height set and compare earthwork and cost.
func runCompare(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("compare", stdout)
	var f planFlags
	f.register(fs)
	alts := fs.String("alternatives", "0.5;1.0;1.5;0.5,1.0,1.5", "drop-height sets to compare, ';' between sets and ',' within a set")
	fs.Usage = func() {
		fmt.Fprintln(stdout, "Usage: canalstep compare --dem DEM --alignment FILE --flow Q --bottom-width B --side-slope Z --roughness N --max-velocity V --alternatives \"0.5;1.0;0.5,1.0\" [flags]")
		fmt.Fprintln(stdout, "\nPlans each alignment once per drop-height set and writes DIR/<name>/alternatives.csv and alternatives.png.")
		fmt.Fprintln(stdout, "Takes the flags of 'canalstep plan' (--drop-heights is replaced by --alternatives).\n\nFlags:")
		fs.PrintDefaults()
	}
	setup, ok, err := f.parse(fs, args)
	if !ok {
		return err
	}
	u := setup.units
	sets, err := parseAlternatives(*alts)
	if err != nil {
		return err
	}
	for i := range sets {
		sets[i] = scale(sets[i], unitLength(u))
	}
	set, err := loadProfiles(f.ground, u)
	if err != nil {
		return err
	}
	// Every alignment × alternative is an independent job.
	nA := len(sets)
	results := make([][]planner.Alternative, len(set.profiles))
	for i := range results {
		results[i] = make([]planner.Alternative, nA)
	}
	err = forEach(len(set.profiles)*nA, f.jobs, func(k int) error {
		if err := ctx.Err(); err != nil {
			return err
		}
		i, j := k/nA, k%nA
		p := set.profiles[i]
		r, err := planner.Optimize(setup.problemFor(p, sets[j]), &setup.settings)
		if err != nil && !errors.Is(err, planner.ErrInfeasible) {
			return planError(p.name, err, u)
		}
		results[i][j] = planner.Alternative{DropHeights: sets[j], Result: r, Err: err}
		return nil
	})
	if err != nil {
		return err
	}
	for i, p := range set.profiles {
		dir := filepath.Join(f.out, p.folder)
		if err := writeComparison(dir, p, results[i], u); err != nil {
			return err
		}
		printComparison(stdout, p, results[i], u, dir)
	}
	fmt.Fprintf(stdout, "\n%s\n", report.SafetyNotice)
	return nil
}

// writeComparison writes alternatives.csv and alternatives.png of one
// alignment through a staging folder.
func writeComparison(dir string, p profile, alts []planner.Alternative, u report.Units) error {
	st, err := report.NewStaging(dir)
	if err != nil {
		return err
	}
	defer st.Discard()
	if err := report.WriteFileAtomic(st.Path("alternatives.csv"), func(w io.Writer) error {
		return report.WriteAlternativesCSV(w, alts, u)
	}); err != nil {
		return err
	}
	chart := report.AlternativesChart{Name: p.name, Units: u}
	for _, a := range alts {
		if a.Err != nil || a.Result == nil {
			continue
		}
		t := a.Result.Totals
		chart.Alternatives = append(chart.Alternatives, report.Alternative{
			Label: report.AlternativeLabel(a.DropHeights, u), CutVolume: t.CutVolume, FillVolume: t.FillVolume,
			EarthworkCost: t.EarthworkCost, DropCost: t.DropCost, TotalCost: t.TotalCost,
		})
	}
	if len(chart.Alternatives) > 0 {
		if err := report.WriteAlternativesChart(st.Path("alternatives.png"), chart); err != nil {
			return fmt.Errorf("alignment %q: %w", p.name, err)
		}
	}
	return st.Commit()
}

// printComparison prints the alternatives of one alignment as a table,
// cheapest marked.
func printComparison(w io.Writer, p profile, alts []planner.Alternative, u report.Units, dir string) {
	best := -1
	for i, a := range alts {
		if a.Err == nil && a.Result != nil && (best < 0 || a.Result.Totals.TotalCost < alts[best].Result.Totals.TotalCost) {
			best = i
		}
	}
	vu := u.VolumeUnit()
	fmt.Fprintf(w, "\n%s -> %s\n", p.name, dir)
	fmt.Fprintf(w, "  %-16s %6s %14s %14s %14s\n", "drop heights ("+u.LengthUnit()+")", "drops", "cut ("+vu+")", "fill ("+vu+")", "total cost")
	for i, a := range alts {
		label := report.AlternativeLabel(a.DropHeights, u)
		if a.Err != nil || a.Result == nil {
			fmt.Fprintf(w, "  %-16s infeasible: %v\n", label, a.Err)
			continue
		}
		t := a.Result.Totals
		mark := ""
		if i == best {
			mark = "  <- least cost"
		}
		fmt.Fprintf(w, "  %-16s %6d %14.0f %14.0f %14.0f%s\n", label, t.DropCount, u.Volume(t.CutVolume), u.Volume(t.FillVolume), t.TotalCost, mark)
	}
}
