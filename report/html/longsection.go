package html

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"canalstep/planner"
	"canalstep/report/units"
)

// Sheets of the long section, in each unit system: the length of
// alignment one sheet shows (at one horizontal scale on every sheet) and
// the interval of the data band's columns and vertical grid lines (common
// practice, no source: a kilometre per sheet, a column every 100 m; in US
// units 3000 ft and 300 ft, thirty and three 100-ft stations).
var (
	sheetLength  = [2]float64{1000, 3000} // SI m, US ft
	bandInterval = [2]float64{100, 300}
)

// Layout of a long-section sheet, in viewBox units (CSS pixels at full
// width).
const (
	lsWidth      = 1100.0
	lsLeft       = 112.0 // row labels and elevation labels
	lsRight      = 18.0
	lsLabelTop   = 6.0
	lsLabelBot   = 92.0 // drop labels stand in [lsLabelTop, lsLabelBot]
	lsPlotTop    = 106.0
	lsPlotHeight = 300.0
	lsBandRow    = 18.0
	lsBandRows   = 5
	lsLegendRow  = 22.0
	lsSlot       = 13.0 // width a vertical drop label takes
	lsMaxShift   = 3    // slots a label may move aside before it is left out
)

func lsPlotWidth() float64  { return lsWidth - lsLeft - lsRight }
func lsPlotBottom() float64 { return lsPlotTop + lsPlotHeight }
func lsBandTop() float64    { return lsPlotBottom() + 10 }
func lsBandBottom() float64 { return lsBandTop() + lsBandRows*lsBandRow }
func lsHeight() float64     { return lsBandBottom() + 8 + 2*lsLegendRow }

// longView is the long section: its sheets and what they have in common.
type longView struct {
	Scale  string
	Notes  []string
	Sheets []figure
}

// lsPoint is one point of a long-section line: chainage and level, m.
type lsPoint struct{ c, z float64 }

// lsData is the long section in chainage and level (m).
type lsData struct {
	ground, bed, water, bank, base []lsPoint
	structures                     [][]lsPoint // crest, basin floor and end sill of each drop
	drops                          []lsDrop
	baseName                       string
	stations                       []planner.StationResult // for the data band (the plan's, or the ground only)
	plan                           bool
}

type lsDrop struct {
	n   int     // 1-based drop number
	c   float64 // chainage, m
	top float64 // top of the structure or bank upstream, m
}

// newLSData gathers the lines of the long section: the plan's when there
// is one, else the ground and the baseline alone.
func newLSData(res *planner.Result) lsData {
	var d lsData
	base := res.BestBaseline()
	d.baseName = "bed of the best feasible baseline"
	if base == nil {
		base = res.EvenSpacing
		if base != nil {
			d.baseName = "bed of the even-spacing baseline (breaks constraints)"
		}
	} else {
		d.baseName = "bed of the " + methodAdjective(base.Method) + " baseline (the best feasible one)"
	}
	st := res.Stations
	d.plan = len(st) > 0
	if !d.plan && base != nil {
		st = base.Stations
	}
	d.stations = st
	for i := range st {
		s := &st[i]
		d.ground = append(d.ground, lsPoint{s.Chainage, s.Ground})
		if !d.plan {
			continue
		}
		d.bed = append(d.bed, lsPoint{s.Chainage, s.Invert})
		d.water = append(d.water, lsPoint{s.Chainage, s.WaterSurface})
		d.bank = append(d.bank, lsPoint{s.Chainage, s.TopOfBank})
		if s.InvertDown != s.Invert && i+1 < len(st) {
			next := &st[i+1]
			d.bed = append(d.bed, lsPoint{s.Chainage, s.InvertDown})
			d.water = append(d.water, lsPoint{s.Chainage, s.InvertDown + next.Depth})
			d.bank = append(d.bank, lsPoint{s.Chainage, s.InvertDown + next.BankHeight})
		}
	}
	if base != nil && len(base.Stations) == len(d.ground) {
		for i := range base.Stations {
			s := &base.Stations[i]
			d.base = append(d.base, lsPoint{s.Chainage, s.Invert})
			if s.InvertDown != s.Invert {
				d.base = append(d.base, lsPoint{s.Chainage, s.InvertDown})
			}
		}
	} else {
		d.baseName = ""
	}
	if d.plan {
		for i, dr := range res.Drops {
			top := math.Max(dr.CrestLevel, st[dr.Station].TopOfBank)
			d.drops = append(d.drops, lsDrop{n: i + 1, c: dr.Chainage, top: top})
			if dr.BasinLength > 0 {
				end := dr.Chainage + dr.BasinLength
				d.structures = append(d.structures, []lsPoint{{dr.Chainage, dr.UpstreamInvert}, {dr.Chainage, dr.CrestLevel},
					{dr.Chainage, dr.BasinFloor}, {end, dr.BasinFloor}, {end, dr.BasinFloor + dr.EndSill}})
			}
		}
	}
	return d
}

