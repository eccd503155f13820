package report

import (
	"fmt"
	"image/color"
	"io"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// AlternativesChart is the input of the bar chart that `canalstep compare`
// writes: earthwork volumes and cost of each drop-height alternative on one
// alignment.
type AlternativesChart struct {
	Name         string        // alignment name, shown in the title
	Alternatives []Alternative // in the order to show
	Currency     string        // cost unit for the axis label, e.g. "EUR"; empty: "cost units"
	Units        Units         // unit system of the volumes
	// XLabel captions the alternatives' axis; empty means "Drop heights
	// allowed (m)" (ft in US units).
	XLabel string

	// Width and Height are the chart size in cm; zero means 20 × 16 cm.
	Width, Height float64
}

// Alternative is one bar group of the chart.
type Alternative struct {
	Label      string  // how the alternative is named, e.g. "0.5,1.0,1.5"
	CutVolume  float64 // m³
	FillVolume float64 // m³
	// EarthworkCost and DropCost split the total when both are given (the
	// cost bar is then stacked); otherwise only TotalCost is drawn.
	EarthworkCost, DropCost float64
	TotalCost               float64 // currency units
}

// WriteAlternativesChart writes the chart to path (.png, .svg or .pdf, from
// the extension) through a temporary file.
func WriteAlternativesChart(path string, c AlternativesChart) error {
	return writePlot(path, func(w io.Writer, format string) error {
		return RenderAlternativesChart(w, format, c)
	})
}

// RenderAlternativesChart draws the chart in format ("png", "svg" or "pdf")
// to w: the upper panel has a pair of bars (cut, fill) per alternative, the
// lower one the total cost, stacked from earthwork and drops when the split
// is given, with the least-cost alternative marked. Large values are shown
// in thousands or millions, as the axis labels say.
func RenderAlternativesChart(w io.Writer, format string, c AlternativesChart) error {
	const what = "alternatives chart"
	n := len(c.Alternatives)
	if n == 0 {
		return fmt.Errorf("%s: no alternatives to draw", what)
	}
	u := c.Units
	cut, fill := make(plotter.Values, n), make(plotter.Values, n)
	earth, drops, total := make(plotter.Values, n), make(plotter.Values, n), make(plotter.Values, n)
	names := make([]string, n)
	split := true
	for i, a := range c.Alternatives {
		for _, v := range []float64{a.CutVolume, a.FillVolume, a.TotalCost, a.EarthworkCost, a.DropCost} {
			if math.IsNaN(v) || math.IsInf(v, 0) || v < 0 {
				return fmt.Errorf("%s: alternative %q has a value that is negative or not a number", what, a.Label)
			}
		}
		names[i] = a.Label
		cut[i], fill[i] = u.Volume(a.CutVolume), u.Volume(a.FillVolume)
		earth[i], drops[i], total[i] = a.EarthworkCost, a.DropCost, a.TotalCost
		split = split && a.EarthworkCost+a.DropCost > 0 &&
			math.Abs(a.EarthworkCost+a.DropCost-a.TotalCost) <= 1e-6*math.Max(1, a.TotalCost)
	}
	volUnit := u.VolumeUnit()
	currency := c.Currency
	if currency == "" {
		currency = "cost units"
	}
	_, vmax, _ := dataRange(cut, fill)
	vs, vname := scaleFor(vmax)
	_, cmax, _ := dataRange(total)
	cs, cname := scaleFor(cmax)

	wd, ht := sizeOr(c.Width, 20*vg.Centimeter), sizeOr(c.Height, 16*vg.Centimeter)
	top, bot := newPlot(), newPlot()
	top.Title.Text = "Drop-height alternatives: " + plotName(c.Name)
	top.Y.Label.Text = fmt.Sprintf("Earthwork volume (%s%s)", vname, volUnit)
	bot.Y.Label.Text = fmt.Sprintf("Total cost (%s%s)", cname, currency)
	bot.X.Label.Text = c.XLabel
	if c.XLabel == "" {
		bot.X.Label.Text = "Drop heights allowed (" + u.LengthUnit() + ")"
	}
	for _, p := range []*plot.Plot{top, bot} {
		p.Add(horizontalGrid())
		p.NominalX(names...)
		p.X.Min, p.X.Max = -0.5, float64(n)-0.5
		p.Y.Min = 0
		p.Y.Tick.Marker = niceTicks{5}
		p.Legend.Top, p.Legend.Left = true, false
		p.Legend.XOffs, p.Legend.YOffs = -vg.Points(4), -vg.Points(2)
	}
	if n > 6 {
		for _, p := range []*plot.Plot{top, bot} {
			p.X.Tick.Label.Rotation = math.Pi / 6
			p.X.Tick.Label.XAlign, p.X.Tick.Label.YAlign = draw.XRight, draw.YCenter
		}
	}
	top.X.Tick.Label.Font.Size = 0 // the lower panel names the alternatives

	scaled := func(v plotter.Values, s float64) plotter.Values {
		out := make(plotter.Values, len(v))
		for i := range v {
			out[i] = v[i] / s
		}
		return out
	}
	// Bar widths are set once the panels are laid out.
	bCut, _ := plotter.NewBarChart(scaled(cut, vs), 1)
	bFill, _ := plotter.NewBarChart(scaled(fill, vs), 1)
	bCut.Color, bFill.Color = cutFill, fillFill
	bCut.LineStyle = lineStyle(color.RGBA{R: 150, G: 100, B: 60, A: 255}, 0.5)
	bFill.LineStyle = lineStyle(color.RGBA{R: 70, G: 130, B: 70, A: 255}, 0.5)
	top.Add(bCut, bFill)
	top.Legend.Add("cut", bCut)
	top.Legend.Add("fill", bFill)
	volLabels := []*plotter.Labels{valueLabels(scaled(cut, vs), "", -1), valueLabels(scaled(fill, vs), "", -1)}
	top.Add(volLabels[0], volLabels[1])

	var costBars []*plotter.BarChart
	costColor := color.RGBA{R: 120, G: 140, B: 190, A: 255}
	edge := lineStyle(color.RGBA{R: 60, G: 70, B: 110, A: 255}, 0.5)
	if split {
		be, _ := plotter.NewBarChart(scaled(earth, cs), 1)
		bd, _ := plotter.NewBarChart(scaled(drops, cs), 1)
		be.Color, bd.Color = costColor, color.RGBA{R: 200, G: 90, B: 90, A: 255}
		be.LineStyle, bd.LineStyle = edge, edge
		bd.StackOn(be)
		bot.Add(be, bd)
		bot.Legend.Add("earthwork", be)
		bot.Legend.Add("drop structures", bd)
		costBars = append(costBars, be, bd)
	} else {
		bt, _ := plotter.NewBarChart(scaled(total, cs), 1)
		bt.Color, bt.LineStyle = costColor, edge
		bot.Add(bt)
		costBars = append(costBars, bt)
	}
	least := 0
	for i := range total {
		if total[i] < total[least] {
			least = i
		}
	}
	costLabels := valueLabels(scaled(total, cs), " (least)", least)
	bot.Add(costLabels)
	// Room above the bars for the value labels and the legend.
	_, tmax, _ := dataRange(scaled(cut, vs), scaled(fill, vs))
	top.Y.Max = 1.25 * math.Max(tmax, 1e-9)
	bot.Y.Max = 1.3 * math.Max(cmax/cs, 1e-9)

	cv, err := newCanvas(wd, ht, format)
	if err != nil {
		return fmt.Errorf("%s: %w", what, err)
	}
	tiles := draw.Tiles{Rows: 2, Cols: 1, PadTop: vg.Points(4), PadBottom: vg.Points(4),
		PadLeft: vg.Points(4), PadRight: vg.Points(10), PadY: vg.Points(8)}
	cvs := plot.Align([][]*plot.Plot{{top}, {bot}}, tiles, draw.New(cv))
	da := top.DataCanvas(cvs[0][0])
	slot := (da.Max.X - da.Min.X) / vg.Length(n) // width per alternative
	bw := slot * 0.32
	// Value labels wider than their bars are turned to read upwards, which
	// needs more headroom.
	if fitLabels(volLabels, bw) {
		top.Y.Max = 1.45 * math.Max(tmax, 1e-9)
	}
	if fitLabels([]*plotter.Labels{costLabels}, slot*0.45) {
		bot.Y.Max = 1.5 * math.Max(cmax/cs, 1e-9)
	}
	cvs = plot.Align([][]*plot.Plot{{top}, {bot}}, tiles, draw.New(cv))
	bCut.Width, bFill.Width = bw, bw
	bCut.Offset, bFill.Offset = -bw/2, bw/2
	volLabels[0].Offset.X, volLabels[1].Offset.X = -bw/2, bw/2
	for _, b := range costBars {
		b.Width = slot * 0.45
	}
	top.Draw(cvs[0][0])
	bot.Draw(cvs[1][0])
	if _, err := cv.WriteTo(w); err != nil {
		return fmt.Errorf("%s: %w", what, err)
	}
	return nil
}

// scaleFor returns the divisor and axis-label prefix that keep numbers up
// to max readable: thousands above 100 000, millions above 100 million.
func scaleFor(max float64) (float64, string) {
	switch {
	case max >= 1e8:
		return 1e6, "million "
	case max >= 1e5:
		return 1e3, "thousand "
	}
	return 1, ""
}

// valueLabels writes each value above its bar (three significant figures,
// thousands grouped); the bar at mark gets suffix appended.
func valueLabels(v plotter.Values, suffix string, mark int) *plotter.Labels {
	xys := make(plotter.XYs, len(v))
	strs := make([]string, len(v))
	for i, x := range v {
		xys[i] = plotter.XY{X: float64(i), Y: x}
		prec := 0
		if x != 0 && math.Abs(x) < 100 {
			prec = min(3, 2-int(math.Floor(math.Log10(math.Abs(x)))))
		}
		strs[i] = groupThousands(x, prec)
		if i == mark {
			strs[i] += suffix
		}
	}
	l, _ := plotter.NewLabels(plotter.XYLabels{XYs: xys, Labels: strs})
	for i := range l.TextStyle {
		st := sansText(noteSize)
		st.XAlign, st.YAlign = draw.XCenter, draw.YBottom
		l.TextStyle[i] = st
	}
	l.Offset.Y = vg.Points(2)
	return l
}

// fitLabels turns the labels to read upwards when any is wider than width
// and reports whether it did.
func fitLabels(ls []*plotter.Labels, width vg.Length) bool {
	wide := false
	for _, l := range ls {
		for i, s := range l.Labels {
			wide = wide || l.TextStyle[i].Width(s) > width*1.05
		}
	}
	if !wide {
		return false
	}
	for _, l := range ls {
		for i := range l.TextStyle {
			l.TextStyle[i].Rotation = math.Pi / 2
			l.TextStyle[i].XAlign, l.TextStyle[i].YAlign = draw.XLeft, draw.YCenter
		}
	}
	return true
}

// horizontalGrid returns a pale grid of horizontal lines only.
func horizontalGrid() *plotter.Grid {
	g := lightGrid()
	g.Vertical = draw.LineStyle{}
	return g
}
