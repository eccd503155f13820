package planner

import (
	"math"
	"testing"
)

// sheetTemplate is the analytic example of the reference sheet §6.1: b = 3 m,
// z_i = 1.5, z_o = 2.0, W = 4 m each bank, bank height H = 2.1 m above bed.
var sheetTemplate = Template{BedWidth: 3, SideSlope: 1.5, BankHeight: 2.1, BankTopWidth: 4, OuterSlope: 2, CutSlope: 2}

func TestTemplateAreasSheet(t *testing.T) {
	// Source: reference sheet §6.1 (derived [D] and computed [C] values):
	// cut = d·(b + z_i·d), fill = 2·h_t·(W + (z_i + z_o)·h_t/2), h_t = H − d.
	cases := []struct {
		d, cut, fill, tol float64
	}{
		{0, 0, 32.235, 1e-12},                // sheet §6.1 table, d = 0
		{1.0, 4.5, 13.035, 1e-12},            // sheet §6.1 table, d = 1.0
		{2.1, 3*2.1 + 1.5*2.1*2.1, 0, 1e-12}, // ground at top of bank: no fill (formula above)
	}
	for _, c := range cases {
		cut, fill := sheetTemplate.Areas(c.d)
		if math.Abs(cut-c.cut) > c.tol || math.Abs(fill-c.fill) > c.tol {
			t.Errorf("d = %g: cut %.12g fill %.12g, want %.12g %.12g (tol %g)", c.d, cut, fill, c.cut, c.fill, c.tol)
		}
	}
}

// balancing returns the depth where usable·cut = fill, by bisection.
func balancing(tp Template, usable float64) (d, area float64) {
	lo, hi := 0.0, tp.BankHeight
	for it := 0; it < 200; it++ {
		m := (lo + hi) / 2
		c, f := tp.Areas(m)
		if usable*c < f {
			lo = m
		} else {
			hi = m
		}
	}
	c, _ := tp.Areas(lo)
	return lo, c
}

func TestBalancingDepthSheet(t *testing.T) {
	// Source: reference sheet §6.1: balancing depth 1.40871 m with 7.20285 m²
	// each; with usable cut = 0.9·cut, 1.44611 m. The sheet prints five
	// decimals, so the tolerance is half a unit in the last place.
	d, a := balancing(sheetTemplate, 1)
	if math.Abs(d-1.40871) > 5e-6 || math.Abs(a-7.20285) > 5e-6 {
		t.Errorf("balancing depth %.6f m area %.6f m², want 1.40871 m 7.20285 m²", d, a)
	}
	d, _ = balancing(sheetTemplate, 0.9)
	if math.Abs(d-1.44611) > 5e-6 {
		t.Errorf("balancing depth with shrinkage %.6f m, want 1.44611 m", d)
	}
}

func TestPolylineMatchesLevelGround(t *testing.T) {
	// The general integrator on a level ground polyline must agree with the
	// closed form (both exact; tolerance for rounding only).
	offs := []float64{-60, -20, 0, 20, 60}
	for _, d := range []float64{-1.3, -0.2, 0, 0.7, 2.1, 3.4} {
		lv := []float64{d, d, d, d, d}
		c1, f1, err := sheetTemplate.PolylineAreas(0, offs, lv)
		if err != nil {
			t.Fatal(err)
		}
		c2, f2 := sheetTemplate.Areas(d)
		if math.Abs(c1-c2) > 1e-12 || math.Abs(f1-f2) > 1e-12 {
			t.Errorf("d = %g: polyline %.12g/%.12g, closed form %.12g/%.12g", d, c1, f1, c2, f2)
		}
	}
}

func TestPolylineTwoLevelSheet(t *testing.T) {
	// Source: reference sheet §6.1 sloping-ground check: cut section with
	// formation width 6, side slope 1.5, centre-line cut 2, cross-slope 1 in
	// 10: A = 18.5524 m² (sheet [C], four decimals; tolerance half a unit).
	tp := Template{BedWidth: 6, SideSlope: 1.5, CutSlope: 1.5}
	offs := []float64{-30, 30}
	lv := []float64{2 - 3, 2 + 3} // rising to the right, 1 in 10, 2 m at the centre
	cut, fill, err := tp.PolylineAreas(0, offs, lv)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(cut-18.5524) > 5e-5 || fill != 0 {
		t.Errorf("two-level section cut %.6f fill %.6f, want 18.5524 and 0", cut, fill)
	}
	if _, _, err := tp.PolylineAreas(0, []float64{-5, 5}, []float64{1, 5}); err == nil {
		t.Error("a section too narrow for the catch point gave no error")
	}
}

func TestVolumesSheet(t *testing.T) {
	// Source: reference sheet §6.2: cut depth 0 → 1 m over 20 m with b = 3,
	// z_i = 1.5 (A = 3d + 1.5d²): exact 40.000 m³, prismoidal 40.000 m³, average
	// end area 45.000 m³. Prismoidal is exact for quadratic areas (1e-12).
	tp := Template{BedWidth: 3, SideSlope: 1.5, BankHeight: 5}
	a1, _ := tp.Areas(0)
	am, _ := tp.Areas(0.5)
	a2, _ := tp.Areas(1)
	if v := PrismoidalVolume(20, a1, am, a2); math.Abs(v-40) > 1e-12 {
		t.Errorf("prismoidal %.15g m³, want 40", v)
	}
	if v := AverageEndVolume(20, a1, a2); math.Abs(v-45) > 1e-12 {
		t.Errorf("average end area %.15g m³, want 45", v)
	}
}
