package report

import (
	"fmt"
	"image/color"
	"io"
	"math"
	"sort"
	"strconv"

	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"canalstep/planner"
	"canalstep/planner/earthwork"
	"canalstep/report/units"
)

// sectionInterval is the interval of the regular cross-sections, besides
// one at every drop (common practice, no source): 500 m, or 1500 ft
// (fifteen 100-ft stations).
var sectionInterval = [2]float64{500, 1500}

// Cross-section pages: xsCols × xsRows sections per page.
const (
	xsCols  = 3
	xsRows  = 2
	xsTitle = 6 * vg.Millimeter  // the section's title above its drawing
	xsNotes = 12 * vg.Millimeter // three lines of figures under it
	xsAxis  = 8 * vg.Millimeter  // offset labels and caption
	xsTicks = 14 * vg.Millimeter // level labels, left of the drawing
	xsPad   = 3 * vg.Millimeter
	xsFill  = 0.85 // the tallest section fills at most this share of a drawing's height

	// xsMaxExaggeration caps the cross-sections' vertical exaggeration
	// (common practice, no source).
	xsMaxExaggeration = 5
)

// Colours of the cross-sections.
var designColor = color.Black

// RenderCrossSectionSheets writes the cross-sections of plan r to w as a
// PDF of A3 landscape pages, six sections a page: one at every drop (its
// upstream side, where the plan's areas are taken) and one at the station
// nearest every multiple of 500 m (1500 ft in US units), in chainage order.
// Every section is drawn at one horizontal and one vertical scale, the
// largest round ones at which the widest and the tallest fit; each shows
// the ground (the DEM cross-section, or level where there is none), the
// design section at the station's bed between its catch points, the design
// water surface, the catch points (open where the slope met the ground
// only beyond the sampled width), cut and fill shaded, its station and
// its cut and fill areas. name is the alignment's name for the title block.
func RenderCrossSectionSheets(w io.Writer, name string, r *planner.Result, u Units, im Imprint) error {
	const what = "cross-section sheets"
	if r == nil || len(r.Stations) == 0 {
		return fmt.Errorf("%s: the plan has no stations", what)
	}
	x, err := newCrossSheets(name, r, u, im)
	if err != nil {
		return fmt.Errorf("%s: %w", what, err)
	}
	book := newPDFBook()
	for k := range x.pages() {
		x.page(book.page(), k)
	}
	if err := book.writeTo(w); err != nil {
		return fmt.Errorf("%s: %w", what, err)
	}
	return nil
}

// SectionStations returns the stations (indices into r.Stations) that
// RenderCrossSectionSheets draws, in order, and for each what it is: "drop
// k" (1-based, the order of r.Drops) or "".
func SectionStations(r *planner.Result, u Units) (idx []int, what []string) {
	st := r.Stations
	pick := map[int]string{}
	for k, d := range r.Drops {
		if d.Station >= 0 && d.Station < len(st) {
			pick[d.Station] = "drop D" + strconv.Itoa(k+1) + ", upstream side"
		}
	}
	step := u.ToSI(units.Length, sectionInterval[u])
	c0, c1 := st[0].Chainage, st[len(st)-1].Chainage
	for _, c := range multiples(c0, c1, step, maxSheets*xsCols*xsRows) {
		i := sort.Search(len(st), func(j int) bool { return st[j].Chainage >= c })
		if i > 0 && (i == len(st) || c-st[i-1].Chainage < st[i].Chainage-c) {
			i--
		}
		if _, ok := pick[i]; !ok {
			pick[i] = ""
		}
	}
	for i := range pick {
		idx = append(idx, i)
	}
	sort.Ints(idx)
	for _, i := range idx {
		what = append(what, pick[i])
	}
	return idx, what
}

