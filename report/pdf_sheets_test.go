package report

import (
	"bytes"
	"io"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"sync"
	"testing"

	"canalstep/alignment"
	"canalstep/planner"
	"canalstep/planner/hydraulics"
	"canalstep/testdata/reftool"
)

var (
	canalOnce sync.Once
	canalRes  *planner.Result
	canalProf *alignment.Profile
)

// canal5km is a 5 km plan of the fictional scheme (demo-style data, not a
// published case): 501 stations every 10 m on ground falling about 0.8 %
// with two undulations, and a ground cross-section at every station from
// 30 m left to 30 m right with a cross fall that turns along the line.
// Planned once per test binary.
func canal5km(tb testing.TB) (*alignment.Profile, *planner.Result) {
	canalOnce.Do(func() {
		const n = 501
		c, g := make([]float64, n), make([]float64, n)
		for i := range c {
			c[i] = 10 * float64(i)
			g[i] = 180 - 0.008*c[i] + 0.9*math.Sin(c[i]/230) + 0.35*math.Sin(c[i]/57+1)
		}
		st := planner.LevelProfile(c, g)
		for i := range st {
			fall := 0.015 + 0.01*math.Sin(c[i]/400) // m/m, right side lower
			var offs, lv []float64
			for a := -30.0; a <= 30; a += 6 {
				offs = append(offs, a)
				lv = append(lv, g[i]-fall*a+0.05*math.Sin(0.7*a+c[i]/33)*math.Abs(a)/30)
			}
			st[i].Label = alignment.FormatStation(c[i], false)
			st[i].Cross = &alignment.CrossSection{Offsets: offs, Levels: lv}
		}
		d := planner.DefaultDesign()
		d.Flow, d.Section, d.Roughness = 1, hydraulics.Section{BottomWidth: 1, SideSlope: 1.5}, 0.025
		d.MaxVelocity, d.MinVelocity, d.DropHeights = 0.9, 0.3, []float64{0.5, 1, 1.5}
		r, err := planner.Optimize(planner.Problem{Stations: st, Design: d})
		if err != nil {
			panic(err)
		}
		canalRes, canalProf = r, &alignment.Profile{Name: "Main canal", Folder: "main-canal", Stations: st}
	})
	if canalRes == nil {
		tb.Fatal("no 5 km plan")
	}
	return canalProf, canalRes
}

var testImprint = Imprint{InputsDate: "2024-05-01", Version: "0.0.0-test"}

// renderSheets renders both PDFs of a plan.
func renderSheets(tb testing.TB, name string, r *planner.Result, u Units) (long, cross []byte) {
	tb.Helper()
	var a, b bytes.Buffer
	if err := RenderLongSectionSheets(&a, NewLongSection(name, r, u), testImprint); err != nil {
		tb.Fatal(err)
	}
	if err := RenderCrossSectionSheets(&b, name, r, u, testImprint); err != nil {
		tb.Fatal(err)
	}
	return a.Bytes(), b.Bytes()
}

// pageObjects counts the page objects of a PDF ("/Type /Page", not
// "/Type /Pages"), after checking it starts as a PDF and ends with %%EOF.
func pageObjects(tb testing.TB, b []byte) int {
	tb.Helper()
	if !bytes.HasPrefix(b, []byte("%PDF-")) {
		tb.Fatalf("not a PDF: %q", b[:min(16, len(b))])
	}
	if !bytes.HasSuffix(bytes.TrimSpace(b), []byte("%%EOF")) {
		tb.Fatalf("PDF does not end with %%%%EOF")
	}
	if n := len(regexp.MustCompile(`/Type /Pages\b`).FindAll(b, -1)); n != 1 {
		tb.Errorf("%d page trees, want 1", n)
	}
	return len(regexp.MustCompile(`/Type /Page\b[^s]`).FindAll(b, -1))
}

// wantSheets counts the long-section sheets independently: sheets start
// at multiples of the sheet length L (1000 m; 3000 ft), so a line from c0
// to c1 (in the unit of L) covers ceil(c1/L) − floor(c0/L) of them.
func wantSheets(r *planner.Result, u Units) int {
	L := 1000.0
	if u == US {
		L = 3000
	}
	st := r.Stations
	c0, c1 := u.Length(st[0].Chainage), u.Length(st[len(st)-1].Chainage)
	return int(math.Ceil(c1/L) - math.Floor(c0/L))
}

