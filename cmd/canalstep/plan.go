package main

import (
	"context"
	"fmt"
	"io"
	"path/filepath"
	"strings"

	flag "github.com/spf13/pflag"

	"canalstep/alignment"
	"canalstep/planner"
	"canalstep/planner/corridor"
	"canalstep/planner/hydraulics"
	"canalstep/report"
	"canalstep/report/outdir"
	"canalstep/report/runner"
	"canalstep/report/textsafe"
	"canalstep/report/units"
	"canalstep/terrain"
)

// planSetup is what plan and compare share: the flags, the design file,
// the unit system, and the per-alignment designs they build.
type planSetup struct {
	args   []string          // the command line after the command's name
	prov   report.Provenance // where the run's numbers come from
	name   string            // the command
	sys    units.System
	fs     *flag.FlagSet
	ground *groundFlags
	design *designFlags
	file   *designFile
	ctl    controls
	out    string
	jobs   int
	wait   bool
	model  string // --ground: auto, level or cross-sections
}

// newPlanSetup registers the flags of plan or compare. The unit system is
// read first (from --units, else the design file's units key), so that
// every number flag reads the right unit.
func newPlanSetup(name string, args []string, stdout io.Writer) (*planSetup, error) {
	s := &planSetup{name: name, args: args}
	sys, designPath, err := preParse(args)
	if err != nil {
		return nil, err
	}
	if designPath != "" {
		if s.file, err = readDesignFile(designPath); err != nil {
			return nil, err
		}
		if !flagGiven(args, "units") {
			if v, ok := s.file.root["units"]; ok {
				if sys, err = units.Parse(fmt.Sprint(v)); err != nil {
					return nil, inputf("design file %s: %v", textsafe.Terminal(designPath), err)
				}
			}
		}
	}
	s.sys = sys
	s.fs = newFlagSet(name, stdout)
	s.ground = newGroundFlags(&s.sys)
	s.ground.register(s.fs)
	s.design = newDesignFlags(&s.sys)
	s.design.register(s.fs)
	s.fs.StringVar(&s.model, "ground", "auto", "earthwork ground: cross-sections (sampled from the DEM across the line), level (centre-line ground level across), or auto: cross-sections when the DEM's cell is at most a third of the section's top width")
	s.fs.String("design", designPath, "TOML file of design values; keys are these flags' names with _ for -, [alignment.\"NAME\"] tables hold one alignment's own values (precedence: flags over the file's top level; an alignment's GeoJSON properties over both; its [alignment.\"NAME\"] table over all)")
	s.fs.StringVar(&s.out, "out", "canalstep-out", "output folder; each alignment gets a sub-folder named after it, replaced as a whole")
	s.fs.String("units", sys.String(), "units of values given and printed: si (m, m³/s) or us (ft, cfs, yd³)")
	s.fs.IntVar(&s.jobs, "jobs", 0, "alignments planned at once; 0: one per CPU")
	s.fs.BoolVar(&s.wait, "wait", false, "wait for another run writing the same --out to finish, instead of refusing")
	return s, nil
}

// parse parses the command line and the design file's top level; it
// reports whether the command should go on (not after --help).
func (s *planSetup) parse(args []string) (bool, error) {
	if ok, err := parseFlags(s.fs, args); !ok {
		return false, err
	}
	if s.file != nil {
		if err := s.file.apply(s.fs, s.file.root, "", false, "units", "design"); err != nil {
			return false, err
		}
	}
	s.design.noteGiven(s.fs)
	var err error
	if s.ctl, err = s.design.controls(); err != nil {
		return false, err
	}
	switch s.model {
	case "auto", "level", "cross-sections":
	default:
		return false, usagef("--ground must be auto, level or cross-sections, got %q", textsafe.Clip(s.model, 80))
	}
	if s.jobs < 0 || s.jobs > 1024 {
		return false, usagef("--jobs must be between 0 and 1024")
	}
	return true, nil
}

// preParse reads --units and --design before the other flags, which need
// the unit system to read their values.
func preParse(args []string) (units.System, string, error) {
	fs := flag.NewFlagSet("pre", flag.ContinueOnError)
	fs.ParseErrorsWhitelist.UnknownFlags = true
	fs.SetOutput(io.Discard)
	u := fs.String("units", "si", "")
	d := fs.String("design", "", "")
	fs.BoolP("help", "h", false, "")
	_ = fs.Parse(args) // errors are reported by the full parse
	sys, err := units.Parse(*u)
	if err != nil {
		return sys, "", usagef("--%v", err)
	}
	return sys, *d, nil
}