// xsSection is one station's cross-section in SI: the design line from
// catch point to catch point, the ground, and the cut and fill regions.
type xsSection struct {
	s              *planner.StationResult
	what           string
	designA        []float64 // design line: offsets (m, negative left) and levels (m)
	designZ        []float64
	groundA        []float64 // ground breakpoints; nil: level at s.Ground
	groundZ        []float64
	cut, fill      []plotter.XYs
	water          [2]plotter.XY // the water line's ends
	bedHalf        float64       // half the bed width, m
	halfWidth      float64       // the outermost catch point or bank edge, m
	finite         bool
	catchL, catchR earthwork.Catch
}

// newSection builds station s's section under template t, its bank height
// the station's.
func newSection(s *planner.StationResult, t earthwork.Template) xsSection {
	t.BankHeight = s.BankHeight
	z, h := s.Invert, s.BankHeight
	x1 := t.BedWidth / 2
	x2 := x1 + t.SideSlope*h
	x3 := x2 + t.BankTopWidth
	x := xsSection{s: s, bedHalf: x1, catchL: s.CatchLeft, catchR: s.CatchRight}
	x.designA = []float64{s.CatchLeft.Offset, -x3, -x2, -x1, x1, x2, x3, s.CatchRight.Offset}
	x.designZ = []float64{s.CatchLeft.Level, z + h, z + h, z, z, z + h, z + h, s.CatchRight.Level}
	if cs := s.Cross; cs != nil && len(cs.Offsets) >= 2 && len(cs.Offsets) == len(cs.Levels) {
		x.groundA, x.groundZ = cs.Offsets, cs.Levels
	}
	x.finite = sort.Float64sAreSorted(x.designA) && sort.Float64sAreSorted(x.groundA)
	for _, v := range append(append(append([]float64{s.Ground, s.WaterSurface}, x.designA...), x.designZ...), x.groundZ...) {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			x.finite = false
		}
	}
	y := math.Max(0, s.WaterSurface-z)
	wh := x1 + t.SideSlope*math.Min(y, h)
	x.water = [2]plotter.XY{{X: -wh, Y: z + y}, {X: wh, Y: z + y}}
	x.halfWidth = math.Max(x3, math.Max(-s.CatchLeft.Offset, s.CatchRight.Offset))
	if x.finite {
		x.cut, x.fill = x.regions()
	}
	return x
}

// groundAt returns the ground level at offset a (m): the cross-section
// interpolated, taken level beyond its ends; the centre-line ground where
// there is none.
func (x *xsSection) groundAt(a float64) float64 {
	o, l := x.groundA, x.groundZ
	switch {
	case o == nil:
		return x.s.Ground
	case a <= o[0]:
		return l[0]
	case a >= o[len(o)-1]:
		return l[len(l)-1]
	}
	return valueAt(o, l, a)
}

// regions returns the cut (ground above the design line) and fill (below)
// polygons between the catch points: the design line's points and the
// ground's breakpoints between them, through regions.
func (x *xsSection) regions() (cut, fill []plotter.XYs) {
	l, r := x.designA[0], x.designA[len(x.designA)-1]
	type sample struct{ a, design float64 }
	var ps []sample
	for i, a := range x.designA {
		ps = append(ps, sample{a, x.designZ[i]})
	}
	for _, a := range x.groundA {
		if a <= l || a >= r {
			continue
		}
		if j := sort.SearchFloat64s(x.designA, a); x.designA[j] == a {
			continue // a breakpoint of the design line already
		}
		ps = append(ps, sample{a, valueAt(x.designA, x.designZ, a)})
	}
	sort.SliceStable(ps, func(i, j int) bool { return ps[i].a < ps[j].a })
	offs, ground, design := make([]float64, len(ps)), make([]float64, len(ps)), make([]float64, len(ps))
	idx := make([]int, len(ps))
	for i, p := range ps {
		offs[i], ground[i], design[i], idx[i] = p.a, x.groundAt(p.a), p.design, i
	}
	return regions(offs, ground, design, idx)
}

// levelRange returns the lowest and highest level drawn within ±hw (m).
func (x *xsSection) levelRange(hw float64) (lo, hi float64) {
	lo, hi, _ = dataRange(x.designZ, []float64{x.water[0].Y})
	for _, a := range append([]float64{-hw, 0, hw}, x.groundA...) {
		if math.Abs(a) <= hw {
			g := x.groundAt(a)
			lo, hi = math.Min(lo, g), math.Max(hi, g)
		}
	}
	return lo, hi
}

