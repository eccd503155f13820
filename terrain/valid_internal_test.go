package terrain

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestRawInterval checks that the float32 interval Sample tests raw cells
// against admits exactly the values whose elevation in metres lies in the
// range, for scales up and down, negative scales, offsets, feet, a range
// of one value and an empty one: on random raw values, on the interval's
// ends and their float32 neighbours, and on the special values. The
// scales and offsets are invented; 0.3048 m per foot is exact (from memory).
func TestRawInterval(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 8))
	cases := []struct {
		r        Range
		mul, add float64
	}{
		{DefaultValidRange(), 1, 0},
		{DefaultValidRange(), 0.1, 0},
		{DefaultValidRange(), 0.3048, 0},
		{DefaultValidRange(), 0.01 * 0.3048, -12.5},
		{DefaultValidRange(), -1, 100},
		{DefaultValidRange(), 1e-30, 0},
		{DefaultValidRange(), 1e30, 0},
		{Range{}, 1, 0},
		{Range{Min: 0.05, Max: 0.05}, 0.1, 0},
		{Range{Min: 1.5, Max: 1.6}, 1e6, 0},
		{Range{Min: 0.1, Max: 0.1}, 1, 0}, // empty: 0.1 is no float32, so no raw value gives it exactly
		{Range{Min: -11000, Max: 9000}, 1, -1000},
	}
	specials := []float32{0, float32(math.Copysign(0, -1)), float32(math.Inf(1)), float32(math.Inf(-1)),
		float32(math.NaN()), math.MaxFloat32, -math.MaxFloat32, math.SmallestNonzeroFloat32, -32768, 3e38, 1e9}
	for _, c := range cases {
		lo, hi, ok := rawInterval(c.r, c.mul, c.add)
		exact := func(v float32) bool { return c.r.Contains(cellMetres(v, c.mul, c.add)) }
		fast := func(v float32) bool { return !ok && exact(v) || ok && v >= lo && v <= hi }
		vals := append([]float32(nil), specials...)
		if ok {
			for _, e := range []float32{lo, hi} {
				for _, d := range []float64{-1, 1} {
					vals = append(vals, e, math.Nextafter32(e, float32(d*math.Inf(1))),
						math.Nextafter32(math.Nextafter32(e, float32(d*math.Inf(1))), float32(d*math.Inf(1))))
				}
			}
		}
		for range 20000 {
			vals = append(vals, float32((rng.Float64()*2-1)*20000), math.Float32frombits(rng.Uint32()))
		}
		for _, v := range vals {
			if fast(v) != exact(v) {
				t.Errorf("range %v, m = raw×%g%+g: raw %v (%v m) admitted %v by the interval [%v, %v] (found %v), %v in metres",
					c.r, c.mul, c.add, v, cellMetres(v, c.mul, c.add), fast(v), lo, hi, ok, exact(v))
				break
			}
		}
		t.Logf("range %v, ×%g%+g: raw [%v, %v], found %v", c.r, c.mul, c.add, lo, hi, ok)
	}
	if _, _, ok := rawInterval(Range{Min: 0.1, Max: 0.1}, 1, 0); ok {
		t.Error("an interval found for a range no float32 value reaches")
	}
}
