package html

import (
	"fmt"
	"html/template"
	"math"
	"strconv"
	"strings"

	"canalstep/planner"
	"canalstep/planner/hydraulics"
	"canalstep/report/units"
)

// view is what the template shows: every text already worded, in the
// report's units, with user text made visible (html/template escapes it).
type view struct {
	Title, Name, Status string
	Caution             caution
	Key                 []kv
	Stamp               string

	Provenance []kv
	Inputs     table
	CRS        []string

	Planned  bool // the optimiser ran: criteria and baselines exist
	Optimal  bool // there is a plan
	Errors   []string
	Criteria []sheet
	Results  []table
	Totals   []kv

	Baselines table
	Methods   []kv
	Broken    []broken
	Saving    string

	Command  []kv
	Offtakes *table
	Reaches  table

	Drops  []dropView
	Shared []shared

	Long  longView
	Mass  figure
	Cross crossView

	Alternatives *table
	Warnings     []string
}

type kv struct{ Key, Value string }

type caution struct {
	Head string
	Body []string
}

// sheet is a titled list of key-value rows.
type sheet struct {
	Title string
	Rows  []kv
}

// table is a generic table: Num marks right-aligned (numeric) columns.
type table struct {
	Caption string
	Head    []string
	Num     []bool
	Rows    []row
}

type row struct {
	Class string
	Cells []string
}

func (t *table) add(class string, cells ...string) { t.Rows = append(t.Rows, row{class, cells}) }

// broken lists the constraints a baseline breaks.
type broken struct {
	Method string
	Items  []string
}

// figure is an inline SVG with its caption.
type figure struct {
	SVG     template.HTML
	Caption string
	Notes   []string
}

// sizeHint guesses the size of the page, bytes, for one allocation.
func (v *view) sizeHint() int {
	n := 64 << 10
	for _, s := range v.Long.Sheets {
		n += len(s.SVG)
	}
	n += len(v.Mass.SVG)
	for _, f := range v.Cross.Figures {
		n += len(f.SVG) + 512
	}
	return n + 4096*len(v.Drops)
}

// newView words everything the report shows.
func newView(r *Report) *view {
	n := numbers{r.Units}
	name := visible(r.Name, maxName)
	v := &view{Name: name, Title: "Canal design report: " + name}
	v.Caution = newCaution(r.Caution)
	v.provenance(r, n)
	res := r.Result
	if r.PlanErr != nil {
		v.Errors = append(v.Errors, visibleLines(r.Words.error(r.PlanErr), maxLine)...)
	}
	switch {
	case res == nil:
		v.Status = "not planned"
	case res.Status == planner.Optimal:
		v.Status = "optimal plan"
	default:
		v.Status = "no feasible plan"
	}
	if res == nil {
		return v
	}
	v.Planned = true
	v.Optimal = res.Status == planner.Optimal && len(res.Stations) > 0
	v.criteria(res, n)
	v.results(res, n)
	v.baselines(r, n)
	if v.Optimal {
		v.totals(res, n)
		v.command(res, n)
		v.reaches(res, n)
		v.drops(r, n)
	}
	v.Long = longSection(res, r.Units)
	if v.Optimal {
		v.Mass = massHaul(res, r.Units)
		v.Cross = crossSections(res, r.Units)
	}
	v.alternatives(r, n)
	v.warnings(r, n)
	v.key(res, n)
	return v
}

func newCaution(s string) caution {
	lines := visibleLines(s, maxLine)
	c := caution{Head: lines[0]}
	// The rest is one text with hard line breaks: join it into paragraphs.
	var para []string
	for _, l := range lines[1:] {
		para = append(para, strings.TrimSpace(l))
	}
	if len(para) > 0 {
		c.Body = []string{strings.Join(para, " ")}
	}
	return c
}

