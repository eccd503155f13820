package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"path/filepath"

	"canalstep/alignment"
	"canalstep/report"
)

// runProfile implements `canalstep profile`: the ground long section along
// each alignment, as ground.csv and ground.png per alignment.
func runProfile(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("profile", stdout)
	var g groundFlags
	g.register(fs)
	out := fs.String("out", "canalstep-out", "output folder; each alignment gets a sub-folder named after it")
	unitsFlag := fs.String("units", "si", "units of lengths given and printed: si (m) or us (ft)")
	fs.Usage = func() {
		fmt.Fprintln(stdout, "Usage: canalstep profile --dem DEM --alignment FILE [--spacing 10] [--out DIR]")
		fmt.Fprintln(stdout, "\nSamples the DEM along each alignment and writes DIR/<name>/ground.csv and ground.png.\n\nFlags:")
		fs.PrintDefaults()
	}
	if ok, err := parseFlags(fs, args); !ok {
		return err
	}
	u, err := parseUnits(*unitsFlag)
	if err != nil {
		return err
	}
	set, err := loadProfiles(g, u)
	if err != nil {
		return err
	}
	for _, p := range set.profiles {
		if err := ctx.Err(); err != nil {
			return err
		}
		if err := writeGroundProfile(filepath.Join(*out, p.folder), p, u); err != nil {
			return err
		}
		last := p.stations[len(p.stations)-1]
		lo, hi := minMax(p.ground)
		fmt.Fprintf(stdout, "%s: %d stations, %s to %s, ground %.2f to %.2f %s -> %s\n",
			p.name, len(p.stations),
			alignment.FormatStation(p.stations[0].Chainage, u == report.US),
			alignment.FormatStation(last.Chainage, u == report.US),
			u.Length(lo), u.Length(hi), u.LengthUnit(), filepath.Join(*out, p.folder))
	}
	fmt.Fprintf(stdout, "DEM %s: %d×%d cells, %s interpolation, %d blocks decoded\n",
		set.info.Path, set.info.Width, set.info.Height, set.info.Method, set.blocks)
	return nil
}

// writeGroundProfile writes ground.csv and ground.png of one alignment into
// dir through a staging folder.
func writeGroundProfile(dir string, p profile, u report.Units) error {
	st, err := report.NewStaging(dir)
	if err != nil {
		return err
	}
	defer st.Discard()
	us := u == report.US
	rows := make([]report.GroundRow, len(p.stations))
	for i, s := range p.stations {
		rows[i] = report.GroundRow{
			Station: alignment.FormatStation(s.Chainage, us), Chainage: s.Chainage,
			X: s.X, Y: s.Y, Lon: s.Lon, Lat: s.Lat, Ground: p.ground[i],
		}
	}
	// The plot and the CSV are independent: write them side by side.
	plotErr := make(chan error, 1)
	go func() {
		plotErr <- report.WriteGroundProfile(st.Path("ground.png"), report.GroundProfile{
			Name: p.name, Chainage: p.chainages(), Ground: p.ground, Units: u,
		})
	}()
	csvErr := report.WriteFileAtomic(st.Path("ground.csv"), func(w io.Writer) error {
		return report.WriteGroundCSV(w, rows, u)
	})
	if err := errors.Join(csvErr, <-plotErr); err != nil {
		return err
	}
	return st.Commit()
}

// minMax returns the smallest and largest of vs (NaN-free input).
func minMax(vs []float64) (lo, hi float64) {
	lo, hi = vs[0], vs[0]
	for _, v := range vs[1:] {
		lo, hi = min(lo, v), max(hi, v)
	}
	return lo, hi
}
