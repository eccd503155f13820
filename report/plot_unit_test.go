package report

import (
	"bytes"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"strings"
	"sync"
	"testing"

	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
)

// shoelace returns the area enclosed by a polygon.
func shoelace(p plotter.XYs) float64 {
	var a float64
	for i := range p {
		j := (i + 1) % len(p)
		a += p[i].X*p[j].Y - p[j].X*p[i].Y
	}
	return math.Abs(a) / 2
}

func sumArea(ps []plotter.XYs) float64 {
	var a float64
	for _, p := range ps {
		a += shoelace(p)
	}
	return a
}

func allIdx(n int) []int {
	idx := make([]int, n)
	for i := range idx {
		idx[i] = i
	}
	return idx
}

// TestRegions checks the cut and fill polygons against exact areas of
// triangles and trapezoids (analytic, no source needed).
func TestRegions(t *testing.T) {
	nan := math.NaN()
	for _, c := range []struct {
		name           string
		x, top, bottom []float64
		above, below   float64 // areas, m²
		nAbove, nBelow int
	}{
		// Ground level at 10, bed rising 9 → 11 across x 0–2: crossing at
		// x = 1, two triangles of ½·1·1.
		{"crossing", []float64{0, 2}, []float64{10, 10}, []float64{9, 11}, 0.5, 0.5, 1, 1},
		// All cut: a trapezoid of width 4 and heights 1 and 3.
		{"cut only", []float64{0, 4}, []float64{10, 10}, []float64{9, 7}, 8, 0, 1, 0},
		// A NaN gap splits one region into two: 1 + 1.
		{"gap", []float64{0, 1, 2, 3, 4}, []float64{10, 10, nan, 10, 10}, []float64{9, 9, 9, 9, 9}, 2, 0, 2, 0},
		// A vertical step (repeated chainage) in the bed: fill 1·1, then cut 1·1.
		{"step", []float64{0, 1, 1, 2}, []float64{10, 10, 10, 10}, []float64{11, 11, 9, 9}, 1, 1, 1, 1},
		// Touching (zero depth) at the middle station does not split.
		{"touch", []float64{0, 1, 2}, []float64{10, 10, 10}, []float64{9, 10, 9}, 1, 0, 1, 0},
	} {
		t.Run(c.name, func(t *testing.T) {
			ab, be := regions(c.x, c.top, c.bottom, allIdx(len(c.x)))
			const tol = 1e-12 // exact arithmetic on small binary fractions
			if got := sumArea(ab); math.Abs(got-c.above) > tol || len(ab) != c.nAbove {
				t.Errorf("above: %d polygons, area %g; want %d, %g", len(ab), got, c.nAbove, c.above)
			}
			if got := sumArea(be); math.Abs(got-c.below) > tol || len(be) != c.nBelow {
				t.Errorf("below: %d polygons, area %g; want %d, %g", len(be), got, c.nBelow, c.below)
			}
		})
	}
}

// TestDecimate checks that decimation keeps, in every pixel column, the
// first and last point and every series' extremes, and the ends of gaps.
func TestDecimate(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	const n, cols = 40001, 900
	x, a, b := make([]float64, n), make([]float64, n), make([]float64, n)
	for i := range x {
		x[i] = float64(i)
		if i > 0 {
			a[i] = a[i-1] + rng.NormFloat64()
		}
		b[i] = -0.01 * float64(i)
	}
	for i := 20000; i < 20500; i++ {
		a[i] = math.NaN()
	}
	idx := decimate(x, [][]float64{a, b}, cols)
	if len(idx) > 8*cols {
		t.Errorf("kept %d points for %d columns, want at most %d", len(idx), cols, 8*cols)
	}
	kept := map[int]bool{}
	for k, i := range idx {
		kept[i] = true
		if k > 0 && i <= idx[k-1] {
			t.Fatal("indices not increasing")
		}
	}
	for _, i := range []int{0, n - 1, 19999, 20000, 20499, 20500} {
		if !kept[i] {
			t.Errorf("index %d (an end or a gap's edge) dropped", i)
		}
	}
	// Per column, the kept extremes equal the true extremes.
	col := func(i int) int { return min(int(float64(cols)*x[i]/x[n-1]), cols-1) }
	type mm struct{ lo, hi float64 }
	full, dec := map[int]mm{}, map[int]mm{}
	upd := func(m map[int]mm, c int, v float64) {
		if math.IsNaN(v) {
			return
		}
		e, ok := m[c]
		if !ok {
			e = mm{v, v}
		}
		m[c] = mm{math.Min(e.lo, v), math.Max(e.hi, v)}
	}
	for i := range x {
		upd(full, col(i), a[i])
	}
	for _, i := range idx {
		upd(dec, col(i), a[i])
	}
	for c, f := range full {
		if dec[c] != f {
			t.Fatalf("column %d: kept extremes %v, true %v", c, dec[c], f)
		}
	}
	if got := decimate(x[:100], [][]float64{a[:100]}, cols); len(got) != 100 {
		t.Errorf("short profile: kept %d of 100 points, want all", len(got))
	}
}