// wantCrossPages counts the cross-section pages independently: one section
// for every multiple of the interval (500 m; 1500 ft) within the line and
// one for every drop, less the drops that stand exactly on a multiple
// (the stations here are 10 m apart from chainage 0, so a multiple of 500 m
// is a station; 1500 ft is not, and no drop is counted twice in US
// units unless it is a multiple's nearest station, checked by distance),
// six to a page.
func wantCrossPages(r *planner.Result, u Units) int {
	iv := 500.0
	if u == US {
		iv = 1500 * FootM
	}
	st := r.Stations
	c0, c1 := st[0].Chainage, st[len(st)-1].Chainage
	n := int(math.Floor(c1/iv+1e-9)-math.Ceil(c0/iv-1e-9)) + 1
	for _, d := range r.Drops {
		n++
		m := math.Round(d.Chainage/iv) * iv
		if math.Abs(d.Chainage-m) <= 5 { // within half the station spacing: the multiple's station
			n--
		}
	}
	return (n + 5) / 6
}

// TestSheetPages: both PDFs start as PDFs, have one page tree and as many
// page objects as there are sheets, counted independently, for the 5 km
// plan in SI and US units and for a 590 m plan; pdfinfo (poppler) agrees
// and says A3.
func TestSheetPages(t *testing.T) {
	t.Parallel()
	p5, r5 := canal5km(t)
	ps, rs := smallPlan(t)
	for _, c := range []struct {
		name string
		r    *planner.Result
		u    Units
	}{{p5.Name, r5, SI}, {p5.Name, r5, US}, {ps.Name, rs, SI}} {
		long, cross := renderSheets(t, c.name, c.r, c.u)
		wl, wc := wantSheets(c.r, c.u), wantCrossPages(c.r, c.u)
		if got := pageObjects(t, long); got != wl {
			t.Errorf("%s %s: longsection.pdf has %d pages, want %d", c.name, c.u, got, wl)
		}
		if got := pageObjects(t, cross); got != wc {
			t.Errorf("%s %s: crosssections.pdf has %d pages, want %d (%d drops)", c.name, c.u, got, wc, len(c.r.Drops))
		}
		if c.r == r5 && c.u == SI && (wl != 5 || len(c.r.Drops) < 3) {
			t.Errorf("5 km fixture: %d sheets and %d drops, want 5 sheets and some drops", wl, len(c.r.Drops))
		}
		for _, f := range []struct {
			b    []byte
			want int
		}{{long, wl}, {cross, wc}} {
			info := pdfinfo(t, f.b)
			if info == "" {
				continue
			}
			if !strings.Contains(info, "Pages:           "+strconv.Itoa(f.want)+"\n") {
				t.Errorf("pdfinfo: want %d pages:\n%s", f.want, info)
			}
			if !strings.Contains(info, "(A3)") {
				t.Errorf("pdfinfo: not A3:\n%s", info)
			}
		}
	}
}

// pdfTool runs a poppler tool on the PDF b and returns its output.
func pdfTool(tb testing.TB, tool string, b []byte, args ...string) string {
	tb.Helper()
	path := reftool.Need(tb, tool)
	f := filepath.Join(tb.TempDir(), "in.pdf")
	if err := os.WriteFile(f, b, 0o644); err != nil {
		tb.Fatal(err)
	}
	out, err := exec.Command(path, append(args, f, "-")...).Output()
	if err != nil {
		tb.Fatalf("%s: %v", tool, err)
	}
	return string(out)
}

func pdfinfo(tb testing.TB, b []byte) string {
	tb.Helper()
	path := reftool.Need(tb, "pdfinfo")
	f := filepath.Join(tb.TempDir(), "in.pdf")
	if err := os.WriteFile(f, b, 0o644); err != nil {
		tb.Fatal(err)
	}
	out, err := exec.Command(path, f).CombinedOutput()
	if err != nil {
		tb.Fatalf("pdfinfo: %v\n%s", err, out)
	}
	return string(out)
}

