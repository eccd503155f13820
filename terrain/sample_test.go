package terrain_test

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"sync"
	"testing"

	"canalstep/terrain"
)

// TestSampleMatchesGdallocationinfo compares samples with GDAL's own point
// query, `gdallocationinfo -valonly -geoloc` (gdal-bin), which returns the
// raw value of the cell containing each point. At cell centres bilinear
// interpolation must return that value too. The fixture uses 64×64 tiles
// so that points fall in many blocks and near block edges.
func TestSampleMatchesGdallocationinfo(t *testing.T) {
	const w, h = 300, 200
	g := roughGrid(w, h, 7)
	path := mustWriteDEM(t, t.TempDir(), "rough.tif", g, terrain.WithTileSize(64))

	rng := rand.New(rand.NewPCG(3, 4))
	var xs, ys []float64
	var in strings.Builder
	// Cell centres, including all four corners of the raster and both sides
	// of the tile edges at column 63/64 and row 127/128.
	cells := [][2]int{{0, 0}, {w - 1, 0}, {0, h - 1}, {w - 1, h - 1}, {63, 10}, {64, 10}, {5, 127}, {5, 128}}
	for range 400 {
		cells = append(cells, [2]int{rng.IntN(w), rng.IntN(h)})
	}
	for _, cr := range cells {
		x, y := cellCentre(cr[0], cr[1])
		xs, ys = append(xs, x), append(ys, y)
	}
	nCentres := len(xs)
	// Arbitrary points inside cells (kept 1 cm from cell edges so that the
	// cell is unambiguous) for the nearest method.
	for range 400 {
		x := fxX0 + (float64(rng.IntN(w))+0.001+0.998*rng.Float64())*fxCell
		y := fxY0 - (float64(rng.IntN(h))+0.001+0.998*rng.Float64())*fxCell
		xs, ys = append(xs, x), append(ys, y)
	}
	for i := range xs {
		fmt.Fprintf(&in, "%.6f %.6f\n", xs[i], ys[i])
	}
	lines := runLines(t, in.String(), "gdallocationinfo", "-valonly", "-geoloc", path)
	if len(lines) != len(xs) {
		t.Fatalf("gdallocationinfo gave %d lines for %d points", len(lines), len(xs))
	}
	want := make([]float64, len(xs))
	for i, l := range lines {
		v, err := strconv.ParseFloat(strings.TrimSpace(l), 64)
		if err != nil {
			t.Fatalf("gdallocationinfo line %d %q: %v", i, l, err)
		}
		want[i] = v
	}

	for _, m := range []terrain.Method{terrain.Nearest, terrain.Bilinear} {
		d := mustOpen(t, path, terrain.Options{Method: m})
		got := make([]float64, len(xs))
		if err := d.Sample(xs, ys, got); err != nil {
			t.Fatalf("%v: Sample: %v", m, err)
		}
		n := len(xs)
		if m == terrain.Bilinear {
			n = nCentres // bilinear equals the cell value only at centres
		}
		bad := 0
		for i := range n {
			// Exact in float32: both read the same float32 value;
			// gdallocationinfo prints it with 15 significant digits, which
			// parse back to the same float32.
			if float32(got[i]) != float32(want[i]) {
				bad++
				if bad < 5 {
					t.Errorf("%v: point %d (%.3f, %.3f): got %v, gdallocationinfo %v", m, i, xs[i], ys[i], got[i], want[i])
				}
			}
		}
		if bad > 0 {
			t.Errorf("%v: %d of %d points differ from gdallocationinfo", m, bad, n)
		}
	}
}

// planar returns a grid z = a + b·col + c·row whose values are exact in
// float32 (binary fractions), so bilinear interpolation of the stored values
// is exact.
func planar(w, h int, a, b, c float64) terrain.Grid {
	data := make([]float32, w*h)
	for r := range h {
		for col := range w {
			data[r*w+col] = float32(a + b*float64(col) + c*float64(r))
		}
	}
	return terrain.Grid{Width: w, Height: h, GeoTransform: fxGeoTransform(), EPSG: 32633, Data: data}
}

