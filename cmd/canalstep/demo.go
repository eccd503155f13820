package main

import (
	"context"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strconv"

	"canalstep/planner/corridor"
	"canalstep/report"
	"canalstep/terrain"
)

// runDemo implements `canalstep demo`: it generates the fictional demo scheme
// (a seeded synthetic DEM and its canal alignments) and runs the other
// commands on it, exactly as a user would call them.
func runDemo(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("demo", stdout)
	out := fs.String("out", "canalstep-out", "output folder: inputs/ holds the generated DEM and alignments, one sub-folder per alignment the results")
	seed := fs.Uint64("seed", 7, "seed of the synthetic terrain (the same seed gives the same DEM, byte for byte)")
	fs.Usage = func() {
		fmt.Fprintln(stdout, "Usage: canalstep demo [--out DIR] [--seed N]")
		fmt.Fprintf(stdout, "\nBuilds the fictional %s on generated terrain and runs canalstep on it.\n\nFlags:\n", terrain.DemoSchemeName)
		fs.PrintDefaults()
		fmt.Fprintf(stdout, "\n%s\n", exitCodeHelp)
	}
	if ok, err := parseFlags(fs, args); !ok {
		return err
	}
	in := filepath.Join(*out, "inputs")
	dem := filepath.Join(in, "dem.tif")
	aln := filepath.Join(in, "canals.geojson")
	design := filepath.Join(in, "design.toml")
	job := filepath.Join(in, "job.toml")
	fmt.Fprintf(stdout, "== %s (fictional), terrain seed %d\n", terrain.DemoSchemeName, *seed)
	if err := writeDemoInputs(dem, aln, design, job, *seed); err != nil {
		return fmt.Errorf("demo inputs: %w", err)
	}
	fmt.Fprintf(stdout, "DEM: %s\nalignments: %s\ndesign: %s\nbatch job: %s\n", dem, aln, design, job)

	steps := [][]string{
		{"profile", "--dem", dem, "--alignment", aln, "--spacing", "10", "--out", filepath.Join(*out, "profile")},
		{"plan", "--dem", dem, "--alignment", aln, "--design", design, "--out", filepath.Join(*out, "plan")},
		{"batch", "--out", filepath.Join(*out, "batch"), "--quiet", job},
	}
	for _, s := range steps {
		if err := ctx.Err(); err != nil {
			return err
		}
		fmt.Fprintf(stdout, "\n$ canalstep %s\n", quoteArgs(s))
		if err := run(ctx, s, stdout, stderr); err != nil {
			return fmt.Errorf("demo step %q: %w", s[0], err)
		}
	}
	fmt.Fprintf(stdout, "\nDemo outputs are in %s/{profile,plan,batch}/<alignment>/.\n", *out)
	fmt.Fprintf(stdout, "The reviewer's report of one canal: %s\n", filepath.Join(*out, "plan", "Main_Canal", report.ReportFile))
	fmt.Fprintf(stdout, "The batch index (every canal, route and drop-height alternative): %s\n", filepath.Join(*out, "batch", "index.html"))
	return nil
}

// demoDesign is the design file of the demo scheme: a small earth canal on
// the fictional fan. The numbers are the demo's own, chosen to be plausible
// for a loam canal (permissible velocity within the range of Fortier and
// Scobey's table, Chow 1959 Table 7-3; n for earth canals, Chow 1959
// Table 5-6); unit costs are illustrative.
const demoDesign = `# canalstep design file for the fictional demo scheme (SI units).
# Keys are the flag names of 'canalstep plan --help' with _ for -.
flow = 2.5            # design discharge, m3/s
bottom_width = 2.0    # m
side_slope = 1.5      # H:V
roughness = 0.025     # Manning n, earth canal
max_velocity = 0.9    # m/s, permissible (non-eroding)
min_velocity = 0.45   # m/s, non-silting
drop_heights = [0.5, 1.0, 1.5]
spacing = 10          # m between stations
ground = "cross-sections"  # earthwork on DEM cross-sections (the 10 m DEM is coarse for auto)
command_margin = 0.15 # m: the water surface commands the fields beside the canal
max_cut = 5.0         # m
max_fill = 2.0        # m
bank_top_width = 3.0  # m, maintenance track on each bank
outer_slope = 2.0     # H:V
cost_cut = 4.0        # per m3
cost_fill = 6.0       # per m3 compacted
cost_drop = 15000     # per drop structure
cost_drop_height = 10000  # per m of drop height

# The main canal runs across the fan's head and its gullies; to command the
# land beyond them its banks may stand higher there.
[alignment."Main Canal"]
max_fill = 3.0        # m
`

// demoJob is the batch job file of the demo scheme: every canal and route
// of canals.geojson planned with three drop-height alternatives on the
// design of design.toml.
const demoJob = `# canalstep batch job for the fictional demo scheme: every canal and route,
# three drop-height alternatives. Paths are relative to this file's folder.
#   canalstep batch --out OUT job.toml
dem = "dem.tif"
alignments = ["canals.geojson"]
design = "design.toml"
alternatives = "1.0;1.5;1.0,1.5"
`

