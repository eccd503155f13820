package hydraulics

import (
	"fmt"
	"math"
	"sort"
	"strings"
)

// Transition is a type of canal transition with its head-loss coefficients
// for a contracting inlet (Ci) and an expanding outlet (Co).
type Transition struct {
	Name   string
	Inlet  float64 // Ci
	Outlet float64 // Co
}

// TransitionTypes are the loss coefficients by transition type after Hinds
// (1928) and USBR as tabulated by Chow (1959, Ch. 17; from memory). The
// warped, cylinder-quadrant and straight-line values agree with secondary
// material citing FHWA HDS-4 and USACE EM 1110-2-1601. The square-ended inlet
// is listed as "0.30+"; 0.30 is its lower bound. "none" credits no loss,
// the conservative choice for the sweep-out check of a drop basin.
var transitionTypes = []Transition{
	{"none", 0, 0},
	{"warped", 0.10, 0.20},
	{"cylinder-quadrant", 0.15, 0.25},
	{"simplified-straight", 0.20, 0.30},
	{"straight-line", 0.30, 0.50},
	{"square-ended", 0.30, 0.75},
}

// TransitionTypes returns the known transition types in table order.
func TransitionTypes() []Transition { return append([]Transition(nil), transitionTypes...) }

// LookupTransition returns the transition type of the given name.
func LookupTransition(name string) (Transition, error) {
	for _, t := range transitionTypes {
		if strings.EqualFold(t.Name, name) {
			return t, nil
		}
	}
	names := make([]string, len(transitionTypes))
	for i, t := range transitionTypes {
		names[i] = t.Name
	}
	sort.Strings(names)
	return Transition{}, fmt.Errorf("%w: unknown transition type %q (known: %s)", ErrInvalid, name, strings.Join(names, ", "))
}

// TransitionLoss returns the head loss (m) of a transition with coefficient
// coef between mean velocities va and vb (m/s):
//
//	h_L = C·|α·Va²/2g − α·Vb²/2g|
//
// (Hinds 1928; Chow 1959, Ch. 17; from memory).
func TransitionLoss(c Consts, coef, va, vb float64) float64 {
	return coef * c.alpha() * math.Abs(va*va-vb*vb) / (2 * c.G)
}

// Notch is a trapezoidal control notch at bed level in a drop crest.
type Notch struct {
	SillWidth float64 // L: width of the notch at its sill, m
	SideFlare float64 // n_s: horizontal per vertical of each notch side
}

// NotchDischarge returns the discharge (m³/s) of notch nt under head h (m)
// with discharge coefficient cd:
//
//	Q = Cd·sqrt(2g)·[ (2/3)·L·H^(3/2) + (8/15)·n_s·H^(5/2) ]
func NotchDischarge(c Consts, nt Notch, cd, h float64) float64 {
	return cd * math.Sqrt(2*c.G) * (2.0/3*nt.SillWidth*math.Pow(h, 1.5) + 8.0/15*nt.SideFlare*math.Pow(h, 2.5))
}

// DesignNotch returns the trapezoidal notch whose stage–discharge curve
// matches the canal's normal depth at two discharges q1 and q2 (m³/s), with
// the notch head taken as the upstream normal depth (a simplification; common
// practice). The two equations are linear in (L, n_s) and solved directly
// (reference sheet §4.5; the notch-fall practice is from Indian irrigation
// texts, from memory). cd must come from a calibrated source: there is no
// default. The error wraps [ErrInfeasible] when no physical notch (L > 0,
// n_s ≥ 0) fits.
func DesignNotch(c Consts, up Channel, q1, q2, cd float64) (Notch, error) {
	if err := up.Validate(); err != nil {
		return Notch{}, err
	}
	if !positive(cd) || !positive(q1) || !positive(q2) || q1 == q2 {
		return Notch{}, fmt.Errorf("%w: notch needs two different positive discharges and a positive Cd", ErrInvalid)
	}
	h1, err := NormalDepth(c, up.Section, q1, up.N, up.Slope)
	if err != nil {
		return Notch{}, err
	}
	h2, err := NormalDepth(c, up.Section, q2, up.N, up.Slope)
	if err != nil {
		return Notch{}, err
	}
	k := cd * math.Sqrt(2*c.G)
	// Q_i = k·(2/3·H_i^1.5·L + 8/15·H_i^2.5·n_s)
	a11, a12 := k*2/3*math.Pow(h1, 1.5), k*8/15*math.Pow(h1, 2.5)
	a21, a22 := k*2/3*math.Pow(h2, 1.5), k*8/15*math.Pow(h2, 2.5)
	det := a11*a22 - a12*a21
	nt := Notch{SillWidth: (q1*a22 - a12*q2) / det, SideFlare: (a11*q2 - a21*q1) / det}
	if !(nt.SillWidth > 0) || !(nt.SideFlare >= 0) {
		return nt, fmt.Errorf("%w: no physical notch fits (sill width %.4g m, side flare %.4g)", ErrInfeasible, nt.SillWidth, nt.SideFlare)
	}
	return nt, nil
}
