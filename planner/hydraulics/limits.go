package hydraulics

import (
	"fmt"
	"math"
)

// NearCriticalFroude is the default Froude number above which a design flow
// counts as near critical (wavy and unstable). Source: Clark County Regional
// Flood Control District, Hydrologic Criteria and Drainage Design Manual,
// §1100, as reproduced secondarily: it permits channel drops only where the
// approach Froude number is below 0.86 and treats 0.86–1.13 as a band to
// avoid (the reference sheet recalls the same band from USACE EM 1110-2-1601,
// from memory).
const NearCriticalFroude = 0.86

// SlopeLimits are the bed slopes that keep the mean velocity of the design
// flow inside its limits, with the normal depths at those slopes.
type SlopeLimits struct {
	MaxSlope   float64 // steepest slope with V ≤ permissible velocity, m/m
	MinSlope   float64 // flattest slope with V ≥ non-silting velocity, m/m; 0 when no lower limit
	DepthAtMax float64 // normal depth at MaxSlope, m
	DepthAtMin float64 // normal depth at MinSlope, m; 0 when no lower limit

	VelocityAtMin float64 // non-silting velocity at DepthAtMin, m/s (Kennedy's varies with depth)
	FroudeAtMax   float64 // Froude number of the normal flow at MaxSlope
}

// SlopeForVelocity returns the bed slope (m/m) on which discharge q (m³/s)
// flows uniformly at mean velocity v (m/s), and the normal depth (m) there:
//
//	A(y*) = Q/V,   S = (n·V / (K·R(y*)^(2/3)))²
//
// (Manning's equation solved for S; reference sheet §2.3, derived).
func SlopeForVelocity(c Consts, s Section, q, n, v float64) (slope, depth float64, err error) {
	if err := checkFlow(c, s, q); err != nil {
		return 0, 0, err
	}
	if !positive(q) || !positive(n) || !positive(v) {
		return 0, 0, fmt.Errorf("%w: discharge %g, roughness %g and velocity %g must be positive", ErrInvalid, q, n, v)
	}
	y := s.DepthForArea(q / v)
	return sq(n * v / (c.K * math.Cbrt(sq(s.HydraulicRadius(y))))), y, nil
}

// VelocityLimitedSlopes returns the steepest bed slope at which discharge q
// (m³/s) stays at or below the permissible (non-erosive) mean velocity
// maxVelocity (m/s), and the flattest at which it stays at or above the
// non-silting velocity minVelocity (m/s; 0 for no lower limit). Because V
// rises monotonically with S, each velocity bound gives one slope bound
// (reference sheet §2.3). Permissible velocities are tabulated by Fortier &
// Scobey (1926), reproduced in Chow (1959).
//
// The error wraps [ErrInfeasible] when the limits conflict (MinSlope >
// MaxSlope, i.e. minVelocity > maxVelocity) and when the non-silting
// velocity is faster than critical flow, so that no subcritical depth can
// meet it.
func VelocityLimitedSlopes(c Consts, s Section, q, n, maxVelocity, minVelocity float64) (SlopeLimits, error) {
	if !(minVelocity >= 0) || math.IsInf(minVelocity, 0) {
		return SlopeLimits{}, fmt.Errorf("%w: non-silting velocity %g m/s must be zero or positive", ErrInvalid, minVelocity)
	}
	var lim SlopeLimits
	var err error
	lim.MaxSlope, lim.DepthAtMax, err = SlopeForVelocity(c, s, q, n, maxVelocity)
	if err != nil {
		return SlopeLimits{}, fmt.Errorf("slope for permissible velocity: %w", err)
	}
	lim.FroudeAtMax = Froude(c, s, q, lim.DepthAtMax)
	if minVelocity == 0 {
		return lim, nil
	}
	if minVelocity > maxVelocity {
		return lim, fmt.Errorf("%w: the non-silting velocity %g m/s is above the permissible velocity %g m/s; no slope meets both",
			ErrInfeasible, minVelocity, maxVelocity)
	}
	lim.MinSlope, lim.DepthAtMin, _ = SlopeForVelocity(c, s, q, n, minVelocity)
	lim.VelocityAtMin = minVelocity
	return lim, checkLimits(c, s, q, lim)
}

// KennedyVelocity returns Kennedy's (1895) critical non-silting velocity
// V0 = 0.55·m·y^0.64 in m/s at flow depth y (m), where m is the critical
// velocity ratio (1 for the Upper Bari Doab reference silt). SI units only.
// Formula confirmed through secondary summaries; the original (Min. Proc.
// ICE 119) is cited from memory. It is a regime criterion for alluvial
// canals carrying silt: present it as a check, not a universal bound.
func KennedyVelocity(m, y float64) float64 { return 0.55 * m * math.Pow(y, 0.64) }

// KennedySlopeLimits is [VelocityLimitedSlopes] with Kennedy's depth-dependent
// non-silting velocity (critical velocity ratio m) as the lower limit: it
// solves Q/A(y) = 0.55·m·y^0.64 for the depth y_K (unique: the left side
// falls and the right side rises with y) and takes the slope at which y_K is
// the normal depth (reference sheet §2.3). SI units only (c must be SI
// constants). The error wraps [ErrInfeasible] when MinSlope > MaxSlope.
func KennedySlopeLimits(c Consts, s Section, q, n, maxVelocity, m float64) (SlopeLimits, error) {
	if !positive(m) {
		return SlopeLimits{}, fmt.Errorf("%w: critical velocity ratio m = %g must be positive", ErrInvalid, m)
	}
	lim, err := VelocityLimitedSlopes(c, s, q, n, maxVelocity, 0)
	if err != nil {
		return lim, err
	}
	b, z := s.BottomWidth, s.SideSlope
	// ln(0.55·m) + 0.64·ln y + ln A(y) − ln Q rises from −∞ to +∞ in ln y.
	off := math.Log(0.55*m) - math.Log(q)
	yk, err := solveLog(1, func(y float64) (float64, float64) {
		a := (b + z*y) * y
		return off + 0.64*math.Log(y) + math.Log(a), 0.64 + y*(b+2*z*y)/a
	})
	if err != nil {
		return lim, fmt.Errorf("Kennedy depth: %w", err)
	}
	lim.DepthAtMin = yk
	lim.VelocityAtMin = Velocity(s, q, yk)
	lim.MinSlope = sq(n * lim.VelocityAtMin / (c.K * math.Cbrt(sq(s.HydraulicRadius(yk)))))
	return lim, checkLimits(c, s, q, lim)
}

func checkLimits(c Consts, s Section, q float64, lim SlopeLimits) error {
	if yc, err := CriticalDepth(c, s, q); err == nil && lim.DepthAtMin <= yc {
		return fmt.Errorf("%w: the non-silting velocity %.3g m/s needs supercritical flow (depth %.4g m below critical %.4g m); no subcritical depth meets it",
			ErrInfeasible, lim.VelocityAtMin, lim.DepthAtMin, yc)
	}
	if lim.MinSlope > lim.MaxSlope {
		return fmt.Errorf("%w: the flattest non-silting slope %.5g is steeper than the steepest non-eroding slope %.5g; widen or narrow the bed, change the side slope or roughness, line the canal, or relax a velocity limit",
			ErrInfeasible, lim.MinSlope, lim.MaxSlope)
	}
	return nil
}
