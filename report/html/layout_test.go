package html_test

import (
	"math"
	"math/rand/v2"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"canalstep/planner"
	"canalstep/report/html"
	"canalstep/report/units"
)

// TestPlaceLabels checks the label placement on exact cases: labels of
// width 13 with room keep their anchors; two that overlap spread evenly
// about their anchors' mean (anchors 100 and 105: mean 102.5, so 96 and
// 109); a crowd wider than the shift allowed loses its most displaced
// labels; labels stay within the bounds. Hand-computed, no source.
func TestPlaceLabels(t *testing.T) {
	nan := math.NaN()
	for _, c := range []struct {
		name     string
		xs       []float64
		lo, hi   float64
		maxShift float64
		want     []float64
	}{
		{"apart", []float64{100, 200, 300}, 0, 1000, 39, []float64{100, 200, 300}},
		{"pair", []float64{100, 105}, 0, 1000, 39, []float64{96, 109}},
		{"triple", []float64{100, 101, 102}, 0, 1000, 39, []float64{88, 101, 114}},
		{"left edge", []float64{0, 2}, 0, 1000, 39, []float64{0, 13}},
		{"right edge", []float64{995}, 0, 1000, 39, []float64{987}},
		// Seven labels on one anchor spread over 461 to 539, 39 from it at
		// the ends: beyond a 20-unit shift, so every other one goes and the
		// four left spread over 480.5 to 519.5 (shift 19.5).
		{"crowd", []float64{500, 500, 500, 500, 500, 500, 500}, 0, 1000, 20, []float64{480.5, nan, 493.5, nan, 506.5, nan, 519.5}},
		// Three labels at the left edge of a range 30 wide: pushed off it,
		// the middle one goes.
		{"narrow", []float64{0, 1, 2}, 0, 30, 39, []float64{0, nan, 13}},
	} {
		got := html.PlaceLabels(c.xs, 13, c.lo, c.hi, c.maxShift)
		if len(got) != len(c.want) {
			t.Fatalf("%s: %d positions, want %d", c.name, len(got), len(c.want))
		}
		for i := range got {
			if math.IsNaN(c.want[i]) != math.IsNaN(got[i]) || (!math.IsNaN(got[i]) && math.Abs(got[i]-c.want[i]) > 1e-9) {
				t.Errorf("%s: positions %v, want %v", c.name, got, c.want)
				break
			}
		}
	}
}

// TestPlaceLabelsProperty: on many random crowds, kept labels never
// overlap, stay within the bounds, stay within the shift of their anchor
// and keep their order.
func TestPlaceLabelsProperty(t *testing.T) {
	for seed := uint64(0); seed < 200; seed++ {
		r := rand.New(rand.NewPCG(seed, 1))
		xs := make([]float64, 1+r.IntN(40))
		x := 0.0
		for i := range xs {
			x += 22 * r.Float64() // gaps of 0 to 22, often less than a label
			xs[i] = x
		}
		pos := html.PlaceLabels(xs, 13, 0, x+13, 39)
		last := math.Inf(-1)
		for i, p := range pos {
			if math.IsNaN(p) {
				continue
			}
			if p < last+13-1e-9 || p < -1e-9 || p > x+1e-9 || math.Abs(p-xs[i]) > 39+1e-9 {
				t.Fatalf("seed %d: label %d at %.3f (anchor %.3f, previous %.3f)", seed, i, p, xs[i], last)
			}
			last = p
		}
	}
}

