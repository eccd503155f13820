package earthwork

import (
	"math/rand/v2"
	"testing"
)

// benchSections returns n seeded cross-sections with perSide points on each
// side every 30/perSide m (to ±30 m, as a DEM sampled across a small canal),
// on ground falling 0.2 % along the line with a random cross-fall and relief.
func benchSections(n, perSide int) (offsets, levels [][]float64, ground []float64) {
	r := rand.New(rand.NewPCG(7, uint64(perSide)))
	step := 30 / float64(perSide)
	for i := range n {
		g0 := 100 - 0.002*10*float64(i)
		k := 0.1 * (2*r.Float64() - 1)
		var o, l []float64
		for j := -perSide; j <= perSide; j++ {
			x := float64(j) * step
			o = append(o, x)
			l = append(l, g0+k*x+0.3*(2*r.Float64()-1))
		}
		l[perSide] = g0
		offsets, levels, ground = append(offsets, o), append(levels, l), append(ground, g0)
	}
	return offsets, levels, ground
}

// beds walks the stations and beds as the optimiser does: for each station
// in turn from first on, 600 beds 1 cm apart from 4 m below to 2 m above
// the ground.
type beds struct {
	ground []float64
	first  int
	i, k   int
}

func newBeds(ground []float64, first int) *beds { return &beds{ground: ground, first: first, i: first} }

// next returns the next station and bed (m).
func (w *beds) next() (int, float64) {
	i, bed := w.i, w.ground[w.i]-4+float64(w.k)*0.01
	if w.k++; w.k == 600 {
		w.k = 0
		if w.i++; w.i == len(w.ground) {
			w.i = w.first
		}
	}
	return i, bed
}

// benchWalk calls f over the beds walk from station first; one op is one
// call.
func benchWalk(b *testing.B, ground []float64, first int, f func(i int, bed float64) float64) {
	var sink float64
	w := newBeds(ground, first)
	b.ReportAllocs()
	for b.Loop() {
		sink += f(w.next())
	}
	_ = sink
}

// benchAreas calls Areas over the beds walk.
func benchAreas(b *testing.B, s Sections, ground []float64) {
	benchWalk(b, ground, 0, func(i int, bed float64) float64 {
		c, f := s.Areas(i, bed)
		return c + f
	})
}

func BenchmarkTemplateAreas(b *testing.B) {
	var s float64
	b.ReportAllocs()
	for i := 0; b.Loop(); i++ {
		c, f := sheetTemplate.Areas(float64(i%700)*0.01 - 2)
		s += c + f
	}
	_ = s
}

func BenchmarkLevelAreas(b *testing.B) {
	_, _, g := benchSections(1000, 10)
	benchAreas(b, Level(sheetTemplate, g), g)
}

func BenchmarkCrossAreas10(b *testing.B) {
	o, l, g := benchSections(1000, 10)
	benchAreas(b, mustCross(b, sheetTemplate, o, l, tableMax), g)
}

func BenchmarkCrossAreas40(b *testing.B) {
	o, l, g := benchSections(1000, 40)
	benchAreas(b, mustCross(b, sheetTemplate, o, l, tableMax), g)
}

// BenchmarkCrossAreas40Walked is BenchmarkCrossAreas40 with the inner part
// walked segment by segment instead of tabulated (the method for very
// dense sections): the table's gain.
func BenchmarkCrossAreas40Walked(b *testing.B) {
	o, l, g := benchSections(1000, 40)
	benchAreas(b, mustCross(b, sheetTemplate, o, l, 0), g)
}

func BenchmarkCrossMidAreas40(b *testing.B) {
	o, l, g := benchSections(1000, 40)
	s := mustCross(b, sheetTemplate, o, l, tableMax)
	benchWalk(b, g, 1, func(i int, bed float64) float64 {
		c, f := s.MidAreas(i, bed+0.02, bed)
		return c + f
	})
}

// benchCatch calls Catch over the beds walk.
func benchCatch(b *testing.B, s Sections, ground []float64) {
	benchWalk(b, ground, 0, func(i int, bed float64) float64 {
		left, right := s.Catch(i, bed)
		return right.Offset - left.Offset
	})
}

func BenchmarkCrossCatch40(b *testing.B) {
	o, l, g := benchSections(1000, 40)
	benchCatch(b, mustCross(b, sheetTemplate, o, l, tableMax), g)
}

func BenchmarkLevelCatch(b *testing.B) {
	_, _, g := benchSections(1000, 10)
	benchCatch(b, Level(sheetTemplate, g), g)
}

// BenchmarkCrossBuild40 builds the sections of 1000 stations with 40
// points a side (and their 999 mid-sections): one op is the whole build.
func BenchmarkCrossBuild40(b *testing.B) {
	o, l, _ := benchSections(1000, 40)
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Cross(sheetTemplate, o, l); err != nil {
			b.Fatal(err)
		}
	}
}

// benchAreasRun calls AreasRun for runs of 600 beds 1 cm apart from 4 m
// below to 2 m above the ground at each station in turn; one op is one bed
// (compare BenchmarkLevelAreas and BenchmarkCrossAreas40, one call a bed).
func benchAreasRun(b *testing.B, s Sections, ground []float64) {
	r := s.(Runs)
	const m = 600
	cut, fill := make([]float64, m), make([]float64, m)
	var sink float64
	i := 0
	b.ReportAllocs()
	for b.Loop() {
		if i%m == 0 {
			st := (i / m) % len(ground)
			r.AreasRun(st, ground[st]-4, 0.01, 0, cut, fill)
		}
		sink += cut[i%m] + fill[i%m]
		i++
	}
	_ = sink
}

func BenchmarkLevelAreasRun(b *testing.B) {
	_, _, g := benchSections(1000, 10)
	benchAreasRun(b, Level(sheetTemplate, g), g)
}

// BenchmarkCrossAreasRun40 is BenchmarkCrossAreas40 through AreasRun (the
// optimiser's way): the section prepared once a run of 600 beds.
func BenchmarkCrossAreasRun40(b *testing.B) {
	o, l, g := benchSections(1000, 40)
	benchAreasRun(b, mustCross(b, sheetTemplate, o, l, tableMax), g)
}
