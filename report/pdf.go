package report

// Printable sheets: longsection.pdf and crosssections.pdf, A3 landscape
// pages drawn on gonum/plot's vector canvas (vg/vgpdf, one page after the
// other through NextPage). Every page has a drawing frame, a legend clear
// of the drawing, the scales in words and as bars, a title block and a
// one-line safety caution. This file holds what both sets share: the page,
// scales, text in the PDF's code page, the frame, legend and title block.

import (
	"fmt"
	"image/color"
	"io"
	"math"
	"strconv"

	"golang.org/x/text/encoding/charmap"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgpdf"

	"canalstep/planner"
	"canalstep/report/units"
)

// The files of the printable set.
const (
	LongSectionPDF   = "longsection.pdf"
	CrossSectionsPDF = "crosssections.pdf"
)

// Imprint is what a sheet's title block says of where it came from. It
// holds no wall-clock time: reruns of the same inputs print the same
// sheets.
type Imprint struct {
	InputsDate string // date of the inputs, YYYY-MM-DD; "" prints "undated"
	Version    string // canalstep version; "" to leave it out
}

// WriteSheets writes the printable set of one planned alignment into st:
// longsection.pdf (the long section in sheets) and crosssections.pdf (the
// cross-sections at every drop and at a regular interval). name is the
// alignment's name for the title blocks; r must be a plan with stations.
func WriteSheets(st Stager, name string, r *planner.Result, u Units, im Imprint) error {
	ls := NewLongSection(name, r, u)
	if err := st.WriteFile(LongSectionPDF, func(w io.Writer) error { return RenderLongSectionSheets(w, ls, im) }); err != nil {
		return err
	}
	return st.WriteFile(CrossSectionsPDF, func(w io.Writer) error { return RenderCrossSectionSheets(w, name, r, u, im) })
}

// Page geometry: A3 landscape (ISO 216: 420 × 297 mm) in a drawing frame
// with a 20 mm filing margin on the left and 10 mm elsewhere (the ISO 5457
// frame, from memory). The bottom strip of the frame holds the legend, the
// scales and the title block above the caution line.
const (
	pageW       = 420 * vg.Millimeter
	pageH       = 297 * vg.Millimeter
	frameLeft   = 20 * vg.Millimeter
	frameMargin = 10 * vg.Millimeter
	stripH      = 40 * vg.Millimeter // legend, scales and title block, caution line included
	cautionH    = 6 * vg.Millimeter
	titleW      = 150 * vg.Millimeter
	scaleW      = 92 * vg.Millimeter
)

// Font sizes of the sheets, in points.
const (
	sheetTitleSize = 10
	sheetTextSize  = 7
	sheetSmallSize = 6
	sheetTinySize  = 5
)

// maxSheets bounds the pages of one set (1000 km of long section): a
// hostile alignment cannot make a run write without end.
const maxSheets = 1000

// CautionLine is the safety caution printed along the foot of every
// sheet: the substance of SafetyNotice in one line.
const CautionLine = "PRELIMINARY DESIGN AID, NOT FOR CONSTRUCTION: survey the site, have the geotechnical and structural design reviewed " +
	"and a licensed engineer approve it before building; local codes govern. Drops and hydraulic jumps are drowning hazards: " +
	"fence them, sign both banks, keep the public out."

// pdfBook is a PDF of A3 landscape pages.
type pdfBook struct {
	pdf   *vgpdf.Canvas
	pages int
}

func newPDFBook() *pdfBook {
	c := vgpdf.New(pageW, pageH)
	c.EmbedFonts(true)
	return &pdfBook{pdf: c}
}

// page starts the next page and returns its canvas.
func (b *pdfBook) page() draw.Canvas {
	if b.pages > 0 {
		b.pdf.NextPage()
	}
	b.pages++
	return draw.New(cp1252Canvas{b.pdf})
}

