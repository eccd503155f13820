package report

import (
	"errors"
	"fmt"
	"io"

	"canalstep/alignment"
	"canalstep/planner"
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
		path, err := st.Path("ground.png")
		if err == nil {
			err = WriteGroundProfile(path, GroundProfile{Name: p.Name, Chainage: p.Chainages(), Ground: p.Grounds(), Units: u})
		}
		plotErr <- err
	}()
	csvErr := st.WriteFile("ground.csv", func(w io.Writer) error { return WriteGroundCSV(w, p, u) })
	return errors.Join(csvErr, <-plotErr)
}

// WritePlan writes one planned alignment's folder into st: its ground
// (ground.csv, ground.png) and, for a plan, stations.csv, drops.csv,
// profile.png and profile.svg; summary.json always, with the conflicts of
// an infeasible plan (planErr).
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
