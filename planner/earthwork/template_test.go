package earthwork

import (
	"errors"
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
		{0, 0, 32.235, 1e-12},                // sheet §6.1 table, d = 0; tolerance: rounding only
		{1.0, 4.5, 13.035, 1e-12},            // sheet §6.1 table, d = 1.0; rounding only
		{2.1, 3*2.1 + 1.5*2.1*2.1, 0, 1e-12}, // ground at top of bank: no fill (formula above); rounding only
	}
	for _, c := range cases {
		cut, fill := sheetTemplate.Areas(c.d)
		if math.Abs(cut-c.cut) > c.tol || math.Abs(fill-c.fill) > c.tol {
			t.Errorf("d = %g: cut %.12g fill %.12g, want %.12g %.12g (tol %g)", c.d, cut, fill, c.cut, c.fill, c.tol)
		}
		// Level sections: ground 100 m, bed d below it.
		s := Level(sheetTemplate, []float64{100})
		lc, lf := s.Areas(0, 100-c.d)
		if math.Abs(lc-c.cut) > c.tol || math.Abs(lf-c.fill) > c.tol {
			t.Errorf("Level, d = %g: cut %.12g fill %.12g, want %.12g %.12g (tol %g)", c.d, lc, lf, c.cut, c.fill, c.tol)
		}
	}
}

func TestTemplateAreasBranches(t *testing.T) {
	// The deep-cut and high-fill branches against the half-section polygon
	// by hand (exact analytic case): sheet template, d = 3.1 m (1 m above
	// the top of bank): bed 1.5·3.1, inner slope triangle-plus-rectangle
	// 1.5·(2.1·3.1 − 2.1²/2), bank top 4·1, cut slope triangle 2·1²/2;
	// d = −1: bed 1.5·1, inner slope 1.5·(2.1²/2 + 2.1), bank 4·3.1, outer
	// slope triangle 2·3.1²/2; both sides doubled.
	cases := []struct {
		d, cut, fill, tol float64
	}{
		{3.1, 2 * (1.5*3.1 + 1.5*(2.1*3.1-2.1*2.1/2) + 4*1 + 2*1*1/2.0), 0, 1e-12}, // rounding only
		{-1, 0, 2 * (1.5*1 + 1.5*(2.1*2.1/2+2.1) + 4*3.1 + 2*3.1*3.1/2), 1e-12},    // rounding only
		{2.1 + 1e-9, 3*(2.1+1e-9) + 1.5*(2.1+1e-9)*(2.1+1e-9), 0, 1e-7},            // continuity across H: within the slope of the formula times 1e-9
		{1e-12, 3 * 1e-12, 2 * 2.1 * (4 + 3.5*2.1/2), 1e-9},                        // continuity across 0: fill within its slope times 1e-12
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

func TestVolumesSheet(t *testing.T) {
	// Source: reference sheet §6.2: cut depth 0 → 1 m over 20 m with b = 3,
	// z_i = 1.5 (A = 3d + 1.5d²): exact 40.000 m³, prismoidal 40.000 m³, average
	// end area 45.000 m³. Prismoidal is exact for quadratic areas (1e-12,
	// rounding only). The bed falls 1 m under level ground at 100 m.
	tp := Template{BedWidth: 3, SideSlope: 1.5, BankHeight: 5}
	offs := []float64{-40, -10, 0, 10, 40}
	lv := []float64{100, 100, 100, 100, 100}
	cross, err := Cross(tp, [][]float64{offs, offs}, [][]float64{lv, lv})
	if err != nil {
		t.Fatal(err)
	}
	for _, s := range []struct {
		name string
		s    Sections
	}{{"level", Level(tp, []float64{100, 100})}, {"cross", cross}} {
		for _, c := range []struct {
			m    VolumeMethod
			want float64
		}{{Prismoidal, 40}, {AverageEndArea, 45}} {
			v, _ := SegmentVolumes(s.s, c.m, 1, 20, 100, 99)
			if math.Abs(v-c.want) > 1e-12 {
				t.Errorf("%s %v: cut %.15g m³, want %g", s.name, c.m, v, c.want)
			}
		}
	}
	if v := PrismoidalVolume(20, 0, 3*0.5+1.5*0.25, 4.5); math.Abs(v-40) > 1e-12 {
		t.Errorf("prismoidal %.15g m³, want 40", v)
	}
	if v := AverageEndVolume(20, 0, 4.5); math.Abs(v-45) > 1e-12 {
		t.Errorf("average end area %.15g m³, want 45", v)
	}
	if AverageEndArea.String() != "average_end_area" || Prismoidal.String() != "prismoidal" {
		t.Errorf("method names %q %q", AverageEndArea, Prismoidal)
	}
}

func TestLevelCatch(t *testing.T) {
	// Slope stakes on level ground (exact analytic case): the outer slope
	// falls (or rises) d − H over z·|d − H| from the bank edge
	// x3 = 1.5 + 1.5·2.1 + 4 = 8.65 m of the sheet template.
	cases := []struct {
		d, offset float64
		cut       bool
	}{
		{3.1, 8.65 + 2*1, true},    // 1 m above the top of bank, cut slope 2:1
		{1.0, 8.65 + 2*1.1, false}, // 1.1 m of bank above ground, outer slope 2:1
		{2.1, 8.65, false},         // ground at the top of bank: the catch is the bank edge
		{-1, 8.65 + 2*3.1, false},  // bed 1 m above ground
	}
	for _, c := range cases {
		s := Level(sheetTemplate, []float64{0}) // ground 0 m: the depth −bed is exact
		l, r := s.Catch(0, -c.d)
		if math.Abs(r.Offset-c.offset) > 1e-12 || math.Abs(l.Offset+c.offset) > 1e-12 || r.Cut != c.cut || l.Cut != c.cut ||
			r.Level != 0 || l.Level != 0 || !r.Found || !l.Found {
			t.Errorf("d = %g: catch %+v %+v, want ±%g cut %v", c.d, l, r, c.offset, c.cut)
		}
	}
	if w := sheetTemplate.HalfWidthAtBank(); math.Abs(w-8.65) > 1e-12 {
		t.Errorf("half width at bank %g, want 8.65", w)
	}
}

func TestTemplateValidate(t *testing.T) {
	ok := []Template{sheetTemplate, {BedWidth: 1}, {SideSlope: 1, BankHeight: 1}}
	for _, tp := range ok {
		if err := tp.Validate(); err != nil {
			t.Errorf("%+v: %v", tp, err)
		}
	}
	bad := []Template{
		{}, // no width
		{BedWidth: math.NaN()}, {BedWidth: -1}, {BedWidth: math.Inf(1)}, {BedWidth: 1, BankHeight: 1001},
		{BedWidth: 1, SideSlope: 101}, {BedWidth: 1, OuterSlope: -0.5}, {BedWidth: 1, CutSlope: math.NaN()},
		{BedWidth: 1, BankTopWidth: math.Inf(1)},
	}
	for _, tp := range bad {
		if err := tp.Validate(); !errors.Is(err, ErrInput) {
			t.Errorf("%+v: error %v, want ErrInput", tp, err)
		}
	}
}
