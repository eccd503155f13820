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
	b, z := s.BottomWidth, s.SideSlope
	dp := 2 * math.Sqrt(1+z*z) // dP/dy
	// Starting guess: the wide-rectangle depth for the same conveyance,
	// or, when the side slopes dominate the section there, the smaller of
	// it and the triangle depth.
	y0 := math.Inf(1)
	if b > 0 {
		y0 = math.Pow(k0/b, 0.6)
	}
	if z > 0 && z*y0 > b {
		// A = z·y², P = dp·y: A^5/P^2 = z^5·y^8/dp² = k0³.
		y0 = math.Min(y0, math.Pow(k0*k0*k0*dp*dp/(z*z*z*z*z), 0.125))
	}
	k15 := k0 * math.Sqrt(k0) // k0^(3/2)
	y, err := solveLog(y0, func(y float64) (float64, float64) {
		a := (b + z*y) * y
		p := b + dp*y
		t := b + 2*z*y
		// 5·ln A − 2·ln P − 3·ln k0, with one logarithm.
		return 2 * math.Log(a*a*math.Sqrt(a)/(p*k15)), y * (5*t/a - 2*dp/p)
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
	y, err := solveLog(y0, func(y float64) (float64, float64) {
		a := (b + z*y) * y
		t := b + 2*z*y
		// 3·ln A − ln T − ln ψ, with one logarithm.
		return math.Log(a * a * a / (t * psi)), y * (3*t/a - 2*z/t)
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

// solveLog finds the root of an increasing function g of ln y that runs
// from −∞ to +∞, given g and dg/d(ln y) as functions of y, and returns y. It
// takes Newton steps in ln y from y0 (multiplicative steps in y), keeps the
// tightest bracket seen so far, and bisects geometrically when a step leaves
// the bracket. Steps while the bracket is still open on one side are capped
// at a factor e³ in y.
func solveLog(y0 float64, f func(y float64) (g, dg float64)) (float64, error) {
	const (
		tolG    = 1e-12 // |g| is a relative error of order 1e-12 in the solved quantity
		maxStep = 3.0   // ln-units: at most a factor of 20 in depth per open step
	)
	lo, hi := 0.0, math.Inf(1)
	y := y0
	for i := 0; i < 200; i++ {
		g, dg := f(y)
		if math.IsNaN(g) {
			return 0, fmt.Errorf("%w: NaN at depth %g", ErrNoConvergence, y)
		}
		if math.Abs(g) <= tolG {
			return y, nil
		}
		if g < 0 {
			lo = y
		} else {
			hi = y
		}
		du := -g / dg
		if !(dg > 0) || math.IsNaN(du) {
			du = -math.Copysign(maxStep, g)
		}
		du = math.Max(-maxStep, math.Min(maxStep, du))
		next := y * expStep(du)
		if next <= lo || next >= hi {
			if lo == 0 || math.IsInf(hi, 1) {
				next = y * math.Exp(-math.Copysign(maxStep, g))
			} else {
				next = math.Sqrt(lo) * math.Sqrt(hi)
			}
		}
		if hi <= lo*(1+4e-16) || next == y {
			// The bracket is as tight as float64 allows.
			if math.Abs(g) <= 1e-9 {
				return y, nil
			}
			return 0, fmt.Errorf("%w: bracket collapsed with residual %g", ErrNoConvergence, g)
		}
		y = next
	}
	return 0, fmt.Errorf("%w: 200 iterations", ErrNoConvergence)
}

// expStep returns exp(u) for a Newton step in ln y: by a [2/2] Padé
// approximant when |u| < 1 (relative error below 2e-3, and below 2e-11 for
// |u| < 0.05, where the last steps fall), by math.Exp otherwise. The solver
// checks its residual, not the step, so the approximation only affects how
// many steps it takes, and it saves most calls to math.Exp.
func expStep(u float64) float64 {
	if math.Abs(u) < 1 {
		u2 := u * u / 12
		return (1 + u/2 + u2) / (1 - u/2 + u2)
	}
	return math.Exp(u)
}
