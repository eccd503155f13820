package earthwork

import (
	"errors"
	"math"
	"strings"
	"testing"
)

// crossTemplate has a cut slope unlike its fill slope, so that swapping
// them shows.
var crossTemplate = Template{BedWidth: 3, SideSlope: 1.5, BankHeight: 2.1, BankTopWidth: 4, OuterSlope: 2, CutSlope: 1.5}

func TestCrossPlanarCrossFall(t *testing.T) {
	// Cross on planar ground g0 + k·x against the closed form derived from
	// the geometry in planarSection (slope stakes and shoelace polygons;
	// from memory, Wolf & Ghilani, Elementary Surveying, earthwork
	// cross-sections). Both are exact: tolerance 1e-9 m² for rounding. The
	// sections are sampled every 3.7 m over ±200 m (not at the template's
	// breakpoints) so every catch point is found.
	vertical := Template{BedWidth: 4, SideSlope: 0, BankHeight: 1.5, BankTopWidth: 2, OuterSlope: 0, CutSlope: 0}
	pure := Template{BedWidth: 6, SideSlope: 1.5, CutSlope: 1.5, OuterSlope: 2} // a cut trapezoid: no banks
	rows := []struct {
		name  string
		tp    Template
		k     float64 // cross-fall, m/m, rising to the right
		depth float64 // centre-line ground above the bed, m
	}{
		{"level, fill both sides", crossTemplate, 0, -1},
		{"level, banks above ground", crossTemplate, 0, 1},
		{"level, cut above the banks", crossTemplate, 0, 3.5},
		{"gentle rise, banks above ground", crossTemplate, 0.05, 1},
		{"gentle fall, banks above ground", crossTemplate, -0.05, 1},
		{"rise, ground straddles the top of bank", crossTemplate, 0.2, 1.5},
		{"fall, ground straddles the top of bank", crossTemplate, -0.2, 1.5},
		{"steep rise, bed above ground", crossTemplate, 0.35, -1},
		{"steep fall, deep cut", crossTemplate, -0.35, 4},
		{"steep rise, deep cut", crossTemplate, 0.45, 4},
		{"ground at the top of bank on the centre line", crossTemplate, 0.1, 2.1},
		{"vertical faces, cut", vertical, 0.1, 2.5},
		{"vertical faces, straddling", vertical, 0.3, 1},
		{"vertical faces, fill", vertical, -0.2, -0.5},
		{"cut trapezoid, cross-fall", pure, 0.1, 2},
		{"cut trapezoid, level", pure, 0, 2},
	}
	offs := offsetsEvery(-199.8, 200, 3.7, true)
	for _, r := range rows {
		const g0 = 312.4 // m
		bed := g0 - r.depth
		wc, wf, wl, wr, ok := planarSection(r.tp, g0, r.k, bed)
		if !ok {
			t.Fatalf("%s: the reference has no catch point", r.name)
		}
		s, err := Cross(r.tp, [][]float64{offs}, [][]float64{planeLevels(offs, g0, r.k)})
		if err != nil {
			t.Fatal(err)
		}
		cut, fill := s.Areas(0, bed)
		if math.Abs(cut-wc) > 1e-9 || math.Abs(fill-wf) > 1e-9 {
			t.Errorf("%s: cut %.12g fill %.12g m², closed form %.12g %.12g", r.name, cut, fill, wc, wf)
		}
		l, rt := s.Catch(0, bed)
		if math.Abs(l.Offset-wl) > 1e-9 || math.Abs(rt.Offset-wr) > 1e-9 || !l.Found || !rt.Found {
			t.Errorf("%s: catch points %+v %+v, closed form %.12g %.12g", r.name, l, rt, wl, wr)
		}
		for _, c := range []Catch{l, rt} {
			if math.Abs(c.Level-(g0+r.k*c.Offset)) > 1e-9 {
				t.Errorf("%s: catch %+v is not on the ground line", r.name, c)
			}
		}
	}
}

func TestCrossTwoLevelSheet(t *testing.T) {
	// Source: reference sheet §6.1 sloping-ground check (formula from
	// memory, Wolf & Ghilani; values [C]): cut section with formation width
	// 6, side slope 1.5, centre-line cut 2, cross-slope 1 in 10: slope stakes
	// w_u = 7.0588 m and w_d = 5.2174 m out, A = 18.5524 m². The sheet
	// prints four decimals: tolerance half a unit.
	tp := Template{BedWidth: 6, SideSlope: 1.5, CutSlope: 1.5}
	s, err := Cross(tp, [][]float64{{-30, 0, 30}}, [][]float64{{2 - 3, 2, 2 + 3}})
	if err != nil {
		t.Fatal(err)
	}
	cut, fill := s.Areas(0, 0)
	if math.Abs(cut-18.5524) > 5e-5 || fill != 0 {
		t.Errorf("two-level section cut %.6f fill %.6f m², want 18.5524 and 0", cut, fill)
	}
	l, r := s.Catch(0, 0)
	if math.Abs(r.Offset-7.0588) > 5e-5 || math.Abs(l.Offset+5.2174) > 5e-5 || !l.Cut || !r.Cut {
		t.Errorf("slope stakes %+v %+v, want −5.2174 and 7.0588 m, both cut", l, r)
	}
}

