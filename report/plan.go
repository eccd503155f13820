package report

import (
	"encoding/csv"
	"encoding/json"
	"io"
	"strconv"
	"strings"

	"canalstep/planner"
	"canalstep/report/units"
)

// StationLabel is the station label of a chainage (m) in u's notation:
// 1+250.00 (km+m), or 12+50.00 (100-ft stations) in US units.
func StationLabel(chainageM float64, u Units) string { return u.Station(chainageM) }

// column is one column of a table writer: its name, quantity and decimals.
type column struct {
	name string
	q    units.Quantity
	prec int
}

func header(cols []column, u Units) []string {
	out := make([]string, len(cols))
	for i, c := range cols {
		out[i] = u.Column(c.name, c.q)
	}
	return out
}

// stationColumns are the columns of stations.csv after station and
// chainage; easting and northing are in the work CRS (see WriteStationsCSV).
var stationColumns = []column{
	{"chainage", units.Length, 3}, {"easting", units.Ratio, 3}, {"northing", units.Ratio, 3},
	{"lon", units.Ratio, 8}, {"lat", units.Ratio, 8},
	{"ground", units.Length, 3}, {"invert", units.Length, 3}, {"invert_downstream", units.Length, 3},
	{"water_surface", units.Length, 3}, {"top_of_bank", units.Length, 3}, {"depth", units.Length, 3},
	{"velocity", units.Velocity, 3}, {"grade", units.Ratio, 7},
	{"cut_depth", units.Length, 3}, {"fill_height", units.Length, 3}, {"margin", units.Length, 3},
	{"cut_area", units.Area, 3}, {"fill_area", units.Area, 3},
	{"cum_cut", units.Volume, 1}, {"cum_fill", units.Volume, 1},
	{"catch_left", units.Length, 3}, {"catch_right", units.Length, 3},
}