// TestGroupDropWarnings: warnings of the same kind, flow and wording but
// for their figures are listed once, the figure as its range; others stay
// apart. The warning texts are of the form the hydraulics checks write;
// the figures are invented for the check.
func TestGroupDropWarnings(t *testing.T) {
	w := func(flow float64, text string) planner.Warning {
		return planner.Warning{Kind: planner.WarnOutlet, Flow: flow, Text: text}
	}
	drowned := func(r string) string {
		return "drowned jump (tailwater " + r + " × the sequent depth): a submerged roller is a drowning hazard"
	}
	drops := []planner.DropResult{
		{Warnings: []planner.Warning{w(0.25, drowned("1.62")), w(0.5, drowned("1.33"))}},
		{Warnings: []planner.Warning{w(0.25, drowned("1.73"))}},
		{Warnings: []planner.Warning{w(0.25, drowned("1.37")), {Kind: planner.WarnDropDesign, Text: "crest narrower than the control width"}}},
	}
	texts, members := html.GroupDropWarnings(drops)
	want := []struct {
		text  string
		drops []int
	}{
		{"at 25 % of the design flow: " + drowned("1.37–1.73"), []int{0, 1, 2}},
		{"at 50 % of the design flow: " + drowned("1.33"), []int{0}},
		{"crest narrower than the control width", []int{2}},
	}
	if len(texts) != len(want) {
		t.Fatalf("%d groups %q, want %d", len(texts), texts, len(want))
	}
	for i, g := range want {
		if texts[i] != g.text || strconvInts(members[i]) != strconvInts(g.drops) {
			t.Errorf("group %d: %q drops %v, want %q drops %v", i, texts[i], members[i], g.text, g.drops)
		}
	}
}

func strconvInts(xs []int) string {
	var s []string
	for _, x := range xs {
		s = append(s, strconv.Itoa(x))
	}
	return strings.Join(s, ",")
}

// TestDenseDropLabels plans a canal whose drops stand closer than a label
// is wide at the sheet's scale (no minimum reach, 0.3 m drops on ground
// falling 3 %): the labels drawn keep a label's width apart and stay on the
// sheet, every drop is either labelled or named as left out, the sheet
// says which were left out, and they are thinned evenly (no long run of
// drops without a label). Demo-style synthetic ground.
func TestDenseDropLabels(t *testing.T) {
	c, g := make([]float64, 201), make([]float64, 201)
	for i := range c {
		c[i] = 5 * float64(i)
		g[i] = 100 - 0.03*c[i] + 0.3*math.Sin(c[i]/40)
	}
	st := planner.LevelProfile(c, g)
	d := design(st, "Spur offtake", 0)
	d.Offtakes, d.MinReach, d.DropHeights = nil, 0, []float64{0.3}
	res, err := planner.Optimize(planner.Problem{Stations: st, Design: d})
	if err != nil {
		t.Fatal(err)
	}
	f := fixture{result: res}
	doc := write(t, f.reportNamed(t, "Spur", units.SI))
	sheets := regexp.MustCompile(`(?s)<figure class="sheet">.*?</figure>`).FindAll(doc, -1)
	if len(sheets) != 1 {
		t.Fatalf("%d long-section sheets for 1000 m, want 1", len(sheets))
	}
	label := regexp.MustCompile(`<text class="droplabel" transform="translate\(([0-9.]+),[0-9.]+\) rotate\(-90\)">D([0-9]+) `)
	labels := label.FindAllSubmatch(sheets[0], -1)
	last := math.Inf(-1)
	for _, m := range labels {
		x, _ := strconv.ParseFloat(string(m[1]), 64)
		if x < last+13-0.15 { // positions are written to 0.1
			t.Errorf("label D%s at x = %.1f overlaps the one before at %.1f", m[2], x, last)
		}
		if x > 1100 {
			t.Errorf("label D%s at x = %.1f is off the sheet", m[2], x)
		}
		last = x
	}
	text := string(sheets[0])
	var out []int
	if m := regexp.MustCompile(`No room for the label of drops? ([0-9, ]+) on this sheet`).FindStringSubmatch(text); m != nil {
		for _, f := range strings.Split(m[1], ",") {
			k, _ := strconv.Atoi(strings.TrimSpace(f))
			out = append(out, k)
		}
	}
	left := len(out)
	if left == 0 {
		t.Error("no label was left out: the case is not dense enough to test the thinning")
	}
	if len(labels)+left != res.Totals.DropCount {
		t.Errorf("%d labels drawn and %d left out, for %d drops", len(labels), left, res.Totals.DropCount)
	}
	run, longest := 0, 0
	for k, d := range out {
		if k > 0 && d == out[k-1]+1 {
			run++
		} else {
			run = 1
		}
		longest = max(longest, run)
	}
	if longest > 2 {
		t.Errorf("%d drops in a row without a label: the thinning is not even (left out: %v)", longest, out)
	}
	t.Logf("%d drops: %d labels drawn, %d left out", res.Totals.DropCount, len(labels), left)
}