func (v *view) provenance(r *Report, n numbers) {
	p := r.Provenance
	orNone := func(s string) string {
		if strings.TrimSpace(s) == "" {
			return "not given"
		}
		return s
	}
	v.Provenance = []kv{
		{"Alignment", v.Name},
		{"canalstep version", orNone(visible(p.Version, maxName))},
		{"Command line", orNone(visible(p.CommandLine, maxLine))},
		{"Date of the inputs", orNone(visible(p.InputsDate, maxName))},
		{"Unit system", unitWords(r.Units)},
	}
	if p.DEMCellSize > 0 {
		v.Provenance = append(v.Provenance, kv{"DEM cell size", n.q(units.Length, p.DEMCellSize, 3)})
	}
	if pr := r.Profile; pr != nil {
		if pr.WorkCRS != "" {
			v.Provenance = append(v.Provenance, kv{"Work CRS (chainage measured in)", visible(pr.WorkCRS, maxLine)})
		}
		if pr.Alignment.CRS != "" {
			v.Provenance = append(v.Provenance, kv{"Alignment CRS", visible(pr.Alignment.CRS, maxLine)})
		}
	}
	v.CRS = visibleLines(p.DEMCRS, maxLine)
	v.Inputs = table{Head: []string{"Role", "Path", "Size (bytes)", "SHA-256"}, Num: []bool{false, false, true, false}}
	for _, f := range p.Inputs {
		v.Inputs.add("", visible(f.Role, maxName), visible(f.Path, maxPath), grouped(float64(f.Bytes), 0), visible(f.SHA256, 64))
	}
	v.Stamp = "canalstep " + orNone(visible(p.Version, maxName)) + "; inputs of " + orNone(visible(p.InputsDate, maxName))
}

func unitWords(u units.System) string {
	if u == units.US {
		return "US customary: ft, ft/s, cfs, yd³; 100-ft stations (sta+ft)"
	}
	return "SI: m, m/s, m³/s, m³; stations in km+m"
}

// criteria is the design criteria sheet, from the design as planned.
func (v *view) criteria(res *planner.Result, n numbers) {
	d := res.Record
	minV := "none"
	if d.MinVelocity > 0 {
		minV = n.q(units.Velocity, d.MinVelocity, 3)
	}
	minS := "none"
	if d.MinSlope > 0 {
		minS = grade(d.MinSlope)
	}
	var grades []string
	for _, g := range d.Grades {
		grades = append(grades, grade(g))
	}
	var heights []string
	for _, h := range d.DropHeights {
		heights = append(heights, n.q(units.Length, h, 3))
	}
	var flows []string
	for _, f := range d.CheckFlows {
		flows = append(flows, flowShare(f))
	}
	flow := []kv{
		{"Design flow", n.q(units.Flow, d.Flow, 3)},
		{"Bed width", n.q(units.Length, d.BottomWidth, 3)},
		{"Inner side slope (H:V)", slope(d.SideSlope)},
		{"Roughness (Manning n)", strconv.FormatFloat(d.Roughness, 'f', -1, 64)},
		{"Permissible (non-eroding) velocity", n.q(units.Velocity, d.MaxVelocity, 3)},
		{"Non-silting velocity", minV},
		{"Steepest grade the velocities allow", grade(d.MaxSlope)},
		{"Flattest grade the velocities allow", minS},
		{"Candidate grades", strings.Join(grades, ", ")},
		{"Freeboard rule", freeboardWords(d.Freeboard, d.Flow, n)},
	}
	crest := n.q(units.Length, d.CrestWidth, 3)
	if d.CrestWidth == d.BottomWidth {
		crest += " (the bed width)"
	}
	drops := []kv{
		{"Allowed drop heights", strings.Join(heights, ", ")},
		{"Crest and basin width", crest},
		{"Outlet transition length", n.q(units.Length, d.Transition, 3)},
		{"Minimum reach beside a basin and transition", n.q(units.Length, d.MinReach, 2)},
		{"Outlet checked at", strings.Join(flows, ", ") + " of the design flow"},
		{"Elevation step of the optimiser", n.q(units.Length, d.Step, 4)},
		{"By-eye baseline: drop where the water rises above the ground by", n.q(units.Length, d.ByEyeRise, 2)},
	}
	t := d.Template
	ground := "level across the section at the centre-line ground"
	if d.Ground == "cross_sections" {
		ground = "ground cross-sections sampled from the DEM at every station"
		if w := widened(res); w > 0 {
			ground += fmt.Sprintf(" (%d sampled again twice as wide to hold both catch points)", w)
		}
	}
	earth := []kv{
		{"Maximum cut depth (ground − invert)", n.length(d.MaxCutDepth)},
		{"Maximum fill height (invert − ground)", n.length(d.MaxFillHeight)},
		{"Bank top width (each side)", n.q(units.Length, t.BankTopWidth, 2)},
		{"Outer fill slope (H:V)", slope(t.OuterSlope)},
		{"Cut slope above the top of bank (H:V)", slope(t.CutSlope)},
		{"Volumes between stations", strings.ReplaceAll(d.Volume, "_", " ")},
		{"Ground model", ground},
	}
	c := d.Costs
	prices := []kv{
		{"Cut (excavation, bank measure)", n.q(units.PricePerVolume, c.Cut, 2)},
		{"Fill (compacted, placed)", n.q(units.PricePerVolume, c.Fill, 2)},
		{"Waste of surplus cut", n.q(units.PricePerVolume, c.Waste, 2)},
		{"Borrow of missing fill", n.q(units.PricePerVolume, c.Borrow, 2)},
		{"Shrinkage of cut placed as fill", percent(c.Shrinkage, 1)},
		{"Each drop structure", cost(c.DropFixed)},
		{"Each drop, per unit of height", grouped(n.u.FromSI(units.PricePerLength, c.DropPerMetre), 0) + " " + n.u.Symbol(units.PricePerLength)},
		{"Earthwork balance", "per segment between two stations (lateral haul); longitudinal haul is not priced"},
	}
	end := "free"
	if d.EndInvert != nil {
		end = n.level(*d.EndInvert)
	}
	levels := []kv{
		{"Start invert", n.level(d.StartInvert)},
		{"End invert", end},
		{"Fixed inverts", controlWords(d.FixedInverts, n)},
		{"Lowest water levels", controlWords(d.MinWaterLevels, n)},
		{"Command margins (water above the centre-line ground)", commandWords(d.Command, n)},
		{"Offtakes (command levels)", offtakeWords(d.Offtakes, n)},
	}
	v.Criteria = []sheet{{"Flow and section", flow}, {"Drops", drops}, {"Earthwork", earth}, {"Unit prices", prices}, {"Levels and controls", levels}}
}

