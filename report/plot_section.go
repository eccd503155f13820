package report

import (
	"fmt"
	"image/color"
	"io"
	"math"
	"sort"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// LongSection is the input of the long-section plot that `canalstep plan`
// writes (profile.png, profile.svg). All values are SI; Units only decides
// how the axes are labelled. Every series has one value per station.
type LongSection struct {
	Name string // alignment name, shown in the title

	Chainage     []float64 // m along the alignment, non-decreasing; a repeated chainage draws a vertical step
	Ground       []float64 // ground elevation, m; NaN where unknown
	Invert       []float64 // designed bed (invert), m
	WaterSurface []float64 // design water surface, m; nil to omit
	TopOfBank    []float64 // top of bank, m; nil to omit

	// BaselineInvert is the bed of a baseline method (BaselineName, e.g.
	// "by eye") on the same ground, drawn as a thin comparison line; nil to
	// omit.
	BaselineName   string
	BaselineInvert []float64

	Drops []DropMark // drop structures, in any order

	// Lower is an optional second panel under the long section sharing its
	// chainage axis, e.g. cut depth and fill height, or velocity.
	Lower *LowerPanel

	Units Units // unit system of the axes

	// Width and Height are the plot size in cm; zero means 28 × 17 cm
	// (28 × 13 cm without a lower panel).
	Width, Height float64
}

// DropMark is one drop structure on the long section.
type DropMark struct {
	Chainage         float64 // m along the alignment
	Label            string  // station label in trade notation, e.g. "1+250.00"
	UpstreamInvert   float64 // bed level just upstream of the drop, m
	DownstreamInvert float64 // bed level just downstream of the drop, m
}

// PanelQuantity says what a lower panel shows, which fixes its unit.
type PanelQuantity int

const (
	PanelLength   PanelQuantity = iota // depths and heights: m (ft)
	PanelVelocity                      // velocities: m/s (ft/s)
)

// LowerPanel is a small panel under the long section.
type LowerPanel struct {
	Label    string        // axis quantity without unit, e.g. "Velocity"
	Quantity PanelQuantity // unit family of the values
	Series   []PanelSeries // lines, one value per station each
	Limits   []PanelLimit  // horizontal reference lines, e.g. the velocity limits
}

// PanelSeries is one line of a lower panel.
type PanelSeries struct {
	Name   string    // legend text
	Values []float64 // SI (m or m/s), one per station; NaN breaks the line
}

// PanelLimit is a horizontal reference line of a lower panel.
type PanelLimit struct {
	Name  string  // legend text, e.g. "max. velocity"
	Value float64 // SI (m or m/s)
}

// Colours and widths of the long section, chosen to stay distinct in grey
// print: ground brown, bed black and heavy, water blue dashed, bank green.
var (
	bedColor      = color.Black
	waterColor    = color.RGBA{R: 20, G: 90, B: 210, A: 255}
	bankColor     = color.RGBA{R: 40, G: 130, B: 60, A: 255}
	baselineColor = color.RGBA{R: 170, G: 40, B: 150, A: 255}
	cutFill       = color.RGBA{R: 238, G: 190, B: 140, A: 255}
	fillFill      = color.RGBA{R: 165, G: 215, B: 155, A: 255}
	dropColor     = color.RGBA{R: 200, G: 30, B: 30, A: 255}
	panelColors   = []color.Color{
		color.RGBA{R: 190, G: 110, B: 40, A: 255},
		color.RGBA{R: 40, G: 140, B: 70, A: 255},
		color.RGBA{R: 20, G: 90, B: 210, A: 255},
		color.RGBA{R: 120, G: 60, B: 160, A: 255},
	}
)

// WriteLongSection writes the long section to path (.png, .svg or .pdf,
// from the extension) through a temporary file.
func WriteLongSection(path string, s LongSection) error {
	return writePlot(path, func(w io.Writer, format string) error {
		return RenderLongSection(w, format, s)
	})
}

// RenderLongSection draws the long section in format ("png", "svg" or
// "pdf") to w: cut (ground above bed) and fill (bed above ground) shaded
// between ground and bed; ground, bed, water surface and top of bank; the
// even-spacing bed as a thin line; each drop as a red step with a leader to
// its station label; the vertical exaggeration in the title; and the
// optional lower panel on the same chainage axis.
//
// The vertical exaggeration is the ratio of the horizontal to the vertical
// drawing scale of the data area as drawn:
//
//	VE = (ΔX / width) / (ΔZ / height)
//
// with ΔX and ΔZ the chainage and elevation ranges of the axes in the same
// unit and width × height the data area on the page.
func RenderLongSection(w io.Writer, format string, s LongSection) error {
	const what = "long section plot"
	if err := s.check(what); err != nil {
		return err
	}
	u := s.Units
	lu := u.LengthUnit()
	x := convert(u, s.Chainage)
	ground, bed := convert(u, s.Ground), convert(u, s.Invert)
	water, bank := convert(u, s.WaterSurface), convert(u, s.TopOfBank)
	base := convert(u, s.BaselineInvert)

	wd := sizeOr(s.Width, 28*vg.Centimeter)
	defH := 17 * vg.Centimeter
	if s.Lower == nil {
		defH = 13 * vg.Centimeter
	}
	ht := sizeOr(s.Height, defH)
	series := [][]float64{ground, bed}
	for _, v := range [][]float64{water, bank, base} {
		if v != nil {
			series = append(series, v)
		}
	}
	if s.Lower != nil {
		for _, ps := range s.Lower.Series {
			series = append(series, ps.Values)
		}
	}
	idx := decimate(x, series, columnsFor(wd))

	p := newPlot()
	p.Y.Label.Text = fmt.Sprintf("Elevation (%s)", lu)
	p.X.Label.Text = fmt.Sprintf("Chainage (%s)", lu)
	p.X.Tick.Marker, p.Y.Tick.Marker = niceTicks{10}, niceTicks{6}
	p.Add(lightGrid())

	cut, fill := regions(x, ground, bed, idx)
	if err := addRegions(p, cut, cutFill); err != nil {
		return fmt.Errorf("%s: %w", what, err)
	}
	if err := addRegions(p, fill, fillFill); err != nil {
		return fmt.Errorf("%s: %w", what, err)
	}
	if gs := gaps(x, ground); len(gs) > 0 {
		bands := gapBands{ranges: gs, fill: noDataFill}
		p.Add(bands)
		p.Legend.Add("no ground data", bands)
	}
	type line struct {
		name string
		y    []float64
		ls   draw.LineStyle
	}
	lines := []line{
		{"ground", ground, lineStyle(groundColor, 1.2)},
		{"top of bank", bank, lineStyle(bankColor, 0.8, 6, 2, 1, 2)},
		{"design water surface", water, lineStyle(waterColor, 1, 5, 2.5)},
		{baselineLabel(s.BaselineName), base, lineStyle(baselineColor, 0.6, 3, 2)},
		{"bed (invert)", bed, lineStyle(bedColor, 1.6)},
	}
	for _, l := range lines {
		if l.y == nil {
			continue
		}
		if err := addLines(p, l.name, x, l.y, idx, l.ls); err != nil {
			return fmt.Errorf("%s: %w", what, err)
		}
	}
	p.Legend.Add("cut", swatch{cutFill})
	p.Legend.Add("fill", swatch{fillFill})

	lo, hi, _ := dataRange(ground, bed, water, bank, base)
	marks := newDropMarks(u, s.Drops, x, idx, ground, bed, bank, water, base)
	lo = math.Min(lo, marks.lowest())
	hi = math.Max(hi, marks.highest())
	if hi-lo <= 0 {
		hi, lo = hi+1, lo-1
	}
	if len(marks.x) > 0 {
		p.Add(marks)
	}
	p.X.Min, p.X.Max = x[0], x[len(x)-1]
	p.Y.Min = lo - 0.04*(hi-lo)
	p.Y.Max = hi + 0.04*(hi-lo)
	placeLegend(p, bed)

	var q *plot.Plot
	if s.Lower != nil {
		var err error
		if q, err = s.Lower.plot(u, x, idx); err != nil {
			return fmt.Errorf("%s: %w", what, err)
		}
		q.X.Min, q.X.Max = p.X.Min, p.X.Max
		q.X.Tick.Marker = p.X.Tick.Marker
		// Only the lower panel carries the chainage labels.
		p.X.Label.Text = ""
		p.X.Tick.Label.Font.Size = 0
	}
	p.Title.Text = "Long section: " + plotName(s.Name) + " (vertical exaggeration 1×)"

	c, err := newCanvas(wd, ht, format)
	if err != nil {
		return fmt.Errorf("%s: %w", what, err)
	}
	dc := draw.New(c)
	top, bot := layout(p, q, dc)

	// Headroom for the drop labels above everything else, then the
	// exaggeration of the data area as finally laid out.
	if len(marks.x) > 0 {
		marks.reserve(p, top)
		top, bot = layout(p, q, dc)
		// The legend text says whether every drop could be labelled.
		p.Legend.Add(marks.legend(u), marks)
	}
	if q != nil {
		// Room at the top of the lower panel for its legend.
		entries := len(s.Lower.Series) + len(s.Lower.Limits)
		da := q.DataCanvas(bot)
		h := float64(da.Max.Y - da.Min.Y)
		need := float64(entries)*legendSize*1.25 + 6
		if h > 2*need {
			q.Y.Max = q.Y.Min + (q.Y.Max-q.Y.Min)*h/(h-need)
		}
	}
	p.Title.Text = fmt.Sprintf("Long section: %s (vertical exaggeration %s×)", plotName(s.Name), roundVE(exaggeration(p, top)))
	p.Add(legendBackdrop{})
	if q != nil {
		q.Add(legendBackdrop{})
	}

	p.Draw(top)
	if q != nil {
		q.Draw(bot)
	}
	if _, err := c.WriteTo(w); err != nil {
		return fmt.Errorf("%s: %w", what, err)
	}
	return nil
}

// check reports inconsistent input.
func (s LongSection) check(what string) error {
	if err := checkChainage(what, s.Chainage); err != nil {
		return err
	}
	n := len(s.Chainage)
	for _, c := range []struct {
		name     string
		v        []float64
		optional bool
	}{
		{"ground", s.Ground, false},
		{"invert", s.Invert, false},
		{"water surface", s.WaterSurface, true},
		{"top of bank", s.TopOfBank, true},
		{"even-spacing invert", s.BaselineInvert, true},
	} {
		if err := checkSeries(what, c.name, c.v, n, c.optional); err != nil {
			return err
		}
	}
	if _, _, ok := dataRange(s.Invert); !ok {
		return fmt.Errorf("%s: the invert has no values", what)
	}
	if s.Lower != nil {
		for _, ps := range s.Lower.Series {
			if err := checkSeries(what, "lower panel series "+ps.Name, ps.Values, n, false); err != nil {
				return err
			}
		}
	}
	return nil
}

// layout splits dc into the long section (about 70 %) and the lower panel,
// with their data areas aligned left and right. Without a lower panel the
// long section takes the whole canvas.
func layout(p, q *plot.Plot, dc draw.Canvas) (top, bot draw.Canvas) {
	pad := draw.Tiles{
		PadTop: vg.Points(4), PadBottom: vg.Points(4),
		PadLeft: vg.Points(4), PadRight: vg.Points(12), PadY: vg.Points(6),
	}
	if q == nil {
		pad.Rows, pad.Cols = 1, 1
		return plot.Align([][]*plot.Plot{{p}}, pad, dc)[0][0], draw.Canvas{}
	}
	pad.Rows, pad.Cols = 2, 1
	cs := plot.Align([][]*plot.Plot{{p}, {q}}, pad, dc)
	top, bot = cs[0][0], cs[1][0]
	span := top.Max.Y - bot.Min.Y
	bot.Max.Y = bot.Min.Y + 0.3*span
	top.Min.Y = bot.Max.Y + pad.PadY
	return top, bot
}

// exaggeration returns the vertical exaggeration of p drawn in c: the
// horizontal drawing scale over the vertical one, both axes being in the
// same length unit.
func exaggeration(p *plot.Plot, c draw.Canvas) float64 {
	da := p.DataCanvas(c)
	return (p.X.Max - p.X.Min) / float64(da.Max.X-da.Min.X) /
		((p.Y.Max - p.Y.Min) / float64(da.Max.Y-da.Min.Y))
}

// roundVE prints a vertical exaggeration to two significant figures.
func roundVE(ve float64) string {
	if ve <= 0 || math.IsNaN(ve) || math.IsInf(ve, 0) {
		return "?"
	}
	if ve >= 10 {
		mag := math.Pow10(int(math.Floor(math.Log10(ve))) - 1)
		return fmt.Sprintf("%.0f", math.Round(ve/mag)*mag)
	}
	return fmt.Sprintf("%.1f", ve)
}

// plot builds the lower panel.
func (lp *LowerPanel) plot(u Units, x []float64, idx []int) (*plot.Plot, error) {
	q := newPlot()
	unit := u.LengthUnit()
	if lp.Quantity == PanelVelocity {
		unit += "/s"
	}
	q.Y.Label.Text = fmt.Sprintf("%s (%s)", lp.Label, unit)
	q.X.Label.Text = fmt.Sprintf("Chainage (%s)", u.LengthUnit())
	q.Y.Tick.Marker = niceTicks{3}
	q.Add(lightGrid())
	var all [][]float64
	// Limits are drawn first, so that a series running along a limit stays
	// visible, and listed last.
	var limitLines []*plotter.Line
	for i, l := range lp.Limits {
		v := u.Length(l.Value)
		all = append(all, []float64{v})
		ln, err := plotter.NewLine(plotter.XYs{{X: x[0], Y: v}, {X: x[len(x)-1], Y: v}})
		if err != nil {
			return nil, fmt.Errorf("limit %s: %w", l.Name, err)
		}
		ln.LineStyle = lineStyle(color.RGBA{R: 200, G: 30, B: 30, A: 255}, 0.7, 4+2*float64(i), 2)
		q.Add(ln)
		limitLines = append(limitLines, ln)
	}
	for i, ps := range lp.Series {
		v := convert(u, ps.Values)
		all = append(all, v)
		ls := lineStyle(panelColors[i%len(panelColors)], 1.2)
		if err := addLines(q, ps.Name, x, v, idx, ls); err != nil {
			return nil, err
		}
	}
	for i, l := range lp.Limits {
		q.Legend.Add(l.Name, limitLines[i])
	}
	lo, hi, ok := dataRange(all...)
	if !ok {
		lo, hi = 0, 1
	}
	lo = math.Min(lo, 0)
	if hi <= lo {
		hi = lo + 1
	}
	q.Y.Min, q.Y.Max = lo, hi+0.05*(hi-lo)
	q.Legend.Top = true
	q.Legend.XOffs = -vg.Points(6)
	q.Legend.YOffs = -vg.Points(2)
	return q, nil
}

// dropMarks draws the drops: a red vertical step from the upstream to the
// downstream invert, and the station label, rotated to read upwards, just
// above the highest line at the drop. Labels that would touch are spread
// apart symmetrically about their drops (spread) and joined to them by thin
// leaders; when even that cannot fit them across the plot, only every k-th
// drop is labelled and the legend says so.
type dropMarks struct {
	x, up, down, top []float64 // chainage; inverts; highest line at the drop (display units)
	labels           []string
	style            text.Style
	envX, envZ       []float64 // the highest drawn line at each plotted station
	every            int       // label every k-th drop (1: all)
	usual            float64   // the commonest drop height, m
	mixed            bool      // some drops differ from usual
	need             vg.Length // label length plus the gaps around it
}

// labelGap is the space between the highest line and a label's foot.
const labelGap = 4 // points

func newDropMarks(u Units, drops []DropMark, xs []float64, idx []int, lines ...[]float64) *dropMarks {
	d := &dropMarks{style: sansText(noteSize), every: 1}
	d.style.Rotation = math.Pi / 2
	d.style.XAlign, d.style.YAlign = draw.XLeft, draw.YCenter
	d.style.Color = dropColor
	order := make([]int, len(drops))
	for i := range order {
		order[i] = i
	}
	sort.SliceStable(order, func(a, b int) bool { return drops[order[a]].Chainage < drops[order[b]].Chainage })
	for _, i := range idx {
		z := math.Inf(-1)
		for _, l := range lines {
			if l != nil && !math.IsNaN(l[i]) {
				z = math.Max(z, l[i])
			}
		}
		if !math.IsInf(z, -1) {
			d.envX, d.envZ = append(d.envX, xs[i]), append(d.envZ, z)
		}
	}
	// Labels state the height only where it differs from the commonest one,
	// which the legend gives.
	d.usual = commonHeight(drops)
	for _, i := range order {
		dm := drops[i]
		x := u.Length(dm.Chainage)
		up, down := u.Length(dm.UpstreamInvert), u.Length(dm.DownstreamInvert)
		top := math.Max(up, down)
		if z := d.envMax(x, x); !math.IsNaN(z) {
			top = math.Max(top, z)
		}
		label := dm.Label
		if h := dm.UpstreamInvert - dm.DownstreamInvert; math.Abs(h-d.usual) >= 0.0005 {
			label = fmt.Sprintf("%s  (%.2f %s)", dm.Label, u.Length(h), u.LengthUnit())
			d.mixed = true
		}
		d.x = append(d.x, x)
		d.up = append(d.up, up)
		d.down = append(d.down, down)
		d.top = append(d.top, top)
		d.labels = append(d.labels, label)
	}
	for _, s := range d.labels {
		d.need = max(d.need, d.style.Width(s))
	}
	d.need += vg.Points(labelGap + 4)
	return d
}

// legend returns the legend text for the drops.
func (d *dropMarks) legend(u Units) string {
	h := fmt.Sprintf("%.2f %s", u.Length(d.usual), u.LengthUnit())
	text := "drop (station; each " + h + " high)"
	if d.mixed {
		text = "drop (station; " + h + " high unless stated)"
	}
	if d.every > 1 {
		text += fmt.Sprintf("; 1 in %d labelled", d.every)
	}
	return text
}

// commonHeight returns the drop height (m) that occurs most often, to the
// millimetre; ties go to the greater height.
func commonHeight(drops []DropMark) float64 {
	count := map[int64]int{}
	var best int64
	for _, dm := range drops {
		k := int64(math.Round(1000 * (dm.UpstreamInvert - dm.DownstreamInvert)))
		count[k]++
		if count[k] > count[best] || count[k] == count[best] && k > best {
			best = k
		}
	}
	return float64(best) / 1000
}

// envMax returns the highest drawn line between chainages a and b
// (interpolated at a and b themselves), NaN where nothing is drawn.
func (d *dropMarks) envMax(a, b float64) float64 {
	if a > b {
		a, b = b, a
	}
	z := math.Max(valueAt(d.envX, d.envZ, a), valueAt(d.envX, d.envZ, b))
	k := sort.SearchFloat64s(d.envX, a)
	for ; k < len(d.envX) && d.envX[k] <= b; k++ {
		if !(z >= d.envZ[k]) {
			z = d.envZ[k]
		}
	}
	return z
}

// valueAt interpolates s at chainage x (NaN outside or over gaps).
func valueAt(xs, s []float64, x float64) float64 {
	if s == nil || len(xs) == 0 || x < xs[0] || x > xs[len(xs)-1] {
		return math.NaN()
	}
	lo, hi := 0, len(xs)-1
	for hi-lo > 1 {
		m := (lo + hi) / 2
		if xs[m] <= x {
			lo = m
		} else {
			hi = m
		}
	}
	if xs[hi] == xs[lo] {
		return s[lo]
	}
	f := (x - xs[lo]) / (xs[hi] - xs[lo])
	return s[lo] + f*(s[hi]-s[lo])
}

func (d *dropMarks) lowest() float64 {
	lo, _, ok := dataRange(d.down)
	if !ok {
		return math.Inf(1)
	}
	return lo
}

func (d *dropMarks) highest() float64 {
	_, hi, ok := dataRange(d.top)
	if !ok {
		return math.Inf(-1)
	}
	return hi
}

// place returns, for the labelled drops (every d.every-th), their index, the
// x position of each label on the canvas and the elevation (display unit)
// of its foot: the highest line between the drop and its label.
func (d *dropMarks) place(c draw.Canvas, trX func(float64) vg.Length, invX func(vg.Length) float64) (which []int, pos []vg.Length, foot []float64) {
	step := d.style.FontExtents().Height * 1.1
	width := c.Max.X - c.Min.X
	d.every = 1
	for float64(len(d.x)/d.every)*float64(step) > float64(width) {
		d.every++
	}
	var want []vg.Length
	for i := 0; i < len(d.x); i += d.every {
		which = append(which, i)
		want = append(want, trX(d.x[i]))
	}
	pos = spread(want, step, c.Min.X+step/2, c.Max.X-step/2)
	for k, i := range which {
		z := math.Max(d.top[i], d.envMax(d.x[i], invX(pos[k])))
		foot = append(foot, z)
	}
	return which, pos, foot
}

// spread places labels of thickness step as close as possible to the
// positions want (sorted), without overlap and within [lo, hi]: labels that
// would overlap form a group centred on the mean of its wanted positions.
func spread(want []vg.Length, step, lo, hi vg.Length) []vg.Length {
	type group struct {
		first, n int
		sum      vg.Length // sum of wanted positions
		start    vg.Length // position of the first label
	}
	var gs []group
	fix := func(g *group) {
		g.start = g.sum/vg.Length(g.n) - step*vg.Length(g.n-1)/2
		g.start = min(g.start, hi-step*vg.Length(g.n-1))
		g.start = max(g.start, lo)
	}
	for i, w := range want {
		g := group{first: i, n: 1, sum: w}
		fix(&g)
		for len(gs) > 0 {
			p := &gs[len(gs)-1]
			if p.start+step*vg.Length(p.n) <= g.start {
				break
			}
			g = group{first: p.first, n: p.n + g.n, sum: p.sum + g.sum}
			fix(&g)
			gs = gs[:len(gs)-1]
		}
		gs = append(gs, g)
	}
	out := make([]vg.Length, 0, len(want))
	for _, g := range gs {
		for k := range g.n {
			out = append(out, g.start+step*vg.Length(k))
		}
	}
	return out
}

// reserve raises p.Y.Max so that every label fits above its foot, given the
// data area the plot gets in c.
func (d *dropMarks) reserve(p *plot.Plot, c draw.Canvas) {
	da := p.DataCanvas(c)
	h := float64(da.Max.Y - da.Min.Y)
	need := float64(d.need)
	if h <= 2*need {
		return // too small a plot for labels above the lines
	}
	trX, invX := xMaps(p, da)
	_, _, foot := d.place(da, trX, invX)
	lo := p.Y.Min
	for _, z := range foot {
		p.Y.Max = math.Max(p.Y.Max, lo+(z-lo)*h/(h-need))
	}
}

// xMaps returns the data-to-canvas map of the x axis and its inverse.
func xMaps(p *plot.Plot, da draw.Canvas) (func(float64) vg.Length, func(vg.Length) float64) {
	trX, _ := p.Transforms(&da)
	w := da.Max.X - da.Min.X
	inv := func(v vg.Length) float64 {
		return p.X.Min + float64((v-da.Min.X)/w)*(p.X.Max-p.X.Min)
	}
	return trX, inv
}

// Plot implements plot.Plotter.
func (d *dropMarks) Plot(c draw.Canvas, p *plot.Plot) {
	trX, invX := xMaps(p, c)
	_, trY := p.Transforms(&c)
	stepStyle := lineStyle(dropColor, 1.8)
	for i := range d.x {
		px := trX(d.x[i])
		c.StrokeLine2(stepStyle, px, trY(d.up[i]), px, trY(d.down[i]))
	}
	leader := lineStyle(color.NRGBA{R: 200, G: 30, B: 30, A: 170}, 0.5)
	which, pos, foot := d.place(c, trX, invX)
	for k, i := range which {
		px := trX(d.x[i])
		y0 := trY(d.top[i]) + vg.Points(1)
		y1 := trY(foot[k]) + vg.Points(labelGap)
		if pos[k] != px || y1-y0 > vg.Points(labelGap+1) {
			c.StrokeLines(leader, []vg.Point{{X: px, Y: y0}, {X: pos[k], Y: y1 - vg.Points(1)}})
		}
		c.FillText(d.style, vg.Point{X: pos[k], Y: y1}, d.labels[i])
	}
}

// Thumbnail implements plot.Thumbnailer.
func (d *dropMarks) Thumbnail(c *draw.Canvas) {
	x := (c.Min.X + c.Max.X) / 2
	c.StrokeLine2(lineStyle(dropColor, 1.8), x, c.Min.Y, x, c.Max.Y)
}

// baselineLabel names the comparison bed in the legend.
func baselineLabel(name string) string {
	if name == "" {
		name = "even spacing"
	}
	return name + " bed (comparison)"
}