// TestSheetText reads the sheets back with pdftotext (poppler): every page
// carries its title block (sheet k of n, the chainage range, the units,
// the inputs' date), the scales and the safety caution; a name with markup
// and accents comes out as written, a character Windows-1252 lacks as "?".
func TestSheetText(t *testing.T) {
	t.Parallel()
	_, r := canal5km(t)
	name := `Canal <a&b> "Süd" – Π`
	long, cross := renderSheets(t, name, r, SI)
	lt := pdfTool(t, "pdftotext", long, "-layout")
	pages := strings.Split(lt, "\f")
	if len(pages) < 5 {
		t.Fatalf("pdftotext gave %d pages", len(pages))
	}
	for k := range 5 {
		pg := pages[k]
		for _, want := range []string{
			strconv.Itoa(k+1) + " of 5",
			"Chainage " + SI.Station(float64(1000*k)) + " to " + SI.Station(float64(1000*(k+1))),
			"Horizontal scale 1:3000", "Vertical scale 1:", "Lengths and levels in metres", "2024-05-01", "canalstep 0.0.0-test",
			`Canal <a&b> "Süd" – ?`, "PRELIMINARY DESIGN AID, NOT FOR CONSTRUCTION", "drowning hazards",
			"Station", "Cut + / fill - (m)", "Long section",
		} {
			if !strings.Contains(pg, want) {
				t.Errorf("long section sheet %d lacks %q", k+1, want)
			}
		}
	}
	// The band's first column on sheet 2 is station 1+000.00 with the
	// plan's ground and invert there, to the centimetre.
	s := r.Stations[100]
	for _, want := range []string{"1+000.00", fixed(s.Ground, 2), fixed(s.Invert, 2)} {
		if !strings.Contains(pages[1], want) {
			t.Errorf("sheet 2 band lacks %q", want)
		}
	}
	// Every drop is labelled, numbered along the canal, on the sheet that
	// holds it (a drop on a boundary belongs to the sheet before).
	for k, d := range r.Drops {
		sh := int(math.Ceil(d.Chainage/1000)) - 1
		if want := "D" + strconv.Itoa(k+1) + " " + SI.Station(d.Chainage); !strings.Contains(pages[max(sh, 0)], want) {
			t.Errorf("sheet %d lacks the label %q", max(sh, 0)+1, want)
		}
	}
	ct := pdfTool(t, "pdftotext", cross, "-layout")
	for _, want := range []string{"Cross-sections", "drop D1, upstream side", "m²", "Catch points", "Horizontal scale 1:", "PRELIMINARY DESIGN AID"} {
		if !strings.Contains(ct, want) {
			t.Errorf("cross-sections lack %q", want)
		}
	}
	d := r.Drops[0]
	if want := SI.Station(d.Chainage) + ", drop D1"; !strings.Contains(ct, want) {
		t.Errorf("cross-sections lack %q", want)
	}
}

// TestSheetsDeterministic: rendering the same plan twice, the second time
// while other renderings run in parallel, gives byte-identical PDFs (the
// PDF date is fixed by SetPDFDate, never the clock).
func TestSheetsDeterministic(t *testing.T) {
	t.Parallel()
	p, r := canal5km(t)
	l1, c1 := renderSheets(t, p.Name, r, US)
	var wg sync.WaitGroup
	var l2, c2 []byte
	for k := range 3 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			l, c := renderSheets(t, p.Name, r, US)
			if k == 0 {
				l2, c2 = l, c
			}
		}()
	}
	wg.Wait()
	if !bytes.Equal(l1, l2) {
		t.Error("longsection.pdf differs between two renderings")
	}
	if !bytes.Equal(c1, c2) {
		t.Error("crosssections.pdf differs between two renderings")
	}
}

// TestWriteSheets: WriteSheets puts both files into the folder.
func TestWriteSheets(t *testing.T) {
	p, r := smallPlan(t)
	dir := t.TempDir()
	if err := WriteSheets(dirStager(dir), p.Name, r, SI, testImprint); err != nil {
		t.Fatal(err)
	}
	for _, f := range []string{LongSectionPDF, CrossSectionsPDF} {
		b, err := os.ReadFile(filepath.Join(dir, f))
		if err != nil {
			t.Fatal(err)
		}
		if pageObjects(t, b) < 1 {
			t.Errorf("%s has no page", f)
		}
	}
}