// crossSheets is the set of cross-section pages.
type crossSheets struct {
	name   string
	u      Units
	im     Imprint
	secs   []xsSection
	hw     float64 // half the drawn width, m
	h, v   drawScale
	cellW  vg.Length
	cellH  vg.Length
	plotW  vg.Length // the drawing of one section
	plotH  vg.Length
	window float64 // the levels a drawing shows, display units
}

func newCrossSheets(name string, r *planner.Result, u Units, im Imprint) (*crossSheets, error) {
	idx, what := SectionStations(r, u)
	if n := (len(idx) + xsCols*xsRows - 1) / (xsCols * xsRows); n > maxSheets {
		return nil, fmt.Errorf("%d pages exceed the limit of %d", n, maxSheets)
	}
	x := &crossSheets{name: name, u: u, im: im}
	for k, i := range idx {
		s := newSection(&r.Stations[i], r.Record.Template)
		s.what = what[k]
		x.secs = append(x.secs, s)
		if s.finite {
			x.hw = math.Max(x.hw, s.halfWidth)
		}
	}
	if !(x.hw > 0) {
		x.hw = 1
	}
	x.hw *= 1.1
	da := drawingArea()
	x.cellW = (da.Max.X - da.Min.X) / xsCols
	x.cellH = (da.Max.Y - da.Min.Y) / xsRows
	x.plotW = x.cellW - xsTicks - 2*xsPad
	x.plotH = x.cellH - xsTitle - xsNotes - xsAxis - 2*xsPad
	tallest := 0.5 // m: a flat section does not blow the scale up
	for k := range x.secs {
		if x.secs[k].finite {
			lo, hi := x.secs[k].levelRange(x.hw)
			tallest = math.Max(tallest, hi-lo)
		}
	}
	x.h = roundScale(u, u.Length(2*x.hw), x.plotW)
	x.v = roundScale(u, u.Length(tallest), vg.Length(xsFill)*x.plotH)
	if x.v > x.h {
		x.h = x.v
	}
	// Sections exaggerated more than xsMaxExaggeration read as other
	// shapes: the vertical scale is reduced to keep within it.
	if x.h/x.v > xsMaxExaggeration {
		x.v = roundScale(u, u.Length(1), x.h.paper(u, u.Length(1))*xsMaxExaggeration)
	}
	x.window = float64(x.plotH) * x.v.perPaper(u)
	return x, nil
}

func (x *crossSheets) pages() int {
	return max(1, (len(x.secs)+xsCols*xsRows-1)/(xsCols*xsRows))
}

// page draws page k.
func (x *crossSheets) page(c draw.Canvas, k int) {
	u := x.u
	per := xsCols * xsRows
	from, to := k*per, min((k+1)*per, len(x.secs))
	da := drawingArea()
	for j := from; j < to; j++ {
		col, row := (j-from)%xsCols, (j-from)/xsCols
		cell := rect(da.Min.X+x.cellW*vg.Length(col), da.Max.Y-x.cellH*vg.Length(row+1),
			da.Min.X+x.cellW*vg.Length(col+1), da.Max.Y-x.cellH*vg.Length(row))
		x.section(c, &x.secs[j], cell)
		if col > 0 {
			c.StrokeLine2(gridRule, cell.Min.X, cell.Min.Y+mm(2), cell.Min.X, cell.Max.Y-mm(2))
		}
	}
	extent := ""
	if to > from {
		extent = "Stations " + u.Station(x.secs[from].s.Chainage) + " to " + u.Station(x.secs[to-1].s.Chainage)
	}
	L := u.LengthUnit()
	f := sheetFrame{drawing: "Cross-sections", name: plotName(x.name), sheet: k + 1, of: x.pages(), u: u, imprint: x.im, extent: extent,
		scales: []string{
			"Horizontal scale " + x.h.words(u) + ", vertical " + x.v.words(u) + ", exaggeration x" + exaggerationWords(x.h, x.v),
			"At every drop and every " + trimFloat(sectionInterval[u]) + " " + L + "; looking downstream, left to the left",
			"On A3 (420 x 297 mm); printed at another size, use the bars",
		},
		bars: []scaleBar{newScaleBar(u, x.h, mm(45), false), newScaleBar(u, x.v, mm(16), true)},
		legend: []legendItem{
			{"ground", lineIcon(lineStyle(groundColor, 0.9))},
			{"design section at the station's bed", lineIcon(lineStyle(designColor, 1))},
			{"design water surface", func(c draw.Canvas, r vg.Rectangle) {
				y := (r.Min.Y + r.Max.Y) / 2
				c.StrokeLine2(lineStyle(waterColor, 0.8), r.Min.X, y, r.Max.X, y)
				waterMark(c, vg.Point{X: (r.Min.X + r.Max.X) / 2, Y: y})
			}},
			{"catch point", catchIcon(true)},
			{"catch point beyond the sampled ground", catchIcon(false)},
			{"cut", boxIcon(cutFill)},
			{"fill", boxIcon(fillFill)},
		},
	}
	f.draw(c)
}