func (b *pdfBook) writeTo(w io.Writer) error {
	_, err := b.pdf.WriteTo(w)
	return err
}

// cp1252Canvas hands text to the PDF in Windows-1252, the code page vgpdf
// embeds its fonts with; gonum/plot lays the text out from the UTF-8 string
// first, so widths and alignment are the font's own.
type cp1252Canvas struct{ *vgpdf.Canvas }

// FillString implements vg.Canvas.
func (c cp1252Canvas) FillString(f font.Face, pt vg.Point, s string) {
	c.Canvas.FillString(f, pt, pdfText(s))
}

// pdfText returns s in Windows-1252: spaces of every width become a plain
// space, the minus sign a hyphen-minus, and any other character the code
// page lacks a question mark (so does every control character).
func pdfText(s string) string {
	b := make([]byte, 0, len(s))
	for _, r := range s {
		switch {
		case r >= 0x20 && r < 0x7f:
			b = append(b, byte(r))
			continue
		case r == '\u2009' || r == '\u202f' || r == '\u2002' || r == '\u2003':
			b = append(b, ' ')
			continue
		case r == '\u2212':
			b = append(b, '-')
			continue
		case r < 0x20 || r == 0x7f || r >= 0x80 && r < 0xa0:
			b = append(b, '?')
			continue
		}
		if c, ok := charmap.Windows1252.EncodeRune(r); ok {
			b = append(b, c)
		} else {
			b = append(b, '?')
		}
	}
	return string(b)
}

// fitText makes st small enough for txt to fit in room: its size comes
// down in half points, to 3 pt at least. Sizes stay few: vgpdf makes and
// keeps one font per size for the whole process.
func fitText(st *text.Style, txt string, room vg.Length) {
	w := st.Width(txt)
	if w <= room {
		return
	}
	// Widths scale with the size: one step gives the size that fits,
	// rounded down to the half point.
	st.Font.Size = vg.Length(math.Max(3, math.Floor(float64(st.Font.Size*room/w)*2)/2))
}

// mm is a length in millimetres.
func mm(v float64) vg.Length { return vg.Length(v) * vg.Millimeter }

// sheetText is a text style of the sheets at size points, aligned by xa and
// ya (draw.XLeft … and draw.YBottom …).
func sheetText(size vg.Length, xa text.XAlignment, ya text.YAlignment) text.Style {
	s := sansText(size)
	s.XAlign, s.YAlign = xa, ya
	return s
}

// drawScale is a drawing scale 1:D (D the value): a real length L is
// drawn L/D long on the paper.
type drawScale float64

// paper returns the drawn length of v in u's length unit.
func (d drawScale) paper(u Units, v float64) vg.Length {
	return vg.Length(u.ToSI(units.Length, v)/float64(d)*1000) * vg.Millimeter
}

// perPaper returns the real length (u's unit) drawn as one point.
func (d drawScale) perPaper(u Units) float64 { return 1 / float64(d.paper(u, 1)) }

// words prints the scale: "1:3000" in SI; in US units as engineers state
// it, "1 in = 300 ft (1:3600)".
func (d drawScale) words(u Units) string {
	r := "1:" + strconv.FormatFloat(float64(d), 'f', -1, 64)
	if u == US {
		return "1 in = " + strconv.FormatFloat(float64(d)/12, 'f', -1, 64) + " ft (" + r + ")"
	}
	return r
}

// Round drawing scales (common practice): in SI 1:1, 1:2, 1:2.5 and 1:5
// times a power of ten (ISO 5455 recommends 1:2, 1:5 and 1:10 and their
// multiples by ten, from memory; 1:25 and 1:250 are in common use); in US
// units 1 in = 1, 2, 3, 4, 5 or 6 ft times a power of ten, the divisions of
// the engineer's scale (from memory).
var scaleMantissas = [2][]float64{{1, 2, 2.5, 5}, {1, 2, 3, 4, 5, 6}}

