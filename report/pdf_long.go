package report

import (
	"fmt"
	"image/color"
	"io"
	"math"
	"sort"
	"strconv"

	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"canalstep/report/units"
)

// Long-section sheets in each unit system (common practice, no source):
// the length of alignment one sheet shows, the fixed horizontal scale that
// fits it on A3 (1 km at 1:3000 is 333 mm; 3000 ft at 1 in = 300 ft is
// 10 in) and the interval of the data band's columns and the vertical
// grid (50 m; 150 ft, one and a half 100-ft stations).
var (
	sheetLength  = [2]float64{1000, 3000} // SI m, US ft
	sheetScale   = [2]drawScale{3000, 3600}
	bandInterval = [2]float64{50, 150}
)

// Layout of a long-section sheet within the drawing area above the strip.
const (
	lsHeadW    = 44 * vg.Millimeter // band row headings and the elevation labels, left of the plot
	lsBandRow  = 6 * vg.Millimeter
	lsBandRows = 5
	lsGap      = 4 * vg.Millimeter
	lsZoneMin  = 22 * vg.Millimeter // the drop labels' zone above the plot
	lsZoneMax  = 45 * vg.Millimeter
	lsFill     = 0.85 // the tallest sheet fills at most this share of the plot's height
)

// RenderLongSectionSheets writes the long section s to w as a PDF of A3
// landscape sheets: one sheet per sheetLength of alignment (1 km, or
// 3000 ft in US units) starting at a multiple of it, all at one horizontal
// scale (1:3000, or 1 in = 300 ft) and one vertical scale, the largest
// round one at which the tallest sheet fits. Each sheet shows the cut and
// fill between ground and bed shaded, the ground, top of bank, water
// surface, the baseline's bed and the bed with its drop steps, each drop
// labelled above the plot on a leader (D1, D2, … along the canal: the
// numbering of drops.csv), a data band (station, ground, invert, water
// surface, cut or fill every 50 m or 150 ft), the legend, the scales in
// words and as bars, and a title block with the sheet number, the chainage
// range, the units and the inputs' date, over the safety caution.
func RenderLongSectionSheets(w io.Writer, s LongSection, im Imprint) error {
	const what = "long-section sheets"
	if err := s.check(what); err != nil {
		return err
	}
	l, err := newLongSheets(s, im)
	if err != nil {
		return fmt.Errorf("%s: %w", what, err)
	}
	book := newPDFBook()
	for k := range l.n {
		l.sheet(book.page(), k)
	}
	if err := book.writeTo(w); err != nil {
		return fmt.Errorf("%s: %w", what, err)
	}
	return nil
}

// longSheets is the long section split into sheets.
type longSheets struct {
	s                               LongSection
	u                               Units
	im                              Imprint
	x, ground, bed, water, bank, bs []float64 // display units
	marks                           *dropMarks
	first, length                   float64 // the first sheet's start and the sheet length, display units
	n                               int
	h, v                            drawScale
	plot                            vg.Rectangle // the plot area of a full sheet
	zone                            vg.Length    // height of the drop labels' zone
	window                          float64      // elevation range of the plot, display units
}