// flagGiven reports whether args set --name.
func flagGiven(args []string, name string) bool {
	for _, a := range args {
		if a == "--" {
			return false
		}
		if a == "--"+name || strings.HasPrefix(a, "--"+name+"=") {
			return true
		}
	}
	return false
}

// job is one alignment of a run: its design, and what became of it.
type job struct {
	a      alignment.Alignment
	design planner.Design
	offs   []alignment.Offtake
	cross  bool

	c       *corridor.Corridor
	results []planner.Alternative // one per drop-height set
	err     error                 // the job failed: nothing written for it
}

// designs builds every alignment's design: the flags, its GeoJSON
// properties, its [alignment."NAME"] table and its chainage controls.
func (s *planSetup) designs(sc scheme) ([]*job, error) {
	known := map[string]bool{}
	for _, a := range sc.Alignments {
		known[a.Name] = true
		if a.Overrides.Corridor != "" {
			known[a.Overrides.Corridor] = true
		}
	}
	for _, n := range s.ctl.names() {
		if !known[n] {
			return nil, usagef("a control names alignment %q, which %s does not hold", textsafe.Terminal(n), textsafe.Terminal(s.ground.alignment))
		}
	}
	if s.file != nil {
		for n := range s.file.tables {
			if !known[n] {
				return nil, inputf("design file %s: [alignment.%q] names an alignment the alignment file does not hold", textsafe.Terminal(s.file.path), textsafe.Clip(n, 80))
			}
		}
	}
	var jobs []*job
	for _, a := range sc.Alignments {
		df := s.design.clone()
		o := a.Overrides
		for _, p := range []struct {
			v    *float64
			to   *float64
			flag string
		}{{o.Flow, &df.flow, "flow"}, {o.Roughness, &df.roughness, "roughness"}, {o.BottomWidth, &df.bottomWidth, "bottom-width"},
			{o.StartInvert, &df.startInvert, "start-invert"}, {o.EndInvert, &df.endInvert, "end-invert"},
			{o.CommandMargin, &df.commandMargin, "command-margin"}} {
			if p.v != nil {
				*p.to = *p.v
				df.given[p.flag] = true
			}
		}
		// The corridor's table, then the alignment's own: the more specific
		// wins. Each table's chainage controls hold for this alignment.
		var own []controls
		if s.file != nil {
			for _, key := range []string{a.Overrides.Corridor, a.Name} {
				tbl, ok := s.file.tables[key]
				if !ok || key == "" {
					continue
				}
				where := fmt.Sprintf(" [alignment.%q]", textsafe.Clip(key, 80))
				fs := flag.NewFlagSet(s.name, flag.ContinueOnError)
				fs.SetOutput(io.Discard)
				df.register(fs) // sets df's control lists to nil: they hold the table's own
				if err := s.file.apply(fs, tbl, where, true); err != nil {
					return nil, err
				}
				df.noteGiven(fs)
				c, err := df.controls()
				if err != nil {
					return nil, inputf("design file %s%s: %v", textsafe.Terminal(s.file.path), where, err)
				}
				if len(c.names()) > 0 {
					return nil, inputf("design file %s%s: write the table's chainage controls without NAME@: they hold for %s",
						textsafe.Terminal(s.file.path), where, textsafe.Terminal(key))
				}
				own = append(own, c)
			}
		}
		d, err := df.design(s.name)
		if err != nil {
			return nil, fmt.Errorf("alignment %q: %w", textsafe.Terminal(a.Name), err)
		}
		s.ctl.forAlignment(&d, a.Name, a.Overrides.Corridor)
		for _, c := range own {
			c.forAlignment(&d, a.Name, "")
		}
		offs, err := servedBy(sc, a)
		if err != nil {
			return nil, err
		}
		jobs = append(jobs, &job{a: a, design: d, offs: offs})
	}
	return jobs, nil
}

