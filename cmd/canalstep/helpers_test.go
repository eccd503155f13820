package main

import (
	"bytes"
	"context"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"testing"

	"canalstep/report/outdir"
	"canalstep/terrain"
)

// asMainEnv, when set to 1 in a child process's environment, makes the test
// binary run main() instead of the tests: the signal, concurrency and
// hostile-input tests run canalstep as a separate process this way, with
// the real main, exit status, stdout and stderr, without a second build.
const asMainEnv = "CANALSTEP_TEST_RUN_MAIN"

// fixtureDir holds what the tests share (the demo DEM); made in TestMain.
var fixtureDir string

func TestMain(m *testing.M) {
	if os.Getenv(asMainEnv) == "1" {
		main() // exits
		return
	}
	dir, err := os.MkdirTemp("", "canalstep-cmd-test-")
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		os.Exit(1)
	}
	fixtureDir = dir
	code := m.Run()
	os.RemoveAll(dir)
	os.Exit(code)
}

var demoDEMOnce struct {
	sync.Once
	path string
	err  error
}

// demoDEM returns the path of the demo DEM (seed 7), written once for all
// tests. Tests must not change it.
func demoDEM(t testing.TB) string {
	t.Helper()
	demoDEMOnce.Do(func() {
		p := filepath.Join(fixtureDir, "demo-dem.tif")
		demoDEMOnce.err = terrain.WriteGeoTIFF(p, terrain.SyntheticFan(7))
		demoDEMOnce.path = p
	})
	if demoDEMOnce.err != nil {
		t.Fatal(demoDEMOnce.err)
	}
	return demoDEMOnce.path
}

// feature is a GeoJSON Feature for the tests, in the demo's projected CRS
// (EPSG:32634: the runs pass --alignment-crs).
type feature map[string]any

// demoLine returns demo alignment which (0 West, 1 Middle, 2 East Branch)
// cut to its first vertices (0: all), named name ("" keeps the demo's
// name), with extra properties.
func demoLine(which, vertices int, name string, props map[string]any) feature {
	a := terrain.DemoAlignments()[which]
	v := a.Vertices
	if vertices > 0 && vertices < len(v) {
		v = v[:vertices]
	}
	if name == "" {
		name = a.Name
	}
	p := map[string]any{"name": name}
	for k, x := range props {
		p[k] = x
	}
	return feature{"type": "Feature", "properties": p, "geometry": map[string]any{"type": "LineString", "coordinates": v}}
}

// demoOfftake returns the demo turnout that serves alignment (by demo name),
// serving servedBy.
func demoOfftake(t testing.TB, alignment, servedBy string) feature {
	t.Helper()
	for _, o := range terrain.DemoOfftakes() {
		if o.Alignment == alignment {
			return feature{"type": "Feature", "properties": map[string]any{"name": o.Name, "alignment": servedBy, "margin": o.Margin},
				"geometry": map[string]any{"type": "Point", "coordinates": []float64{o.E, o.N}}}
		}
	}
	t.Fatalf("no demo offtake on %s", alignment)
	return nil
}

// writeGeoJSON writes a FeatureCollection of fs to dir/name.
func writeGeoJSON(t testing.TB, dir, name string, fs ...feature) string {
	t.Helper()
	b, err := json.Marshal(map[string]any{"type": "FeatureCollection", "features": fs})
	if err != nil {
		t.Fatal(err)
	}
	return writeFile(t, dir, name, string(b))
}

// East4 is the head reach of the demo's East Branch (its first four
// vertices: 122 stations at 10 m, 1,181 m), the small fixture of most plan
// tests; East6 the first six (with turnout E1).
const (
	east, west = 2, 0
	east4      = 4
	east6      = 6
)

// designArgs are the demo's design values as flags (demo.go's design file):
// the canal of the demo scheme, not a reference case.
var designArgs = []string{"--flow", "2.5", "--bottom-width", "2", "--side-slope", "1.5", "--roughness", "0.025",
	"--max-velocity", "0.9", "--min-velocity", "0.45", "--alignment-crs", "EPSG:32634"}

// planArgs returns the arguments of `canalstep cmd` on the demo DEM with
// the alignment file aln, the design flags, output out and extra flags.
func planArgs(t testing.TB, cmd, aln, out string, extra ...string) []string {
	args := append([]string{cmd, "--dem", demoDEM(t), "--alignment", aln, "--out", out}, designArgs...)
	return append(args, extra...)
}

// runEast runs `canalstep cmd` in-process on the first vertices of the
// demo's East Branch with the design flags and extra, into a new folder,
// and returns stdout and the alignment's output folder.
func runEast(t testing.TB, cmd string, vertices int, extra ...string) (stdout, folder string) {
	t.Helper()
	dir := t.TempDir()
	aln := writeGeoJSON(t, dir, "east.geojson", demoLine(east, vertices, "", nil))
	out := filepath.Join(dir, "out")
	return mustRun(t, planArgs(t, cmd, aln, out, extra...)...), filepath.Join(out, "East_Branch")
}