// TestBilinearPlanar checks bilinear interpolation against the analytic
// value of a plane, z = a + b·col + c·row at fractional (col, row) measured
// from the first cell centre: bilinear interpolation reproduces any plane
// exactly. In the outer half-cell the stencil is clamped, so the value is
// that of the nearest edge centre line.
func TestBilinearPlanar(t *testing.T) {
	const w, h = 70, 50
	const a, b, c = 100.0, 0.25, -0.125 // exact in float32; invented
	path := mustWriteDEM(t, t.TempDir(), "plane.tif", planar(w, h, a, b, c), terrain.WithTileSize(16))
	d := mustOpen(t, path, terrain.Options{})

	rng := rand.New(rand.NewPCG(1, 2))
	var xs, ys []float64
	for range 2000 { // anywhere in the raster, outer half-cells included
		xs = append(xs, fxX0+rng.Float64()*w*fxCell)
		ys = append(ys, fxY0-rng.Float64()*h*fxCell)
	}
	// Block edges (16-cell tiles): stencils straddling two and four blocks.
	xs = append(xs, fxX0+16*fxCell, fxX0+16*fxCell, fxX0+3.3*fxCell)
	ys = append(ys, fxY0-5.2*fxCell, fxY0-32*fxCell, fxY0-16*fxCell)
	got := make([]float64, len(xs))
	if err := d.Sample(xs, ys, got); err != nil {
		t.Fatal(err)
	}
	for i := range xs {
		fc := min(max((xs[i]-fxX0)/fxCell-0.5, 0), w-1)
		fr := min(max((fxY0-ys[i])/fxCell-0.5, 0), h-1)
		want := a + b*fc + c*fr
		// Stored values are exact; what is left is float64 rounding of the
		// coordinates and the interpolation, far below 1e-9 m.
		if diff := math.Abs(got[i] - want); diff > 1e-9 {
			t.Errorf("point %d (%.4f, %.4f): got %.12f, want %.12f (diff %.3g)", i, xs[i], ys[i], got[i], want, diff)
		}
	}
}

// TestNoDataStencil checks that a sample is NaN when its bilinear stencil
// gives weight to a nodata or NaN cell, and keeps its value otherwise.
func TestNoDataStencil(t *testing.T) {
	g := planar(8, 8, 50, 1, 2)
	g.NoData, g.HasNoData = -9999, true
	g.Data[3*8+3] = -9999               // cell (3, 3) is nodata
	g.Data[6*8+6] = float32(math.NaN()) // cell (6, 6) is NaN
	path := mustWriteDEM(t, t.TempDir(), "holes.tif", g)

	at := func(c, r float64) (float64, float64) { // fractional cell centre coordinates
		return fxX0 + (c+0.5)*fxCell, fxY0 - (r+0.5)*fxCell
	}
	tests := []struct {
		name   string
		c, r   float64
		method terrain.Method
		nan    bool
	}{
		{"stencil corner on nodata", 2.5, 2.5, terrain.Bilinear, true},
		{"stencil edge on nodata", 3.0, 2.5, terrain.Bilinear, true},
		{"nodata cell centre", 3, 3, terrain.Bilinear, true},
		{"next cell centre, zero weight on nodata", 2, 3, terrain.Bilinear, false},
		{"next cell centre below", 3, 4, terrain.Bilinear, false},
		{"just off the next centre", 2.01, 3, terrain.Bilinear, true},
		{"clear of nodata", 1.5, 1.5, terrain.Bilinear, false},
		{"NaN cell in stencil", 5.5, 5.5, terrain.Bilinear, true},
		{"nearest on nodata cell", 3.2, 2.8, terrain.Nearest, true},
		{"nearest beside nodata", 3.6, 2.8, terrain.Nearest, false},
		{"nearest on NaN cell", 6.1, 5.9, terrain.Nearest, true},
	}
	for _, m := range []terrain.Method{terrain.Bilinear, terrain.Nearest} {
		d := mustOpen(t, path, terrain.Options{Method: m})
		for _, tt := range tests {
			if tt.method != m {
				continue
			}
			x, y := at(tt.c, tt.r)
			out := []float64{0}
			if err := d.Sample([]float64{x}, []float64{y}, out); err != nil {
				t.Fatalf("%s: %v", tt.name, err)
			}
			if math.IsNaN(out[0]) != tt.nan {
				t.Errorf("%s (%v at %g, %g): got %v, want NaN=%v", tt.name, m, tt.c, tt.r, out[0], tt.nan)
			}
		}
	}
}

