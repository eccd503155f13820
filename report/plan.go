package report

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"strconv"
	"strings"

	"canalstep/alignment"
	"canalstep/planner"
)

// Velocity converts a velocity in m/s to the output unit (ft/s in US units).
func (u Units) Velocity(ms float64) float64 { return u.Length(ms) }

// VelocityUnit is the symbol of the output velocity unit.
func (u Units) VelocityUnit() string { return u.LengthUnit() + "/s" }

// StationLabel is the station label of a chainage (m) in u's notation:
// 1+250.00 (km+m), or 12+50.00 (100-ft stations) in US units.
func StationLabel(chainageM float64, u Units) string {
	return alignment.FormatStation(chainageM, u == US)
}

// checkStations panics when the plan and the stations do not match: both
// come from the same job, so a mismatch is a programmer error.
func checkStations(st []alignment.Station, p *planner.Plan) {
	if len(st) != len(p.Stations) {
		panic(fmt.Sprintf("report: %d stations but a plan of %d", len(st), len(p.Stations)))
	}
}

// StationColumns is the header of stations.csv.
var stationColumns = []string{"station", "chainage", "x", "y", "ground", "invert", "invert_downstream",
	"water_surface", "top_of_bank", "depth", "velocity", "grade", "cut_depth", "fill_height",
	"cut_area", "fill_area", "cum_cut", "cum_fill"}