// waterMark draws the water-surface sign, a small triangle standing on its
// point at p.
func waterMark(c draw.Canvas, p vg.Point) {
	h := mm(1.6)
	c.FillPolygon(waterColor, []vg.Point{p, {X: p.X - h*0.6, Y: p.Y + h}, {X: p.X + h*0.6, Y: p.Y + h}})
}

// catchIcon is the legend icon of a catch point, found or not.
func catchIcon(found bool) func(draw.Canvas, vg.Rectangle) {
	return func(c draw.Canvas, r vg.Rectangle) {
		drawCatch(c, vg.Point{X: (r.Min.X + r.Max.X) / 2, Y: (r.Min.Y + r.Max.Y) / 2}, found)
	}
}

func drawCatch(c draw.Canvas, p vg.Point, found bool) {
	g := draw.GlyphStyle{Color: color.Black, Radius: mm(0.8), Shape: draw.RingGlyph{}}
	if found {
		g.Shape = draw.CircleGlyph{}
	}
	c.DrawGlyphNoClip(g, p)
}

// section draws one section in cell.
func (x *crossSheets) section(c draw.Canvas, s *xsSection, cell vg.Rectangle) {
	u := x.u
	L := u.LengthUnit()
	title := u.Station(s.s.Chainage)
	if s.what != "" {
		title += ", " + s.what
	}
	ts := sheetText(sheetTextSize+1, draw.XLeft, draw.YTop)
	c.FillText(ts, vg.Point{X: cell.Min.X + xsPad, Y: cell.Max.Y - xsPad}, title)
	pl := rect(cell.Min.X+xsPad+xsTicks, cell.Min.Y+xsPad+xsNotes+xsAxis, cell.Max.X-xsPad, cell.Max.Y-xsPad-xsTitle)
	// Centre the drawn width in the room.
	w := x.h.paper(u, u.Length(2*x.hw))
	pl.Min.X += (pl.Max.X - pl.Min.X - w) / 2
	pl.Max.X = pl.Min.X + w
	dc := sub(c, pl)
	ns := sheetText(sheetSmallSize, draw.XLeft, draw.YTop)
	if !s.finite {
		strokeRect(c, thinRule, pl)
		c.FillText(ns, vg.Point{X: pl.Min.X + mm(2), Y: pl.Max.Y - mm(2)}, "No section: the plan has no finite levels here.")
		return
	}
	lo, hi := s.levelRange(x.hw)
	base, step := datum(u.Length(lo), u.Length(hi), x.window)
	m := mapping{x0: -u.Length(x.hw), z0: base, ox: pl.Min.X, oy: pl.Min.Y,
		sx: float64(x.h.paper(u, 1)), sy: float64(x.v.paper(u, 1))}
	P := func(a, z float64) vg.Point { return m.pt(u.Length(a), u.Length(z)) }
	// Grid and labels.
	tick := sheetText(sheetSmallSize, draw.XRight, draw.YCenter)
	prec := decimals(step)
	for _, z := range multiples(base, base+x.window, step, 100) {
		y := m.pt(0, z).Y
		c.StrokeLine2(gridRule, pl.Min.X, y, pl.Max.X, y)
		c.FillText(tick, vg.Point{X: pl.Min.X - mm(1), Y: y}, groupThousands(z, prec))
	}
	bt := sheetText(sheetSmallSize, draw.XCenter, draw.YTop)
	hu := u.Length(x.hw)
	for _, t := range (niceTicks{6}).Ticks(-hu, hu) {
		if t.Label == "" {
			continue
		}
		px := m.pt(t.Value, 0).X
		c.StrokeLine2(gridRule, px, pl.Min.Y, px, pl.Max.Y)
		c.FillText(bt, vg.Point{X: px, Y: pl.Min.Y - mm(0.8)}, t.Label)
	}
	c.FillText(bt, vg.Point{X: (pl.Min.X + pl.Max.X) / 2, Y: pl.Min.Y - mm(4)}, "offset ("+L+"), left - / right +")
	// Cut, fill, water, ground, design, catch points.
	for _, p := range s.cut {
		fillPolygon(dc, cutFill, x.paper(p, P))
	}
	for _, p := range s.fill {
		fillPolygon(dc, fillFill, x.paper(p, P))
	}
	if wl := s.water; wl[1].Y > s.s.Invert {
		polyline(dc, lineStyle(waterColor, 0.8), []vg.Point{P(wl[0].X, wl[0].Y), P(wl[1].X, wl[1].Y)})
		waterMark(c, P(wl[1].X/2, wl[1].Y))
	}
	g := []vg.Point{P(-x.hw, s.groundAt(-x.hw))}
	for _, a := range s.groundA {
		if math.Abs(a) < x.hw {
			g = append(g, P(a, s.groundAt(a)))
		}
	}
	g = append(g, P(x.hw, s.groundAt(x.hw)))
	polyline(dc, lineStyle(groundColor, 0.9), g)
	d := make([]vg.Point, len(s.designA))
	for i := range d {
		d[i] = P(s.designA[i], s.designZ[i])
	}
	polyline(dc, lineStyle(designColor, 1), d)
	for _, ct := range []earthwork.Catch{s.catchL, s.catchR} {
		if p := P(ct.Offset, ct.Level); dc.Contains(p) {
			drawCatch(c, p, ct.Found)
		}
	}
	strokeRect(c, thinRule, pl)
	// Figures.
	A := func(v float64) string { return u.Format(units.Area, v, 2) }
	lv := func(v float64) string { return fixed(u.Length(v), 2) }
	ground := "ground from the DEM cross-section"
	if s.groundA == nil {
		ground = "ground taken level across"
	}
	beyond := ""
	if !s.catchL.Found || !s.catchR.Found {
		beyond = " (open: beyond the sampled ground)"
	}
	notes := []string{
		fmt.Sprintf("Cut %s, fill %s; %s", A(s.s.CutArea), A(s.s.FillArea), ground),
		fmt.Sprintf("Bed %s, water surface %s, top of bank %s %s", lv(s.s.Invert), lv(s.s.WaterSurface), lv(s.s.TopOfBank), L),
		fmt.Sprintf("Catch points %s left, %s right%s", u.Format(units.Length, -s.catchL.Offset, 2), u.Format(units.Length, s.catchR.Offset, 2), beyond),
	}
	y := cell.Min.Y + xsPad + xsNotes
	for _, n := range notes {
		c.FillText(ns, vg.Point{X: cell.Min.X + xsPad, Y: y}, n)
		y -= ns.Font.Size * 1.35
	}
}

// paper maps a polygon in SI (offset, level) to the paper.
func (x *crossSheets) paper(p plotter.XYs, P func(a, z float64) vg.Point) []vg.Point {
	out := make([]vg.Point, len(p))
	for i, q := range p {
		out[i] = P(q.X, q.Y)
	}
	return out
}