// TestOutside checks that points outside the raster become NaN, are listed
// in an *OutsideError, and do not stop the others from being sampled.
func TestOutside(t *testing.T) {
	const w, h = 10, 6
	path := mustWriteDEM(t, t.TempDir(), "small.tif", planar(w, h, 10, 1, 1))
	d := mustOpen(t, path, terrain.Options{})
	right, bottom := fxX0+w*fxCell, fxY0-h*fxCell
	xs := []float64{fxX0 + 15, fxX0 - 0.01, right + 0.01, fxX0 + 15, fxX0 + 15, fxX0, right, math.NaN(), fxX0 + 25}
	ys := []float64{fxY0 - 15, fxY0 - 15, fxY0 - 15, fxY0 + 0.01, bottom - 0.01, fxY0, bottom, fxY0 - 15, fxY0 - 25}
	out := make([]float64, len(xs))
	err := d.Sample(xs, ys, out)
	var oe *terrain.OutsideError
	if !errors.As(err, &oe) {
		t.Fatalf("got error %v, want *OutsideError", err)
	}
	if want := []int{1, 2, 3, 4, 7}; !slices.Equal(oe.Indices, want) {
		t.Errorf("outside indices %v, want %v", oe.Indices, want)
	}
	if got, want := err.Error(), "5 of 9 points fall outside the DEM"; got != want {
		t.Errorf("message %q, want %q", got, want)
	}
	// Inside points, including the raster's exact corners, are sampled;
	// (15, -15) m from the corner is cell (1, 1)'s centre: 10+1+1.
	wantIn := map[int]float64{0: 12, 5: 10, 6: 10 + (w - 1) + (h - 1), 8: 14}
	for i, v := range out {
		if want, ok := wantIn[i]; ok {
			if math.Abs(v-want) > 1e-9 {
				t.Errorf("point %d: got %v, want %v", i, v, want)
			}
		} else if !math.IsNaN(v) {
			t.Errorf("outside point %d: got %v, want NaN", i, v)
		}
	}
}

// TestUnitsAndScale checks the vertical unit conversion (international foot
// = 0.3048 m exactly, US survey foot = 1200/3937 m exactly; both from
// memory, as defined by the 1959 international yard and pound agreement and
// listed in NIST Handbook 44, Appendix C) and the band's scale and offset.
func TestUnitsAndScale(t *testing.T) {
	dir := t.TempDir()
	g := planar(4, 4, 1000, 0, 0) // 1000 everywhere
	plain := mustWriteDEM(t, dir, "plain.tif", g)
	scaled := mustWriteDEM(t, dir, "scaled.tif", g, terrain.WithScaleOffset(0.5, 10)) // 1000*0.5+10 = 510

	tests := []struct {
		path, zu string
		want     float64
	}{
		{plain, "", 1000},
		{plain, "m", 1000},
		{plain, "ft", 304.8},
		{plain, "us-ft", 1000 * 1200.0 / 3937},
		{scaled, "m", 510},
		{scaled, "ft", 510 * 0.3048},
	}
	x, y := cellCentre(1, 2)
	for _, tt := range tests {
		d := mustOpen(t, tt.path, terrain.Options{ZUnits: tt.zu})
		out := []float64{0}
		if err := d.Sample([]float64{x + 3}, []float64{y - 2}, out); err != nil {
			t.Fatal(err)
		}
		if math.Abs(out[0]-tt.want) > 1e-9 { // float64 rounding only
			t.Errorf("%s z-units %q: got %.12f m, want %.12f m", tt.path, tt.zu, out[0], tt.want)
		}
		if tt.zu != "" && d.Info().ZUnits != tt.zu {
			t.Errorf("Info().ZUnits = %q, want %q", d.Info().ZUnits, tt.zu)
		}
	}
	d := mustOpen(t, scaled, terrain.Options{})
	if in := d.Info(); in.Scale != 0.5 || in.Offset != 10 {
		t.Errorf("Info scale/offset = %v/%v, want 0.5/10", in.Scale, in.Offset)
	}
}