// WriteStationsCSV writes the station list of a plan: one row per station
// with its label, chainage, coordinates (DEM CRS), ground, invert (upstream
// side; invert_downstream differs at a drop), water surface and velocity from
// the water-surface profile, top of bank, cut and fill. Lengths, areas,
// volumes and velocities are in u's units (elevations and lengths to the
// millimetre, 0.001 ft in US units); grade is m/m (dimensionless).
func WriteStationsCSV(w io.Writer, st []alignment.Station, p *planner.Plan, u Units) error {
	checkStations(st, p)
	cw := csv.NewWriter(w)
	if err := cw.Write(stationColumns); err != nil {
		return err
	}
	rec := make([]string, len(stationColumns))
	for i, s := range p.Stations {
		L := func(v float64) string { return fixed(u.Length(v), 3) }
		rec[0] = StationLabel(s.Chainage, u)
		rec[1] = L(s.Chainage)
		rec[2], rec[3] = fixed(st[i].X, 3), fixed(st[i].Y, 3)
		rec[4], rec[5], rec[6] = L(s.Ground), L(s.Invert), L(s.InvertDown)
		rec[7], rec[8], rec[9] = L(s.WaterSurface), L(s.TopOfBank), L(s.Depth)
		rec[10] = fixed(u.Velocity(s.Velocity), 3)
		rec[11] = fixed(s.Grade, 6)
		rec[12], rec[13] = L(s.CutDepth), L(s.FillHeight)
		rec[14], rec[15] = fixed(u.Area(s.CutArea), 3), fixed(u.Area(s.FillArea), 3)
		rec[16], rec[17] = fixed(u.Volume(s.CumCut), 1), fixed(u.Volume(s.CumFill), 1)
		if err := cw.Write(rec); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

var dropColumns = []string{"station", "chainage", "x", "y", "height", "upstream_invert", "crest_level",
	"crest_raise", "basin_floor", "basin_depression", "downstream_invert", "basin_length", "end_sill", "jump_state", "jump_states_checked"}

// WriteDropsCSV writes one row per drop structure: station, chainage,
// coordinates (DEM CRS), height (bed fall), upstream invert, crest level and
// raise, basin floor and its depression below the downstream bed, downstream
// invert, basin length, end sill height, the jump state at the design flow
// and the jump state at every checked flow ("25%:drowned;50%:in_basin;...",
// flows as percentages of the design flow). Lengths are in u's unit to the
// millimetre.
func WriteDropsCSV(w io.Writer, st []alignment.Station, r *planner.Result, u Units) error {
	p := &r.Plan
	checkStations(st, p)
	cw := csv.NewWriter(w)
	if err := cw.Write(dropColumns); err != nil {
		return err
	}
	rec := make([]string, len(dropColumns))
	for _, d := range p.Drops {
		L := func(v float64) string { return fixed(u.Length(v), 3) }
		s := st[d.Station]
		rec[0], rec[1] = StationLabel(d.Chainage, u), L(d.Chainage)
		rec[2], rec[3] = fixed(s.X, 3), fixed(s.Y, 3)
		rec[4], rec[5], rec[6], rec[7] = L(d.Height), L(d.UpstreamInvert), L(d.CrestLevel), L(d.CrestRaise)
		rec[8], rec[9], rec[10] = L(d.BasinFloor), L(d.BasinDepression), L(d.DownstreamInvert)
		rec[11], rec[12] = L(d.BasinLength), L(d.EndSill)
		rec[13] = string(d.JumpState)
		states := make([]string, len(d.Checks))
		for k, c := range d.Checks {
			states[k] = strconv.FormatFloat(roundTo(100*c.Q/r.Design.Flow, 1), 'f', -1, 64) + "%:" + string(c.JumpState)
		}
		rec[14] = strings.Join(states, ";")
		if err := cw.Write(rec); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// Summary is summary.json: the design inputs and section results, the
// plan's totals, its warnings and the even-spacing baseline on the same
// ground. It is always in SI units (m, m², m³, m/s, m³/s), whatever
// --units says, so that programs read one unit system; costs are in the
// currency of the unit prices.
type Summary struct {
	Alignment string           `json:"alignment"`
	Units     map[string]any   `json:"units"`
	Status    string           `json:"status"`
	Design    planner.Design   `json:"design"`
	Costs     planner.Costs    `json:"unit_costs"`
	Template  planner.Template `json:"template"`
	planner.Totals
	Length   float64         `json:"length"` // m
	Stations int             `json:"stations"`
	Warnings []string        `json:"warnings"`
	Baseline BaselineSummary `json:"baseline"`
	// Saving is the baseline's total cost minus the plan's, and the same as
	// a fraction of the baseline's.
	Saving         float64 `json:"saving"`
	SavingFraction float64 `json:"saving_fraction"`
	Caution        string  `json:"caution"`
}

// BaselineSummary is the even-spacing method's figures in Summary.
type BaselineSummary struct {
	Method             string   `json:"method"`
	AverageGroundSlope float64  `json:"average_ground_slope"` // m/m
	Grade              float64  `json:"grade"`                // m/m
	DropHeight         float64  `json:"drop_height"`          // m
	Spacing            float64  `json:"drop_spacing"`         // m between drops; 0 without drops
	Feasible           bool     `json:"feasible"`
	Violations         []string `json:"violations"`
	planner.Totals
}

// NewSummary gathers the summary of one planned alignment.
func NewSummary(name string, r *planner.Result) Summary {
	s := Summary{
		Alignment: name,
		Units: map[string]any{
			"length": "m", "area": "m2", "volume": "m3", "velocity": "m/s", "flow": "m3/s",
			"slope": "m/m", "cost": "currency of the unit costs",
		},
		Status:   r.Status.String(),
		Design:   r.Design,
		Costs:    r.Design.Costs,
		Template: r.Design.Template,
		Totals:   r.Totals,
		Stations: len(r.Stations),
		Warnings: append([]string{}, r.Warnings...),
		Caution:  SafetyNotice,
	}
	if n := len(r.Stations); n > 0 {
		s.Length = r.Stations[n-1].Chainage - r.Stations[0].Chainage
	}
	if b := r.Baseline; b != nil {
		s.Baseline = BaselineSummary{
			Method:             "even spacing: one average ground slope, the steepest allowed grade, drops of one height spaced equally",
			AverageGroundSlope: b.AverageGroundSlope, Grade: b.Grade, DropHeight: b.DropHeight,
			Feasible: b.Feasible, Violations: append([]string{}, b.Violations...), Totals: b.Totals,
		}
		if b.Totals.DropCount > 0 {
			s.Baseline.Spacing = s.Length / float64(b.Totals.DropCount+1)
		}
		s.Saving = b.Totals.TotalCost - r.Totals.TotalCost
		if b.Totals.TotalCost > 0 {
			s.SavingFraction = s.Saving / b.Totals.TotalCost
		}
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

var alternativeColumns = []string{"alternative", "drop_heights", "status", "drop_count", "cut_volume", "fill_volume",
	"earthwork_cost", "drop_cost", "total_cost", "max_cut_depth", "max_fill_height", "max_velocity", "min_velocity", "note"}

// WriteAlternativesCSV writes one row per drop-height alternative: its
// heights (separated by ';' inside the field), status, drop count, volumes,
// costs and extremes, in u's units; the note says why an alternative has no
// plan.
func WriteAlternativesCSV(w io.Writer, alts []planner.Alternative, u Units) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(alternativeColumns); err != nil {
		return err
	}
	for i, a := range alts {
		rec := []string{strconv.Itoa(i + 1), AlternativeLabel(a.DropHeights, u)}
		if a.Result == nil || a.Err != nil {
			note := "no plan"
			if a.Err != nil {
				note = a.Err.Error()
			}
			status := "infeasible"
			if a.Result == nil {
				status = "invalid"
			}
			rec = append(rec, status, "", "", "", "", "", "", "", "", "", "", note)
		} else {
			t := a.Result.Totals
			rec = append(rec, a.Result.Status.String(), strconv.Itoa(t.DropCount),
				fixed(u.Volume(t.CutVolume), 1), fixed(u.Volume(t.FillVolume), 1),
				fixed(t.EarthworkCost, 0), fixed(t.DropCost, 0), fixed(t.TotalCost, 0),
				fixed(u.Length(t.MaxCutDepth), 3), fixed(u.Length(t.MaxFillHeight), 3),
				fixed(u.Velocity(t.MaxVelocity), 3), fixed(u.Velocity(t.MinVelocity), 3), "")
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
// (of the plan or of the baseline), the even-spacing bed as a comparison line,
// drops labelled by station, and velocity with its limits in the lower panel.
func NewLongSection(name string, r *planner.Result, u Units) LongSection {
	ls := LongSection{Name: name, Units: u}
	n := len(r.Stations)
	var base []planner.StationResult
	if r.Baseline != nil && len(r.Baseline.Stations) == n {
		base = r.Baseline.Stations
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
	lim := []PanelLimit{{Name: "max. velocity", Value: r.Design.MaxVelocity}}
	if r.Design.MinVelocity > 0 {
		lim = append(lim, PanelLimit{Name: "min. velocity", Value: r.Design.MinVelocity})
	}
	ls.Lower = &LowerPanel{Label: "Velocity", Quantity: PanelVelocity,
		Series: []PanelSeries{{Name: "velocity (water-surface profile)", Values: vel}}, Limits: lim}
	return ls
}
