package report

import (
	"errors"
	"fmt"
	"io"
	"time"

	"canalstep/alignment"
	"canalstep/planner"
	"canalstep/planner/corridor"
	"canalstep/report/html"
	"canalstep/report/survey"
)

// Stager is where one output folder's files are written before the folder
// is committed as a whole (outdir.Stage satisfies it).
type Stager interface {
	// WriteFile writes the file called name through write.
	WriteFile(name string, write func(io.Writer) error) error
	// Path is where a writer that needs a path writes the file called name.
	Path(name string) (string, error)
}

// WriteGround writes a profile's ground.csv and ground.png into st.
func WriteGround(st Stager, p *alignment.Profile, u Units) error {
	// The plot and the CSV are independent: write them side by side.
	plotErr := make(chan error, 1)
	go func() {
		defer func() {
			if v := recover(); v != nil {
				plotErr <- fmt.Errorf("report: internal error drawing the ground profile: %v", v)
			}
		}()
		path, err := st.Path("ground.png")
		if err == nil {
			err = WriteGroundProfile(path, GroundProfile{Name: p.Name, Chainage: p.Chainages(), Ground: p.Grounds(), Units: u})
		}
		plotErr <- err
	}()
	csvErr := st.WriteFile("ground.csv", func(w io.Writer) error { return WriteGroundCSV(w, p, u) })
	return errors.Join(csvErr, <-plotErr)
}

// Folder is everything one alignment's output folder is written from.
type Folder struct {
	// Corridor is the stationed, sampled alignment with its frames and
	// route; the survey deliverables (stakes.csv, plan.geojson, plan.gpkg,
	// plan.xml) need it.
	Corridor *corridor.Corridor
	Result   *planner.Result
	PlanErr  error // the planner's error for an infeasible plan
	// Alternatives are the drop-height sets of a comparison (nil for a
	// plan); Result is then the least-cost feasible one, or the first.
	Alternatives []planner.Alternative
	Units        Units
	Provenance   Provenance
}

// Provenance says where a plan's numbers came from: summary.json and
// report.html carry it. It holds no wall-clock time.
type Provenance = html.Provenance

// InputFile is one input file of a run with its SHA-256.
type InputFile = html.InputFile

// provenanceJSON is Provenance in summary.json.
type provenanceJSON struct {
	Version     string          `json:"version"`
	CommandLine string          `json:"command_line"`
	Inputs      []inputFileJSON `json:"inputs"`
	DEMCRS      string          `json:"dem_crs"`
	DEMCellSize float64         `json:"dem_cell_size"` // m
	WorkCRS     string          `json:"work_crs"`
	InputsDate  string          `json:"inputs_date"`
}

type inputFileJSON struct {
	Role   string `json:"role"`
	Path   string `json:"path"`
	SHA256 string `json:"sha256"`
	Bytes  int64  `json:"bytes"`
}

func newProvenanceJSON(p Provenance, work string) *provenanceJSON {
	out := &provenanceJSON{Version: p.Version, CommandLine: p.CommandLine, DEMCRS: p.DEMCRS, DEMCellSize: p.DEMCellSize,
		WorkCRS: work, InputsDate: p.InputsDate, Inputs: []inputFileJSON{}}
	for _, f := range p.Inputs {
		out.Inputs = append(out.Inputs, inputFileJSON{Role: f.Role, Path: f.Path, SHA256: f.SHA256, Bytes: f.Bytes})
	}
	return out
}

// The files of an alignment folder besides the survey deliverables.
const (
	ReportFile = "report.html"
)