// TestBlocksReadAndEviction checks that only the blocks the stencils touch
// are decoded, that a small cache evicts and re-reads, and that results do
// not depend on the cache size or on the file's layout (tiles or strips).
func TestBlocksReadAndEviction(t *testing.T) {
	const w, h = 200, 160
	dir := t.TempDir()
	g := roughGrid(w, h, 11)
	tiled := mustWriteDEM(t, dir, "tiled.tif", g, terrain.WithTileSize(32))
	strips := mustWriteDEM(t, dir, "strips.tif", g, terrain.WithStrips(1))

	// A diagonal line of 1000 points from cell (5, 5) to cell (150, 120).
	var xs, ys []float64
	for i := range 1000 {
		f := float64(i) / 999
		xs = append(xs, fxX0+(5.5+f*145)*fxCell)
		ys = append(ys, fxY0-(5.5+f*115)*fxCell)
	}
	// Distinct 32×32 blocks under the stencils, counted independently.
	blocks := map[[2]int]bool{}
	for i := range xs {
		fc, fr := (xs[i]-fxX0)/fxCell-0.5, (fxY0-ys[i])/fxCell-0.5
		c0, r0 := int(math.Floor(fc)), int(math.Floor(fr))
		for _, d := range [][2]int{{0, 0}, {1, 0}, {0, 1}, {1, 1}} {
			blocks[[2]int{(c0 + d[0]) / 32, (r0 + d[1]) / 32}] = true
		}
	}

	ref := make([]float64, len(xs))
	d := mustOpen(t, tiled, terrain.Options{})
	if err := d.Sample(xs, ys, ref); err != nil {
		t.Fatal(err)
	}
	if got, want := d.BlocksRead(), len(blocks); got != want {
		t.Errorf("tiled: %d blocks read, want %d (the blocks under the line)", got, want)
	}
	if err := d.Sample(xs, ys, make([]float64, len(xs))); err != nil {
		t.Fatal(err)
	}
	if got, want := d.BlocksRead(), len(blocks); got != want {
		t.Errorf("tiled, second pass: %d blocks read in all, want %d (all cached)", got, want)
	}

	// Parallel decoding (three GDAL handles) or none must not change a value
	// nor the blocks decoded.
	for _, readers := range []int{1, 3} {
		p := mustOpen(t, tiled, terrain.Options{Readers: readers})
		got := make([]float64, len(xs))
		if err := p.Sample(xs, ys, got); err != nil {
			t.Fatal(err)
		}
		if !slices.Equal(got, ref) {
			t.Errorf("%d readers: samples differ", readers)
		}
		if p.BlocksRead() != len(blocks) {
			t.Errorf("%d readers: %d blocks read, want %d", readers, p.BlocksRead(), len(blocks))
		}
	}

	small := mustOpen(t, tiled, terrain.Options{CacheBlocks: 2})
	got := make([]float64, len(xs))
	// Reversed order twice defeats a 2-block cache on the stencils that
	// straddle block edges.
	for range 2 {
		if err := small.Sample(xs, ys, got); err != nil {
			t.Fatal(err)
		}
		slices.Reverse(xs)
		slices.Reverse(ys)
		slices.Reverse(got)
	}
	if !slices.Equal(got, ref) {
		t.Error("2-block cache: samples differ from the large cache")
	}
	if small.BlocksRead() <= len(blocks) {
		t.Errorf("2-block cache read %d blocks over two passes, want more than %d (evictions)", small.BlocksRead(), len(blocks))
	}

	st := mustOpen(t, strips, terrain.Options{})
	in := st.Info()
	if in.BlockY != 1 || in.CacheBlockY != 160 || in.CacheBlockX != w {
		// 256-row bands, cut to the raster's 160 rows and 200 columns
		t.Errorf("strip file: block %d×%d, cache block %d×%d; want 200×1 and 200×160",
			in.BlockX, in.BlockY, in.CacheBlockX, in.CacheBlockY)
	}
	if err := st.Sample(xs, ys, got); err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(got, ref) {
		t.Error("strip file: samples differ from the tiled file")
	}
	if st.BlocksRead() != 1 {
		t.Errorf("strip file: %d bands read, want 1", st.BlocksRead())
	}
}

