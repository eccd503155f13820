package report

import (
	"fmt"
	"image/color"
	"io"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// GroundProfile is the input of the ground long-section plot that
// `canalstep profile` writes: the ground sampled along one alignment.
type GroundProfile struct {
	Name     string    // alignment name, shown in the title
	Chainage []float64 // m along the alignment, non-decreasing
	Ground   []float64 // ground elevation, m; NaN where the DEM has no data
	Units    Units     // unit system of the axes (values stay SI here)

	// Width and Height are the plot size in cm; zero means 24 × 12 cm.
	Width, Height float64
}

// Colours shared by the long-section plots.
var (
	groundColor = color.RGBA{R: 120, G: 75, B: 30, A: 255}
	noDataFill  = color.NRGBA{R: 160, G: 160, B: 160, A: 90}
)

// WriteGroundProfile writes the ground profile plot to path (.png, .svg or
// .pdf, from the extension) through a temporary file.
func WriteGroundProfile(path string, g GroundProfile) error {
	return writePlot(path, func(w io.Writer, format string) error {
		return RenderGroundProfile(w, format, g)
	})
}

// RenderGroundProfile draws the ground profile in format ("png", "svg" or
// "pdf") to w. Chainage runs along x and elevation up y, both in g.Units'
// length unit; nodata stretches break the line and are shaded. Profiles of
// many thousand stations are decimated to the extremes of each pixel column
// (decimate), which keeps the drawn shape exact at the output resolution.
func RenderGroundProfile(w io.Writer, format string, g GroundProfile) error {
	const what = "ground profile plot"
	if err := checkChainage(what, g.Chainage); err != nil {
		return err
	}
	if err := checkSeries(what, "ground", g.Ground, len(g.Chainage), false); err != nil {
		return err
	}
	lo, hi, ok := dataRange(g.Ground)
	if !ok {
		return fmt.Errorf("%s: the ground has no data at any station", what)
	}
	wd, ht := sizeOr(g.Width, 24*vg.Centimeter), sizeOr(g.Height, 12*vg.Centimeter)
	u := g.Units
	x, z := convert(u, g.Chainage), convert(u, g.Ground)
	idx := decimate(x, [][]float64{z}, columnsFor(wd))

	p := newPlot()
	p.Title.Text = "Ground profile: " + plotName(g.Name) + " (vertical exaggeration 1×)"
	p.X.Label.Text = fmt.Sprintf("Chainage (%s)", u.LengthUnit())
	p.Y.Label.Text = fmt.Sprintf("Ground elevation (%s)", u.LengthUnit())
	p.X.Tick.Marker, p.Y.Tick.Marker = niceTicks{8}, niceTicks{5}
	p.Add(lightGrid())
	if gs := gaps(x, z); len(gs) > 0 {
		bands := gapBands{ranges: gs, fill: noDataFill}
		p.Add(bands)
		p.Legend.Add("no DEM data", bands)
	}
	if err := addLines(p, "ground", x, z, idx, lineStyle(groundColor, 1.2)); err != nil {
		return fmt.Errorf("%s: %w", what, err)
	}
	p.X.Min, p.X.Max = x[0], x[len(x)-1]
	pad := 0.05 * (u.Length(hi) - u.Length(lo))
	if pad == 0 {
		pad = 1
	}
	p.Y.Min, p.Y.Max = u.Length(lo)-pad, u.Length(hi)+pad
	placeLegend(p, z)

	c, err := newCanvas(wd, ht, format)
	if err != nil {
		return fmt.Errorf("%s: %w", what, err)
	}
	dc, _ := layout(p, nil, draw.New(c))
	p.Title.Text = fmt.Sprintf("Ground profile: %s (vertical exaggeration %s×)", plotName(g.Name), roundVE(exaggeration(p, dc)))
	p.Add(legendBackdrop{})
	p.Draw(dc)
	if _, err := c.WriteTo(w); err != nil {
		return fmt.Errorf("%s: %w", what, err)
	}
	return nil
}

// columnsFor returns how many pixel columns (at PlotDPI) a plot of width w
// has; decimation keeps the extremes of each.
func columnsFor(w vg.Length) int {
	return int(float64(w/vg.Inch)*PlotDPI) + 1
}

// placeLegend puts the legend in the bottom corner on the low side of a
// profile, where a falling (or rising) line leaves the plot empty.
func placeLegend(p *plot.Plot, z []float64) {
	first, last := firstValid(z), lastValid(z)
	p.Legend.Top = false
	p.Legend.Left = first > last // falls to the right: bottom left is empty
	p.Legend.XOffs = vg.Points(6)
	if !p.Legend.Left {
		p.Legend.XOffs = -vg.Points(6)
	}
	p.Legend.YOffs = vg.Points(6)
}

func firstValid(v []float64) float64 {
	for _, x := range v {
		if x == x {
			return x
		}
	}
	return 0
}

func lastValid(v []float64) float64 {
	for i := len(v) - 1; i >= 0; i-- {
		if v[i] == v[i] {
			return v[i]
		}
	}
	return 0
}