// roundScale returns the largest round scale (smallest D) at which a real
// length real (u's unit) is drawn at most room long.
func roundScale(u Units, real float64, room vg.Length) drawScale {
	need := u.ToSI(units.Length, real) * 1000 / float64(room/vg.Millimeter) // D that just fits
	per := 1.0
	if u == US {
		per = 12 // 1 in = N ft is 1:12N
	}
	for e := -2; e <= 12; e++ {
		for _, m := range scaleMantissas[u] {
			d := m * math.Pow10(e) * per
			if d >= need*(1-1e-12) {
				return drawScale(d)
			}
		}
	}
	return drawScale(math.Max(need, 1))
}

// exaggerationWords prints the vertical exaggeration h/v.
func exaggerationWords(h, v drawScale) string {
	return strconv.FormatFloat(math.Round(float64(h/v)*100)/100, 'f', -1, 64)
}

// stepBelow returns the largest 1, 2 or 5 × 10ⁿ not above x (> 0).
func stepBelow(x float64) float64 {
	mag := math.Pow10(int(math.Floor(math.Log10(x))))
	for _, m := range []float64{5, 2, 1} {
		if m*mag <= x*(1+1e-12) {
			return m * mag
		}
	}
	return mag
}

// datum picks the level at the foot of a drawing window window high that
// shows lo to hi (hi − lo at most 0.85 window) and its grid step: the
// step is the largest round one up to 0.15 window, the datum the multiple
// of it that best centres the data.
func datum(lo, hi, window float64) (base, step float64) {
	step = stepBelow(0.15 * window)
	centred := lo - (window-(hi-lo))/2
	base = math.Round(centred/step) * step
	least, most := math.Ceil((hi-window)/step-1e-9)*step, math.Floor(lo/step+1e-9)*step
	if least <= most {
		base = math.Min(math.Max(base, least), most)
	} else {
		base = centred
	}
	return base, step
}

// multiples returns the multiples of step from lo to hi (a tolerance of
// 1e-9 step either side), or nil where there would be more than limit or
// step cannot count them (levels so large that adding step changes
// nothing): hostile values cannot make a loop run without end.
func multiples(lo, hi, step float64, limit int) []float64 {
	k0, k1 := math.Ceil(lo/step-1e-9), math.Floor(hi/step+1e-9)
	if !(k1-k0 < float64(limit)) || math.Abs(k0) > 1<<52 || math.Abs(k1) > 1<<52 {
		return nil
	}
	var out []float64
	for k := k0; k <= k1; k++ {
		out = append(out, k*step)
	}
	return out
}

// decimals returns how many decimals print multiples of step exactly.
func decimals(step float64) int {
	p := 0
	for p < 6 && math.Abs(step*math.Pow10(p)-math.Round(step*math.Pow10(p))) > 1e-6 {
		p++
	}
	return p
}

// mapping maps data (x, z) in display units to the paper.
type mapping struct {
	x0, z0 float64   // data at the origin
	ox, oy vg.Length // the origin on the paper
	sx, sy float64   // points per display unit
}

func (m mapping) pt(x, z float64) vg.Point {
	return vg.Point{X: m.ox + vg.Length((x-m.x0)*m.sx), Y: m.oy + vg.Length((z-m.z0)*m.sy)}
}

// polyline strokes pts clipped to c.
func polyline(c draw.Canvas, ls draw.LineStyle, pts []vg.Point) {
	if len(pts) < 2 {
		return
	}
	for _, l := range c.ClipLinesXY(pts) {
		if len(l) >= 2 {
			c.StrokeLines(ls, l)
		}
	}
}

// fillPolygon fills pts clipped to c.
func fillPolygon(c draw.Canvas, fill color.Color, pts []vg.Point) {
	if p := c.ClipPolygonXY(pts); len(p) >= 3 {
		c.FillPolygon(fill, p)
	}
}