// TestConcurrentSample runs several goroutines on one DEM (run with -race).
// The small cache makes them evict each other's blocks.
func TestConcurrentSample(t *testing.T) {
	const w, h = 256, 256
	path := mustWriteDEM(t, t.TempDir(), "conc.tif", roughGrid(w, h, 5), terrain.WithTileSize(32))
	d := mustOpen(t, path, terrain.Options{CacheBlocks: 4})
	ref := mustOpen(t, path, terrain.Options{})

	var wg sync.WaitGroup
	errs := make(chan error, 8)
	for g := range 8 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			rng := rand.New(rand.NewPCG(uint64(g), 9))
			xs, ys := make([]float64, 500), make([]float64, 500)
			for i := range xs {
				xs[i] = fxX0 + rng.Float64()*w*fxCell
				ys[i] = fxY0 - rng.Float64()*h*fxCell
			}
			got, want := make([]float64, len(xs)), make([]float64, len(xs))
			for range 5 {
				if err := d.Sample(xs, ys, got); err != nil {
					errs <- err
					return
				}
			}
			if err := ref.Sample(xs, ys, want); err != nil {
				errs <- err
				return
			}
			if !slices.Equal(got, want) {
				errs <- fmt.Errorf("goroutine %d: concurrent samples differ", g)
			}
		}()
	}
	wg.Wait()
	close(errs)
	for err := range errs {
		t.Error(err)
	}
}

// TestSouthUp checks a raster stored bottom row first (positive cell
// height in the geotransform), which GDAL and gdallocationinfo accept: the
// plane z = 10 + 2·col + 3·row (row counted from the southern edge) is read
// back at cell centres and between them.
func TestSouthUp(t *testing.T) {
	const w, h = 6, 5
	g := planar(w, h, 10, 2, 3)
	g.GeoTransform = [6]float64{fxX0, fxCell, 0, fxY0, 0, fxCell} // y grows with row
	d := mustOpen(t, mustWriteDEM(t, t.TempDir(), "southup.tif", g), terrain.Options{})
	xs := []float64{fxX0 + 5, fxX0 + 25, fxX0 + 40}
	ys := []float64{fxY0 + 5, fxY0 + 15, fxY0 + 30}
	want := []float64{10, 10 + 2*2 + 3*1, 10 + 2*3.5 + 3*2.5} // fractional (col, row) from the first centre
	got := make([]float64, len(xs))
	if err := d.Sample(xs, ys, got); err != nil {
		t.Fatal(err)
	}
	for i := range got {
		if math.Abs(got[i]-want[i]) > 1e-9 { // exact plane, float64 rounding only
			t.Errorf("point %d: got %v, want %v", i, got[i], want[i])
		}
	}
}

// TestInt16DEM samples a tiled Int16 DEM with a scale of 0.1 m (as DEMs
// stored in decimetres are), which is read through GDAL's windowed reads
// with type conversion rather than whole Float32 blocks.
func TestInt16DEM(t *testing.T) {
	path := filepath.Join(t.TempDir(), "int16.tif")
	const w, h = 300, 280
	data := make([]int16, w*h)
	for r := range h {
		for c := range w {
			data[r*w+c] = int16(1000 + 3*c - 2*r) // decimetres
		}
	}
	mustWriteInt16(t, path, w, h, data, 0.1, nil)
	d := mustOpen(t, path, terrain.Options{})
	if in := d.Info(); in.DataType != "Int16" || in.Scale != 0.1 {
		t.Fatalf("Info: %s, scale %v", in.DataType, in.Scale)
	}
	// A point 260.25 columns and 270.5 rows from the first centre, in the
	// partial edge block: 0.1·(1000 + 3·260.25 − 2·270.5) m.
	out := []float64{0}
	if err := d.Sample([]float64{fxX0 + 260.75*fxCell}, []float64{fxY0 - 271*fxCell}, out); err != nil {
		t.Fatal(err)
	}
	if want := 0.1 * (1000 + 3*260.25 - 2*270.5); math.Abs(out[0]-want) > 1e-9 {
		t.Errorf("got %.9f m, want %.9f m", out[0], want)
	}
}
