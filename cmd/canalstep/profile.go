package main

import (
	"context"
	"fmt"
	"io"
	"path/filepath"

	"canalstep/alignment"
	"canalstep/planner/corridor"
	"canalstep/report"
	"canalstep/report/outdir"
	"canalstep/report/runner"
	"canalstep/report/textsafe"
	"canalstep/terrain"
)

// runProfile implements `canalstep profile`: the ground long section along
// each alignment, as ground.csv and ground.png per alignment.
func runProfile(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	sys, _, err := preParse(args)
	if err != nil {
		return err
	}
	fs := newFlagSet("profile", stdout)
	g := newGroundFlags(&sys)
	g.register(fs)
	out := fs.String("out", "canalstep-out", "output folder; each alignment gets a sub-folder named after it, replaced as a whole")
	fs.String("units", sys.String(), "units of lengths given and printed: si (m) or us (ft)")
	jobs := fs.Int("jobs", 0, "alignments sampled at once; 0: one per CPU")
	wait := fs.Bool("wait", false, "wait for another run writing the same --out to finish, instead of refusing")
	fs.Usage = func() {
		fmt.Fprintln(stdout, "Usage: canalstep profile --dem DEM --alignment FILE [--spacing 10] [--out DIR]")
		fmt.Fprintln(stdout, "\nSamples the DEM along each alignment and writes DIR/<name>/ground.csv and ground.png.\n\nFlags:")
		fs.PrintDefaults()
		fmt.Fprintf(stdout, "\n%s\n", exitCodeHelp)
	}
	if ok, err := parseFlags(fs, args); !ok {
		return err
	}
	sc, err := g.readScheme()
	if err != nil {
		return err
	}
	dem0, err := g.openDEM()
	if err != nil {
		return err
	}
	info := dem0.Info()
	dem := describeDEM(info)
	dir, err := openOut(ctx, *out, *wait, stderr)
	if err != nil {
		dem0.Close()
		return asInput(err) // the --out path given cannot be written
	}
	defer dir.Close()
	n := len(sc.Alignments)
	profiles := make([]*alignment.Profile, n)
	errs := make([]error, n)
	err = runner.Each(ctx, n, *jobs, dem0, g.openDEM, func(i int, d *terrain.DEM) {
		defer recoverJob(&errs[i])
		o := g.corridorOptions()
		a := sc.Alignments[i]
		if a.Overrides.CurveRadius != nil {
			o.CurveRadius = *a.Overrides.CurveRadius
		}
		c, err := corridor.Build(a, dem, d, terrainCRS{}, o)
		if err == nil {
			err = writeFolder(dir, c.Profile.Folder, func(st report.Stager) error { return report.WriteGround(st, c.Profile, sys) })
		}
		if err == nil {
			profiles[i] = c.Profile
		}
		errs[i] = err
	})
	var names []string
	fail := &runFailure{total: n}
	for i, p := range profiles {
		a := sc.Alignments[i]
		names = append(names, alignment.SafeName(a.Name))
		if errs[i] != nil {
			text := textsafe.Clip(reasonText(errs[i], sys), 400)
			fail.add(a.Name, text, errs[i])
			fmt.Fprintf(stdout, "%s: FAILED: %s\n", textsafe.Terminal(a.Name), text)
			continue
		}
		if p == nil {
			continue
		}
		lo, hi := minMax(p.Grounds())
		fmt.Fprintf(stdout, "%s: %d stations, %s to %s, ground %.2f to %.2f %s -> %s\n",
			textsafe.Terminal(p.Name), len(p.Stations), sys.Station(p.Stations[0].Chainage), sys.Station(p.Stations[len(p.Stations)-1].Chainage),
			sys.Length(lo), sys.Length(hi), sys.LengthUnit(), textsafe.Terminal(filepath.Join(*out, p.Folder)))
	}
	fmt.Fprintf(stdout, "DEM %s: %d×%d cells, %s interpolation\n", textsafe.Terminal(info.Path), info.Width, info.Height, info.Method)
	if err != nil {
		fmt.Fprintln(stdout, dir.Report(names, true))
		return err
	}
	if fail.failed > 0 {
		fail.written = dir.Report(names, false)
		return fail
	}
	return nil
}

// writeFolder stages one output folder, writes it and commits it whole.
func writeFolder(dir *outdir.Dir, name string, write func(report.Stager) error) error {
	st, err := dir.Stage(name)
	if err != nil {
		return err
	}
	defer st.Discard()
	if err := write(st); err != nil {
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