func newLongSheets(s LongSection, im Imprint) (*longSheets, error) {
	u := s.Units
	l := &longSheets{s: s, u: u, im: im, h: sheetScale[u], length: sheetLength[u]}
	l.x = convert(u, s.Chainage)
	l.ground, l.bed = convert(u, s.Ground), convert(u, s.Invert)
	l.water, l.bank, l.bs = convert(u, s.WaterSurface), convert(u, s.TopOfBank), convert(u, s.BaselineInvert)
	all := make([]int, len(l.x))
	for i := range all {
		all[i] = i
	}
	l.marks = newDropMarks(u, s.Drops, l.x, all, l.ground, l.bed, l.bank, l.water, l.bs)
	x0, x1 := l.x[0], l.x[len(l.x)-1]
	l.first = math.Floor(x0/l.length+1e-9) * l.length
	l.n = max(1, int(math.Ceil((x1-l.first)/l.length-1e-9)))
	if l.n > maxSheets {
		return nil, fmt.Errorf("%d sheets exceed the limit of %d", l.n, maxSheets)
	}
	// The drop labels' zone is as tall as the longest label.
	st := l.dropStyle()
	l.zone = lsZoneMin
	for i := range l.marks.labels {
		l.zone = max(l.zone, st.Width(l.dropLabel(i))+mm(6))
	}
	l.zone = min(l.zone, lsZoneMax)
	da := drawingArea()
	bandTop := da.Min.Y + mm(3) + lsBandRow*lsBandRows
	l.plot = rect(da.Min.X+lsHeadW, bandTop+lsGap, da.Min.X+lsHeadW+l.h.paper(u, l.length), da.Max.Y-l.zone)
	// One vertical scale for every sheet.
	tallest := u.Length(0.5) // a flat sheet does not blow the scale up
	for k := range l.n {
		lo, hi := l.levels(k)
		tallest = math.Max(tallest, hi-lo)
	}
	l.v = roundScale(u, tallest, vg.Length(lsFill)*(l.plot.Max.Y-l.plot.Min.Y))
	if l.v > l.h {
		l.v = l.h
	}
	l.window = float64(l.plot.Max.Y-l.plot.Min.Y) * l.v.perPaper(u)
	return l, nil
}

// span returns sheet k's chainage range (display units).
func (l *longSheets) span(k int) (a, b float64) {
	a = l.first + float64(k)*l.length
	return math.Max(a, l.x[0]), math.Min(a+l.length, l.x[len(l.x)-1])
}

// indices returns the stations drawn on the sheet from a to b: those
// within it and one either side.
func (l *longSheets) indices(a, b float64) []int {
	i0 := sort.SearchFloat64s(l.x, a)
	i1 := sort.Search(len(l.x), func(i int) bool { return l.x[i] > b })
	i0, i1 = max(i0-1, 0), min(i1+1, len(l.x))
	idx := make([]int, 0, i1-i0)
	for i := i0; i < i1; i++ {
		idx = append(idx, i)
	}
	return idx
}

// levels returns the lowest and highest level drawn on sheet k.
func (l *longSheets) levels(k int) (lo, hi float64) {
	a, b := l.span(k)
	idx := l.indices(a, b)
	i0, i1 := idx[0], idx[len(idx)-1]+1
	lo, hi, ok := dataRange(l.ground[i0:i1], l.bed[i0:i1], part(l.water, i0, i1), part(l.bank, i0, i1), part(l.bs, i0, i1))
	if !ok {
		lo, hi = 0, 1
	}
	for _, i := range l.dropsOn(k) {
		lo, hi = math.Min(lo, l.marks.down[i]), math.Max(hi, l.marks.top[i])
	}
	return lo, hi
}

func part(s []float64, i0, i1 int) []float64 {
	if s == nil {
		return nil
	}
	return s[i0:i1]
}

// dropsOn returns the drop marks on sheet k: a drop at the boundary of two
// sheets belongs to the first.
func (l *longSheets) dropsOn(k int) []int {
	a, b := l.span(k)
	var out []int
	for i, x := range l.marks.x {
		if x >= a-1e-9 && x <= b+1e-9 && !(k > 0 && math.Abs(x-a) <= 1e-9) {
			out = append(out, i)
		}
	}
	return out
}

// dropStyle is the style of the drop labels: reading upwards.
func (l *longSheets) dropStyle() text.Style {
	st := sheetText(sheetSmallSize+0.5, draw.XLeft, draw.YCenter)
	st.Rotation = math.Pi / 2
	st.Color = dropColor
	return st
}

// dropLabel is drop mark i's label: its number along the canal and its
// station (with its height where it differs from the commonest).
func (l *longSheets) dropLabel(i int) string {
	return "D" + strconv.Itoa(i+1) + "  " + l.marks.labels[i]
}