func writeFile(t testing.TB, dir, name, body string) string {
	t.Helper()
	p := filepath.Join(dir, name)
	if err := os.WriteFile(p, []byte(body), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

func readCSV(t testing.TB, path string) [][]string {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	return rows
}

// column returns the index of the column called name in header.
func column(t testing.TB, header []string, name string) int {
	t.Helper()
	for i, h := range header {
		if h == name {
			return i
		}
	}
	t.Fatalf("no column %q in %v", name, header)
	return -1
}

func num(t testing.TB, s string) float64 {
	t.Helper()
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		t.Fatalf("not a number: %q", s)
	}
	return v
}

// readSummary decodes summary.json into a generic map.
func readSummary(t testing.TB, path string) map[string]any {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var m map[string]any
	if err := json.Unmarshal(b, &m); err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	return m
}

// runCmd runs canalstep in-process and returns its stdout, stderr (with
// the error line main would print) and exit status. Tests that run plan,
// compare or batch in-process are not parallel: a run sets the PDFs'
// process-wide date (report.SetPDFDate), which two runs at once would race
// on. Tests of child processes (runBinary, start) may be parallel.
func runCmd(t testing.TB, args ...string) (string, string, int) {
	t.Helper()
	var out, errb bytes.Buffer
	code := runMain(context.Background(), args, &out, &errb)
	return out.String(), errb.String(), code
}

// mustRun runs canalstep in-process and fails the test unless it exits 0.
func mustRun(t testing.TB, args ...string) string {
	t.Helper()
	out, errs, code := runCmd(t, args...)
	if code != 0 {
		t.Fatalf("canalstep %s: exit %d: %s\n%s", strings.Join(args[:1], " "), code, errs, out)
	}
	return out
}

// planFiles are the files every plan folder holds whatever else
// report.WriteFolder adds (the report, the survey and GIS deliverables):
// the tests that need a whole folder compare file sets (sameFiles).
var planFiles = []string{"ground.csv", "ground.png", "summary.json", "stations.csv", "drops.csv",
	"profile.png", "profile.svg", "report.html", outdir.MarkerFile}

// checkFolder fails unless dir holds every file of files, none empty.
func checkFolder(t testing.TB, dir string, files []string) {
	t.Helper()
	for _, f := range files {
		if fi, err := os.Stat(filepath.Join(dir, f)); err != nil || fi.Size() == 0 {
			t.Errorf("%s missing or empty (%v)", filepath.Join(dir, f), err)
		}
	}
}

// fileNames returns the names of the files in dir, sorted.
func fileNames(t testing.TB, dir string) []string {
	t.Helper()
	entries, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	var names []string
	for _, e := range entries {
		names = append(names, e.Name())
	}
	return names
}

// sameFiles fails unless every folder of dirs holds the same file names as
// the first: a folder committed by an interrupted or concurrent run is as
// whole as one of a run that ended.
func sameFiles(t testing.TB, dirs ...string) {
	t.Helper()
	if len(dirs) == 0 {
		return
	}
	want := strings.Join(fileNames(t, dirs[0]), " ")
	for _, d := range dirs[1:] {
		if got := strings.Join(fileNames(t, d), " "); got != want {
			t.Errorf("%s holds %s; %s holds %s", d, got, dirs[0], want)
		}
	}
}

// checkNoPartial fails unless the output folder out is absent, or holds
// only the lock file and the folders named in committed: no alignment
// folder of a failed run, no staging, set-aside or temporary entry.
func checkNoPartial(t testing.TB, out string, committed ...string) {
	t.Helper()
	entries, err := os.ReadDir(out)
	if os.IsNotExist(err) {
		return
	}
	if err != nil {
		t.Fatal(err)
	}
	ok := map[string]bool{outdir.LockFile: true}
	for _, c := range committed {
		ok[c] = true
	}
	for _, e := range entries {
		if !ok[e.Name()] {
			t.Errorf("%s holds %q after the run", out, e.Name())
		}
	}
}

// childEnv is the environment of canalstep run as a child process: the
// race detector's exit pause is off (it waits 1 s by default).
func childEnv(extra ...string) []string {
	env := append(os.Environ(), asMainEnv+"=1", "GORACE="+strings.TrimSpace(os.Getenv("GORACE")+" atexit_sleep_ms=0"))
	return append(env, extra...)
}

// childCommand returns canalstep as a child process: the test binary running
// main (see asMainEnv).
func childCommand(ctx context.Context, args ...string) *exec.Cmd {
	exe, err := os.Executable()
	if err != nil {
		panic(err) // the test binary always knows its path on Linux
	}
	c := exec.CommandContext(ctx, exe, args...)
	c.Env = childEnv()
	return c
}

// runBinary runs canalstep as a child process and returns stdout, stderr
// and the exit status.
func runBinary(t testing.TB, args ...string) (string, string, int) {
	t.Helper()
	c := childCommand(context.Background(), args...)
	var out, errb bytes.Buffer
	c.Stdout, c.Stderr = &out, &errb
	err := c.Run()
	code := 0
	if err != nil {
		ee, ok := err.(*exec.ExitError)
		if !ok {
			t.Fatalf("run canalstep: %v", err)
		}
		code = ee.ExitCode()
	}
	return out.String(), errb.String(), code
}
