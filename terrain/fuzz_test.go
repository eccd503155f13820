package terrain_test

import (
	"errors"
	"math"
	"testing"

	"canalstep/terrain"
)

// FuzzSample samples arbitrary coordinates on a small rough DEM with 16-cell
// tiles. Invariants: no panic; a point is reported outside exactly when it
// lies beyond the raster's outer edge (or is NaN); inside, a bilinear value
// is a convex combination of cell values, so it lies within the grid's
// minimum and maximum, and a nearest value is one of the cell values. On a
// copy with invalid cells (3e38, ±Inf, 1e9, -32768, NaN) every sample is
// NaN or within that same range.
func FuzzSample(f *testing.F) {
	const w, h = 40, 30
	g := roughGrid(w, h, 3)
	path := mustWriteDEM(f, f.TempDir(), "fuzz.tif", g, terrain.WithTileSize(16))
	lo, hi := math.Inf(1), math.Inf(-1)
	values := map[float32]bool{}
	for _, v := range g.Data {
		lo, hi = min(lo, float64(v)), max(hi, float64(v))
		values[v] = true
	}
	// The same grid with invalid cells (fill values, infinities, a spike):
	// a sample is NaN or, as above, within the valid cells' range.
	bad := g
	bad.Data = append([]float32(nil), g.Data...)
	for i, v := range []float32{3e38, float32(math.Inf(1)), float32(math.Inf(-1)), 1e9, -32768, float32(math.NaN())} {
		bad.Data[(7*i+3)*w%len(bad.Data)+i] = v
	}
	badPath := mustWriteDEM(f, f.TempDir(), "fuzz-bad.tif", bad, terrain.WithTileSize(16))
	dems := []*terrain.DEM{
		mustOpen(f, path, terrain.Options{}),
		mustOpen(f, path, terrain.Options{Method: terrain.Nearest, CacheBlocks: 2}),
		mustOpen(f, badPath, terrain.Options{}),
		mustOpen(f, badPath, terrain.Options{Method: terrain.Nearest}),
	}
	for _, s := range [][2]float64{
		{fxX0, fxY0}, {fxX0 + w*fxCell, fxY0 - h*fxCell}, {fxX0 + 160, fxY0 - 160},
		{fxX0 - 1e-9, fxY0}, {math.NaN(), fxY0}, {math.Inf(1), 0}, {1e300, -1e300},
	} {
		f.Add(s[0], s[1])
	}
	f.Fuzz(func(t *testing.T, x, y float64) {
		inside := x >= fxX0 && x <= fxX0+w*fxCell && y <= fxY0 && y >= fxY0-h*fxCell
		for i, d := range dems {
			out := []float64{0}
			err := d.Sample([]float64{x}, []float64{y}, out)
			var oe *terrain.OutsideError
			if isOut := errors.As(err, &oe); isOut == inside || (err != nil && !isOut) {
				t.Fatalf("DEM %d at (%v, %v): inside=%v, error %v", i, x, y, inside, err)
			}
			if !inside {
				continue
			}
			z := out[0]
			if i == 0 && !(z >= lo-1e-9 && z <= hi+1e-9) { // rounding of the weights only
				t.Fatalf("bilinear at (%v, %v) = %v, outside the grid's range [%v, %v]", x, y, z, lo, hi)
			}
			if i == 1 && !values[float32(z)] {
				t.Fatalf("nearest at (%v, %v) = %v, not a cell value", x, y, z)
			}
			if i >= 2 && !math.IsNaN(z) && !(z >= lo-1e-9 && z <= hi+1e-9) {
				t.Fatalf("DEM with invalid cells, method %d, at (%v, %v) = %v, neither NaN nor within [%v, %v]", i, x, y, z, lo, hi)
			}
		}
	})
}