func widened(res *planner.Result) int {
	k := 0
	for i := range res.Stations {
		if cs := res.Stations[i].Cross; cs != nil && cs.Widened {
			k++
		}
	}
	return k
}

func freeboardWords(r hydraulics.FreeboardRule, flow float64, n numbers) string {
	if r.Fixed > 0 {
		return "fixed, " + n.q(units.Length, r.Fixed, 3)
	}
	c, how := r.C, "as given"
	if !(c > 0) {
		c, how = hydraulics.USBRFreeboardCoefficient(flow), "interpolated on the design flow"
	}
	s := fmt.Sprintf("USBR rule for unlined canals, F = √(C·y), C = %s in metres (%s)", fixed(c, 3), how)
	if r.Min > 0 {
		s += ", at least " + n.q(units.Length, r.Min, 3)
	}
	return s
}

func controlWords(cs []planner.Control, n numbers) string {
	if len(cs) == 0 {
		return "none"
	}
	var out []string
	for _, c := range cs {
		out = append(out, n.station(c.Chainage)+": "+n.level(c.Level))
	}
	return strings.Join(out, "; ")
}

func offtakeWords(offs []planner.Offtake, n numbers) string {
	if len(offs) == 0 {
		return "none"
	}
	var out []string
	for _, o := range offs {
		out = append(out, fmt.Sprintf("%s at %s: %s, %s from the centre line", visible(o.Name, maxName), n.station(o.Chainage), n.level(o.Level), n.length(o.Offset)))
	}
	return strings.Join(out, "; ")
}

func commandWords(cs []planner.CommandRange, n numbers) string {
	if len(cs) == 0 {
		return "none"
	}
	var out []string
	for _, c := range cs {
		from, to := "the start", "the end"
		if !math.IsInf(c.From, -1) {
			from = n.station(c.From)
		}
		if !math.IsInf(c.To, 1) {
			to = n.station(c.To)
		}
		out = append(out, fmt.Sprintf("%s from %s to %s", n.length(c.Margin), from, to))
	}
	return strings.Join(out, "; ")
}