// rect returns the rectangle from (x0, y0) to (x1, y1).
func rect(x0, y0, x1, y1 vg.Length) vg.Rectangle {
	return vg.Rectangle{Min: vg.Point{X: x0, Y: y0}, Max: vg.Point{X: x1, Y: y1}}
}

// strokeRect outlines r.
func strokeRect(c draw.Canvas, ls draw.LineStyle, r vg.Rectangle) {
	c.StrokeLines(ls, []vg.Point{r.Min, {X: r.Max.X, Y: r.Min.Y}, r.Max, {X: r.Min.X, Y: r.Max.Y}, r.Min})
}

// sub returns the canvas of c limited to r.
func sub(c draw.Canvas, r vg.Rectangle) draw.Canvas {
	return draw.Canvas{Canvas: c.Canvas, Rectangle: r}
}

// Rules of the sheets.
var (
	frameRule = lineStyle(color.Black, 0.7)
	thinRule  = lineStyle(color.Black, 0.35)
	gridRule  = lineStyle(color.Gray{Y: 200}, 0.3)
	captionC  = color.Gray{Y: 90}
)

// legendItem is one entry of a sheet's legend: its icon drawn in a box of
// the row's height, and its text.
type legendItem struct {
	text string
	icon func(c draw.Canvas, r vg.Rectangle)
}

// lineIcon is a legend icon: a short line.
func lineIcon(ls draw.LineStyle) func(draw.Canvas, vg.Rectangle) {
	return func(c draw.Canvas, r vg.Rectangle) {
		y := (r.Min.Y + r.Max.Y) / 2
		c.StrokeLine2(ls, r.Min.X, y, r.Max.X, y)
	}
}

// boxIcon is a legend icon: a filled box.
func boxIcon(fill color.Color) func(draw.Canvas, vg.Rectangle) {
	return func(c draw.Canvas, r vg.Rectangle) {
		c.FillPolygon(fill, []vg.Point{r.Min, {X: r.Max.X, Y: r.Min.Y}, r.Max, {X: r.Min.X, Y: r.Max.Y}})
	}
}

// sheetFrame is the furniture every page shares.
type sheetFrame struct {
	drawing   string   // what the set shows, e.g. "Long section"
	name      string   // the alignment, made safe
	sheet, of int      // this page and the count
	extent    string   // "Chainage 0+000.00 to 1+000.00"
	scales    []string // the scales in words, one line each
	bars      []scaleBar
	legend    []legendItem
	note      string // a line under the scales, in red; "" for none
	u         Units
	imprint   Imprint
}

// scaleBar is a bar of length real (display units) at scale d, divided in
// parts, horizontal or vertical.
type scaleBar struct {
	d        drawScale
	real     float64
	parts    int
	vertical bool
}

// newScaleBar returns the longest round bar at scale d that is at most
// room long on the paper.
func newScaleBar(u Units, d drawScale, room vg.Length, vertical bool) scaleBar {
	real := stepBelow(float64(room) * d.perPaper(u))
	parts := 5
	if m := real / math.Pow10(int(math.Floor(math.Log10(real)+1e-9))); math.Abs(m-2) < 1e-9 {
		parts = 4
	}
	return scaleBar{d: d, real: real, parts: parts, vertical: vertical}
}

// frameRect is the drawing frame of a page.
func frameRect() vg.Rectangle {
	return rect(frameLeft, frameMargin, pageW-frameMargin, pageH-frameMargin)
}

// drawingArea is the part of the frame above the bottom strip.
func drawingArea() vg.Rectangle {
	f := frameRect()
	f.Min.Y += stripH
	return f
}

