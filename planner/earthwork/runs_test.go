package earthwork

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestRunsEqualPointCalls: AreasRun and MidAreasRun give the numbers of
// Areas and MidAreas bit for bit (the Runs contract: the optimiser's
// earthwork must be the plan's), for level ground and for cross-sections
// with tabulated and walked inner areas, over beds that rise, fall and
// jump about (the table searches step from where the last bed fell).
func TestRunsEqualPointCalls(t *testing.T) {
	r := rand.New(rand.NewPCG(61, 62))
	same := func(a, b float64) bool { return a == b || (math.IsNaN(a) && math.IsNaN(b)) }
	for it := range 25 {
		tp := randomTemplate(r)
		var offs, levs [][]float64
		var ground []float64
		for range 3 {
			o, l := randomSection(r, 40, 1+r.Float64())
			offs, levs = append(offs, o), append(levs, l)
			ground = append(ground, polyAt(o, l, 0))
		}
		secs := map[string]Sections{
			"level":        Level(tp, ground),
			"cross":        mustCross(t, tp, offs, levs, tableMax),
			"cross walked": mustCross(t, tp, offs, levs, 0),
			"cross tabled": mustCross(t, tp, offs, levs, 1<<30),
		}
		const m = 250
		cut, fill := make([]float64, m), make([]float64, m)
		for name, s := range secs {
			run := s.(Runs)
			for i := range 3 {
				base := ground[i] - 5 + r.Float64()
				step := []float64{0.01, 0.037, -0.02, 0.5}[r.IntN(4)]
				k0 := r.IntN(200) - 100
				rise := 2*r.Float64() - 1
				run.AreasRun(i, base, step, k0, cut, fill)
				for x := range m {
					c, f := s.Areas(i, base+float64(k0+x)*step)
					if !same(c, cut[x]) || !same(f, fill[x]) {
						t.Fatalf("%d %s station %d bed %d: run %v/%v, point %v/%v", it, name, i, x, cut[x], fill[x], c, f)
					}
				}
				if i == 0 {
					continue
				}
				run.MidAreasRun(i, base, step, rise, k0, cut, fill)
				for x := range m {
					bed := base + float64(k0+x)*step
					c, f := s.MidAreas(i, bed+rise, bed)
					if !same(c, cut[x]) || !same(f, fill[x]) {
						t.Fatalf("%d %s mid %d bed %d: run %v/%v, point %v/%v", it, name, i, x, cut[x], fill[x], c, f)
					}
				}
			}
		}
	}
}