// sample builds the job's corridor: stations, ground, cross-sections and
// offtakes.
func (s *planSetup) sample(j *job, dem corridor.DEM, g corridor.Ground) error {
	o := s.ground.corridorOptions()
	if j.a.Overrides.CurveRadius != nil {
		o.CurveRadius = *j.a.Overrides.CurveRadius
	}
	o.Offtakes = j.offs
	env, err := planner.SectionEnvelope(j.design)
	if err != nil {
		return err
	}
	switch s.model {
	case "cross-sections":
		j.cross = true
	case "auto":
		j.cross = dem.CellSize <= env.TopWidth/3
	}
	if j.cross {
		o.CrossSections, o.HalfWidth, o.CrossStep = true, env.HalfWidth, crossStep(dem.CellSize)
		o.Holds = env.Holds(j.design)
	}
	c, err := corridor.Build(j.a, dem, g, terrainCRS{}, o)
	if err != nil {
		return err
	}
	j.c = c
	for _, ot := range c.Offtakes {
		j.design.Offtakes = append(j.design.Offtakes, planner.Offtake{Name: ot.Name, Chainage: ot.Chainage, Level: ot.Level, Offset: ot.Distance})
	}
	return nil
}

// plan plans the job once per drop-height set (nil: the design's own).
func (j *job) plan(sets [][]float64) {
	if sets == nil {
		sets = [][]float64{j.design.DropHeights}
	}
	p := planner.Problem{Stations: j.c.Profile.Stations, Design: j.design}
	j.results = planner.Compare(p, sets, 1)
}

// runPlan implements `canalstep plan`.
func runPlan(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	s, err := newPlanSetup("plan", args, stdout)
	if err != nil {
		return err
	}
	s.fs.Usage = func() {
		fmt.Fprintln(stdout, "Usage: canalstep plan --dem DEM --alignment FILE --flow Q --bottom-width B --side-slope Z --roughness N --max-velocity V [flags]")
		fmt.Fprintln(stdout, "\nPlaces drops on the sampled ground at least cost within the velocity limits and writes, per alignment,")
		fmt.Fprintln(stdout, "DIR/<name>/: report.html, stations.csv, drops.csv, stakes.csv, plan.geojson, plan.gpkg, plan.xml,")
		fmt.Fprintln(stdout, "longsection.pdf, crosssections.pdf, profile.png/svg, ground.csv/png, curves.csv (with curves) and summary.json.")
		fmt.Fprintln(stdout, "Numbers are in the --units unit; each range below is the physical range a value must lie in.\n\nFlags:")
		s.fs.PrintDefaults()
		fmt.Fprintf(stdout, "\n%s\n", exitCodeHelp)
	}
	if ok, err := s.parse(args); !ok {
		return err
	}
	return s.run(ctx, stdout, stderr, nil)
}

// run plans every alignment (once, or once per drop-height set of sets)
// and writes its folder, each alignment on its own: a failing one is
// reported and the others go on.
func (s *planSetup) run(ctx context.Context, stdout, stderr io.Writer, sets [][]float64) error {
	sc, err := s.ground.readScheme()
	if err != nil {
		return err
	}
	if len(sc.Ignored) > 0 {
		var q []string
		for _, n := range sc.Ignored {
			q = append(q, fmt.Sprintf("%q", textsafe.Clip(n, 40)))
		}
		fmt.Fprintf(stdout, "ignored GeoJSON properties (not design controls): %s\n", strings.Join(q, ", "))
	}
	jobs, err := s.designs(sc)
	if err != nil {
		return err
	}
	if s.ctl.global() && len(jobs) > 1 {
		fmt.Fprintln(stdout, "note: controls given without NAME@ apply to every alignment")
	}
	dem0, err := s.ground.openDEM()
	if err != nil {
		return err
	}
	info := dem0.Info()
	dem := describeDEM(info)
	if s.prov, err = s.provenance(info); err != nil {
		dem0.Close()
		return err
	}
	dir, err := openOut(ctx, s.out, s.wait, stderr)
	if err != nil {
		dem0.Close()
		return asInput(err) // the --out path given cannot be written
	}
	defer dir.Close()
	err = runner.Each(ctx, len(jobs), s.jobs, dem0, s.ground.openDEM, func(i int, g *terrain.DEM) {
		j := jobs[i]
		defer recoverJob(&j.err)
		if j.err = s.sample(j, dem, g); j.err != nil {
			return
		}
		j.plan(sets)
		j.err = s.write(dir, j, sets != nil)
	})
	var names []string
	fail := &runFailure{total: len(jobs)}
	for _, j := range jobs {
		names = append(names, alignment.SafeName(j.a.Name))
		if j.err != nil {
			text := textsafe.Clip(reasonText(j.err, s.sys), 400)
			fail.add(j.a.Name, text, j.err)
			fmt.Fprintf(stdout, "\n%s: FAILED: %s\n", textsafe.Terminal(j.a.Name), text)
			continue
		}
		if j.c == nil || j.results == nil {
			continue // not reached before an interrupt
		}
		folder := filepath.Join(s.out, j.c.Profile.Folder)
		if sets == nil {
			printPlanSummary(stdout, j, s.sys, folder)
		} else {
			printComparison(stdout, j, s.sys, folder)
		}
	}
	fmt.Fprintf(stdout, "\n%s\n", report.SafetyNotice)
	if err != nil { // interrupted
		fmt.Fprintln(stdout, dir.Report(names, true))
		return err
	}
	if fail.failed > 0 {
		fail.written = dir.Report(names, false)
		return fail
	}
	return nil
}