// TestLongSheetsFit: on every sheet every line lies within the plot's
// levels, at one vertical scale for all sheets no smaller than needed:
// the tallest sheet fills between 85 % ÷ 2.5 (the widest gap between
// round scales, 2 → 5) and 85 % of the plot's height.
func TestLongSheetsFit(t *testing.T) {
	_, r := canal5km(t)
	for _, u := range []Units{SI, US} {
		l, err := newLongSheets(NewLongSection("x", r, u), testImprint)
		if err != nil {
			t.Fatal(err)
		}
		tallest := 0.0
		for k := range l.n {
			lo, hi := l.levels(k)
			base, step := datum(lo, hi, l.window)
			if lo < base-1e-9 || hi > base+l.window+1e-9 {
				t.Errorf("%s sheet %d: levels %.3f–%.3f outside the plot %.3f–%.3f", u, k+1, lo, hi, base, base+l.window)
			}
			if r := base / step; math.Abs(r-math.Round(r)) > 1e-6 {
				t.Errorf("%s sheet %d: datum %.4f is not a multiple of the grid step %g", u, k+1, base, step)
			}
			tallest = math.Max(tallest, hi-lo)
		}
		if f := tallest / l.window; f > lsFill+1e-9 || f < lsFill/2.5-1e-9 {
			t.Errorf("%s: the tallest sheet fills %.2f of the plot", u, f)
		}
		if l.v > l.h {
			t.Errorf("%s: vertical scale 1:%g smaller than the horizontal 1:%g", u, float64(l.v), float64(l.h))
		}
	}
}

// TestSectionAreas checks the cut and fill the cross-sections shade
// against the planner's areas at every station, on the DEM cross-sections
// of the 5 km plan and on level ground: the planner integrates ground minus
// design exactly (planner/earthwork); the sheets' polygons are summed by
// the shoelace formula, an independent sum, so the two agree to rounding
// (tolerance 1e-9 m² plus 1e-9 relative).
func TestSectionAreas(t *testing.T) {
	t.Parallel()
	_, r5 := canal5km(t)
	_, rs := smallPlan(t)
	if r5.Record.Ground != "cross_sections" {
		t.Fatalf("5 km plan is not planned on cross-sections: %s", r5.Record.Ground)
	}
	for _, r := range []*planner.Result{r5, rs} {
		for i := range r.Stations {
			s := &r.Stations[i]
			x := newSection(s, r.Record.Template)
			if !x.finite {
				t.Fatalf("station %s: section not finite", s.Label)
			}
			for _, c := range []struct {
				what      string
				got, want float64
			}{{"cut", sumArea(x.cut), s.CutArea}, {"fill", sumArea(x.fill), s.FillArea}} {
				if d := math.Abs(c.got - c.want); d > 1e-9+1e-9*c.want {
					t.Errorf("%s, station %d: shaded %s %.9f m², planner %.9f m²", r.Record.Ground, i, c.what, c.got, c.want)
				}
			}
		}
	}
}

// TestRoundScale: the largest round scale at which a length fits.
func TestRoundScale(t *testing.T) {
	for _, c := range []struct {
		u    Units
		real float64 // display units
		room float64 // mm
		want drawScale
	}{
		{SI, 1000, 333.4, 5000}, // 1:2999.4 needed, not round: 1:5000
		{SI, 60, 110, 1000},     // 1:545 → 1:1000
		{SI, 60, 250, 250},      // 1:240 → 1:250
		{SI, 2, 100, 20},        // exactly 1:20
		{US, 3000, 254, 3600},   // exactly 1 in = 300 ft
		{US, 100, 110, 360},     // 1 in = 23.1 ft → 1 in = 30 ft (3 × 10), 1:360
		{US, 7, 50, 48},         // 1 in = 3.56 ft → 1 in = 4 ft
	} {
		want := c.want
		if got := roundScale(c.u, c.real, mm(c.room)); got != want {
			t.Errorf("%s %g in %g mm: 1:%g, want 1:%g", c.u, c.real, c.room, float64(got), float64(want))
		}
	}
	if got := (drawScale(3600)).words(US); got != "1 in = 300 ft (1:3600)" {
		t.Errorf("US words %q", got)
	}
	if got := (drawScale(2500)).words(SI); got != "1:2500" {
		t.Errorf("SI words %q", got)
	}
	// 1 km at 1:3000 is 333.33 mm (exact: 1e6 mm / 3000).
	if got := float64(sheetScale[SI].paper(SI, 1000) / mm(1)); math.Abs(got-1e6/3000) > 1e-9 {
		t.Errorf("1 km at 1:3000 drawn %.6f mm", got)
	}
}

