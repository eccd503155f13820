package hydraulics

import "math"

const (
	footM = 0.3048         // international foot, m (exact)
	cfsM3 = 0.028316846592 // one cubic foot per second in m³/s (exact)
)

// FreeboardRule chooses how [Freeboard] computes the freeboard. The zero
// value is the default: the USBR rule for unlined canals with its
// coefficient interpolated from the discharge.
type FreeboardRule struct {
	Fixed float64 // m; when > 0, the freeboard is this value and the other fields are ignored
	C     float64 // m; when > 0, the USBR coefficient C is fixed to this value instead of interpolated
	Min   float64 // m; lower bound on the result (e.g. 0.3 m for small canals); 0 for none
}

// USBRFreeboardCoefficient returns the coefficient C (m) of the USBR rule
// F = sqrt(C·y) for discharge q (m³/s). USBR gives C = 1.5 ft at 20 cfs and
// 2.5 ft at 3000 cfs and above (Chow 1959, Ch. 7, citing USBR; from memory,
// with secondary summaries agreeing). USBR does not say how to interpolate
// between; this interpolates linearly in log10(Q) and clamps at both ends
// (common practice, no source). The feet values are converted exactly
// (× 0.3048), giving 0.457–0.762 m.
func USBRFreeboardCoefficient(q float64) float64 {
	const q0, q1 = 20.0, 3000.0 // cfs
	cfs := q / cfsM3
	t := 0.0
	if cfs > q0 {
		t = math.Min(1, math.Log10(cfs/q0)/math.Log10(q1/q0))
	}
	return (1.5 + t) * footM
}

// Freeboard returns the freeboard (m) above the water surface for discharge
// q (m³/s) at flow depth y (m) under rule r. The default is the USBR rule for
// unlined canals, F = sqrt(C·y) with C from [USBRFreeboardCoefficient]. SI
// units only.
func Freeboard(q, y float64, r FreeboardRule) float64 {
	if r.Fixed > 0 {
		return r.Fixed
	}
	c := r.C
	if !(c > 0) {
		c = USBRFreeboardCoefficient(q)
	}
	return math.Max(r.Min, math.Sqrt(c*math.Max(y, 0)))
}

// BankHeight returns the height (m) of the top of bank above the bed: the
// flow depth y (m) plus the freeboard of rule r for discharge q (m³/s).
func BankHeight(q, y float64, r FreeboardRule) float64 { return y + Freeboard(q, y, r) }