// lines returns every line of the long section, for ranges.
func (d *lsData) lines() [][]lsPoint {
	out := [][]lsPoint{d.ground, d.bed, d.water, d.bank, d.base}
	return append(out, d.structures...)
}

// levelRange returns the lowest and highest level of the lines within
// [a, b] (m), taking the first point on either side of the range too.
func (d *lsData) levelRange(a, b float64) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, l := range d.lines() {
		i := sort.Search(len(l), func(k int) bool { return l[k].c >= a })
		for k := max(0, i-1); k < len(l); k++ {
			if !math.IsNaN(l[k].z) {
				lo, hi = math.Min(lo, l[k].z), math.Max(hi, l[k].z)
			}
			if l[k].c > b {
				break
			}
		}
	}
	return lo, hi
}

// longSection draws the long section in sheets of one horizontal scale and
// one vertical exaggeration.
func longSection(res *planner.Result, u units.System) longView {
	d := newLSData(res)
	var v longView
	if len(d.ground) < 2 {
		return v
	}
	c0, c1 := d.ground[0].c, d.ground[len(d.ground)-1].c
	sheetM := u.ToSI(units.Length, sheetLength[u])
	bandM := u.ToSI(units.Length, bandInterval[u])
	sx := lsPlotWidth() / sheetM // px per m along
	first := math.Floor(c0/sheetM+1e-9) * sheetM
	var sheets [][2]float64
	for a := first; a < c1-1e-6 || len(sheets) == 0; a += sheetM {
		sheets = append(sheets, [2]float64{a, math.Min(a+sheetM, c1)})
		if len(sheets) > 10000 {
			break
		}
	}
	// One vertical exaggeration for all sheets: the largest round value at
	// which the tallest sheet fills at most 85 % of the plot.
	tallest := 0.5 // m: a flat sheet does not blow up the exaggeration
	for _, s := range sheets {
		lo, hi := d.levelRange(s[0], s[1])
		tallest = math.Max(tallest, hi-lo)
	}
	ex := niceBelow(0.85 * lsPlotHeight / (tallest * sx))
	L := u.Symbol(units.Length)
	v.Scale = fmt.Sprintf("Horizontal: %s of alignment per sheet, grid and data band every %s. Vertical exaggeration ×%s (one vertical %s is drawn as long as %s horizontal). Levels in %s.",
		trimNum(sheetLength[u], 1)+" "+L, trimNum(bandInterval[u], 1)+" "+L, strconv.FormatFloat(ex, 'f', -1, 64), L, strconv.FormatFloat(ex, 'f', -1, 64)+" "+L, L)
	if !d.plan {
		v.Notes = append(v.Notes, "There is no feasible plan: the sheets show the ground and the baseline's bed only.")
	}
	for k, s := range sheets {
		f, shifted, left := d.sheet(k, len(sheets), s[0], s[1], sx, ex, bandM, u)
		if shifted > 0 {
			f.Notes = append(f.Notes, fmt.Sprintf("%s moved aside on a bent leader line where drops stand close.", counted(shifted, "drop label", "drop labels")))
		}
		if len(left) > 0 {
			f.Notes = append(f.Notes, fmt.Sprintf("No room for the label of %s %s on this sheet; see the drop sheets.", plural(len(left), "drop", "drops"), strings.Join(left, ", ")))
		}
		v.Sheets = append(v.Sheets, f)
	}
	return v
}

func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}