// TestDatum: the window holds the data, the datum is a multiple of the
// step and the step is a round 1, 2 or 5 × 10ⁿ within 0.15 of the window.
func TestDatum(t *testing.T) {
	for _, c := range [][3]float64{{92.1, 100.6, 10.2}, {0, 0.5, 0.7}, {-3.3, -1.1, 3}, {1234.5, 1240.1, 6.6}, {17, 17, 1}} {
		lo, hi, w := c[0], c[1], c[2]
		base, step := datum(lo, hi, w)
		if lo < base-1e-9 || hi > base+w+1e-9 {
			t.Errorf("%v: window %.3f–%.3f", c, base, base+w)
		}
		if r := base / step; math.Abs(r-math.Round(r)) > 1e-6 {
			t.Errorf("%v: datum %g not a multiple of %g", c, base, step)
		}
		m := step / math.Pow10(int(math.Floor(math.Log10(step)+1e-9)))
		if step > 0.15*w+1e-12 || (math.Abs(m-1) > 1e-9 && math.Abs(m-2) > 1e-9 && math.Abs(m-5) > 1e-9) {
			t.Errorf("%v: step %g", c, step)
		}
	}
}

// TestPDFText: text goes to the PDF in Windows-1252 (the code page of
// vgpdf's fonts; byte values from the code page's table, Microsoft's
// cp1252, from memory for é, € and the en dash).
func TestPDFText(t *testing.T) {
	for _, c := range []struct{ in, want string }{
		{"abc 1+250.00", "abc 1+250.00"},
		{"é", "\xe9"}, {"m²", "m\xb2"}, {"€", "\x80"}, {"–", "\x96"},
		{"12\u2009500", "12 500"}, {"\u22121.5", "-1.5"},
		{"Π", "?"}, {"a\x1bb\x07", "a?b?"}, {"\u202e", "?"}, {"\u0085", "?"},
	} {
		if got := pdfText(c.in); got != c.want {
			t.Errorf("pdfText(%q) = %q, want %q", c.in, got, c.want)
		}
	}
}

// TestFitText: a text too long for its room is set smaller, in half
// points (so a process makes few font sizes), and then fits; a short text
// keeps its size; no size goes below 3 pt.
func TestFitText(t *testing.T) {
	for _, c := range []struct {
		txt  string
		room float64 // mm
	}{{"short", 50}, {CautionLine, 380}, {CautionLine, 200}, {strings.Repeat("x", 2000), 10}} {
		st := sheetText(7, 0, 0)
		w0 := st.Width(c.txt)
		fitText(&st, c.txt, mm(c.room))
		size := float64(st.Font.Size)
		switch {
		case w0 <= mm(c.room) && size != 7:
			t.Errorf("%.20q: fits at 7 pt but set at %g pt", c.txt, size)
		case size < 3 || math.Mod(size, 0.5) != 0:
			t.Errorf("%.20q: size %g pt", c.txt, size)
		case size > 3 && st.Width(c.txt) > mm(c.room):
			t.Errorf("%.20q: %g pt is %.1f mm wide in %g mm", c.txt, size, float64(st.Width(c.txt)/mm(1)), c.room)
		}
	}
}

// TestSheetsBadInput: a plan without stations and a long section with
// too many sheets are refused with an error, not a panic.
func TestSheetsBadInput(t *testing.T) {
	if err := RenderCrossSectionSheets(io.Discard, "x", &planner.Result{}, SI, testImprint); err == nil {
		t.Error("cross-sections of an empty plan: no error")
	}
	ls := LongSection{Name: "x", Chainage: []float64{0, 2e6}, Ground: []float64{1, 0}, Invert: []float64{0, -1}, Units: SI}
	if err := RenderLongSectionSheets(io.Discard, ls, testImprint); err == nil || !strings.Contains(err.Error(), "limit") {
		t.Errorf("2000 km long section: %v", err)
	}
	ls.Invert = []float64{0}
	if err := RenderLongSectionSheets(io.Discard, ls, testImprint); err == nil {
		t.Error("mismatched series: no error")
	}
	// Levels and chainages so large that a step adds nothing: the sheets
	// still come out (with no grid), in finite time.
	for _, big := range []float64{1e17, 1e300} {
		ls = LongSection{Name: "x", Chainage: []float64{big, big * (1 + 1e-15)}, Ground: []float64{big, big}, Invert: []float64{big, big / 2}, Units: SI}
		if err := RenderLongSectionSheets(io.Discard, ls, testImprint); err != nil && !strings.Contains(err.Error(), "limit") {
			t.Errorf("levels %g: %v", big, err)
		}
	}
}