// sheet draws sheet k on c.
func (l *longSheets) sheet(c draw.Canvas, k int) {
	u := l.u
	a, b := l.span(k)
	pl := l.plot
	pl.Max.X = pl.Min.X + l.h.paper(u, b-a)
	da := sub(c, pl)
	lo, hi := l.levels(k)
	base, step := datum(lo, hi, l.window)
	sx := float64(l.h.paper(u, 1))
	m := mapping{x0: a, z0: base, ox: pl.Min.X, oy: pl.Min.Y, sx: sx, sy: float64(l.v.paper(u, 1))}
	bandTop := pl.Min.Y - lsGap

	// Grid: levels every step, chainages every band interval.
	tick := sheetText(sheetSmallSize, draw.XRight, draw.YCenter)
	prec := decimals(step)
	for _, z := range multiples(base, base+l.window, step, 100) {
		y := m.pt(a, z).Y
		c.StrokeLine2(gridRule, pl.Min.X, y, pl.Max.X, y)
		c.FillText(tick, vg.Point{X: pl.Min.X - mm(1.5), Y: y}, groupThousands(z, prec))
	}
	cols := l.bandColumns(a, b)
	for _, x := range cols {
		px := m.pt(x, 0).X
		c.StrokeLine2(gridRule, px, pl.Min.Y, px, pl.Max.Y)
		c.StrokeLine2(thinRule, px, bandTop, px, bandTop-mm(1.2))
	}
	axis := sheetText(sheetTextSize, draw.XCenter, draw.YBottom)
	axis.Rotation = math.Pi / 2
	c.FillText(axis, vg.Point{X: pl.Min.X - mm(13), Y: (pl.Min.Y + pl.Max.Y) / 2}, "Elevation ("+u.LengthUnit()+")")

	// Data: no-data bands, cut and fill, the lines, the drop steps.
	idx := l.indices(a, b)
	for _, g := range gaps(l.x, l.ground) {
		if g[1] < a || g[0] > b {
			continue
		}
		p0, p1 := m.pt(g[0], 0), m.pt(g[1], 0)
		fillPolygon(da, noDataFill, []vg.Point{{X: p0.X, Y: pl.Min.Y}, {X: p1.X, Y: pl.Min.Y}, {X: p1.X, Y: pl.Max.Y}, {X: p0.X, Y: pl.Max.Y}})
	}
	cut, fill := regions(l.x, l.ground, l.bed, idx)
	for _, p := range cut {
		fillPolygon(da, cutFill, m.pts(p))
	}
	for _, p := range fill {
		fillPolygon(da, fillFill, m.pts(p))
	}
	for _, ln := range l.lines() {
		if ln.y == nil {
			continue
		}
		for _, r := range runs(l.x, ln.y, idx) {
			polyline(da, ln.ls, m.pts(r))
		}
	}
	on := l.dropsOn(k)
	step2 := lineStyle(dropColor, 1.4)
	for _, i := range on {
		p, q := m.pt(l.marks.x[i], l.marks.up[i]), m.pt(l.marks.x[i], l.marks.down[i])
		c.StrokeLine2(step2, p.X, p.Y, q.X, q.Y)
	}
	strokeRect(c, thinRule, pl)
	note := l.dropLabels(c, m, on, pl)

	l.band(c, m, cols, bandTop, pl)
	f := sheetFrame{drawing: "Long section", name: plotName(l.s.Name), sheet: k + 1, of: l.n, u: u, imprint: l.im,
		extent: "Chainage " + u.Station(u.ToSI(units.Length, a)) + " to " + u.Station(u.ToSI(units.Length, b)),
		scales: []string{
			"Horizontal scale " + l.h.words(u) + ", " + trimFloat(l.length) + " " + u.LengthUnit() + " per sheet",
			"Vertical scale " + l.v.words(u) + ", exaggeration x" + exaggerationWords(l.h, l.v),
			"On A3 (420 x 297 mm); printed at another size, use the bars",
		},
		legend: l.legend(),
	}
	f.bars = []scaleBar{newScaleBar(u, l.h, mm(50), false), newScaleBar(u, l.v, mm(16), true)}
	f.note = note
	f.draw(c)
}

// pts maps a data polyline to the paper.
func (m mapping) pts(p plotter.XYs) []vg.Point {
	out := make([]vg.Point, len(p))
	for i, q := range p {
		out[i] = m.pt(q.X, q.Y)
	}
	return out
}

type longLine struct {
	name string
	y    []float64
	ls   draw.LineStyle
}