func counted(n int, one, many string) string { return strconv.Itoa(n) + " " + plural(n, one, many) }

// sheet draws one sheet, chainage a to b (m); it returns the figure, how
// many labels were moved aside and which drops' labels were left out.
func (d *lsData) sheet(k, of int, a, b, sx, ex, bandM float64, u units.System) (figure, int, []string) {
	n := numbers{u}
	W := lsWidth
	top, bot := lsPlotTop, lsPlotBottom()
	sy := sx * ex
	lo, hi := d.levelRange(a, b)
	if math.IsInf(lo, 0) {
		lo, hi = 0, 1
	}
	zb := (lo+hi)/2 - lsPlotHeight/(2*sy)
	X := axis{a, lsLeft, sx}
	Y := axis{zb, bot, -sy}
	xEnd := X.at(b)
	label := fmt.Sprintf("Long section, sheet %d of %d, %s to %s", k+1, of, n.station(a), n.station(b))
	s := newSVG(W, lsHeight(), label)
	clip := "ls" + strconv.Itoa(k+1)
	s.raw(`<defs><clipPath id="`).raw(clip).raw(`"><rect x="`).num(lsLeft).raw(`" y="`).num(top).raw(`" width="`).num(xEnd - lsLeft).raw(`" height="`).num(lsPlotHeight).raw(`"/></clipPath></defs>`)
	s.rect("frame", lsLeft, top, xEnd-lsLeft, lsPlotHeight)
	// Elevation grid, in the user's unit.
	zu0, zu1 := u.FromSI(units.Length, zb), u.FromSI(units.Length, zb+lsPlotHeight/sy)
	step := niceStep((zu1 - zu0) / 6)
	for _, t := range ticks(zu0, zu1, step) {
		y := Y.at(u.ToSI(units.Length, t))
		s.line("grid", lsLeft, y, xEnd, y)
		s.text("tick", "end", lsLeft-4, y+3.5, trimNum(t, step))
	}
	// Chainage grid at the band interval, through the band.
	cols := ticks(a, b, bandM)
	for _, c := range cols {
		x := X.at(c)
		s.line("grid", x, top, x, lsBandBottom())
	}
	// Lines, clipped to the plot.
	at := func(l []lsPoint) []pt {
		i := sort.Search(len(l), func(j int) bool { return l[j].c >= a })
		var out []pt
		for j := max(0, i-1); j < len(l); j++ {
			out = append(out, pt{X.at(l[j].c), Y.at(l[j].z)})
			if l[j].c > b {
				break
			}
		}
		return out
	}
	cp := `clip-path="url(#` + clip + `)"`
	s.pathD("ground", cp, at(d.ground))
	if d.base != nil {
		s.pathD("base", cp, at(d.base))
	}
	s.pathD("bank", cp, at(d.bank))
	s.pathD("water", cp, at(d.water))
	for _, st := range d.structures {
		if st[0].c >= a-1e-6 && st[0].c <= b+1e-6 {
			s.pathD("structure", cp, at(st))
		}
	}
	s.pathD("bed", cp, at(d.bed))
	// Drop labels beside their drops, on leader lines.
	var here []lsDrop
	for _, dr := range d.drops {
		if dr.c >= a-1e-6 && dr.c <= b+1e-6 && !(k > 0 && dr.c == a) {
			here = append(here, dr)
		}
	}
	xs := make([]float64, len(here))
	for i, dr := range here {
		xs[i] = X.at(dr.c)
	}
	pos := placeLabels(xs, lsSlot, lsLeft, xEnd+lsRight-2, lsMaxShift*lsSlot)
	shifted := 0
	var left []string
	for i, dr := range here {
		x, yTop := xs[i], math.Max(Y.at(dr.top)-3, top)
		s.line("tickmark", x, Y.at(dr.top), x, Y.at(dr.top)-6)
		if math.IsNaN(pos[i]) {
			left = append(left, strconv.Itoa(dr.n))
			continue
		}
		p := pos[i]
		if math.Abs(p-x) > 0.05 {
			shifted++
		}
		s.pathD("leader", "", []pt{{x, yTop}, {x, top - 2}, {p, lsLabelBot + 2}})
		s.vtext("droplabel", p+10, lsLabelBot, "D"+strconv.Itoa(dr.n)+" "+n.station(dr.c))
	}
	// Data band.
	d.band(s, X, cols, b, u)
	d.legend(s, u, sx)
	return figure{SVG: s.html(), Caption: label}, shifted, left
}