// results are the section results per candidate grade and drop height.
func (v *view) results(res *planner.Result, n numbers) {
	d := res.Record
	sec := hydraulics.Section{BottomWidth: d.BottomWidth, SideSlope: d.SideSlope}
	L := n.u.Symbol(units.Length)
	g := table{Caption: "Canal section at each candidate grade (normal flow at the design flow)",
		Head: []string{"Grade", "Normal depth (" + L + ")", "Velocity (" + n.u.Symbol(units.Velocity) + ")",
			"Freeboard (" + L + ")", "Bank height above bed (" + L + ")", "Reaches at this grade"},
		Num: []bool{false, true, true, true, true, true}}
	for i, s := range d.Grades {
		y, bank := at(d.NormalDepths, i), at(d.BankHeights, i)
		count := 0
		for _, r := range res.Reaches {
			if r.Grade == s {
				count++
			}
		}
		g.add("", grade(s), n.bare(units.Length, y, 3), n.bare(units.Velocity, hydraulics.Velocity(sec, d.Flow, y), 3),
			n.bare(units.Length, bank-y, 3), n.bare(units.Length, bank, 3), strconv.Itoa(count))
	}
	h := table{Caption: "Drops of each allowed height",
		Head: []string{"Height (" + L + ")", "Basin length (" + L + ")", "Least spacing to the next drop (" + L + ")", "Drops of this height"},
		Num:  []bool{true, true, true, true}}
	for i, x := range d.DropHeights {
		count := 0
		for _, dr := range res.Drops {
			if dr.Height == x {
				count++
			}
		}
		h.add("", n.bare(units.Length, x, 3), n.bare(units.Length, at(d.BasinLengths, i), 2),
			n.bare(units.Length, at(d.MinDropSpacing, i), 2), strconv.Itoa(count))
	}
	v.Results = []table{g, h}
}

func at(xs []float64, i int) float64 {
	if i < len(xs) {
		return xs[i]
	}
	return math.NaN()
}

func length(p *planner.Plan) float64 {
	if len(p.Stations) < 2 {
		return 0
	}
	return p.Stations[len(p.Stations)-1].Chainage - p.Stations[0].Chainage
}

func (v *view) totals(res *planner.Result, n numbers) {
	t := res.Totals
	v.Totals = []kv{
		{"Length", n.length(length(&res.Plan))},
		{"Stations", strconv.Itoa(len(res.Stations))},
		{"Drops", strconv.Itoa(t.DropCount)},
		{"Cut", n.volume(t.CutVolume)},
		{"Fill", n.volume(t.FillVolume)},
		{"Surplus cut to waste", n.volume(t.WasteVolume)},
		{"Fill from borrow", n.volume(t.BorrowVolume)},
		{"Earthwork cost", cost(t.EarthworkCost)},
		{"Drop cost", cost(t.DropCost)},
		{"Total cost", cost(t.TotalCost)},
		{"Velocity (water-surface profile)", n.bare(units.Velocity, t.MinVelocity, 3) + " to " + n.q(units.Velocity, t.MaxVelocity, 3)},
		{"Deepest cut", n.length(t.MaxCutDepth)},
		{"Highest fill", n.length(t.MaxFillHeight)},
		{"Stations with the water surface at or above the ground", percent(t.CommandShare, 1)},
	}
}

// methodName names a baseline method.
func methodName(m string) string {
	if m == planner.MethodByEye {
		return "By eye"
	}
	return "Even spacing"
}

// methodAdjective names a baseline method before a noun: "by-eye".
func methodAdjective(m string) string {
	if m == planner.MethodByEye {
		return "by-eye"
	}
	return "even-spacing"
}

func methodWords(b *planner.Baseline, n numbers) string {
	if b.Method == planner.MethodByEye {
		return "the steepest allowed grade; a drop wherever the water surface rises more than " + n.length(b.Rise) + " above the ground"
	}
	return "an average ground slope of " + grade(b.AverageGroundSlope) + ", one grade, drops of one height spaced equally"
}

