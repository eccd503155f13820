package terrain_test

import (
	"fmt"
	"log"
	"os"
	"path/filepath"

	"canalstep/terrain"
)

// A DEM of a plane rising 0.5 m per cell eastwards and falling 0.25 m per
// cell southwards (10 m cells), sampled between cell centres. The third
// point is 11.84 cells from the first centre both ways, so by hand
// 120 + 0.5·11.84 − 0.25·11.84 = 122.96 m.
func ExampleDEM_Sample() {
	dir, err := os.MkdirTemp("", "terrain-example")
	if err != nil {
		log.Fatal(err)
	}
	defer os.RemoveAll(dir)

	const w, h = 64, 64
	data := make([]float32, w*h)
	for r := range h {
		for c := range w {
			data[r*w+c] = float32(120 + 0.5*float64(c) - 0.25*float64(r))
		}
	}
	path := filepath.Join(dir, "plane.tif")
	err = terrain.WriteGeoTIFF(path, terrain.Grid{
		Width: w, Height: h, Data: data, EPSG: 32633,
		GeoTransform: [6]float64{500000, 10, 0, 4000000, 0, -10},
	})
	if err != nil {
		log.Fatal(err)
	}

	dem, err := terrain.Open(path, terrain.Options{})
	if err != nil {
		log.Fatal(err)
	}
	defer dem.Close()

	xs := []float64{500005, 500010, 500123.4} // eastings, m
	ys := []float64{3999995, 3999990, 3999876.6}
	z := make([]float64, len(xs))
	if err := dem.Sample(xs, ys, z); err != nil {
		log.Fatal(err)
	}
	for i := range z {
		fmt.Printf("E %.1f m, N %.1f m: ground %.3f m\n", xs[i], ys[i], z[i])
	}
	in := dem.Info()
	fmt.Printf("%d×%d cells of %.0f m, EPSG:%d, %d block(s) read\n", in.Width, in.Height, in.CellX, in.EPSG, dem.BlocksRead())
	// Output:
	// E 500005.0 m, N 3999995.0 m: ground 120.000 m
	// E 500010.0 m, N 3999990.0 m: ground 120.125 m
	// E 500123.4 m, N 3999876.6 m: ground 122.960 m
	// 64×64 cells of 10 m, EPSG:32633, 1 block(s) read
}

// Longitude/latitude (WGS 84, x = longitude) to UTM zone 33N. The same
// points through PROJ's command line, `echo "36 15" | cs2cs EPSG:4326
// EPSG:32633` (latitude first there), give 500000.00 3983948.45.
func ExampleTransform_Transform() {
	tr, err := terrain.NewTransform("EPSG:4326", "EPSG:32633")
	if err != nil {
		log.Fatal(err)
	}
	defer tr.Close()
	xs, ys := []float64{15, 15.5}, []float64{36, 36.2} // lon, lat in degrees
	if err := tr.Transform(xs, ys); err != nil {
		log.Fatal(err)
	}
	for i := range xs {
		fmt.Printf("E %.3f m, N %.3f m\n", xs[i], ys[i])
	}
	// Output:
	// E 500000.000 m, N 3983948.453 m
	// E 544949.925 m, N 4006247.585 m
}

func ExampleCRSInfo() {
	for _, def := range []string{"EPSG:32633", "EPSG:2227", "EPSG:4326"} {
		c, err := terrain.CRSInfo(def)
		if err != nil {
			log.Fatal(err)
		}
		fmt.Printf("%s: geographic %v, %.12g m per unit\n", def, c.Geographic, c.LinearUnitToMetre)
	}
	// Output:
	// EPSG:32633: geographic false, 1 m per unit
	// EPSG:2227: geographic false, 0.304800609601 m per unit
	// EPSG:4326: geographic true, 0 m per unit
}

// One transform pair per process: every alignment of a run asks for the
// same pair and gets the same Transform, built once; the inverse comes from
// the forward one. OGC:CRS84, the CRS of RFC 7946 GeoJSON, is taken as
// LonLat. The eastings and northings are those of ExampleTransform_Transform
// (cs2cs gives 500000.00 3983948.45 for the first).
func ExampleSharedTransform() {
	toUTM, err := terrain.SharedTransform("OGC:CRS84", "EPSG:32633")
	if err != nil {
		log.Fatal(err)
	}
	again, _ := terrain.SharedTransform(terrain.LonLat, "EPSG:32633")
	toLonLat, err := toUTM.Inverse()
	if err != nil {
		log.Fatal(err)
	}
	xs, ys := []float64{15, 15.5}, []float64{36, 36.2} // lon, lat in degrees
	if err := toUTM.Transform(xs, ys); err != nil {
		log.Fatal(err)
	}
	for i := range xs {
		fmt.Printf("E %.3f m, N %.3f m\n", xs[i], ys[i])
	}
	if err := toLonLat.Transform(xs, ys); err != nil {
		log.Fatal(err)
	}
	fmt.Printf("back: %.9f°E %.9f°N; one shared transform: %v\n", xs[1], ys[1], again == toUTM)
	// Output:
	// E 500000.000 m, N 3983948.453 m
	// E 544949.925 m, N 4006247.585 m
	// back: 15.500000000°E 36.200000000°N; one shared transform: true
}