// lines are the long section's lines, back to front.
func (l *longSheets) lines() []longLine {
	return []longLine{
		{"ground (centre line)", l.ground, lineStyle(groundColor, 0.9)},
		{"top of bank", l.bank, lineStyle(bankColor, 0.6, 5, 1.5, 1, 1.5)},
		{"design water surface", l.water, lineStyle(waterColor, 0.8, 4, 2)},
		{baselineLabel(l.s.BaselineName), l.bs, lineStyle(baselineColor, 0.5, 2.5, 1.5)},
		{"bed (invert) with drop steps", l.bed, lineStyle(bedColor, 1.2)},
	}
}

// legend lists what the sheets draw.
func (l *longSheets) legend() []legendItem {
	var out []legendItem
	for _, ln := range l.lines() {
		if ln.y != nil {
			out = append(out, legendItem{ln.name, lineIcon(ln.ls)})
		}
	}
	if len(l.marks.x) > 0 {
		out = append(out, legendItem{"D1, D2, …: " + l.marks.legend(l.u), func(c draw.Canvas, r vg.Rectangle) {
			x := (r.Min.X + r.Max.X) / 2
			c.StrokeLine2(lineStyle(dropColor, 1.4), x, r.Min.Y, x, r.Max.Y)
		}})
	}
	out = append(out, legendItem{"cut (ground above bed)", boxIcon(cutFill)}, legendItem{"fill (bed above ground)", boxIcon(fillFill)})
	if len(gaps(l.x, l.ground)) > 0 {
		out = append(out, legendItem{"no ground data", boxIcon(noDataFill)})
	}
	return out
}

// dropLabels writes the labels of the drops on (mark indices) in the zone
// above the plot, each on a leader from the top of its drop, spread where
// they crowd; when even that cannot fit them, every k-th is labelled and
// the returned note says so.
func (l *longSheets) dropLabels(c draw.Canvas, m mapping, on []int, pl vg.Rectangle) string {
	if len(on) == 0 {
		return ""
	}
	st := l.dropStyle()
	slot := st.FontExtents().Height * 1.15
	lo, hi := pl.Min.X+slot/2, drawingArea().Max.X-slot/2
	every := 1
	for float64(len(on)/every)*float64(slot) > float64(hi-lo) {
		every++
	}
	var which []int
	var want []vg.Length
	for j := 0; j < len(on); j += every {
		which = append(which, on[j])
		want = append(want, m.pt(l.marks.x[on[j]], 0).X)
	}
	pos := spread(want, slot, lo, hi)
	leader := lineStyle(color.NRGBA{R: 200, G: 30, B: 30, A: 150}, 0.25)
	foot := pl.Max.Y + mm(5)
	for j, i := range which {
		px := want[j]
		y0 := min(m.pt(0, l.marks.top[i]).Y+mm(0.8), pl.Max.Y)
		c.StrokeLines(leader, []vg.Point{{X: px, Y: y0}, {X: px, Y: pl.Max.Y + mm(1)}, {X: pos[j], Y: foot - mm(1)}})
		c.FillText(st, vg.Point{X: pos[j], Y: foot}, l.dropLabel(i))
	}
	if every > 1 {
		return fmt.Sprintf("Crowded drops: 1 in %d labelled here; drops.csv lists all.", every)
	}
	return ""
}

// bandColumns returns the chainages (display units) of the data band's
// columns on the sheet from a to b: every band interval, and the ends of
// the alignment where they fall between.
func (l *longSheets) bandColumns(a, b float64) []float64 {
	iv := bandInterval[l.u]
	cols := multiples(a, b, iv, 1000)
	x0, x1 := l.x[0], l.x[len(l.x)-1]
	if a <= x0 && (len(cols) == 0 || cols[0]-x0 > 0.4*iv) {
		cols = append([]float64{x0}, cols...)
	}
	if b >= x1 && (len(cols) == 0 || x1-cols[len(cols)-1] > 0.4*iv) {
		cols = append(cols, x1)
	}
	return cols
}

// bandCell is one column of the data band: its chainage (display units),
// where its text stands and how it is aligned.
type bandCell struct {
	x      float64
	px     vg.Length
	xalign text.XAlignment
}