func TestCrossLevelEqualsLevel(t *testing.T) {
	// k = 0: Cross must give the closed form of Level (both exact: 1e-9 m²),
	// with the catch points at the same offsets. The narrow section (±12 m)
	// puts deep catch points beyond the sampled width: there the ground is
	// level at the last level, which is the level ground itself, so the
	// areas still agree and Found is false. The ±5 m section ends inside the
	// banks (x3 = 8.65 m for two of the templates).
	tps := []Template{sheetTemplate, crossTemplate, {BedWidth: 2, SideSlope: 0, BankHeight: 1, BankTopWidth: 0, OuterSlope: 3, CutSlope: 0}}
	for _, tp := range tps {
		for _, offs := range [][]float64{offsetsEvery(-80, 80, 2.5, true), {-12, -0.4, 0.3, 12}, {-5, -0.4, 0.3, 5}} {
			lv := planeLevels(offs, 57.3, 0)
			x, err := Cross(tp, [][]float64{offs}, [][]float64{lv})
			if err != nil {
				t.Fatal(err)
			}
			lvl := Level(tp, []float64{57.3})
			width := offs[len(offs)-1]
			for d := -3.0; d <= 6; d += 0.0625 {
				c1, f1 := x.Areas(0, 57.3-d)
				c2, f2 := lvl.Areas(0, 57.3-d)
				if math.Abs(c1-c2) > 1e-9 || math.Abs(f1-f2) > 1e-9 {
					t.Errorf("%+v d = %g: cross %.12g/%.12g, level %.12g/%.12g", tp, d, c1, f1, c2, f2)
				}
				xl, xr := x.Catch(0, 57.3-d)
				ll, lr := lvl.Catch(0, 57.3-d)
				found := lr.Offset <= width
				if math.Abs(xl.Offset-ll.Offset) > 1e-9 || math.Abs(xr.Offset-lr.Offset) > 1e-9 || xr.Cut != lr.Cut ||
					xr.Found != found || xl.Found != found || math.Abs(xr.Level-57.3) > 1e-9 {
					t.Errorf("%+v d = %g: cross catch %+v %+v, level %+v %+v (found %v)", tp, d, xl, xr, ll, lr, found)
				}
			}
		}
	}
}

func TestCrossMidSection(t *testing.T) {
	// The mid-section of two planar sections is planar with the averaged
	// centre level and cross-fall (the average of two planes), the bed at
	// the averaged bed: compared with planarSection (exact, 1e-9 m²). The
	// two stations are sampled at different offsets.
	o1 := offsetsEvery(-150, 150, 3.1, true)
	o2 := offsetsEvery(-141.3, 160, 4.3, true)
	l1 := planeLevels(o1, 100, 0.12)
	l2 := planeLevels(o2, 98.4, -0.04)
	s, err := Cross(crossTemplate, [][]float64{o1, o2}, [][]float64{l1, l2})
	if err != nil {
		t.Fatal(err)
	}
	for _, beds := range [][2]float64{{98.5, 97.9}, {101, 99}, {96, 95.5}} {
		cm, fm := s.MidAreas(1, beds[0], beds[1])
		wc, wf, _, _, ok := planarSection(crossTemplate, (100+98.4)/2, (0.12-0.04)/2, (beds[0]+beds[1])/2)
		if !ok || math.Abs(cm-wc) > 1e-9 || math.Abs(fm-wf) > 1e-9 {
			t.Errorf("beds %v: mid-section %.12g/%.12g, closed form %.12g/%.12g", beds, cm, fm, wc, wf)
		}
		// The prismoidal volume from these and the end areas.
		c1, f1 := s.Areas(0, beds[0])
		c2, f2 := s.Areas(1, beds[1])
		vc, vf := SegmentVolumes(s, Prismoidal, 1, 10, beds[0], beds[1])
		if math.Abs(vc-PrismoidalVolume(10, c1, cm, c2)) > 1e-9 || math.Abs(vf-PrismoidalVolume(10, f1, fm, f2)) > 1e-9 {
			t.Errorf("beds %v: segment volumes %g %g", beds, vc, vf)
		}
	}
}