// draw draws the frame, the bottom strip (legend, scales, title block) and
// the caution line.
func (f *sheetFrame) draw(c draw.Canvas) {
	fr := frameRect()
	strokeRect(c, frameRule, fr)
	top := fr.Min.Y + stripH
	c.StrokeLine2(frameRule, fr.Min.X, top, fr.Max.X, top)
	ct := fr.Min.Y + cautionH
	c.StrokeLine2(thinRule, fr.Min.X, ct, fr.Max.X, ct)
	f.caution(c, rect(fr.Min.X, fr.Min.Y, fr.Max.X, ct))
	tb := rect(fr.Max.X-titleW, ct, fr.Max.X, top)
	sc := rect(tb.Min.X-scaleW, ct, tb.Min.X, top)
	c.StrokeLine2(thinRule, tb.Min.X, ct, tb.Min.X, top)
	c.StrokeLine2(thinRule, sc.Min.X, ct, sc.Min.X, top)
	f.drawLegend(c, rect(fr.Min.X, ct, sc.Min.X, top))
	f.drawScales(c, sc)
	f.titleBlock(c, tb)
}

// caution prints CautionLine across r, smaller where it would not fit.
func (f *sheetFrame) caution(c draw.Canvas, r vg.Rectangle) {
	st := sheetText(sheetSmallSize+0.5, draw.XCenter, draw.YCenter)
	fitText(&st, CautionLine, r.Max.X-r.Min.X-mm(4))
	st.Color = dropColor
	c.FillText(st, vg.Point{X: (r.Min.X + r.Max.X) / 2, Y: (r.Min.Y + r.Max.Y) / 2}, CautionLine)
}

// drawLegend lays the legend out in columns of four rows.
func (f *sheetFrame) drawLegend(c draw.Canvas, r vg.Rectangle) {
	st := sheetText(sheetTextSize, draw.XLeft, draw.YCenter)
	const rows = 4
	rowH := (r.Max.Y - r.Min.Y - mm(4)) / rows
	icon, gap := mm(9), mm(2)
	x := r.Min.X + mm(3)
	for start := 0; start < len(f.legend); start += rows {
		end := min(start+rows, len(f.legend))
		colW := vg.Length(0)
		for k, it := range f.legend[start:end] {
			y := r.Max.Y - mm(2) - rowH*vg.Length(k) - rowH/2
			it.icon(c, rect(x, y-rowH*0.28, x+icon, y+rowH*0.28))
			c.FillText(st, vg.Point{X: x + icon + gap, Y: y}, it.text)
			colW = max(colW, icon+gap+st.Width(it.text))
		}
		x += colW + mm(5)
	}
}

// drawScales prints the scales in words over the scale bars.
func (f *sheetFrame) drawScales(c draw.Canvas, r vg.Rectangle) {
	st := sheetText(sheetTextSize, draw.XLeft, draw.YTop)
	y := r.Max.Y - mm(2)
	for _, s := range f.scales {
		c.FillText(st, vg.Point{X: r.Min.X + mm(3), Y: y}, s)
		y -= st.Font.Size * 1.3
	}
	if f.note != "" {
		st.Color = dropColor
		fitText(&st, f.note, r.Max.X-r.Min.X-mm(5))
		c.FillText(st, vg.Point{X: r.Min.X + mm(3), Y: y}, f.note)
	}
	x := r.Min.X + mm(3)
	for _, b := range f.bars {
		x = b.draw(c, f.u, x, r.Min.Y+mm(3)) + mm(8)
	}
}

