package hydraulics

import (
	"fmt"
	"math"
)

// solveBracket finds the root of a function f that increases through zero
// on [lo, hi] (f(lo) ≤ 0 ≤ f(hi)), given f and its derivative. It takes
// Newton steps and bisects whenever a step leaves the bracket, so it always
// converges. tol is the absolute tolerance on x.
func solveBracket(lo, hi, tol float64, f func(x float64) (fx, dfx float64)) (float64, error) {
	x := 0.5 * (lo + hi)
	for i := 0; i < 300; i++ {
		fx, dfx := f(x)
		if math.IsNaN(fx) {
			return 0, fmt.Errorf("%w: NaN at %g", ErrNoConvergence, x)
		}
		if fx == 0 {
			return x, nil
		}
		if fx < 0 {
			lo = x
		} else {
			hi = x
		}
		next := x - fx/dfx
		if !(next > lo && next < hi) {
			next = 0.5 * (lo + hi)
		}
		if math.Abs(next-x) <= tol || hi-lo <= tol {
			return next, nil
		}
		x = next
	}
	return 0, fmt.Errorf("%w: 300 iterations on [%g, %g]", ErrNoConvergence, lo, hi)
}

// expandUp doubles hi from start until f(hi) ≥ 0 and returns it; f must
// rise without bound.
func expandUp(start float64, f func(x float64) float64) (float64, error) {
	hi := start
	for i := 0; i < 200; i++ {
		if f(hi) >= 0 {
			return hi, nil
		}
		hi *= 2
	}
	return 0, fmt.Errorf("%w: no upper bracket from %g", ErrNoConvergence, start)
}