func TestCrossSteepGroundJump(t *testing.T) {
	// The rule of the Sections doc on ground that falls faster than the
	// fill slope beyond the bank edge. Sheet template (bank edge at
	// x3 = 8.65 m); the ground is level at 0 m to the bank edge, then the
	// right side falls 1:1 (steeper than the 2:1 fill slope) to −21.35 m at
	// 30 m and is level beyond. With the bed a hair below −H the ground at
	// the bank edge is above the top of bank and the cut slope meets it at
	// once; a hair above, the fill slope runs out over the falling ground and
	// meets it only on the level extension. So the fill jumps up as the bed
	// rises (monotone, not continuous) by the triangle between the 2:1 slope
	// and the ground.
	offs := []float64{-30, -8.65, 0, 8.65, 30}
	lv := []float64{0, 0, 0, 0, -21.35}
	s, err := Cross(sheetTemplate, [][]float64{offs}, [][]float64{lv})
	if err != nil {
		t.Fatal(err)
	}
	bedStar := 0 - sheetTemplate.BankHeight
	_, fBelow := s.Areas(0, bedStar-1e-9)
	_, fAbove := s.Areas(0, bedStar+1e-9)
	// The triangle (8.65, 0) → (8.65 + 2·21.35, −21.35) → (30, −21.35):
	// the slope down to the level ground, back along it, up the 1:1 ground
	// (exact analytic case, shoelace).
	px := []float64{8.65, 8.65 + 2*21.35, 30}
	pz := []float64{0, -21.35, -21.35}
	var sh float64
	for i := range px {
		j := (i + 1) % 3
		sh += px[i]*pz[j] - px[j]*pz[i]
	}
	jump := math.Abs(sh) / 2
	if !(fAbove > fBelow) || math.Abs((fAbove-fBelow)-jump) > 1e-6 {
		t.Errorf("fill jump %.9g m² at the bank-edge switch, want %.9g (within 1e-6: the beds straddle by 1e-9 m)", fAbove-fBelow, jump)
	}
	_, r := s.Catch(0, bedStar+1e-9)
	if r.Cut || r.Found {
		t.Errorf("right catch %+v: want the fill slope, on the level extension beyond 30 m", r)
	}
}

func TestCrossInput(t *testing.T) {
	good := []float64{-10, -1, 0, 1, 10}
	lv := []float64{1, 1, 1, 1, 1}
	cases := []struct {
		name    string
		offs    [][]float64
		levels  [][]float64
		tp      Template
		message string
	}{
		{"no stations", nil, nil, crossTemplate, "no cross-sections"},
		{"list lengths", [][]float64{good}, nil, crossTemplate, "1 offset lists but 0 level lists"},
		{"point counts", [][]float64{good}, [][]float64{{1, 2}}, crossTemplate, "5 offsets but 2 levels"},
		{"not increasing", [][]float64{{-10, -1, -1, 1, 10}}, [][]float64{lv}, crossTemplate, "must increase"},
		{"NaN offset", [][]float64{{-10, math.NaN(), 0, 1, 10}}, [][]float64{lv}, crossTemplate, "offset NaN m"},
		{"Inf level", [][]float64{good}, [][]float64{{1, 1, math.Inf(1), 1, 1}}, crossTemplate, "level +Inf m"},
		{"huge offset", [][]float64{{-1e6, -1, 0, 1, 10}}, [][]float64{lv}, crossTemplate, "within ±100000 m"},
		{"one point left", [][]float64{{-10, 1, 2, 3, 4}}, [][]float64{lv}, crossTemplate, "1 of its points at offsets ≤ 0 and 4"},
		{"only the centre left", [][]float64{{0, 1}}, [][]float64{{1, 1}}, crossTemplate, "1 of its points at offsets ≤ 0 and 2"},
		{"all right", [][]float64{{1, 2}}, [][]float64{{1, 1}}, crossTemplate, "0 of its points at offsets ≤ 0"},
		{"bad template", [][]float64{good}, [][]float64{lv}, Template{BedWidth: -1}, "bed width -1"},
	}
	for _, c := range cases {
		_, err := Cross(c.tp, c.offs, c.levels)
		if !errors.Is(err, ErrInput) || !strings.Contains(err.Error(), c.message) {
			t.Errorf("%s: error %v, want ErrInput saying %q", c.name, err, c.message)
		}
	}
	// Two points on each side counting the centre point are enough.
	if _, err := Cross(crossTemplate, [][]float64{{-5, 0, 5}}, [][]float64{{1, 1, 1}}); err != nil {
		t.Errorf("three points across the centre: %v", err)
	}
}

func TestSectionsNaNBed(t *testing.T) {
	x, err := Cross(crossTemplate, [][]float64{{-5, 0, 5}}, [][]float64{{1, 1, 1}})
	if err != nil {
		t.Fatal(err)
	}
	c, f := x.Areas(0, math.NaN())
	l, r := x.Catch(0, math.NaN())
	if !math.IsNaN(c) || !math.IsNaN(f) || !math.IsNaN(l.Offset) || !math.IsNaN(r.Level) || l.Found || r.Found {
		t.Errorf("NaN bed: %g %g %+v %+v, want NaN and not found", c, f, l, r)
	}
}