// write stages and commits one job's folder. A plan that failed (bad input
// or infeasible), or a comparison in which no drop-height set is feasible,
// writes nothing: the alignment counts as failed (exit status 1 or 2) and
// its folder from an earlier run, if any, stays as it was.
func (s *planSetup) write(dir *outdir.Dir, j *job, compare bool) error {
	if !compare && j.results[0].Err != nil {
		return j.results[0].Err
	}
	if compare && !anyFeasible(j.results) {
		return fmt.Errorf("no drop-height set is feasible; the first: %w", j.results[0].Err)
	}
	f := report.Folder{Corridor: j.c, Units: s.sys, Provenance: s.prov}
	best := bestAlternative(j.results)
	f.Result, f.PlanErr = j.results[best].Result, j.results[best].Err
	if compare {
		f.Alternatives = j.results
	}
	return writeFolder(dir, j.c.Profile.Folder, func(st report.Stager) error { return report.WriteFolder(st, f) })
}

// anyFeasible reports whether some alternative was planned.
func anyFeasible(alts []planner.Alternative) bool {
	for _, a := range alts {
		if a.Err == nil && a.Result != nil {
			return true
		}
	}
	return false
}

// printPlanSummary prints the short summary of one plan.
func printPlanSummary(w io.Writer, j *job, u units.System, dir string) {
	a := j.results[0]
	p := j.c.Profile
	name := textsafe.Terminal(p.Name)
	length := p.Stations[len(p.Stations)-1].Chainage - p.Stations[0].Chainage
	ground := "level ground across the line"
	if j.cross {
		ground = "DEM cross-sections"
	}
	fmt.Fprintf(w, "\n%s: %d stations, %s long, earthwork on %s -> %s\n", name, len(p.Stations),
		alignment.FormatChainage(length, u == units.US), ground, textsafe.Terminal(dir))
	r := a.Result // feasible: write refused a failed plan
	t := r.Totals
	vu := u.VolumeUnit()
	fmt.Fprintf(w, "  optimised:     %3d drops, cut %10.0f %s, fill %10.0f %s, total cost %12.0f\n",
		t.DropCount, u.Volume(t.CutVolume), vu, u.Volume(t.FillVolume), vu, t.TotalCost)
	printBaselines(w, r, u)
	if amount, frac, b, ok := r.Saving(); ok {
		fmt.Fprintf(w, "  saving against the best feasible baseline (%s): %.0f (%.1f %%)\n", baselineName(b.Method), amount, 100*frac)
	} else {
		fmt.Fprintln(w, "  no baseline meets every constraint, so no saving is stated")
	}
	fmt.Fprintf(w, "  command: water surface at or above the ground at %.0f %% of stations", 100*t.CommandShare)
	for _, o := range r.Command.Offtakes {
		fmt.Fprintf(w, "; offtake %s at %s: %s above its command level", textsafe.Terminal(o.Name), u.Station(o.Chainage), u.Format(units.Length, o.Margin, 2))
	}
	fmt.Fprintln(w)
	var drowned, swept []string
	for _, d := range r.Drops {
		var isDrowned, isSwept bool
		for _, c := range d.Checks {
			isDrowned = isDrowned || c.JumpState == hydraulics.Drowned
			isSwept = isSwept || c.JumpState == hydraulics.SweptOut
		}
		if isDrowned {
			drowned = append(drowned, u.Station(d.Chainage))
		}
		if isSwept {
			swept = append(swept, u.Station(d.Chainage))
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

func baselineName(method string) string {
	if method == planner.MethodByEye {
		return "by eye"
	}
	return "even spacing"
}

// printBaselines prints both baselines, with what an infeasible one breaks.
func printBaselines(w io.Writer, r *planner.Result, u units.System) {
	vu := u.VolumeUnit()
	for _, b := range r.Baselines() {
		bt := b.Totals
		note := ""
		if !b.Feasible {
			var vs []string
			for _, v := range b.Violations {
				vs = append(vs, report.FormatViolation(v, u))
			}
			note = " (infeasible: " + listOf(vs, 3) + ")"
		}
		fmt.Fprintf(w, "  %-14s %3d drops, cut %10.0f %s, fill %10.0f %s, total cost %12.0f%s\n", baselineName(b.Method)+":",
			bt.DropCount, u.Volume(bt.CutVolume), vu, u.Volume(bt.FillVolume), vu, bt.TotalCost, note)
	}
}

// listOf joins up to max items and says how many more there are.
func listOf(items []string, max int) string {
	if len(items) <= max {
		return strings.Join(items, ", ")
	}
	return fmt.Sprintf("%s and %d more", strings.Join(items[:max], ", "), len(items)-max)
}

// parseAlternatives reads --alternatives: drop-height sets separated by
// semicolons, heights within a set by commas ("0.5;1.0;0.5,1.0,1.5"), in the
// user's length unit; it returns them in metres.
func (s *planSetup) parseAlternatives(v string) ([][]float64, error) {
	if strings.TrimSpace(v) == "" {
		return nil, usagef("--alternatives is empty; give drop-height sets such as \"0.5;1.0;1.5;0.5,1.0,1.5\"")
	}
	var out [][]float64
	for _, set := range strings.Split(v, ";") {
		hs, err := s.design.parseList("alternatives", set, units.Length, "drop_height", "\"0.5;1.0;0.5,1.0\"")
		if err != nil {
			return nil, err
		}
		out = append(out, hs)
	}
	if len(out) > 64 {
		return nil, usagef("--alternatives gives %d sets; compare at most 64 at once", len(out))
	}
	return out, nil
}

// runCompare implements `canalstep compare`: plan every alignment once per
// drop-height set and compare earthwork and cost.
func runCompare(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	s, err := newPlanSetup("compare", args, stdout)
	if err != nil {
		return err
	}
	alts := s.fs.String("alternatives", "0.5;1.0;1.5;0.5,1.0,1.5", "drop-height sets to compare, ';' between sets and ',' within a set")
	s.fs.Usage = func() {
		fmt.Fprintln(stdout, "Usage: canalstep compare --dem DEM --alignment FILE --flow Q --bottom-width B --side-slope Z --roughness N --max-velocity V --alternatives \"0.5;1.0;0.5,1.0\" [flags]")
		fmt.Fprintln(stdout, "\nPlans each alignment once per drop-height set and writes DIR/<name>/alternatives.csv and alternatives.png")
		fmt.Fprintln(stdout, "beside the least-cost alternative's plan (the files of 'canalstep plan').")
		fmt.Fprintln(stdout, "Takes the flags of 'canalstep plan' (--drop-heights is replaced by --alternatives).\n\nFlags:")
		s.fs.PrintDefaults()
		fmt.Fprintf(stdout, "\n%s\n", exitCodeHelp)
	}
	if ok, err := s.parse(args); !ok {
		return err
	}
	sets, err := s.parseAlternatives(*alts)
	if err != nil {
		return err
	}
	return s.run(ctx, stdout, stderr, sets)
}

// printComparison prints the alternatives of one alignment as a table,
// cheapest marked.
func printComparison(w io.Writer, j *job, u units.System, dir string) {
	alts := j.results
	best := -1
	for i, a := range alts {
		if a.Err == nil && a.Result != nil && (best < 0 || a.Result.Totals.TotalCost < alts[best].Result.Totals.TotalCost) {
			best = i
		}
	}
	vu := u.VolumeUnit()
	fmt.Fprintf(w, "\n%s -> %s\n", textsafe.Terminal(j.a.Name), textsafe.Terminal(dir))
	fmt.Fprintf(w, "  %-16s %6s %14s %14s %14s\n", "drop heights ("+u.LengthUnit()+")", "drops", "cut ("+vu+")", "fill ("+vu+")", "total cost")
	for i, a := range alts {
		label := report.AlternativeLabel(a.DropHeights, u)
		if a.Err != nil || a.Result == nil {
			fmt.Fprintf(w, "  %-16s infeasible: %s\n", label, textsafe.Clip(report.ErrorText(a.Err, u), 300))
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
