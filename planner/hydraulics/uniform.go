package hydraulics

import (
	"fmt"
	"math"
)

// NormalDepth returns the uniform-flow depth yn (m) of discharge q (m³/s) in
// section s with Manning roughness n on bed slope slope (m/m): the root of
//
//	(K/n)·A(y)·R(y)^(2/3)·sqrt(S0) = Q
//
// (Manning's equation; Chow 1959, Ch. 5–6, from memory). A·R^(2/3) rises
// strictly with y in a trapezoid, so the root is unique. The solver works on
// ln y: it takes Newton steps on 5·ln A − 2·ln P − 3·ln(n·Q/(K·√S0)), which is
// almost linear in ln y, inside a bracket that it widens until the root is
// enclosed and falls back to bisection whenever a step leaves the bracket.
// It converges for every positive input and does not allocate. q = 0 gives
// 0. A zero or negative slope has no normal depth and is an error wrapping
// [ErrInvalid].
func NormalDepth(c Consts, s Section, q, n, slope float64) (float64, error) {
	if err := checkFlow(c, s, q); err != nil {
		return 0, err
	}
	if !positive(n) {
		return 0, fmt.Errorf("%w: Manning roughness n = %g must be positive", ErrInvalid, n)
	}
	if !positive(slope) {
		return 0, fmt.Errorf("%w: bed slope %g must be positive: a flat or adverse bed has no normal depth", ErrInvalid, slope)
	}
	if q == 0 {
		return 0, nil
	}
	k0 := n * q / (c.K * math.Sqrt(slope)) // A·R^(2/3) at normal depth, m^(8/3)
	target := 3 * math.Log(k0)
	b, z := s.BottomWidth, s.SideSlope
	dp := 2 * math.Sqrt(1+z*z) // dP/dy
	// Starting guess: the smaller of the wide-rectangle and the triangle
	// depths for the same conveyance.
	y0 := math.Inf(1)
	if b > 0 {
		y0 = math.Pow(k0/b, 0.6)
	}
	if z > 0 {
		// A = z·y², P = dp·y: A^5/P^2 = z^5·y^8/dp² = k0³.
		y0 = math.Min(y0, math.Pow(k0*k0*k0*dp*dp/(z*z*z*z*z), 0.125))
	}
	y, err := solveLog(math.Log(y0), func(u float64) (float64, float64) {
		y := math.Exp(u)
		a := (b + z*y) * y
		p := b + dp*y
		t := b + 2*z*y
		return 5*math.Log(a) - 2*math.Log(p) - target, y * (5*t/a - 2*dp/p)
	})
	if err != nil {
		return 0, fmt.Errorf("normal depth of %g m³/s: %w", q, err)
	}
	return y, nil
}

// CriticalDepth returns the depth yc (m) at which discharge q (m³/s) flows
// with minimum specific energy in section s: the root of
//
//	α·Q²·T/(g·A³) = 1
//
// (Chow 1959, Ch. 3–4, from memory). For a rectangle this is the closed form
// (α·q²/g)^(1/3) with q = Q/b; otherwise a safeguarded Newton iteration on
// ln y inside a bracket, as in [NormalDepth]. q = 0 gives 0.
func CriticalDepth(c Consts, s Section, q float64) (float64, error) {
	if err := checkFlow(c, s, q); err != nil {
		return 0, err
	}
	if q == 0 {
		return 0, nil
	}
	b, z := s.BottomWidth, s.SideSlope
	psi := c.alpha() * q * q / c.G
	if z == 0 {
		return math.Cbrt(psi / (b * b)), nil
	}
	// The rectangle and the triangle estimates are both upper bounds of the
	// trapezoid's critical depth; start from the smaller.
	y0 := math.Pow(2*psi/(z*z), 0.2)
	if b > 0 {
		y0 = math.Min(y0, math.Cbrt(psi/(b*b)))
	}
	target := math.Log(psi)
	y, err := solveLog(math.Log(y0), func(u float64) (float64, float64) {
		y := math.Exp(u)
		a := (b + z*y) * y
		t := b + 2*z*y
		return 3*math.Log(a) - math.Log(t) - target, y * (3*t/a - 2*z/t)
	})
	if err != nil {
		return 0, fmt.Errorf("critical depth of %g m³/s: %w", q, err)
	}
	return y, nil
}

func checkFlow(c Consts, s Section, q float64) error {
	if err := c.validate(); err != nil {
		return err
	}
	if err := s.Validate(); err != nil {
		return err
	}
	if !(q >= 0) || math.IsInf(q, 1) {
		return fmt.Errorf("%w: discharge %g m³/s must be positive", ErrInvalid, q)
	}
	return nil
}

// solveLog finds the root u of an increasing function g(u) that runs from
// −∞ to +∞, given g and its derivative, and returns exp(u). It takes Newton
// steps from u0, keeps the tightest bracket seen so far, and bisects when a
// step leaves the bracket or makes too little progress. Steps while the
// bracket is still open on one side are capped at a factor e³ in y.
func solveLog(u0 float64, f func(u float64) (g, dg float64)) (float64, error) {
	const (
		tolG    = 1e-12 // |g| is a relative error of order 1e-12 in the solved quantity
		maxStep = 3.0   // ln-units: at most a factor of 20 in depth per open step
	)
	lo, hi := math.Inf(-1), math.Inf(1)
	u := u0
	for i := 0; i < 200; i++ {
		g, dg := f(u)
		if math.IsNaN(g) {
			return 0, fmt.Errorf("%w: NaN at ln depth %g", ErrNoConvergence, u)
		}
		if math.Abs(g) <= tolG {
			return math.Exp(u), nil
		}
		if g < 0 {
			lo = u
		} else {
			hi = u
		}
		next := u - g/dg
		if !(dg > 0) || math.IsNaN(next) {
			next = u - math.Copysign(maxStep, g)
		}
		next = math.Max(u-maxStep, math.Min(u+maxStep, next))
		if next <= lo || next >= hi {
			if math.IsInf(lo, 0) || math.IsInf(hi, 0) {
				next = u - math.Copysign(maxStep, g)
			} else {
				next = 0.5 * (lo + hi)
			}
		}
		if hi-lo <= 4e-16*math.Max(1, math.Abs(u)) || next == u {
			// The bracket is as tight as float64 allows.
			if math.Abs(g) <= 1e-9 {
				return math.Exp(u), nil
			}
			return 0, fmt.Errorf("%w: bracket collapsed with residual %g", ErrNoConvergence, g)
		}
		u = next
	}
	return 0, fmt.Errorf("%w: 200 iterations", ErrNoConvergence)
}
