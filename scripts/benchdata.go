//go:build ignore

// Benchdata writes the inputs of scripts/bench.sh into a folder (default
// bench-out/):
//
//	dem.tif        20000×20000 Float32 cells of 10 m (200 km square) in
//	               EPSG:32633, DEFLATE, 256² tiles: a smooth synthetic
//	               surface, written band by band so memory stays small.
//	               Skipped when it already exists.
//	route.geojson  a 40 km alignment with 50 vertices (lon/lat, RFC 7946).
//	points.txt     the stations every 1 m along it, plus its vertices, as
//	               "x y" in the DEM's CRS: what the profile command samples,
//	               fed to gdallocationinfo and the Python reference.
//	batch.geojson  -batch alignments (default 60) of 2 to 5 km for the batch
//	               benchmark, each running roughly down the DEM's regional
//	               fall with a gentle swing, spread over the DEM (lon/lat).
//
// Usage: go run scripts/benchdata.go [-out bench-out] [-size 20000] [-batch 60]
//
// The terrain and route are invented for the benchmark.
package main

import (
	"bufio"
	"encoding/json"
	"flag"
	"fmt"
	"log"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"

	"canalstep/terrain"
)

const (
	epsg    = 32633 // UTM zone 33N
	x0, y0  = 300000.0, 4300000.0
	cell    = 10.0    // m
	routeM  = 40000.0 // route length, m
	nVertex = 50      // route vertices
	spacing = 1.0     // station spacing, m
)

func main() {
	out := flag.String("out", "bench-out", "output folder")
	size := flag.Int("size", 20000, "DEM width and height in cells")
	nBatch := flag.Int("batch", 60, "alignments in batch.geojson")
	flag.Parse()
	if err := os.MkdirAll(*out, 0o755); err != nil {
		log.Fatal(err)
	}
	dem := filepath.Join(*out, "dem.tif")
	if _, err := os.Stat(dem); err == nil && demCurrent(dem, *size) {
		fmt.Fprintf(os.Stderr, "benchdata: %s exists, kept\n", dem)
	} else {
		if err == nil {
			fmt.Fprintf(os.Stderr, "benchdata: %s holds another surface or size: rewriting it\n", dem)
			os.Remove(dem)
		}
		if err := writeDEM(dem, *size); err != nil {
			log.Fatal(err)
		}
	}
	if err := writeRoute(*out); err != nil {
		log.Fatal(err)
	}
	if err := writeBatch(*out, *nBatch, float64(*size)*cell); err != nil {
		log.Fatal(err)
	}
}

// elevation is a smooth surface in metres: a plain falling 0.4 % to the
// south-east with long swells and a gentle valley pattern, from about
// 1450 m in the north-west corner to about 270 m in the south-east one
// (inside terrain's default valid range of -500 to 9000 m everywhere).
func elevation(e, n float64) float64 {
	return 1420 - 0.004*(e-x0)*0.6 - 0.004*(y0-n)*0.8 +
		25*math.Sin(e/5200)*math.Cos(n/7300) + 6*math.Sin((e+n)/1900)
}

// demCurrent reports whether the DEM at path is size cells square and
// holds today's elevation surface (two cell centres checked to 1 mm), so
// that a DEM written by an older benchdata is rewritten.
func demCurrent(path string, size int) bool {
	d, err := terrain.Open(path, terrain.Options{})
	if err != nil {
		return false
	}
	defer d.Close()
	if in := d.Info(); in.Width != size || in.Height != size {
		return false
	}
	var xs, ys, want []float64
	for _, c := range []int{size / 4, 3 * size / 4} {
		e, n := x0+(float64(c)+0.5)*cell, y0-(float64(c)+0.5)*cell
		xs, ys, want = append(xs, e), append(ys, n), append(want, float64(float32(elevation(e, n))))
	}
	z := make([]float64, len(xs))
	if d.Sample(xs, ys, z) != nil {
		return false
	}
	for i := range z {
		if math.Abs(z[i]-want[i]) > 1e-3 {
			return false
		}
	}
	return true
}

func writeDEM(path string, size int) error {
	g := terrain.Grid{
		Width: size, Height: size, EPSG: epsg,
		GeoTransform: [6]float64{x0, cell, 0, y0, 0, -cell},
		NoData:       -9999, HasNoData: true,
		Rows: func(row0, n int, dst []float32) error {
			for r := range n {
				nn := y0 - (float64(row0+r)+0.5)*cell
				row := dst[r*size : (r+1)*size]
				for c := range row {
					row[c] = float32(elevation(x0+(float64(c)+0.5)*cell, nn))
				}
			}
			return nil
		},
	}
	fmt.Fprintf(os.Stderr, "benchdata: writing %s (%d×%d cells)\n", path, size, size)
	return terrain.WriteGeoTIFF(path, g)
}