// WriteFolder writes one alignment's output folder into st: its ground
// (ground.csv, ground.png); summary.json and report.html always (with the
// conflicts of an infeasible plan); for an optimal plan stations.csv,
// drops.csv, profile.png/svg, the printable sheets (longsection.pdf,
// crosssections.pdf), the curve table (curves.csv, when
// curves were fitted) and the survey deliverables (stakes.csv,
// plan.geojson, plan.gpkg, plan.xml); for a comparison alternatives.csv and
// alternatives.png too.
func WriteFolder(st Stager, f Folder) error {
	p, r, u := f.Corridor.Profile, f.Result, f.Units
	if err := WriteGround(st, p, u); err != nil {
		return err
	}
	if f.Alternatives != nil {
		if err := WriteComparison(st, p.Name, f.Alternatives, u); err != nil {
			return err
		}
	}
	sum := NewSummary(p.Name, r, f.PlanErr)
	sum.Provenance = newProvenanceJSON(f.Provenance, p.WorkCRS)
	if err := st.WriteFile("summary.json", func(w io.Writer) error { return WriteSummaryJSON(w, sum) }); err != nil {
		return err
	}
	if err := st.WriteFile(ReportFile, func(w io.Writer) error {
		return html.Write(w, html.Report{Name: p.Name, Profile: p, Result: r, PlanErr: f.PlanErr, Alternatives: f.Alternatives,
			Provenance: f.Provenance, Units: u, Caution: SafetyNotice, Words: Words(u)})
	}); err != nil {
		return err
	}
	if r.Status != planner.Optimal {
		return nil
	}
	if err := writePlanFiles(st, p, r, u); err != nil {
		return err
	}
	if err := WriteSheets(st, p.Name, r, u, Imprint{InputsDate: f.Provenance.InputsDate, Version: f.Provenance.Version}); err != nil {
		return fmt.Errorf("printable sheets: %w", err)
	}
	if rt := f.Corridor.Route; rt != nil && len(rt.Curves) > 0 {
		if err := st.WriteFile("curves.csv", func(w io.Writer) error { return WriteCurvesCSV(w, rt, p.Stations[0].Chainage, u) }); err != nil {
			return err
		}
	}
	src := survey.Source{DEM: demPath(f.Provenance), DEMCRS: f.Provenance.DEMCRS, Version: f.Provenance.Version, Date: inputsDate(f.Provenance)}
	if err := survey.WriteFiles(st, &survey.Input{Corridor: f.Corridor, Result: r, Units: u, Source: src}); err != nil {
		return fmt.Errorf("survey deliverables: %w", err)
	}
	return nil
}

// Words words the planner's findings in u for the HTML report.
func Words(u Units) html.Words {
	return html.Words{
		Violation: func(v planner.Violation) string { return FormatViolation(v, u) },
		Warning:   func(w planner.Warning) string { return FormatWarning(w, u) },
		Error:     func(err error) string { return ErrorText(err, u) },
	}
}

func demPath(p Provenance) string {
	for _, f := range p.Inputs {
		if f.Role == "dem" {
			return f.Path
		}
	}
	return ""
}

func inputsDate(p Provenance) time.Time {
	t, _ := time.Parse("2006-01-02", p.InputsDate)
	return t
}

// WritePlan writes one planned alignment's folder into st without the
// survey deliverables, the report or provenance: ground.csv/png,
// summary.json and, for a plan, stations.csv, drops.csv and the long
// section.
func WritePlan(st Stager, p *alignment.Profile, r *planner.Result, planErr error, u Units) error {
	if err := WriteGround(st, p, u); err != nil {
		return err
	}
	if err := st.WriteFile("summary.json", func(w io.Writer) error {
		return WriteSummaryJSON(w, NewSummary(p.Name, r, planErr))
	}); err != nil {
		return err
	}
	if r.Status != planner.Optimal {
		return nil
	}
	return writePlanFiles(st, p, r, u)
}

// writePlanFiles writes stations.csv, drops.csv and the long section.
func writePlanFiles(st Stager, p *alignment.Profile, r *planner.Result, u Units) error {
	for _, f := range []struct {
		name  string
		write func(io.Writer) error
	}{
		{"stations.csv", func(w io.Writer) error { return WriteStationsCSV(w, &r.Plan, u) }},
		{"drops.csv", func(w io.Writer) error { return WriteDropsCSV(w, r, u) }},
	} {
		if err := st.WriteFile(f.name, f.write); err != nil {
			return err
		}
	}
	ls := NewLongSection(p.Name, r, u)
	for _, name := range []string{"profile.png", "profile.svg"} {
		path, err := st.Path(name)
		if err == nil {
			err = WriteLongSection(path, ls)
		}
		if err != nil {
			return fmt.Errorf("long section: %w", err)
		}
	}
	return nil
}

// WriteComparison writes alternatives.csv and alternatives.png of one
// alignment into st.
func WriteComparison(st Stager, name string, alts []planner.Alternative, u Units) error {
	if err := st.WriteFile("alternatives.csv", func(w io.Writer) error { return WriteAlternativesCSV(w, alts, u) }); err != nil {
		return err
	}
	chart := AlternativesChart{Name: name, Units: u}
	for _, a := range alts {
		if a.Err != nil || a.Result == nil {
			continue
		}
		t := a.Result.Totals
		chart.Alternatives = append(chart.Alternatives, Alternative{
			Label: AlternativeLabel(a.DropHeights, u), CutVolume: t.CutVolume, FillVolume: t.FillVolume,
			EarthworkCost: t.EarthworkCost, DropCost: t.DropCost, TotalCost: t.TotalCost,
		})
	}
	if len(chart.Alternatives) == 0 {
		return nil
	}
	path, err := st.Path("alternatives.png")
	if err == nil {
		err = WriteAlternativesChart(path, chart)
	}
	return err
}