// draw draws the bar with its foot-left corner at (x, y) and returns where
// it ends on the right, its labels included.
func (b scaleBar) draw(c draw.Canvas, u Units, x, y vg.Length) vg.Length {
	st := sheetText(sheetSmallSize, draw.XCenter, draw.YBottom)
	L := b.d.paper(u, b.real)
	part := L / vg.Length(b.parts)
	thick := mm(1.6)
	unit := u.LengthUnit()
	label := func(v float64) string { return strconv.FormatFloat(v, 'f', -1, 64) }
	if !b.vertical {
		y0 := y + mm(1)
		for k := range b.parts {
			r := rect(x+part*vg.Length(k), y0, x+part*vg.Length(k+1), y0+thick)
			if k%2 == 0 {
				c.FillPolygon(color.Black, []vg.Point{r.Min, {X: r.Max.X, Y: r.Min.Y}, r.Max, {X: r.Min.X, Y: r.Max.Y}})
			}
			strokeRect(c, thinRule, r)
		}
		ly := y0 + thick + mm(0.8)
		c.FillText(st, vg.Point{X: x, Y: ly}, "0")
		c.FillText(st, vg.Point{X: x + L, Y: ly}, label(b.real)+" "+unit)
		return x + L + st.Width(label(b.real)+" "+unit)/2
	}
	for k := range b.parts {
		r := rect(x, y+part*vg.Length(k), x+thick, y+part*vg.Length(k+1))
		if k%2 == 0 {
			c.FillPolygon(color.Black, []vg.Point{r.Min, {X: r.Max.X, Y: r.Min.Y}, r.Max, {X: r.Min.X, Y: r.Max.Y}})
		}
		strokeRect(c, thinRule, r)
	}
	sl := sheetText(sheetSmallSize, draw.XLeft, draw.YCenter)
	c.FillText(sl, vg.Point{X: x + thick + mm(1), Y: y}, "0")
	c.FillText(sl, vg.Point{X: x + thick + mm(1), Y: y + L}, label(b.real)+" "+unit+" (vertical)")
	return x + thick + mm(1) + sl.Width(label(b.real)+" "+unit+" (vertical)")
}

// titleBlock draws the boxed title block in r.
func (f *sheetFrame) titleBlock(c draw.Canvas, r vg.Rectangle) {
	h := (r.Max.Y - r.Min.Y) / 4
	split := r.Min.X + (r.Max.X-r.Min.X)*0.64
	for k := 1; k < 4; k++ {
		y := r.Min.Y + h*vg.Length(k)
		c.StrokeLine2(thinRule, r.Min.X, y, r.Max.X, y)
	}
	row := func(k int) (y0, y1 vg.Length) { return r.Max.Y - h*vg.Length(k+1), r.Max.Y - h*vg.Length(k) }
	for _, k := range []int{0, 2, 3} {
		y0, y1 := row(k)
		c.StrokeLine2(thinRule, split, y0, split, y1)
	}
	date := f.imprint.InputsDate
	if date == "" {
		date = "undated"
	}
	made := "canalstep"
	if f.imprint.Version != "" {
		made += " " + f.imprint.Version
	}
	units := "Lengths and levels in metres"
	if f.u == US {
		units = "Lengths and levels in feet"
	}
	cells := []struct {
		row         int
		left, right bool
		caption     string
		value       string
		size        vg.Length
	}{
		{0, true, false, "DRAWING", f.drawing, sheetTitleSize},
		{0, false, true, "SHEET", fmt.Sprintf("%d of %d", f.sheet, f.of), sheetTitleSize},
		{1, true, true, "ALIGNMENT", f.name, sheetTextSize + 1},
		{2, true, false, "EXTENT", f.extent, sheetTextSize},
		{2, false, true, "UNITS", units, sheetTextSize},
		{3, true, false, "INPUTS DATED", date, sheetTextSize},
		{3, false, true, "DRAWN BY", made, sheetTextSize},
	}
	cap := sheetText(sheetTinySize, draw.XLeft, draw.YTop)
	cap.Color = captionC
	for _, cell := range cells {
		y0, y1 := row(cell.row)
		x0, x1 := r.Min.X, r.Max.X
		if !cell.right {
			x1 = split
		}
		if !cell.left {
			x0 = split
		}
		c.FillText(cap, vg.Point{X: x0 + mm(1.5), Y: y1 - mm(0.8)}, cell.caption)
		st := sheetText(cell.size, draw.XLeft, draw.YBottom)
		fitText(&st, cell.value, x1-x0-mm(3))
		c.FillText(st, vg.Point{X: x0 + mm(1.5), Y: y0 + mm(1.2)}, cell.value)
	}
}