func (v *view) baselines(r *Report, n numbers) {
	res := r.Result
	bs := res.Baselines()
	t := table{Head: []string{""}, Num: []bool{false}}
	plan := v.Optimal
	if plan {
		t.Head, t.Num = append(t.Head, "This plan"), append(t.Num, true)
	}
	for _, b := range bs {
		t.Head, t.Num = append(t.Head, methodName(b.Method)), append(t.Num, true)
	}
	line := func(label string, planCell string, f func(b *planner.Baseline) string) {
		cells := []string{label}
		if plan {
			cells = append(cells, planCell)
		}
		for _, b := range bs {
			cells = append(cells, f(b))
		}
		t.add("", cells...)
	}
	grades := map[float64]bool{}
	for _, rc := range res.Reaches {
		grades[rc.Grade] = true
	}
	line("Grade", fmt.Sprintf("%d of the candidates", len(grades)), func(b *planner.Baseline) string { return grade(b.Grade) })
	line("Drop height", "as placed", func(b *planner.Baseline) string { return n.length(b.DropHeight) })
	line("Drops", strconv.Itoa(res.Totals.DropCount), func(b *planner.Baseline) string { return strconv.Itoa(b.Totals.DropCount) })
	line("Cut", n.volume(res.Totals.CutVolume), func(b *planner.Baseline) string { return n.volume(b.Totals.CutVolume) })
	line("Fill", n.volume(res.Totals.FillVolume), func(b *planner.Baseline) string { return n.volume(b.Totals.FillVolume) })
	line("Earthwork cost", cost(res.Totals.EarthworkCost), func(b *planner.Baseline) string { return cost(b.Totals.EarthworkCost) })
	line("Drop cost", cost(res.Totals.DropCost), func(b *planner.Baseline) string { return cost(b.Totals.DropCost) })
	line("Total cost", cost(res.Totals.TotalCost), func(b *planner.Baseline) string { return cost(b.Totals.TotalCost) })
	line("Meets every constraint", "yes", func(b *planner.Baseline) string {
		if b.Feasible {
			return "yes"
		}
		return fmt.Sprintf("no: breaks %d", len(b.Violations))
	})
	v.Baselines = t
	v.Methods = []kv{{"This plan", "the least-cost profile over the candidate grades and drop heights (dynamic programme)"}}
	for _, b := range bs {
		v.Methods = append(v.Methods, kv{methodName(b.Method), methodWords(b, n)})
	}
	for _, b := range bs {
		if b.Feasible {
			continue
		}
		br := broken{Method: methodName(b.Method)}
		for _, x := range b.Violations {
			br.Items = append(br.Items, visible(r.Words.violation(x), maxLine))
		}
		v.Broken = append(v.Broken, br)
	}
	amount, frac, against, ok := res.Saving()
	switch {
	case !v.Optimal:
		v.Saving = "There is no feasible plan, so no saving is stated."
	case !ok:
		v.Saving = "Neither baseline meets every constraint, so no saving is stated: a profile that breaks a constraint cannot be built, and a saving against it would mislead."
	default:
		which := "the only baseline that meets every constraint"
		if len(bs) > 1 && allFeasible(bs) {
			which = "the cheaper of the two baselines, both of which meet every constraint"
		}
		word := "less"
		if amount < 0 {
			word, amount, frac = "more", -amount, -frac
		}
		v.Saving = fmt.Sprintf("Saving: the plan costs %s %s than the %s baseline (%s of its cost), %s.",
			cost(amount), word, methodAdjective(against.Method), percent(frac, 1), which)
	}
}

func allFeasible(bs []*planner.Baseline) bool {
	for _, b := range bs {
		if !b.Feasible {
			return false
		}
	}
	return true
}

