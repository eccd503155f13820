package terrain

import "math"

// cellMetres converts a raw cell value to metres as the validity check
// defines it. The conversion to float64 of the product rounds it, so the
// compiler cannot fuse the multiply and the add differently in two places.
func cellMetres(v float32, mul, add float64) float64 {
	return float64(float64(v)*mul) + add
}

// rawInterval returns the raw float32 values [lo, hi] whose elevation in
// metres (cellMetres) lies in r. The conversion is monotone in the raw
// value (rounding keeps order), so those values form one interval, and
// [DEM.Sample] can test a cell with two float32 comparisons instead of a
// conversion per cell. It finds the interval's ends by bisection over the
// float32 values in order, 32 steps each. ok is false when no seed inside
// the interval turns up (an empty or extremely narrow range); the caller
// then converts each cell.
func rawInterval(r Range, mul, add float64) (lo, hi float32, ok bool) {
	in := func(k int64) bool { return r.Contains(cellMetres(fromKey(k), mul, add)) }
	a, b := (r.Min-add)/mul, (r.Max-add)/mul
	seed, found := int64(0), false
	for _, c := range []float64{(a + b) / 2, a, b} {
		k := toKey(float32(max(min(c, math.MaxFloat32), -math.MaxFloat32)))
		for d := int64(-2); d <= 2 && !found; d++ {
			if k+d >= minKey && k+d <= maxKey && in(k+d) {
				seed, found = k+d, true
			}
		}
	}
	if !found {
		return 0, 0, false
	}
	// Smallest key in [minKey, seed] that is in the range, and largest in
	// [seed, maxKey]: in() is false then true below the seed, true then
	// false above it.
	l, h := minKey, seed
	for l < h {
		m := l + (h-l)/2
		if in(m) {
			h = m
		} else {
			l = m + 1
		}
	}
	lo32 := fromKey(l)
	l, h = seed, maxKey
	for l < h {
		m := h - (h-l)/2
		if in(m) {
			l = m
		} else {
			h = m - 1
		}
	}
	return lo32, fromKey(l), true
}

// The float32 values from -MaxFloat32 to MaxFloat32 in order, as integer
// keys: the bit pattern for positive values, its negated magnitude for
// negative ones (-0 and +0 share key 0).
const (
	minKey = -int64(0x7f7fffff)
	maxKey = int64(0x7f7fffff)
)

func toKey(v float32) int64 {
	u := math.Float32bits(v)
	if u&(1<<31) != 0 {
		return -int64(u &^ (1 << 31))
	}
	return int64(u)
}

func fromKey(k int64) float32 {
	if k < 0 {
		return math.Float32frombits(uint32(-k) | 1<<31)
	}
	return math.Float32frombits(uint32(k))
}
