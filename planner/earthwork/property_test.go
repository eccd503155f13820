package earthwork

import (
	"math"
	"math/rand/v2"
	"testing"
)

// randomTemplate draws a valid template, now and then with vertical faces,
// no bank top or no bed (seeded: reproducible).
func randomTemplate(r *rand.Rand) Template {
	pick := func(lo, hi float64) float64 {
		if r.IntN(6) == 0 {
			return 0
		}
		return lo + (hi-lo)*r.Float64()
	}
	t := Template{BedWidth: pick(0.3, 6), SideSlope: pick(0.5, 3), BankHeight: 0.2 + 3*r.Float64(),
		BankTopWidth: pick(0.5, 5), OuterSlope: pick(0.5, 4), CutSlope: pick(0.5, 3)}
	if t.BedWidth == 0 && t.SideSlope == 0 {
		t.BedWidth = 1
	}
	return t
}

// randomSection draws a cross-section: 2 to maxSide points on each side
// (and now and then one at 0), 0.2 to 5 m apart, ground a random walk with
// slopes within ±maxSlope around 100 m.
func randomSection(r *rand.Rand, maxSide int, maxSlope float64) (offs, levs []float64) {
	side := func() (a, z []float64) {
		n := 2 + r.IntN(maxSide-1)
		x, g := 0.0, 0.0
		for range n {
			dx := 0.2 + 4.8*r.Float64()
			x += dx
			g += dx * maxSlope * (2*r.Float64() - 1)
			a, z = append(a, x), append(z, g)
		}
		return a, z
	}
	la, lz := side()
	ra, rz := side()
	for i := len(la) - 1; i >= 0; i-- {
		offs, levs = append(offs, -la[i]), append(levs, 100+lz[i])
	}
	if r.IntN(3) == 0 {
		offs, levs = append(offs, 0), append(levs, 100)
	}
	for i := range ra {
		offs, levs = append(offs, ra[i]), append(levs, 100+rz[i])
	}
	return offs, levs
}

func TestCrossMonotoneInBed(t *testing.T) {
	// As the bed rises the design rises with it: the cut cannot grow and
	// the fill cannot shrink (Sections doc; a fact of the geometry). On any
	// ground, steep or not. Tolerance 1e-9·(1 + area) for rounding.
	r := rand.New(rand.NewPCG(11, 12))
	for it := range 300 {
		tp := randomTemplate(r)
		offs, levs := randomSection(r, 30, 1.5)
		s := mustCross(t, tp, [][]float64{offs}, [][]float64{levs}, tableMax)
		pc, pf := s.Areas(0, 90)
		for bed := 90.013; bed < 110; bed += 0.013 {
			c, f := s.Areas(0, bed)
			if c > pc+1e-9*(1+pc) || f < pf-1e-9*(1+pf) || c < 0 || f < 0 {
				t.Fatalf("case %d %+v bed %.3f m: cut %.12g → %.12g, fill %.12g → %.12g", it, tp, bed, pc, c, pf, f)
			}
			pc, pf = c, f
		}
	}
}

func TestCrossContinuousOnGentleGround(t *testing.T) {
	// Where the ground is flatter than both outer slopes each outer slope
	// meets it once, and the areas change with the bed at a rate no more
	// than the width between the catch points (d(cut)/d(bed) is minus the
	// width of the cut, d(fill)/d(bed) the width of the fill: a fact of the
	// geometry). Checked on 1 mm steps; tolerance 1e-9 m² for rounding.
	r := rand.New(rand.NewPCG(21, 22))
	for it := range 200 {
		tp := randomTemplate(r)
		slope := 0.9 / math.Max(1, math.Max(tp.OuterSlope, tp.CutSlope))
		offs, levs := randomSection(r, 20, slope)
		s := mustCross(t, tp, [][]float64{offs}, [][]float64{levs}, tableMax)
		const db = 1e-3
		for bed := 90.0; bed < 110; bed += 0.37 {
			c1, f1 := s.Areas(0, bed)
			c2, f2 := s.Areas(0, bed+db)
			l1, r1 := s.Catch(0, bed)
			l2, r2 := s.Catch(0, bed+db)
			span := math.Max(r1.Offset-l1.Offset, r2.Offset-l2.Offset)
			if math.Abs(c2-c1) > span*db+1e-9 || math.Abs(f2-f1) > span*db+1e-9 {
				t.Fatalf("case %d %+v bed %.3f m: cut %.12g → %.12g, fill %.12g → %.12g over %g m (span %.3f m)", it, tp, bed, c1, c2, f1, f2, db, span)
			}
		}
	}
}

func TestCrossTableMatchesWalk(t *testing.T) {
	// The tabulated inner areas against the segment-by-segment walk (both
	// exact; tolerance 1e-9·(1 + area) for rounding), mid-sections too.
	r := rand.New(rand.NewPCG(31, 32))
	for it := range 200 {
		tp := randomTemplate(r)
		o1, l1 := randomSection(r, 40, 1)
		o2, l2 := randomSection(r, 40, 1)
		offs, levs := [][]float64{o1, o2}, [][]float64{l1, l2}
		tab := mustCross(t, tp, offs, levs, 1<<30)
		walk := mustCross(t, tp, offs, levs, 0)
		if !tabulated(tab, 0, 1) || tabulated(walk, 0, 1) {
			t.Fatal("the tabulation limit did not choose the method")
		}
		for bed := 92.0; bed < 108; bed += 0.171 {
			c1, f1 := tab.Areas(1, bed)
			c2, f2 := walk.Areas(1, bed)
			m1, n1 := tab.MidAreas(1, bed+0.3, bed)
			m2, n2 := walk.MidAreas(1, bed+0.3, bed)
			if !near(c1, c2, 1e-9) || !near(f1, f2, 1e-9) || !near(m1, m2, 1e-9) || !near(n1, n2, 1e-9) {
				t.Fatalf("case %d bed %.3f: table %.12g/%.12g mid %.12g/%.12g, walk %.12g/%.12g mid %.12g/%.12g",
					it, bed, c1, f1, m1, n1, c2, f2, m2, n2)
			}
		}
	}
}