// TestLongSheetsEdgeCases renders the sheets of hand-made long sections
// (invented numbers): nodata in the ground, drops too crowded to label
// (the sheet says how many are labelled), drops at both ends, flat ground,
// a line that starts and ends between sheet boundaries; each has
// ceil(c1/L) − floor(c0/L) pages (L = 1000 m).
func TestLongSheetsEdgeCases(t *testing.T) {
	t.Parallel()
	base := testSection(201, 2000)
	for _, c := range []struct {
		name string
		edit func(s *LongSection)
		text string // pdftotext must find this on the first page
	}{
		{"nodata in ground", func(s *LongSection) {
			s.Ground = append([]float64(nil), s.Ground...)
			for i := 50; i < 70; i++ {
				s.Ground[i] = math.NaN()
			}
		}, "no ground data"},
		{"crowded drops", func(s *LongSection) {
			s.Drops = nil
			for i := range 400 {
				c := 5 * float64(i)
				s.Drops = append(s.Drops, DropMark{Chainage: c, Label: stationLabel(c), UpstreamInvert: 390, DownstreamInvert: 389.5})
			}
		}, "1 in 2 labelled here"},
		{"drops at both ends", func(s *LongSection) {
			s.Drops = append(s.Drops, DropMark{Chainage: 0, Label: "0+000.00", UpstreamInvert: 400, DownstreamInvert: 399},
				DropMark{Chainage: 2000, Label: "2+000.00", UpstreamInvert: 380, DownstreamInvert: 379})
		}, "D1 0+000.00"}, // pdftotext prints runs of spaces as one
		{"flat", func(s *LongSection) {
			s.Ground = make([]float64, len(s.Chainage))
			s.Invert = make([]float64, len(s.Chainage))
			s.WaterSurface, s.TopOfBank, s.BaselineInvert, s.Drops = nil, nil, nil, nil
		}, "SHEET"},
		{"between boundaries", func(s *LongSection) {
			s.Chainage = append([]float64(nil), s.Chainage...)
			for i := range s.Chainage {
				s.Chainage[i] = 1234 + 1.1*s.Chainage[i]
			}
			s.Drops = nil
		}, "Chainage 1+234.00 to 2+000.00"},
	} {
		t.Run(c.name, func(t *testing.T) {
			s := base
			c.edit(&s)
			var b bytes.Buffer
			if err := RenderLongSectionSheets(&b, s, testImprint); err != nil {
				t.Fatal(err)
			}
			c0, c1 := s.Chainage[0], s.Chainage[len(s.Chainage)-1]
			if got, want := pageObjects(t, b.Bytes()), int(math.Ceil(c1/1000)-math.Floor(c0/1000)); got != want {
				t.Errorf("%d pages, want %d", got, want)
			}
			first := strings.Split(pdfTool(t, "pdftotext", b.Bytes(), "-layout"), "\f")[0]
			if !strings.Contains(first, c.text) {
				t.Errorf("first sheet lacks %q", c.text)
			}
		})
	}
}

// FuzzSheetName renders the sheets of a plan under an arbitrary name:
// no error, no panic, a PDF.
func FuzzSheetName(f *testing.F) {
	for _, s := range []string{"Main canal", "a\x1b[31mred\x07\r\x00b", "x\u202egnp.exe", "<script>alert(1)</script>&\"'", "\xff\xfe", strings.Repeat("long ", 100)} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, name string) {
		_, r := smallPlan(t)
		long, cross := renderSheets(t, name, r, SI)
		if pageObjects(t, long) != 1 || pageObjects(t, cross) < 1 {
			t.Errorf("name %q: wrong page counts", name)
		}
	})
}

// BenchmarkSheets5km renders both PDFs of the 5 km plan (5 sheets of long
// section, a cross-section at every drop and every 500 m).
func BenchmarkSheets5km(b *testing.B) {
	p, r := canal5km(b)
	long, cross := renderSheets(b, p.Name, r, SI)
	b.ReportAllocs()
	for b.Loop() {
		renderSheets(b, p.Name, r, SI)
	}
	b.ReportMetric(float64(len(long)+len(cross)), "bytes/set")
	b.ReportMetric(float64(pageObjects(b, long)+pageObjects(b, cross)), "pages")
}