// band draws the data band under the plot: station, ground, invert, water
// surface and cut (+) or fill (−) at the columns' chainages (m).
func (d *lsData) band(s *svg, X axis, cols []float64, b float64, u units.System) {
	L := u.Symbol(units.Length)
	names := []string{"Station", "Ground (" + L + ")", "Invert (" + L + ")", "Water surface (" + L + ")", "Cut + / fill − (" + L + ")"}
	t := lsBandTop()
	xEnd := X.at(b)
	for r, name := range names {
		y := t + float64(r)*lsBandRow
		s.line("bandrule", 4, y, xEnd, y)
		s.text("bandhead", "start", 4, y+13, name)
	}
	s.line("bandrule", 4, lsBandBottom(), xEnd, lsBandBottom())
	for _, c := range cols {
		vals, ok := d.bandValues(c)
		if !ok {
			continue
		}
		x, anchor := X.at(c), "middle"
		switch {
		case x-lsLeft < 30:
			x, anchor = x+3, "start"
		case xEnd-x < 30:
			x, anchor = x-3, "end"
		}
		cells := []string{u.Station(c)}
		for i, v := range vals {
			if math.IsNaN(v) {
				cells = append(cells, "")
				continue
			}
			f := fixed(u.FromSI(units.Length, v), 3)
			if i == 3 && v > 0 {
				f = "+" + f
			}
			cells = append(cells, f)
		}
		for r, txt := range cells {
			s.text("bandval", anchor, x, t+float64(r)*lsBandRow+13, txt)
		}
	}
}

// bandValues interpolates ground, invert, water surface and cut depth
// (ground − invert; negative: fill) at chainage c (m) linearly between the
// stations on either side; the bed is straight between stations, so its
// value is exact. At a drop station the upstream side is shown. Without a
// plan only the ground is given.
func (d *lsData) bandValues(c float64) ([4]float64, bool) {
	nan := math.NaN()
	out := [4]float64{nan, nan, nan, nan}
	st := d.stations
	if len(st) == 0 || c < st[0].Chainage-1e-6 || c > st[len(st)-1].Chainage+1e-6 {
		return out, false
	}
	i := sort.Search(len(st), func(j int) bool { return st[j].Chainage >= c-1e-6 })
	if i == len(st) {
		i = len(st) - 1
	}
	s1 := &st[i]
	if math.Abs(s1.Chainage-c) <= 1e-6 || i == 0 {
		out[0] = s1.Ground
		if d.plan {
			out[1], out[2] = s1.Invert, s1.WaterSurface
		}
	} else {
		s0 := &st[i-1]
		t := (c - s0.Chainage) / (s1.Chainage - s0.Chainage)
		lerp := func(p, q float64) float64 { return p + t*(q-p) }
		out[0] = lerp(s0.Ground, s1.Ground)
		if d.plan {
			w0 := s0.WaterSurface
			if s0.InvertDown != s0.Invert {
				w0 = s0.InvertDown + s1.Depth
			}
			out[1], out[2] = lerp(s0.InvertDown, s1.Invert), lerp(w0, s1.WaterSurface)
		}
	}
	if d.plan {
		out[3] = out[0] - out[1]
	}
	return out, true
}