func TestSpread(t *testing.T) {
	const step = 10
	for _, want := range [][]vg.Length{
		{100, 300, 500},           // far apart: unchanged
		{100, 101, 102, 103, 400}, // a cluster: spread about its mean
		{0, 1, 2},                 // against the left edge
		{995, 998, 999, 1000},     // against the right edge
	} {
		got := spread(want, step, 5, 995)
		if len(got) != len(want) {
			t.Fatalf("spread(%v): %d positions", want, len(got))
		}
		for i, p := range got {
			if p < 5-1e-9 || p > 995+1e-9 {
				t.Errorf("spread(%v): %v outside [5, 995]", want, got)
			}
			if i > 0 && p-got[i-1] < step-1e-9 {
				t.Errorf("spread(%v) = %v: overlap", want, got)
			}
		}
		if want[0] == 100 && want[1] == 300 && (got[0] != 100 || got[2] != 500) {
			t.Errorf("isolated labels moved: %v", got)
		}
		if want[1] == 101 {
			// The cluster 100–103 has mean 101.5: four labels at 86.5 … 116.5.
			if math.Abs(float64(got[0]-86.5)) > 1e-9 || got[4] != 400 {
				t.Errorf("cluster: %v, want 86.5, 96.5, 106.5, 116.5, 400", got)
			}
		}
	}
}

func TestNiceTicks(t *testing.T) {
	for _, c := range []struct {
		lo, hi float64
		major  int
		want   string // labelled ticks
	}{
		{0, 6000, 10, "0 1000 2000 3000 4000 5000 6000"},
		{0, 19685, 10, "0 2000 4000 6000 8000 10\u2009000 12\u2009000 14\u2009000 16\u2009000 18\u2009000"},
		{318.2, 423.9, 6, "320 340 360 380 400 420"},
		{0, 2.3, 3, "0 1 2"},
		{0.41, 0.78, 4, "0.5 0.6 0.7"},
	} {
		var labels []string
		for _, tk := range (niceTicks{c.major}).Ticks(c.lo, c.hi) {
			if tk.Label != "" {
				labels = append(labels, tk.Label)
			}
			if tk.Value < c.lo-1e-9 || tk.Value > c.hi+1e-9 {
				t.Errorf("%v–%v: tick %v outside the range", c.lo, c.hi, tk.Value)
			}
		}
		if got := strings.Join(labels, " "); got != c.want {
			t.Errorf("%v–%v: ticks %q, want %q", c.lo, c.hi, got, c.want)
		}
	}
}

func TestGroupThousands(t *testing.T) {
	for _, c := range []struct {
		v    float64
		prec int
		want string
	}{
		{0, 0, "0"}, {1234, 0, "1234"}, {12345, 0, "12\u2009345"}, {-1234567.25, 2, "-1\u2009234\u2009567.25"},
		{-0.0001, 2, "0.00"}, {999.5, 1, "999.5"},
	} {
		if got := groupThousands(c.v, c.prec); got != c.want {
			t.Errorf("groupThousands(%v, %d) = %q, want %q", c.v, c.prec, got, c.want)
		}
	}
}

func TestRoundVE(t *testing.T) {
	for v, want := range map[float64]string{23.4: "23", 126: "130", 4.26: "4.3", 0: "?"} {
		if got := roundVE(v); got != want {
			t.Errorf("roundVE(%v) = %q, want %q", v, got, want)
		}
	}
}

