package html

import (
	"fmt"
	"math"

	"canalstep/planner"
	"canalstep/report/units"
)

// Layout of the mass-haul diagram, in viewBox units.
const (
	mhWidth  = 1100.0
	mhLeft   = 112.0
	mhRight  = 18.0
	mhTop    = 14.0
	mhHeight = 220.0
	mhBottom = 44.0 // chainage labels and axis title
)

// massOrdinates returns the mass-haul ordinate at every station, m³:
// Σ(cut·(1 − shrinkage) − fill) from the start, the cut counted as the fill
// it makes once compacted (Costs.Shrinkage).
func massOrdinates(p *planner.Plan, shrinkage float64) []float64 {
	out := make([]float64, len(p.Stations))
	for i := range p.Stations {
		s := &p.Stations[i]
		out[i] = s.CumCut*(1-shrinkage) - s.CumFill
	}
	return out
}

// massHaul draws the mass-haul diagram over the whole alignment.
func massHaul(res *planner.Result, u units.System) figure {
	n := numbers{u}
	st := res.Stations
	if len(st) < 2 {
		return figure{}
	}
	shrink := res.Record.Costs.Shrinkage
	m := massOrdinates(&res.Plan, shrink)
	c0, c1 := st[0].Chainage, st[len(st)-1].Chainage
	pw := mhWidth - mhLeft - mhRight
	sx := pw / (c1 - c0)
	lo, hi := 0.0, 0.0
	for _, v := range m {
		lo, hi = math.Min(lo, u.Volume(v)), math.Max(hi, u.Volume(v))
	}
	if hi-lo < 1 {
		hi, lo = hi+0.5, lo-0.5
	}
	step := niceStep((hi - lo) / 5)
	lo, hi = math.Floor(lo/step)*step, math.Ceil(hi/step)*step
	sy := mhHeight / (hi - lo)
	X := axis{c0, mhLeft, sx}
	Y := axis{lo, mhTop + mhHeight, -sy} // in the user's volume unit
	V := u.Symbol(units.Volume)
	label := "Mass-haul diagram, cumulative cut less shrinkage minus fill, " + V
	s := newSVG(mhWidth, mhTop+mhHeight+mhBottom, label)
	s.rect("frame", mhLeft, mhTop, pw, mhHeight)
	for _, t := range ticks(lo, hi, step) {
		y := Y.at(t)
		cls := "grid"
		if t == 0 {
			cls = "zero"
		}
		s.line(cls, mhLeft, y, mhLeft+pw, y)
		s.text("tick", "end", mhLeft-4, y+3.5, grouped(t, 0))
	}
	lu0, lu1 := u.FromSI(units.Length, c0), u.FromSI(units.Length, c1)
	cstep := niceStep((lu1 - lu0) / 10)
	for _, t := range ticks(lu0, lu1, cstep) {
		c := u.ToSI(units.Length, t)
		x := X.at(c)
		s.line("grid", x, mhTop, x, mhTop+mhHeight)
		s.text("tick", "middle", x, mhTop+mhHeight+14, u.Station(c))
	}
	for _, d := range res.Drops {
		x := X.at(d.Chainage)
		s.line("dropline", x, mhTop, x, mhTop+mhHeight)
	}
	pts := make([]pt, len(st))
	for i := range st {
		pts[i] = pt{X.at(st[i].Chainage), Y.at(u.Volume(m[i]))}
	}
	s.path("mass", pts)
	s.text("tick", "middle", mhLeft+pw/2, mhTop+mhHeight+34, "Station")
	s.vtext("tick", 14, mhTop+mhHeight/2+40, V)
	final := m[len(m)-1]
	word := "surplus: cut to spare"
	if final < 0 {
		word = "shortfall: fill to borrow"
	}
	return figure{SVG: s.html(), Caption: "Mass haul",
		Notes: []string{
			fmt.Sprintf("Ordinate: Σ(cut × (1 − shrinkage) − fill) from the start, in %s, with shrinkage %s: a rising line is cut to spare, a falling one needs fill; between two points at the same ordinate the cut balances the fill.", V, percent(shrink, 1)),
			fmt.Sprintf("At the end: %s %s (%s). Horizontal: the whole alignment, grid every %s; vertical grid every %s %s. Faint vertical lines mark the drops.",
				grouped(u.Volume(final), 0), V, word, n.q(units.Length, u.ToSI(units.Length, cstep), 0), grouped(step, 0), V),
			"The costs balance cut and fill within each segment between two stations (lateral haul); this diagram shows how material would move along the canal if it were hauled, which the costs do not price.",
		}}
}