// legend draws the key and the scale bar under the band, outside the data.
func (d *lsData) legend(s *svg, u units.System, sx float64) {
	y := lsBandBottom() + 8 + lsLegendRow/2
	items := [][2]string{{"ground", "Ground (centre line)"}}
	if d.plan {
		items = append(items, [2]string{"bed", "Bed, with drop steps"}, [2]string{"structure", "Drop crest, basin floor, end sill"},
			[2]string{"water", "Design water surface"}, [2]string{"bank", "Top of bank"})
	}
	if d.baseName != "" {
		items = append(items, [2]string{"base", strings.ToUpper(d.baseName[:1]) + d.baseName[1:]})
	}
	x := 4.0
	row := 0
	for _, it := range items {
		w := 30 + 5.6*float64(len([]rune(it[1]))) + 16
		if x+w > lsWidth-200 && x > 4 {
			row++
			x = 4
		}
		yy := y + float64(row)*lsLegendRow
		s.line(it[0], x, yy, x+24, yy)
		s.text("legend", "start", x+30, yy+4, it[1])
		x += w
	}
	// Scale bar: one band interval.
	bar := bandInterval[u]
	w := u.ToSI(units.Length, bar) * sx
	x0 := lsWidth - lsRight - w
	s.line("scalebar", x0, y, x0+w, y)
	s.line("scalebar", x0, y-4, x0, y+4)
	s.line("scalebar", x0+w, y-4, x0+w, y+4)
	s.text("legend", "end", x0-6, y+4, "0")
	s.text("legend", "middle", x0+w/2, y-6, trimNum(bar, 1)+" "+u.Symbol(units.Length))
}

// placeLabels places labels of width slot at the anchors xs (increasing),
// within [lo, hi]: each label as near its anchor as the others allow,
// labels that crowd together spread evenly about their anchors' mean (the
// least-squares placement: adjacent crowds are pooled). Where a crowd
// would move a label more than maxShift from its anchor, or off the range,
// every other label of that crowd is left out (NaN) and the rest placed
// again, so that a dense run of drops is thinned evenly.
func placeLabels(xs []float64, slot, lo, hi, maxShift float64) []float64 {
	keep := make([]bool, len(xs))
	for i := range keep {
		keep[i] = true
	}
	for {
		pos, crowds := spread(xs, keep, slot, lo, hi)
		thinned := false
		for _, c := range crowds {
			bad := false
			for _, i := range c {
				p := pos[i]
				if math.Abs(p-xs[i]) > maxShift+1e-9 || p < lo-1e-9 || p > hi-slot+1e-9 {
					bad = true
				}
			}
			if !bad {
				continue
			}
			thinned = true
			if len(c) == 1 {
				keep[c[0]] = false
				continue
			}
			for k := 1; k < len(c); k += 2 {
				keep[c[k]] = false
			}
		}
		if !thinned {
			for i := range pos {
				if !keep[i] {
					pos[i] = math.NaN()
				}
			}
			return pos
		}
	}
}

// spread positions the kept labels: crowds of labels closer than slot are
// pooled and centred on their anchors' mean, then kept within
// [lo, hi − slot]. It returns the positions and the crowds (label indices,
// left to right) as pooled before the range was applied.
func spread(xs []float64, keep []bool, slot, lo, hi float64) ([]float64, [][]int) {
	type crowd struct {
		idx  []int
		sum  float64
		left float64
	}
	var cs []crowd
	for i, x := range xs {
		if !keep[i] {
			continue
		}
		cs = append(cs, crowd{idx: []int{i}, sum: x, left: x})
		// Pool backwards while the last two overlap.
		for len(cs) > 1 {
			p, q := &cs[len(cs)-2], &cs[len(cs)-1]
			if p.left+float64(len(p.idx))*slot <= q.left+1e-9 {
				break
			}
			p.idx = append(p.idx, q.idx...)
			p.sum += q.sum
			m := float64(len(p.idx))
			p.left = p.sum/m - (m-1)*slot/2
			cs = cs[:len(cs)-1]
		}
	}
	pos := make([]float64, len(xs))
	for i := range pos {
		pos[i] = math.NaN()
	}
	var order []int // kept labels, left to right
	crowds := make([][]int, len(cs))
	for k, c := range cs {
		crowds[k] = c.idx
		for j, i := range c.idx {
			pos[i] = c.left + float64(j)*slot
			order = append(order, i)
		}
	}
	// Keep within [lo, hi − slot] without overlapping: push right from
	// the left edge, then left from the right edge.
	for k, i := range order {
		least := lo
		if k > 0 {
			least = pos[order[k-1]] + slot
		}
		pos[i] = math.Max(pos[i], least)
	}
	for k := len(order) - 1; k >= 0; k-- {
		most := hi - slot
		if k+1 < len(order) {
			most = pos[order[k+1]] - slot
		}
		pos[order[k]] = math.Min(pos[order[k]], most)
	}
	return pos, crowds
}