// TestLongSectionExaggeration checks the stated vertical exaggeration
// against the drawing itself: a ground line of slope 1 % must appear on the
// page with a slope of VE × 1 % (definition of vertical exaggeration). The
// slope on the page is measured by a least-squares fit to the ground line's
// pixels in the PNG. Tolerance 3 %: the title rounds VE to two significant
// figures (≤ 2.5 %) and the fit to anti-aliased pixels adds a little.
func TestLongSectionExaggeration(t *testing.T) {
	t.Parallel()
	n := 201
	s := LongSection{Name: "Slope check"}
	for i := range n {
		x := 5 * float64(i)
		s.Chainage = append(s.Chainage, x)
		s.Ground = append(s.Ground, 100-0.01*x)
		s.Invert = append(s.Invert, 97-0.01*x)
	}
	var img, svg bytes.Buffer
	if err := RenderLongSection(&img, "png", s); err != nil {
		t.Fatal(err)
	}
	if err := RenderLongSection(&svg, "svg", s); err != nil {
		t.Fatal(err)
	}
	i := strings.Index(svg.String(), "vertical exaggeration ")
	if i < 0 {
		t.Fatal("no vertical exaggeration in the SVG")
	}
	var ve float64
	if _, err := fmt.Sscan(strings.TrimSuffix(strings.Fields(svg.String()[i+len("vertical exaggeration "):])[0], "×)"), &ve); err != nil {
		t.Fatal(err)
	}
	// Topmost pixel of the ground colour in each column.
	m := decodePNG(t, img.Bytes())
	b := m.Bounds()
	var sx, sy, sxx, sxy, k float64
	for x := b.Min.X; x < b.Max.X; x++ {
		for y := b.Min.Y; y < b.Max.Y; y++ {
			r, g, bl, _ := m.At(x, y).RGBA()
			if r>>8 == 120 && g>>8 == 75 && bl>>8 == 30 {
				fx, fy := float64(x), float64(y)
				sx, sy, sxx, sxy, k = sx+fx, sy+fy, sxx+fx*fx, sxy+fx*fy, k+1
				break
			}
		}
	}
	if k < 200 {
		t.Fatalf("found the ground line in only %v columns", k)
	}
	pageSlope := (k*sxy - sx*sy) / (k*sxx - sx*sx) // pixels down per pixel right
	measured := pageSlope / 0.01
	if math.Abs(measured-ve)/ve > 0.03 {
		t.Errorf("title says VE %v, the drawing shows %.2f", ve, measured)
	}
	t.Logf("stated VE %v, measured %.2f", ve, measured)
}

func TestLongSectionBadInput(t *testing.T) {
	good := testSection(51, 500)
	for _, c := range []struct {
		name string
		edit func(s *LongSection)
		want string
	}{
		{"one station", func(s *LongSection) { s.Chainage, s.Ground, s.Invert = s.Chainage[:1], s.Ground[:1], s.Invert[:1] }, "at least 2"},
		{"decreasing", func(s *LongSection) { s.Chainage = append([]float64(nil), s.Chainage...); s.Chainage[5] = 0 }, "decreases"},
		{"short invert", func(s *LongSection) { s.Invert = s.Invert[:10] }, "invert has 10 values"},
		{"short water", func(s *LongSection) { s.WaterSurface = s.WaterSurface[:3] }, "water surface"},
		{"NaN chainage", func(s *LongSection) { s.Chainage = append([]float64(nil), s.Chainage...); s.Chainage[3] = math.NaN() }, "not a number"},
	} {
		t.Run(c.name, func(t *testing.T) {
			s := good
			c.edit(&s)
			err := RenderLongSection(&bytes.Buffer{}, "png", s)
			if err == nil || !strings.Contains(err.Error(), c.want) {
				t.Errorf("got %v, want an error containing %q", err, c.want)
			}
		})
	}
	if err := RenderLongSection(&bytes.Buffer{}, "gif", good); err == nil {
		t.Error("format gif: want an error")
	}
	if err := WriteLongSection(t.TempDir()+"/x.jpeg", good); err == nil {
		t.Error(".jpeg: want an error")
	}
}

// TestLongSectionEdgeCases renders unusual but valid inputs without error.
func TestLongSectionEdgeCases(t *testing.T) {
	t.Parallel()
	base := testSection(201, 2000)
	base.Width, base.Height = 14, 9 // small: the cases check robustness, not looks
	nan := math.NaN()
	for _, c := range []struct {
		name string
		edit func(s *LongSection)
	}{
		{"no drops", func(s *LongSection) { s.Drops = nil }},
		{"only ground and bed", func(s *LongSection) {
			s.WaterSurface, s.TopOfBank, s.BaselineInvert, s.Lower, s.Drops = nil, nil, nil, nil, nil
		}},
		{"nodata in ground", func(s *LongSection) {
			s.Ground = append([]float64(nil), s.Ground...)
			for i := 50; i < 70; i++ {
				s.Ground[i] = nan
			}
		}},
		{"drops at both ends", func(s *LongSection) {
			s.Drops = append(s.Drops, DropMark{Chainage: 0, Label: "0+000.00", UpstreamInvert: 400, DownstreamInvert: 399},
				DropMark{Chainage: 2000, Label: "2+000.00", UpstreamInvert: 380, DownstreamInvert: 379})
		}},
		{"crowded drops", func(s *LongSection) {
			s.Drops = nil
			for i := 0; i < 400; i++ {
				c := 5 * float64(i)
				s.Drops = append(s.Drops, DropMark{Chainage: c, Label: stationLabel(c), UpstreamInvert: 390, DownstreamInvert: 389.5})
			}
		}},
		{"velocity panel", func(s *LongSection) {
			v := make([]float64, len(s.Chainage))
			for i := range v {
				v[i] = 0.6 + 0.1*math.Sin(float64(i)/10)
			}
			s.Lower = &LowerPanel{Label: "Velocity", Quantity: PanelVelocity,
				Series: []PanelSeries{{Name: "mean velocity", Values: v}},
				Limits: []PanelLimit{{Name: "max. velocity", Value: 0.75}, {Name: "min. velocity", Value: 0.3}}}
		}},
		{"flat", func(s *LongSection) {
			s.Ground = make([]float64, len(s.Chainage))
			s.Invert = make([]float64, len(s.Chainage))
			s.WaterSurface, s.TopOfBank, s.BaselineInvert, s.Drops = nil, nil, nil, nil
		}},
	} {
		t.Run(c.name, func(t *testing.T) {
			s := base
			c.edit(&s)
			formats := []string{"png"}
			if c.name == "crowded drops" {
				formats = append(formats, "svg", "pdf")
			}
			for _, f := range formats {
				var buf bytes.Buffer
				if err := RenderLongSection(&buf, f, s); err != nil {
					t.Fatalf("%s: %v", f, err)
				}
				if buf.Len() < 1000 {
					t.Errorf("%s: only %d bytes", f, buf.Len())
				}
			}
		})
	}
}