func (v *view) command(res *planner.Result, n numbers) {
	worst, at := math.Inf(1), 0.0
	for i := range res.Stations {
		if m := res.Stations[i].Margin(); m < worst {
			worst, at = m, res.Stations[i].Chainage
		}
	}
	v.Command = []kv{
		{"Stations with the water surface at or above the centre-line ground", percent(res.Command.Share, 1)},
		{"Least margin of water surface over ground", n.length(worst) + " at " + n.station(at)},
		{"Command margins asked", commandWords(res.Record.Command, n)},
	}
	if len(res.Command.Offtakes) == 0 {
		return
	}
	L := n.u.Symbol(units.Length)
	t := table{Caption: "Offtakes: the design water surface against each command level",
		Head: []string{"Offtake", "Station", "Command level (" + L + ")", "Water surface (" + L + ")", "Margin (" + L + ")", "Commanded"},
		Num:  []bool{false, false, true, true, true, false}}
	for _, o := range res.Command.Offtakes {
		class := ""
		if o.Margin < 0 {
			class = "bad"
		}
		t.add(class, visible(o.Name, maxName), n.station(o.Chainage), n.bare(units.Length, o.Level, 3),
			n.bare(units.Length, o.WaterSurface, 3), n.bare(units.Length, o.Margin, 3), yesNo(o.Margin >= -5e-4))
	}
	v.Offtakes = &t
}

func (v *view) reaches(res *planner.Result, n numbers) {
	L := n.u.Symbol(units.Length)
	t := table{Head: []string{"From", "To", "Length (" + L + ")", "Grade", "Start invert (" + L + ")", "End invert (" + L + ")",
		"Normal depth (" + L + ")", "Velocity (" + n.u.Symbol(units.Velocity) + ")"},
		Num: []bool{false, false, true, false, true, true, true, true}}
	for _, r := range res.Reaches {
		t.add("", n.station(r.From), n.station(r.To), n.bare(units.Length, r.To-r.From, 2), grade(r.Grade),
			n.bare(units.Length, r.StartInvert, 3), n.bare(units.Length, r.EndInvert, 3),
			n.bare(units.Length, r.NormalDepth, 3), n.bare(units.Velocity, r.Velocity, 3))
	}
	v.Reaches = t
}

// alternatives is the comparison table.
func (v *view) alternatives(r *Report, n numbers) {
	if r.Alternatives == nil {
		return
	}
	best := -1
	for i, a := range r.Alternatives {
		if a.Err == nil && a.Result != nil && a.Result.Status == planner.Optimal &&
			(best < 0 || a.Result.Totals.TotalCost < r.Alternatives[best].Result.Totals.TotalCost) {
			best = i
		}
	}
	t := table{Head: []string{"#", "Drop heights (" + n.u.Symbol(units.Length) + ")", "Outcome", "Drops", "Cut", "Fill", "Total cost", "Reason"},
		Num: []bool{true, false, false, true, true, true, true, false}}
	for i, a := range r.Alternatives {
		var hs []string
		for _, h := range a.DropHeights {
			hs = append(hs, n.bare(units.Length, h, 3))
		}
		label := strings.Join(hs, ", ")
		if a.Err != nil || a.Result == nil || a.Result.Status != planner.Optimal {
			outcome := "infeasible"
			if a.Result == nil {
				outcome = "not planned"
			}
			t.add("bad", strconv.Itoa(i+1), label, outcome, "", "", "", "", visible(r.Words.error(a.Err), maxLine))
			continue
		}
		tt := a.Result.Totals
		outcome, class := "feasible", ""
		if i == best {
			outcome, class = "feasible, least cost", "best"
		}
		t.add(class, strconv.Itoa(i+1), label, outcome, strconv.Itoa(tt.DropCount), n.volume(tt.CutVolume),
			n.volume(tt.FillVolume), cost(tt.TotalCost), "")
	}
	v.Alternatives = &t
}

// key is the line of key figures under the title.
func (v *view) key(res *planner.Result, n numbers) {
	if !v.Optimal {
		return
	}
	v.Key = []kv{
		{"Total cost", cost(res.Totals.TotalCost)},
		{"Drops", strconv.Itoa(res.Totals.DropCount)},
		{"Length", n.length(length(&res.Plan))},
		{"Cut / fill", n.volume(res.Totals.CutVolume) + " / " + n.volume(res.Totals.FillVolume)},
	}
	if amount, frac, _, ok := res.Saving(); ok {
		v.Key = append(v.Key, kv{"Saving", cost(amount) + " (" + percent(frac, 1) + ")"})
	} else {
		v.Key = append(v.Key, kv{"Saving", "none stated (no feasible baseline)"})
	}
}