// vertices returns the route in the DEM's CRS: 49 equal legs of
// routeM/49 m whose bearing swings around south-east.
func vertices() (xs, ys []float64) {
	leg := routeM / (nVertex - 1)
	x, y := 350000.0, 4250000.0
	xs, ys = []float64{x}, []float64{y}
	for i := 1; i < nVertex; i++ {
		bearing := (125 + 30*math.Sin(float64(i)/4)) * math.Pi / 180 // from north, clockwise
		x += leg * math.Sin(bearing)
		y += leg * math.Cos(bearing)
		xs, ys = append(xs, x), append(ys, y)
	}
	return xs, ys
}

func writeRoute(dir string) error {
	vx, vy := vertices()
	// Stations every spacing metres along the legs, plus every vertex.
	pf, err := os.Create(filepath.Join(dir, "points.txt"))
	if err != nil {
		return err
	}
	w := bufio.NewWriter(pf)
	n := 0
	emit := func(x, y float64) { fmt.Fprintf(w, "%.3f %.3f\n", x, y); n++ }
	chain := 0.0
	next := 0.0
	for i := 0; i+1 < len(vx); i++ {
		dx, dy := vx[i+1]-vx[i], vy[i+1]-vy[i]
		l := math.Hypot(dx, dy)
		emit(vx[i], vy[i])
		if next == chain {
			next += spacing
		}
		for ; next < chain+l-1e-9; next += spacing {
			f := (next - chain) / l
			emit(vx[i]+f*dx, vy[i]+f*dy)
		}
		chain += l
	}
	emit(vx[len(vx)-1], vy[len(vy)-1])
	if err := w.Flush(); err != nil {
		return err
	}
	if err := pf.Close(); err != nil {
		return err
	}

	if err := writeLines(filepath.Join(dir, "route.geojson"), []string{"bench-40km"}, [][]float64{vx}, [][]float64{vy}); err != nil {
		return err
	}
	fmt.Fprintf(os.Stderr, "benchdata: route %.0f m, %d vertices, %d points\n", chain, len(vx), n)
	return nil
}

// writeBatch writes n alignments of 2 to 5 km (seeded) to batch.geojson.
// Each starts on a grid of points inside the DEM (extent m square) and
// runs with 250 m legs on a bearing that swings ±12° about 143°, the
// direction of the regional fall of elevation.
func writeBatch(dir string, n int, extent float64) error {
	if n <= 0 {
		return nil
	}
	r := rand.New(rand.NewPCG(20261202, 7))
	cols := int(math.Ceil(math.Sqrt(float64(n))))
	margin := 6000.0 // m: a 5 km line from any start stays inside
	pitch := (extent - 2*margin) / float64(cols)
	names := make([]string, n)
	xs, ys := make([][]float64, n), make([][]float64, n)
	total := 0.0
	for i := range n {
		length := 2000 + 3000*r.Float64()
		x := x0 + margin + (float64(i%cols)+0.5)*pitch
		y := y0 - margin - (float64(i/cols)+0.5)*pitch
		phase := 2 * math.Pi * r.Float64()
		legs := int(math.Ceil(length / 250))
		leg := length / float64(legs)
		lx, ly := []float64{x}, []float64{y}
		for k := 1; k <= legs; k++ {
			bearing := (143 + 12*math.Sin(phase+float64(k)/3)) * math.Pi / 180
			x += leg * math.Sin(bearing)
			y += leg * math.Cos(bearing)
			lx, ly = append(lx, x), append(ly, y)
		}
		names[i], xs[i], ys[i] = fmt.Sprintf("bench-batch-%02d", i+1), lx, ly
		total += length
	}
	if err := writeLines(filepath.Join(dir, "batch.geojson"), names, xs, ys); err != nil {
		return err
	}
	fmt.Fprintf(os.Stderr, "benchdata: batch: %d alignments, %.1f km in all\n", n, total/1000)
	return nil
}

// writeLines writes LineStrings given in the DEM's CRS as an RFC 7946
// GeoJSON FeatureCollection (lon/lat), one feature per name. xs and ys are
// transformed in place.
func writeLines(path string, names []string, xs, ys [][]float64) error {
	tr, err := terrain.NewTransform(fmt.Sprintf("EPSG:%d", epsg), "OGC:CRS84")
	if err != nil {
		return err
	}
	defer tr.Close()
	features := make([]any, len(names))
	for i, name := range names {
		if err := tr.Transform(xs[i], ys[i]); err != nil {
			return err
		}
		coords := make([][2]float64, len(xs[i]))
		for k := range xs[i] {
			coords[k] = [2]float64{math.Round(xs[i][k]*1e9) / 1e9, math.Round(ys[i][k]*1e9) / 1e9}
		}
		features[i] = map[string]any{
			"type":       "Feature",
			"properties": map[string]any{"name": name},
			"geometry":   map[string]any{"type": "LineString", "coordinates": coords},
		}
	}
	b, err := json.Marshal(map[string]any{"type": "FeatureCollection", "features": features})
	if err != nil {
		return err
	}
	return os.WriteFile(path, b, 0o644)
}