func TestGroundProfileBadInput(t *testing.T) {
	nan := math.NaN()
	if err := RenderGroundProfile(&bytes.Buffer{}, "png", GroundProfile{Chainage: []float64{0, 1}, Ground: []float64{nan, nan}}); err == nil ||
		!strings.Contains(err.Error(), "no data") {
		t.Errorf("all nodata: got %v", err)
	}
	if err := RenderGroundProfile(&bytes.Buffer{}, "png", GroundProfile{Chainage: []float64{0, 1, 2}, Ground: []float64{1, 2}}); err == nil {
		t.Error("length mismatch: want an error")
	}
}

// FuzzLongSection feeds odd profiles (NaN, repeated chainages, drops off
// the ends, huge and tiny ranges) to the long section: it must return an
// error or draw, never panic.
func FuzzLongSection(f *testing.F) {
	f.Add([]byte{0, 10, 20, 30, 40}, []byte{5, 4, 3, 2, 1}, []byte{4, 3, 2, 1, 0}, []byte{2}, 1.0)
	f.Add([]byte{0, 0, 0, 1}, []byte{255, 0, 255, 0}, []byte{0, 0, 0, 0}, []byte{0, 3}, 1e6)
	f.Add([]byte{1, 2, 3}, []byte{1, 1, 1}, []byte{1, 1, 1}, []byte{}, -1.0)
	f.Add([]byte{0, 50, 100, 150, 200, 250}, []byte{10, 255, 9, 8, 255, 7}, []byte{9, 9, 8, 8, 7, 6}, []byte{1, 2, 3, 4, 5, 250}, 1e-3)
	f.Fuzz(func(t *testing.T, xs, zs, bs, drops []byte, scale float64) {
		n := min(len(xs), len(zs), len(bs), 400)
		s := LongSection{Name: "fuzz", Width: 10, Height: 8}
		var c float64
		for i := range n {
			c += float64(xs[i]) * scale
			g := float64(zs[i]) * scale
			if zs[i] == 255 {
				g = math.NaN()
			}
			s.Chainage = append(s.Chainage, c)
			s.Ground = append(s.Ground, g)
			s.Invert = append(s.Invert, float64(bs[i])*scale)
		}
		for _, d := range drops {
			s.Drops = append(s.Drops, DropMark{Chainage: float64(d) * scale, Label: "x", UpstreamInvert: float64(d) * scale, DownstreamInvert: 0})
		}
		_ = RenderLongSection(io.Discard, "svg", s)
	})
}

// TestPlotsConcurrent renders plots from several goroutines at once, as a
// batch run does; under -race it shows the plots share no unguarded state.
func TestPlotsConcurrent(t *testing.T) {
	t.Parallel()
	s := testSection(101, 1000)
	s.Width, s.Height = 10, 7
	x, z := testGround(101, 1000, true)
	c := testAlternatives()
	c.Width, c.Height = 8, 6
	var wg sync.WaitGroup
	errs := make(chan error, 12)
	for i := range 4 {
		format := []string{"png", "svg"}[i%2]
		wg.Go(func() {
			errs <- RenderLongSection(io.Discard, format, s)
			errs <- RenderGroundProfile(io.Discard, format, GroundProfile{Name: "g", Chainage: x, Ground: z, Width: 10, Height: 6})
			errs <- RenderAlternativesChart(io.Discard, format, c)
		})
	}
	wg.Wait()
	close(errs)
	for err := range errs {
		if err != nil {
			t.Error(err)
		}
	}
}