// writeDemoInputs writes the synthetic DEM, the demo alignments and
// offtakes (as RFC 7946 GeoJSON in WGS 84 lon/lat, the branches with their
// own flow and bed width, the middle branch's two candidate routes sharing
// a corridor), the demo design file and its batch job file.
func writeDemoInputs(demPath, alnPath, designPath, jobPath string, seed uint64) error {
	if err := os.MkdirAll(filepath.Dir(demPath), 0o755); err != nil {
		return err
	}
	if err := terrain.WriteGeoTIFF(demPath, terrain.SyntheticFan(seed)); err != nil {
		return err
	}
	tr, err := terrain.SharedTransform(fmt.Sprintf("EPSG:%d", terrain.DemoEPSG), corridor.LonLat)
	if err != nil {
		return err
	}
	var fc geoJSONLines
	for _, a := range terrain.DemoAlignments() {
		xs, ys := make([]float64, len(a.Vertices)), make([]float64, len(a.Vertices))
		for i, v := range a.Vertices {
			xs[i], ys[i] = v[0], v[1]
		}
		if err := tr.Transform(xs, ys); err != nil {
			return fmt.Errorf("alignment %q to lon/lat: %w", a.Name, err)
		}
		fc.addWith(a.Name, a.Corridor, a.Flow, a.BottomWidth, xs, ys)
	}
	for _, o := range terrain.DemoOfftakes() {
		xs, ys := []float64{o.E}, []float64{o.N}
		if err := tr.Transform(xs, ys); err != nil {
			return fmt.Errorf("offtake %q to lon/lat: %w", o.Name, err)
		}
		fc.addPoint(o.Name, o.Alignment, o.Margin, xs[0], ys[0])
	}
	if err := report.WriteFileAtomic(alnPath, fc.write); err != nil {
		return err
	}
	if err := report.WriteFileAtomic(designPath, func(w io.Writer) error {
		_, err := io.WriteString(w, demoDesign)
		return err
	}); err != nil {
		return err
	}
	return report.WriteFileAtomic(jobPath, func(w io.Writer) error {
		_, err := io.WriteString(w, demoJob)
		return err
	})
}

// geoJSONLines builds a FeatureCollection of named LineStrings in lon/lat
// (RFC 7946), coordinates to 1e-9 degree (about 0.1 mm).
type geoJSONLines struct{ features []string }

func (g *geoJSONLines) add(name string, lon, lat []float64) { g.addWith(name, "", 0, 0, lon, lat) }

// addWith adds a line with a corridor and its own flow (m³/s) and bottom
// width (m) as properties, each left out when empty or zero.
func (g *geoJSONLines) addWith(name, corridor string, flow, bottomWidth float64, lon, lat []float64) {
	b := []byte(`{"type":"Feature","properties":{"name":`)
	b = strconv.AppendQuote(b, name)
	if corridor != "" {
		b = append(b, `,"corridor":`...)
		b = strconv.AppendQuote(b, corridor)
	}
	if flow > 0 {
		b = append(b, `,"flow":`...)
		b = strconv.AppendFloat(b, flow, 'f', -1, 64)
	}
	if bottomWidth > 0 {
		b = append(b, `,"bottom_width":`...)
		b = strconv.AppendFloat(b, bottomWidth, 'f', -1, 64)
	}
	b = append(b, `},"geometry":{"type":"LineString","coordinates":[`...)
	for i := range lon {
		if i > 0 {
			b = append(b, ',')
		}
		b = append(b, '[')
		b = strconv.AppendFloat(b, lon[i], 'f', 9, 64)
		b = append(b, ',')
		b = strconv.AppendFloat(b, lat[i], 'f', 9, 64)
		b = append(b, ']')
	}
	b = append(b, "]}}"...)
	g.features = append(g.features, string(b))
}

// addPoint adds an offtake: a Point with its alignment and command margin
// (m above the ground at the point).
func (g *geoJSONLines) addPoint(name, alignment string, margin, lon, lat float64) {
	b := []byte(`{"type":"Feature","properties":{"name":`)
	b = strconv.AppendQuote(b, name)
	b = append(b, `,"alignment":`...)
	b = strconv.AppendQuote(b, alignment)
	b = append(b, `,"margin":`...)
	b = strconv.AppendFloat(b, margin, 'f', -1, 64)
	b = append(b, `},"geometry":{"type":"Point","coordinates":[`...)
	b = strconv.AppendFloat(b, lon, 'f', 9, 64)
	b = append(b, ',')
	b = strconv.AppendFloat(b, lat, 'f', 9, 64)
	b = append(b, "]}}"...)
	g.features = append(g.features, string(b))
}

func (g *geoJSONLines) write(w io.Writer) error {
	if _, err := io.WriteString(w, "{\"type\":\"FeatureCollection\",\"features\":[\n"); err != nil {
		return err
	}
	for i, f := range g.features {
		sep := ",\n"
		if i == len(g.features)-1 {
			sep = "\n"
		}
		if _, err := io.WriteString(w, f+sep); err != nil {
			return err
		}
	}
	_, err := io.WriteString(w, "]}\n")
	return err
}

// quoteArgs prints a command line so that it can be pasted into a shell.
func quoteArgs(args []string) string {
	s := ""
	for i, a := range args {
		if i > 0 {
			s += " "
		}
		if a == "" || containsShellSpecial(a) {
			a = strconv.Quote(a)
		}
		s += a
	}
	return s
}

func containsShellSpecial(s string) bool {
	for _, r := range s {
		switch r {
		case ' ', '\t', '"', '\'', ';', '&', '|', '$', '*', '?', '(', ')', '<', '>', '\\':
			return true
		}
	}
	return false
}