// placeBand positions the band's columns: centred on their chainage, or
// aligned inwards at the plot's ends; a column whose text would touch its
// neighbour's is left out, the alignment's ends last.
func (l *longSheets) placeBand(m mapping, cols []float64, pl vg.Rectangle, st text.Style) []bandCell {
	var out []bandCell
	var right []vg.Length // right edge of each kept cell's text
	x0, x1 := l.x[0], l.x[len(l.x)-1]
	for _, x := range cols {
		g, inv, ws := l.bandValues(x)
		w := vg.Length(0)
		for _, t := range l.bandTexts(x, g, inv, ws) {
			w = max(w, st.Width(t))
		}
		c := bandCell{x: x, px: m.pt(x, 0).X, xalign: draw.XCenter}
		lo, hi := c.px-w/2, c.px+w/2
		switch {
		case lo < pl.Min.X+mm(0.5):
			c.px, c.xalign = c.px+mm(0.7), draw.XLeft
			lo, hi = c.px, c.px+w
		case hi > pl.Max.X-mm(0.5):
			c.px, c.xalign = c.px-mm(0.7), draw.XRight
			lo, hi = c.px-w, c.px
		}
		if n := len(out); n > 0 && lo < right[n-1]+mm(1.5) {
			if x != x1 || out[n-1].x == x0 {
				continue
			}
			out, right = out[:n-1], right[:n-1] // the end column wins
		}
		out, right = append(out, c), append(right, hi)
	}
	return out
}

// bandTexts are the texts of the band's column at x.
func (l *longSheets) bandTexts(x, g, inv, ws float64) []string {
	u := l.u
	cells := []string{u.Station(u.ToSI(units.Length, x)), fixed(g, 2), fixed(inv, 2), fixed(ws, 2), ""}
	if d := g - inv; !math.IsNaN(d) {
		cells[4] = fixed(d, 2)
		if d > 0 && cells[4] != "0.00" {
			cells[4] = "+" + cells[4]
		}
	}
	return cells
}

// bandValues interpolates ground, invert and water surface (display units)
// at chainage x linearly between the stations either side; at a drop the
// upstream side. NaN where unknown.
func (l *longSheets) bandValues(x float64) (ground, invert, water float64) {
	i := sort.SearchFloat64s(l.x, x-1e-9)
	at := func(s []float64) float64 {
		switch {
		case s == nil || i >= len(l.x):
			return math.NaN()
		case math.Abs(l.x[i]-x) <= 1e-9 || i == 0:
			return s[i]
		}
		t := (x - l.x[i-1]) / (l.x[i] - l.x[i-1])
		return s[i-1] + t*(s[i]-s[i-1])
	}
	return at(l.ground), at(l.bed), at(l.water)
}

// band draws the data band under the plot.
func (l *longSheets) band(c draw.Canvas, m mapping, cols []float64, top vg.Length, pl vg.Rectangle) {
	u := l.u
	L := u.LengthUnit()
	heads := []string{"Station", "Ground (" + L + ")", "Invert (" + L + ")", "Water surface (" + L + ")", "Cut + / fill - (" + L + ")"}
	left := drawingArea().Min.X
	hs := sheetText(sheetSmallSize+0.5, draw.XLeft, draw.YCenter)
	vs := sheetText(sheetSmallSize, draw.XCenter, draw.YCenter)
	for r, h := range heads {
		y := top - lsBandRow*vg.Length(r)
		c.StrokeLine2(thinRule, left, y, pl.Max.X, y)
		c.FillText(hs, vg.Point{X: left + mm(2), Y: y - lsBandRow/2}, h)
	}
	bot := top - lsBandRow*lsBandRows
	c.StrokeLine2(thinRule, left, bot, pl.Max.X, bot)
	c.StrokeLine2(thinRule, pl.Min.X, bot, pl.Min.X, top)
	for _, cell := range l.placeBand(m, cols, pl, vs) {
		g, inv, ws := l.bandValues(cell.x)
		st := vs
		st.XAlign = cell.xalign
		for r, txt := range l.bandTexts(cell.x, g, inv, ws) {
			c.FillText(st, vg.Point{X: cell.px, Y: top - lsBandRow*vg.Length(r) - lsBandRow/2}, txt)
		}
	}
}

// trimFloat prints v without trailing zeros.
func trimFloat(v float64) string { return strconv.FormatFloat(v, 'f', -1, 64) }
