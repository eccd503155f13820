package planner

import (
	"math"
	"testing"
)

// FuzzTemplateAreas checks the closed-form areas against the general
// polyline integrator on level ground (both exact; tolerance for rounding),
// and that areas are non-negative and continuous in depth.
func FuzzTemplateAreas(f *testing.F) {
	f.Add(3.0, 1.5, 2.1, 4.0, 2.0, 2.0, 1.0)  // reference sheet §6.1
	f.Add(1.0, 0.0, 1.0, 0.0, 0.0, 0.0, -0.5) // rectangle, no banks
	f.Add(0.0, 2.0, 0.8, 3.0, 3.0, 1.0, 5.0)  // triangle in deep cut
	f.Add(2.0, 1.0, 1.5, 2.0, 2.0, 1.5, -3.0) // on embankment
	f.Fuzz(func(t *testing.T, b, zi, h, w, zo, zc, d float64) {
		for _, x := range []float64{b, zi, h, w, zo, zc} {
			if !(x >= 0 && x <= 50) {
				t.Skip()
			}
		}
		if !(math.Abs(d) <= 50) || b+zi <= 0 || (zc == 0 && d > h) {
			t.Skip()
		}
		tp := Template{BedWidth: b, SideSlope: zi, BankHeight: h, BankTopWidth: w, OuterSlope: zo, CutSlope: zc}
		cut, fill := tp.Areas(d)
		if cut < 0 || fill < 0 || math.IsNaN(cut+fill) {
			t.Fatalf("areas %g %g for %+v at depth %g", cut, fill, tp, d)
		}
		half := b/2 + zi*h + w + math.Max(zo, zc)*(math.Abs(d)+h) + 10
		pc, pf, err := tp.PolylineAreas(0, []float64{-half, half}, []float64{d, d})
		if err != nil {
			t.Fatalf("polyline: %v", err)
		}
		tol := 1e-9 * (1 + cut + fill)
		if math.Abs(pc-cut) > tol || math.Abs(pf-fill) > tol {
			t.Fatalf("%+v depth %g: closed form %g/%g, polyline %g/%g", tp, d, cut, fill, pc, pf)
		}
		c2, f2 := tp.Areas(d + 1e-9)
		if math.Abs(c2-cut) > 1e-6*(1+half) || math.Abs(f2-fill) > 1e-6*(1+half) {
			t.Fatalf("%+v: areas jump at depth %g: %g/%g → %g/%g", tp, d, cut, fill, c2, f2)
		}
	})
}