// bruteHalf integrates one side (sign −1 left, +1 right) of the section by
// sampling: the design by the rule of the Sections doc, the catch point as
// the first sample outward where the outer slope is no longer on the same
// side of the ground, the areas by the midpoint rule with step h on each
// piece of the template.
func bruteHalf(tp Template, offs, levs []float64, sign, bed, h float64) (cut, fill, catch float64) {
	ground := func(a float64) float64 { return polyAt(offs, levs, sign*a) }
	x1 := tp.BedWidth / 2
	x2 := x1 + tp.SideSlope*tp.BankHeight
	x3 := x2 + tp.BankTopWidth
	top := bed + tp.BankHeight
	inner := func(a float64) float64 {
		switch {
		case a <= x1:
			return bed
		case a < x2:
			return bed + (a-x1)/tp.SideSlope
		}
		return top
	}
	add := func(f, w float64) {
		if f > 0 {
			cut += f * w
		} else {
			fill -= f * w
		}
	}
	// Each template piece on its own, so that no sample cell holds the
	// jump of a vertical face.
	for _, p := range [][2]float64{{0, x1}, {x1, x2}, {x2, x3}} {
		n := math.Ceil((p[1] - p[0]) / h)
		for k := 0.0; k < n; k++ {
			a := p[0] + (k+0.5)*(p[1]-p[0])/n
			add(ground(a)-inner(a), (p[1]-p[0])/n)
		}
	}
	g3 := ground(x3)
	up := g3 > top
	z := tp.OuterSlope
	if up {
		z = tp.CutSlope
	}
	if g3 == top || z < minOuterSlope {
		return cut, fill, x3
	}
	outer := func(a float64) float64 {
		if up {
			return top + (a-x3)/z
		}
		return top - (a-x3)/z
	}
	for a := x3; ; a += h {
		f := ground(a+h) - outer(a+h)
		if (f > 0) != up || f == 0 {
			return cut, fill, a + h/2
		}
		add(ground(a+h/2)-outer(a+h/2), h)
	}
}

func TestCrossBruteForce(t *testing.T) {
	// Against sampling (an independent, approximate method): midpoint rule
	// at 2 mm, catch point to the sample. The rule's error at each of the
	// few dozen kinks is below h²·|slope jump|/4 and the catch error below
	// h·|ground − design| near it, so tolerance 2e-4 m² + 1e-6 relative for
	// the areas and h for the catch offsets.
	r := rand.New(rand.NewPCG(41, 42))
	const h = 2e-3
	for it := range 40 {
		tp := randomTemplate(r)
		offs, levs := randomSection(r, 12, 1)
		s := mustCross(t, tp, [][]float64{offs}, [][]float64{levs}, tableMax)
		for _, bed := range []float64{96 + 8*r.Float64(), 99 + 2*r.Float64()} {
			cut, fill := s.Areas(0, bed)
			lc, lf, la := bruteHalf(tp, offs, levs, -1, bed, h)
			rc, rf, ra := bruteHalf(tp, offs, levs, 1, bed, h)
			l, rt := s.Catch(0, bed)
			tol := func(a float64) float64 { return 2e-4 + 1e-6*a }
			if math.Abs(cut-(lc+rc)) > tol(cut) || math.Abs(fill-(lf+rf)) > tol(fill) ||
				math.Abs(-l.Offset-la) > h || math.Abs(rt.Offset-ra) > h {
				t.Errorf("case %d %+v bed %.4f: cut %.6f fill %.6f catch %.4f %.4f; sampled %.6f %.6f catch %.4f %.4f",
					it, tp, bed, cut, fill, l.Offset, rt.Offset, lc+rc, lf+rf, -la, ra)
			}
		}
	}
}

func TestSectionsNoAllocation(t *testing.T) {
	// The optimiser's hot path allocates nothing (testing.AllocsPerRun).
	r := rand.New(rand.NewPCG(51, 52))
	o1, l1 := randomSection(r, 40, 1)
	o2, l2 := randomSection(r, 40, 1)
	offs, levs := [][]float64{o1, o2}, [][]float64{l1, l2}
	tab := mustCross(t, sheetTemplate, offs, levs, tableMax)
	walk := mustCross(t, sheetTemplate, offs, levs, 0)
	for name, s := range map[string]Sections{"level": Level(sheetTemplate, []float64{100, 99}), "cross": tab, "cross walked": walk} {
		bed := 97.3
		var sink float64
		n := testing.AllocsPerRun(200, func() {
			bed += 0.01
			c, f := s.Areas(1, bed)
			m, g := s.MidAreas(1, bed+0.1, bed)
			l, rt := s.Catch(1, bed)
			v, w := SegmentVolumes(s, Prismoidal, 1, 10, bed+0.1, bed)
			sink += c + f + m + g + l.Offset + rt.Offset + v + w
		})
		if n != 0 {
			t.Errorf("%s: %g allocations per call", name, n)
		}
		_ = sink
	}
}