// WriteStationsCSV writes the station list of a plan: one row per station
// with its label, chainage, easting and northing in the work CRS (the
// DEM's projected CRS, or the local transverse Mercator summary.json names
// for a geographic DEM; to the millimetre), longitude and latitude (1e-8°),
// ground, invert (upstream side; invert_downstream differs at a drop),
// water surface and velocity from the water-surface profile, top of bank,
// grade (m/m), cut depth, fill height, margin (water surface − ground),
// cut and fill areas and cumulative volumes, and the catch-point offsets
// (negative left, looking downstream). Column names carry the unit.
func WriteStationsCSV(w io.Writer, p *planner.Plan, u Units) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(append([]string{"station"}, header(stationColumns, u)...)); err != nil {
		return err
	}
	rec := make([]string, 1+len(stationColumns))
	for i := range p.Stations {
		s := &p.Stations[i]
		vals := []float64{s.Chainage, s.WorkX, s.WorkY, s.Lon, s.Lat, s.Ground, s.Invert, s.InvertDown,
			s.WaterSurface, s.TopOfBank, s.Depth, s.Velocity, s.Grade, s.CutDepth, s.FillHeight, s.Margin(),
			s.CutArea, s.FillArea, s.CumCut, s.CumFill, s.CatchLeft.Offset, s.CatchRight.Offset}
		rec[0] = u.Station(s.Chainage)
		for k, c := range stationColumns {
			rec[k+1] = fixed(u.FromSI(c.q, vals[k]), c.prec)
		}
		if err := cw.Write(rec); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

var dropColumns = []column{
	{"chainage", units.Length, 3}, {"easting", units.Ratio, 3}, {"northing", units.Ratio, 3},
	{"height", units.Length, 3}, {"upstream_invert", units.Length, 3}, {"crest_level", units.Length, 3},
	{"crest_raise", units.Length, 3}, {"basin_floor", units.Length, 3}, {"basin_depression", units.Length, 3},
	{"downstream_invert", units.Length, 3}, {"basin_length", units.Length, 3}, {"basin_width", units.Length, 3},
	{"end_sill", units.Length, 3}, {"wall_height", units.Length, 3}, {"transition_length", units.Length, 3},
}

// WriteDropsCSV writes one row per drop structure: station, chainage,
// easting and northing (work CRS), height (bed fall), upstream invert,
// crest level and raise, basin floor and its depression below the
// downstream bed, downstream invert, basin length and width, end sill
// height, side-wall height, outlet transition length, the jump state at the
// design flow and at every checked flow ("25%:drowned;50%:in_basin;...",
// flows as percentages of the design flow). Column names carry the unit.
func WriteDropsCSV(w io.Writer, r *planner.Result, u Units) error {
	cw := csv.NewWriter(w)
	h := append([]string{"station"}, header(dropColumns, u)...)
	if err := cw.Write(append(h, "jump_state", "jump_states_checked")); err != nil {
		return err
	}
	for _, d := range r.Drops {
		s := &r.Stations[d.Station]
		vals := []float64{d.Chainage, s.WorkX, s.WorkY, d.Height, d.UpstreamInvert, d.CrestLevel, d.CrestRaise,
			d.BasinFloor, d.BasinDepression, d.DownstreamInvert, d.BasinLength, d.BasinWidth, d.EndSill, d.WallHeight, d.TransitionLength}
		rec := []string{u.Station(d.Chainage)}
		for k, c := range dropColumns {
			rec = append(rec, fixed(u.FromSI(c.q, vals[k]), c.prec))
		}
		rec = append(rec, string(d.JumpState), jumpStates(d, r.Record.Flow))
		if err := cw.Write(rec); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// jumpStates lists a drop's jump state at every checked flow.
func jumpStates(d planner.DropResult, flow float64) string {
	states := make([]string, len(d.Checks))
	for k, c := range d.Checks {
		states[k] = strconv.FormatFloat(roundTo(100*c.Q/flow, 1), 'f', -1, 64) + "%:" + string(c.JumpState)
	}
	return strings.Join(states, ";")
}

// Summary is summary.json: the design as planned and the section results,
// the plan's totals, its findings, how it commands the land, both baselines
// and the saving against the best feasible one. It is always in SI units
// (m, m², m³, m/s, m³/s), whatever --units says, so that programs read one
// unit system; costs are in the currency of the unit prices.
type Summary struct {
	Alignment string         `json:"alignment"`
	Units     map[string]any `json:"units"`
	Status    string         `json:"status"`
	Design    planner.Record `json:"design"`
	Costs     any            `json:"unit_costs"`
	Template  any            `json:"template"`
	planner.Totals
	Length    float64           `json:"length"` // m
	Stations  int               `json:"stations"`
	Command   planner.Command   `json:"command"`
	Warnings  []FindingJSON     `json:"warnings"`
	Conflicts []FindingJSON     `json:"conflicts,omitempty"`
	Baselines []BaselineSummary `json:"baselines"`
	// Saving is the best feasible baseline's total cost minus the plan's,
	// SavingFraction the same as a fraction of that baseline's cost, and
	// SavingAgainst its method; all zero and "" when no baseline is
	// feasible: no saving is stated against an infeasible profile.
	Saving         float64 `json:"saving"`
	SavingFraction float64 `json:"saving_fraction"`
	SavingAgainst  string  `json:"saving_against"`
	// Provenance: version, command line, inputs with their SHA-256, the
	// DEM's and the work CRS, the inputs' date (never the clock).
	Provenance *provenanceJSON `json:"provenance,omitempty"`
	Caution    string          `json:"caution"`
}

// FindingJSON is a typed finding with its SI wording.
type FindingJSON struct {
	Finding any    `json:"finding"`
	Text    string `json:"text"`
}

// BaselineSummary is one baseline's figures in Summary.
type BaselineSummary struct {
	Method             string        `json:"method"`
	Description        string        `json:"description"`
	AverageGroundSlope float64       `json:"average_ground_slope"` // m/m
	Grade              float64       `json:"grade"`                // m/m
	DropHeight         float64       `json:"drop_height"`          // m
	Rise               float64       `json:"rise,omitempty"`       // m, by-eye
	Feasible           bool          `json:"feasible"`
	Violations         []FindingJSON `json:"violations"`
	planner.Totals
}

// BaselineDescription says in words what a baseline method does.
func BaselineDescription(method string) string {
	if method == planner.MethodByEye {
		return "by eye: the steepest allowed grade, a drop wherever the water surface rises more than the set height above the ground"
	}
	return "even spacing: one average ground slope, the steepest allowed grade, drops of one height spaced equally"
}

// NewSummary gathers the summary of one planned alignment; err is the
// planner's error for an infeasible plan (nil otherwise).
func NewSummary(name string, r *planner.Result, err error) Summary {
	s := Summary{
		Alignment: name,
		Units: map[string]any{
			"length": "m", "area": "m2", "volume": "m3", "velocity": "m/s", "flow": "m3/s",
			"slope": "m/m", "cost": "currency of the unit costs",
		},
		Status:    r.Status.String(),
		Design:    r.Record,
		Costs:     r.Record.Costs,
		Template:  r.Record.Template,
		Totals:    r.Totals,
		Stations:  len(r.Stations),
		Command:   r.Command,
		Warnings:  []FindingJSON{},
		Baselines: []BaselineSummary{},
		Caution:   SafetyNotice,
	}
	for _, w := range r.Warnings {
		s.Warnings = append(s.Warnings, FindingJSON{Finding: w, Text: FormatWarning(w, SI)})
	}
	for _, c := range conflicts(err) {
		s.Conflicts = append(s.Conflicts, FindingJSON{Finding: c, Text: FormatConflict(c, SI)})
	}
	if n := len(r.Stations); n > 0 {
		s.Length = r.Stations[n-1].Chainage - r.Stations[0].Chainage
	}
	for _, b := range r.Baselines() {
		bs := BaselineSummary{Method: b.Method, Description: BaselineDescription(b.Method),
			AverageGroundSlope: b.AverageGroundSlope, Grade: b.Grade, DropHeight: b.DropHeight, Rise: b.Rise,
			Feasible: b.Feasible, Violations: []FindingJSON{}, Totals: b.Totals}
		for _, v := range b.Violations {
			bs.Violations = append(bs.Violations, FindingJSON{Finding: v, Text: FormatViolation(v, SI)})
		}
		s.Baselines = append(s.Baselines, bs)
	}
	if amount, frac, b, ok := r.Saving(); ok {
		s.Saving, s.SavingFraction, s.SavingAgainst = amount, frac, b.Method
	}
	return s
}

// WriteSummaryJSON writes s as indented JSON.
func WriteSummaryJSON(w io.Writer, s Summary) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(s)
}

// AlternativeLabel names a drop-height set the way --alternatives writes it,
// in u's length unit: "0.5,1,1.5".
func AlternativeLabel(heightsM []float64, u Units) string {
	b := []byte{}
	for i, h := range heightsM {
		if i > 0 {
			b = append(b, ',')
		}
		b = strconv.AppendFloat(b, roundTo(u.Length(h), 4), 'f', -1, 64)
	}
	return string(b)
}

func roundTo(v float64, prec int) float64 {
	f, _ := strconv.ParseFloat(strconv.FormatFloat(v, 'f', prec, 64), 64)
	return f
}

// WriteAlternativesCSV writes one row per drop-height alternative: its
// heights (separated by ',' inside the quoted field), status, drop count,
// volumes, costs and extremes, in u's units; the note says why an
// alternative has no plan.
func WriteAlternativesCSV(w io.Writer, alts []planner.Alternative, u Units) error {
	cw := csv.NewWriter(w)
	head := []string{"alternative", u.Column("drop_heights", units.Length), "status", "drop_count",
		u.Column("cut_volume", units.Volume), u.Column("fill_volume", units.Volume),
		"earthwork_cost", "drop_cost", "total_cost", u.Column("max_cut_depth", units.Length),
		u.Column("max_fill_height", units.Length), u.Column("max_velocity", units.Velocity),
		u.Column("min_velocity", units.Velocity), "command_share", "note"}
	if err := cw.Write(head); err != nil {
		return err
	}
	for i, a := range alts {
		rec := []string{strconv.Itoa(i + 1), AlternativeLabel(a.DropHeights, u)}
		if a.Result == nil || a.Err != nil {
			status := "infeasible"
			if a.Result == nil {
				status = "invalid"
			}
			rec = append(rec, status, "", "", "", "", "", "", "", "", "", "", "", ErrorText(a.Err, u))
		} else {
			t := a.Result.Totals
			rec = append(rec, a.Result.Status.String(), strconv.Itoa(t.DropCount),
				fixed(u.Volume(t.CutVolume), 1), fixed(u.Volume(t.FillVolume), 1),
				fixed(t.EarthworkCost, 0), fixed(t.DropCost, 0), fixed(t.TotalCost, 0),
				fixed(u.Length(t.MaxCutDepth), 3), fixed(u.Length(t.MaxFillHeight), 3),
				fixed(u.Velocity(t.MaxVelocity), 3), fixed(u.Velocity(t.MinVelocity), 3), fixed(t.CommandShare, 3), "")
		}
		if err := cw.Write(rec); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// NewLongSection maps a planned alignment onto the long-section plot: ground,
// bed, water surface and top of bank with a vertical step at every drop
// (of the plan or of the best baseline), that baseline's bed as a
// comparison line, drops labelled by station, and velocity with its limits
// in the lower panel.
func NewLongSection(name string, r *planner.Result, u Units) LongSection {
	ls := LongSection{Name: name, Units: u}
	n := len(r.Stations)
	var base []planner.StationResult
	b := r.BestBaseline()
	if b == nil {
		b = r.EvenSpacing
	}
	if b != nil && len(b.Stations) == n {
		base = b.Stations
		ls.BaselineName = BaselineDescription(b.Method)
		if i := strings.Index(ls.BaselineName, ":"); i > 0 {
			ls.BaselineName = ls.BaselineName[:i]
		}
	}
	vel := []float64{}
	for i, s := range r.Stations {
		// Upstream side of the station.
		ls.Chainage = append(ls.Chainage, s.Chainage)
		ls.Ground = append(ls.Ground, s.Ground)
		ls.Invert = append(ls.Invert, s.Invert)
		ls.WaterSurface = append(ls.WaterSurface, s.WaterSurface)
		ls.TopOfBank = append(ls.TopOfBank, s.TopOfBank)
		vel = append(vel, s.Velocity)
		if base != nil {
			ls.BaselineInvert = append(ls.BaselineInvert, base[i].Invert)
		}
		step := s.InvertDown != s.Invert || (base != nil && base[i].InvertDown != base[i].Invert)
		if !step || i+1 == n {
			continue
		}
		// Downstream side: the same chainage again draws the step.
		fall := s.Invert - s.InvertDown
		next := r.Stations[i+1]
		ls.Chainage = append(ls.Chainage, s.Chainage)
		ls.Ground = append(ls.Ground, s.Ground)
		ls.Invert = append(ls.Invert, s.InvertDown)
		ls.WaterSurface = append(ls.WaterSurface, s.InvertDown+next.Depth)
		ls.TopOfBank = append(ls.TopOfBank, s.TopOfBank-fall)
		vel = append(vel, next.Velocity)
		if base != nil {
			ls.BaselineInvert = append(ls.BaselineInvert, base[i].InvertDown)
		}
	}
	for _, d := range r.Drops {
		ls.Drops = append(ls.Drops, DropMark{Chainage: d.Chainage, Label: StationLabel(d.Chainage, u),
			UpstreamInvert: d.UpstreamInvert, DownstreamInvert: d.DownstreamInvert})
	}
	lim := []PanelLimit{{Name: "max. velocity", Value: r.Record.MaxVelocity}}
	if r.Record.MinVelocity > 0 {
		lim = append(lim, PanelLimit{Name: "min. velocity", Value: r.Record.MinVelocity})
	}
	ls.Lower = &LowerPanel{Label: "Velocity", Quantity: PanelVelocity,
		Series: []PanelSeries{{Name: "velocity (water-surface profile)", Values: vel}}, Limits: lim}
	return ls
}
