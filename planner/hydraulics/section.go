// Package hydraulics holds the open-channel formulas canalstep designs with:
// uniform and critical flow in trapezoidal canals, velocity-limited bed
// slopes, freeboard, straight drop structures with their stilling basins and
// outlet checks, and gradually varied flow profiles.
//
// Everything here is a pure function without I/O. Quantities are in one
// consistent unit system chosen by [Consts]: SI (m, s, m³/s) inside canalstep;
// [US] exists so that textbook examples in feet and cfs can be run as printed.
// Every doc comment names the units for the SI case; in US units read ft for
// m and cfs for m³/s. Sources of formulas and coefficients are cited in the
// doc comments; the project's reference sheet expands the short citations.
package hydraulics

import (
	"errors"
	"fmt"
	"math"
)

// ErrInvalid is wrapped by every error about input a formula cannot use:
// non-positive discharge, roughness or slope, a negative side slope, a
// section without area, NaN or infinite numbers.
var ErrInvalid = errors.New("hydraulics: invalid input")

// ErrInfeasible is wrapped by errors that say the design criteria conflict:
// the flattest non-silting slope is steeper than the steepest non-eroding
// slope, or no subcritical depth meets a velocity limit.
var ErrInfeasible = errors.New("hydraulics: infeasible design")

// ErrNoConvergence is wrapped when an iterative solver stops before it meets
// its tolerance. It should not happen for valid input; it is reported
// instead of a silently wrong value.
var ErrNoConvergence = errors.New("hydraulics: solver did not converge")

// Consts are the constants that fix the unit system: gravity G and the unit
// factor K of Manning's equation V = (K/n)·R^(2/3)·S^(1/2). Alpha is the
// energy (Coriolis) coefficient; zero means 1.0.
type Consts struct {
	G     float64 // gravitational acceleration, m/s² (ft/s² in US units)
	K     float64 // Manning unit factor: 1.0 in SI, 1.486 in US units
	Alpha float64 // energy coefficient α; 0 means 1.0
}

// SI returns the SI constants: g = 9.81 m/s², K = 1.0, α = 1. g = 9.81 is the
// value textbook SI examples are computed with; the standard 9.80665 moves
// critical depths in the fourth significant figure.
func SI() Consts { return Consts{G: 9.81, K: 1.0} }

// US returns US customary constants as printed in US textbooks:
// g = 32.2 ft/s², K = 1.486, α = 1 (Chow 1959, Ch. 5).
func US() Consts { return Consts{G: 32.2, K: 1.486} }

func (c Consts) alpha() float64 {
	if c.Alpha == 0 {
		return 1
	}
	return c.Alpha
}

func (c Consts) validate() error {
	if !(c.G > 0) || !(c.K > 0) || math.IsInf(c.G, 0) || math.IsInf(c.K, 0) || !(c.Alpha >= 0) {
		return fmt.Errorf("%w: constants g = %g, k = %g, alpha = %g must be positive", ErrInvalid, c.G, c.K, c.Alpha)
	}
	return nil
}

// Section is a prismatic trapezoidal canal section with equal side slopes. A
// side slope of 0 is a rectangle; a bottom width of 0 is a triangle.
type Section struct {
	BottomWidth float64 // bed width b, m
	SideSlope   float64 // side slope z, horizontal per unit vertical (H:V)
}

// Validate reports whether the section has area for positive depths: b ≥ 0,
// z ≥ 0, b + z > 0, all finite.
func (s Section) Validate() error {
	b, z := s.BottomWidth, s.SideSlope
	switch {
	case math.IsNaN(b) || math.IsInf(b, 0) || b < 0:
		return fmt.Errorf("%w: bottom width %g m must be zero or positive", ErrInvalid, b)
	case math.IsNaN(z) || math.IsInf(z, 0) || z < 0:
		return fmt.Errorf("%w: side slope %g must be zero (rectangle) or positive (H:V)", ErrInvalid, z)
	case b+z <= 0:
		return fmt.Errorf("%w: a section with bottom width 0 and side slope 0 has no area", ErrInvalid)
	}
	return nil
}

// Area returns the flow area A = (b + z·y)·y in m² at depth y (m).
func (s Section) Area(y float64) float64 { return (s.BottomWidth + s.SideSlope*y) * y }

// WettedPerimeter returns P = b + 2·y·sqrt(1 + z²) in m at depth y (m).
func (s Section) WettedPerimeter(y float64) float64 {
	return s.BottomWidth + 2*y*math.Sqrt(1+s.SideSlope*s.SideSlope)
}

// TopWidth returns the water-surface width T = b + 2·z·y in m at depth y (m).
func (s Section) TopWidth(y float64) float64 { return s.BottomWidth + 2*s.SideSlope*y }

// HydraulicRadius returns R = A/P in m at depth y (m).
func (s Section) HydraulicRadius(y float64) float64 { return s.Area(y) / s.WettedPerimeter(y) }

// HydraulicDepth returns D = A/T in m at depth y (m).
func (s Section) HydraulicDepth(y float64) float64 { return s.Area(y) / s.TopWidth(y) }

// DepthForArea returns the depth (m) at which the flow area is a (m²): the
// positive root of z·y² + b·y − a = 0.
func (s Section) DepthForArea(a float64) float64 {
	b, z := s.BottomWidth, s.SideSlope
	if z == 0 {
		return a / b
	}
	// Written as 2a/(b + sqrt(b² + 4za)) to avoid cancellation when z·a ≪ b².
	return 2 * a / (b + math.Sqrt(b*b+4*z*a))
}

// Velocity returns the mean velocity V = Q/A in m/s for discharge q (m³/s)
// at depth y (m).
func Velocity(s Section, q, y float64) float64 { return q / s.Area(y) }

// Froude returns the Froude number F = V·sqrt(α/(g·D)) at depth y (m) for
// discharge q (m³/s); with α = 1 this is the usual V/sqrt(g·D). F = 1 at
// critical depth (Chow 1959, Ch. 3, from memory).
func Froude(c Consts, s Section, q, y float64) float64 {
	return Velocity(s, q, y) * math.Sqrt(c.alpha()/(c.G*s.HydraulicDepth(y)))
}

// SpecificEnergy returns E = y + α·Q²/(2·g·A²) in m above the bed at depth
// y (m) for discharge q (m³/s).
func SpecificEnergy(c Consts, s Section, q, y float64) float64 {
	v := Velocity(s, q, y)
	return y + c.alpha()*v*v/(2*c.G)
}

// FrictionSlope returns the energy slope Sf = (n·Q / (K·A·R^(2/3)))² (m/m)
// that Manning's equation gives for discharge q (m³/s) at depth y (m) with
// roughness n.
func FrictionSlope(c Consts, s Section, q, n, y float64) float64 {
	k := c.K * s.Area(y) * math.Cbrt(sq(s.HydraulicRadius(y))) / n
	return sq(q / k)
}

// Discharge returns Manning's Q = (K/n)·A·R^(2/3)·S^(1/2) in m³/s at depth
// y (m) on bed slope slope (m/m) with roughness n.
func Discharge(c Consts, s Section, n, slope, y float64) float64 {
	return c.K / n * s.Area(y) * math.Cbrt(sq(s.HydraulicRadius(y))) * math.Sqrt(slope)
}

func sq(x float64) float64 { return x * x }

// positive reports whether x is a finite number above zero.
func positive(x float64) bool { return x > 0 && !math.IsInf(x, 1) }
