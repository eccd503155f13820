package terrain_test

import (
	"bytes"
	"math"
	"math/rand/v2"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/airbusgeo/godal"

	"canalstep/terrain"
	"canalstep/testdata/reftool"
)

// Fixture georeferencing shared by the tests: UTM zone 33N (EPSG:32633),
// 10 m cells, upper-left corner at (500000, 4000000). Invented for the tests.
const (
	fxX0   = 500000.0
	fxY0   = 4000000.0
	fxCell = 10.0
)

func fxGeoTransform() [6]float64 { return [6]float64{fxX0, fxCell, 0, fxY0, 0, -fxCell} }

// cellCentre returns the CRS coordinates of the centre of cell (c, r).
func cellCentre(c, r int) (x, y float64) {
	return fxX0 + (float64(c)+0.5)*fxCell, fxY0 - (float64(r)+0.5)*fxCell
}

// mustWriteDEM writes g into dir under name and returns the path.
func mustWriteDEM(tb testing.TB, dir, name string, g terrain.Grid, opts ...terrain.WriteOption) string {
	tb.Helper()
	p := filepath.Join(dir, name)
	if err := terrain.WriteGeoTIFF(p, g, opts...); err != nil {
		tb.Fatalf("WriteGeoTIFF: %v", err)
	}
	return p
}

// mustOpen opens path and closes it when the test ends.
func mustOpen(tb testing.TB, path string, opt terrain.Options) *terrain.DEM {
	tb.Helper()
	d, err := terrain.Open(path, opt)
	if err != nil {
		tb.Fatalf("Open(%s): %v", path, err)
	}
	tb.Cleanup(func() { d.Close() })
	return d
}

// roughGrid returns a w×h grid of a non-trivial surface: a tilted plane
// with ridges plus seeded noise, so neighbouring cells all differ and no
// value is a round number. Values lie roughly between 100 and 260 m.
func roughGrid(w, h int, seed uint64) terrain.Grid {
	rng := rand.New(rand.NewPCG(seed, 1))
	data := make([]float32, w*h)
	for r := range h {
		for c := range w {
			x, y := float64(c), float64(r)
			z := 150 + 0.2*x - 0.1*y + 12*math.Sin(x/7)*math.Cos(y/11) + rng.Float64()*3
			data[r*w+c] = float32(z)
		}
	}
	return terrain.Grid{Width: w, Height: h, GeoTransform: fxGeoTransform(), EPSG: 32633,
		NoData: -9999, HasNoData: true, Data: data}
}

// runLines runs a tool with input on stdin and returns its output lines.
func runLines(tb testing.TB, stdin string, name string, args ...string) []string {
	tb.Helper()
	cmd := exec.Command(reftool.Need(tb, name), args...)
	cmd.Stdin = strings.NewReader(stdin)
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	out, err := cmd.Output()
	if err != nil {
		tb.Fatalf("%s %v: %v\n%s", name, args, err, stderr.String())
	}
	return strings.Split(strings.TrimRight(string(out), "\n"), "\n")
}

// fields parses the whitespace-separated numbers of one output line.
func fields(tb testing.TB, line string) []float64 {
	tb.Helper()
	var v []float64
	for _, f := range strings.Fields(line) {
		x, err := strconv.ParseFloat(f, 64)
		if err != nil {
			tb.Fatalf("parse %q in line %q: %v", f, line, err)
		}
		v = append(v, x)
	}
	return v
}

// mustWriteInt16 writes a w×h Int16 GeoTIFF on the fixture georeferencing,
// in 256-cell DEFLATE tiles, with the band scale given (elevation = raw ×
// scale) and, when nodata is not nil, a nodata value. WriteGeoTIFF writes
// Float32 only, so this goes through godal.
func mustWriteInt16(tb testing.TB, path string, w, h int, data []int16, scale float64, nodata *float64) {
	tb.Helper()
	godal.RegisterAll()
	ds, err := godal.Create(godal.GTiff, path, 1, godal.Int16, w, h,
		godal.CreationOption("TILED=YES", "BLOCKXSIZE=256", "BLOCKYSIZE=256", "COMPRESS=DEFLATE"))
	if err != nil {
		tb.Fatal(err)
	}
	sr, err := godal.NewSpatialRefFromEPSG(32633)
	if err != nil {
		tb.Fatal(err)
	}
	defer sr.Close()
	b := ds.Bands()[0]
	steps := []error{ds.SetSpatialRef(sr), ds.SetGeoTransform(fxGeoTransform()), b.SetScaleOffset(scale, 0)}
	if nodata != nil {
		steps = append(steps, b.SetNoData(*nodata))
	}
	for _, err := range append(steps, b.Write(0, 0, data, w, h), ds.Close()) {
		if err != nil {
			tb.Fatal(err)
		}
	}
}
