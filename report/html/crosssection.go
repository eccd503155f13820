package html

import (
	"fmt"
	"math"
	"sort"
	"strconv"

	"canalstep/planner"
	"canalstep/planner/earthwork"
	"canalstep/report/units"
)

// sectionInterval is the interval of the regular cross-sections, besides
// one at every drop (common practice, no source): 500 m, or 1500 ft (fifteen
// 100-ft stations).
var sectionInterval = [2]float64{500, 1500}

// Layout of one cross-section figure, in viewBox units.
const (
	xsWidth  = 360.0
	xsLeft   = 46.0
	xsRight  = 8.0
	xsTop    = 8.0
	xsHeight = 150.0
	xsBottom = 30.0
)

// crossView is the set of cross-sections at one scale.
type crossView struct {
	Scale   string
	Figures []figure
}

// xsPoint is a point of a cross-section: offset (m, negative left looking
// downstream) and level (m).
type xsPoint struct{ a, z float64 }

// xsSection is one station's section: the design line between the catch
// points, the ground across the figure, and the cut and fill regions.
type xsSection struct {
	design     []xsPoint
	ground     func(a float64) float64
	groundPts  []float64 // ground breakpoints (offsets, m)
	cut, fill  [][]xsPoint
	water      [2]xsPoint
	bed, bank  float64
	catchL     earthwork.Catch
	catchR     earthwork.Catch
	halfWidthM float64 // outermost catch or bank edge, m
}

// newXSSection builds the section of station s under template t (its bank
// height the station's).
func newXSSection(s *planner.StationResult, t earthwork.Template) xsSection {
	t.BankHeight = s.BankHeight
	z, h := s.Invert, s.BankHeight
	x1 := t.BedWidth / 2
	x2 := x1 + t.SideSlope*h
	x3 := x2 + t.BankTopWidth
	x := xsSection{bed: z, bank: z + h, catchL: s.CatchLeft, catchR: s.CatchRight}
	x.design = []xsPoint{{s.CatchLeft.Offset, s.CatchLeft.Level}, {-x3, z + h}, {-x2, z + h}, {-x1, z}, {x1, z},
		{x2, z + h}, {x3, z + h}, {s.CatchRight.Offset, s.CatchRight.Level}}
	if cs := s.Cross; cs != nil && len(cs.Offsets) >= 2 && len(cs.Offsets) == len(cs.Levels) {
		offs, lv := cs.Offsets, cs.Levels
		x.groundPts = offs
		x.ground = func(a float64) float64 {
			switch {
			case a <= offs[0]:
				return lv[0]
			case a >= offs[len(offs)-1]:
				return lv[len(lv)-1]
			}
			i := sort.SearchFloat64s(offs, a)
			if offs[i] == a {
				return lv[i]
			}
			t := (a - offs[i-1]) / (offs[i] - offs[i-1])
			return lv[i-1] + t*(lv[i]-lv[i-1])
		}
	} else {
		g := s.Ground
		x.ground = func(float64) float64 { return g }
	}
	y := math.Max(0, s.WaterSurface-s.Invert)
	w := x1 + t.SideSlope*math.Min(y, h)
	x.water = [2]xsPoint{{-w, z + y}, {w, z + y}}
	x.halfWidthM = math.Max(x3, math.Max(-s.CatchLeft.Offset, s.CatchRight.Offset))
	x.cut, x.fill = x.regions()
	return x
}

// designAt is the design line's level at offset a (m), between the catch
// points.
func (x *xsSection) designAt(a float64) float64 {
	d := x.design
	for i := 1; i < len(d); i++ {
		if a <= d[i].a || i == len(d)-1 {
			p, q := d[i-1], d[i]
			if q.a == p.a {
				return q.z
			}
			t := (a - p.a) / (q.a - p.a)
			return p.z + t*(q.z-p.z)
		}
	}
	return d[len(d)-1].z
}

// regions splits the area between the ground and the design line, from
// catch point to catch point, into cut (ground above the design line) and
// fill (below) polygons: ground − design is linear between the breakpoints
// of either line and is split where it changes sign.
func (x *xsSection) regions() (cut, fill [][]xsPoint) {
	l, r := x.design[0].a, x.design[len(x.design)-1].a
	if !(r > l) {
		return nil, nil
	}
	var br []float64
	for _, p := range x.design {
		br = append(br, p.a)
	}
	for _, a := range x.groundPts {
		if a > l && a < r {
			br = append(br, a)
		}
	}
	sort.Float64s(br)
	diff := func(a float64) float64 { return x.ground(a) - x.designAt(a) }
	var pts []float64 // breakpoints with the sign changes inserted
	for i, a := range br {
		if i > 0 && a <= br[i-1] {
			continue
		}
		if len(pts) > 0 {
			p := pts[len(pts)-1]
			dp, dq := diff(p), diff(a)
			if dp*dq < 0 {
				pts = append(pts, p+(a-p)*dp/(dp-dq))
			}
		}
		pts = append(pts, a)
	}
	// Runs of one sign between consecutive points become one polygon each.
	sign := func(i int) int { // of the piece pts[i]..pts[i+1]
		m := diff((pts[i] + pts[i+1]) / 2)
		switch {
		case m > 1e-12:
			return 1
		case m < -1e-12:
			return -1
		}
		return 0
	}
	for i := 0; i+1 < len(pts); {
		sg := sign(i)
		j := i
		for j+1 < len(pts) && sign(j) == sg {
			j++
		}
		if sg != 0 {
			var poly []xsPoint
			for k := i; k <= j; k++ {
				poly = append(poly, xsPoint{pts[k], x.ground(pts[k])})
			}
			for k := j; k >= i; k-- {
				poly = append(poly, xsPoint{pts[k], x.designAt(pts[k])})
			}
			if sg > 0 {
				cut = append(cut, poly)
			} else {
				fill = append(fill, poly)
			}
		}
		i = j
	}
	return cut, fill
}

// polygonArea returns the area (m²) of a simple polygon by the shoelace
// formula.
func polygonArea(p []xsPoint) float64 {
	s := 0.0
	for i := range p {
		q := p[(i+1)%len(p)]
		s += p[i].a*q.z - q.a*p[i].z
	}
	return math.Abs(s) / 2
}

// levelRange returns the lowest and highest level the figure shows within
// ±hw (m) of the centre line.
func (x *xsSection) levelRange(hw float64) (lo, hi float64) {
	lo, hi = x.bed, x.bank
	for _, p := range x.design {
		lo, hi = math.Min(lo, p.z), math.Max(hi, p.z)
	}
	for _, a := range append([]float64{-hw, 0, hw}, x.groundPts...) {
		if math.Abs(a) <= hw {
			g := x.ground(a)
			lo, hi = math.Min(lo, g), math.Max(hi, g)
		}
	}
	return lo, hi
}

// crossSections draws a cross-section at every drop (its upstream side,
// where the plan's areas are taken) and at the station nearest every
// multiple of the section interval, all at one scale.
func crossSections(res *planner.Result, u units.System) crossView {
	st := res.Stations
	var v crossView
	if len(st) == 0 {
		return v
	}
	pick := map[int]string{}
	for k, d := range res.Drops {
		pick[d.Station] = "drop " + strconv.Itoa(k+1) + ", upstream side"
	}
	step := u.ToSI(units.Length, sectionInterval[u])
	c0, c1 := st[0].Chainage, st[len(st)-1].Chainage
	for _, c := range ticks(c0, c1, step) {
		i := sort.Search(len(st), func(j int) bool { return st[j].Chainage >= c })
		if i > 0 && (i == len(st) || c-st[i-1].Chainage < st[i].Chainage-c) {
			i--
		}
		if _, ok := pick[i]; !ok {
			pick[i] = ""
		}
	}
	idx := make([]int, 0, len(pick))
	for i := range pick {
		idx = append(idx, i)
	}
	sort.Ints(idx)
	secs := make([]xsSection, len(idx))
	hw := 0.0
	for k, i := range idx {
		secs[k] = newXSSection(&st[i], res.Record.Template)
		hw = math.Max(hw, secs[k].halfWidthM)
	}
	hw *= 1.1
	pw := xsWidth - xsLeft - xsRight
	sx := pw / (2 * hw)
	tallest := 0.5
	for k := range secs {
		lo, hi := secs[k].levelRange(hw)
		tallest = math.Max(tallest, hi-lo)
	}
	ex := math.Max(niceBelow(0.9*xsHeight/(tallest*sx)), 1)
	if tallest*sx*ex > xsHeight {
		ex = niceBelow(0.9 * xsHeight / (tallest * sx))
	}
	L := u.Symbol(units.Length)
	v.Scale = fmt.Sprintf("Every cross-section at one scale: %s either side of the centre line, vertical exaggeration ×%s; looking downstream, left to the left. Sections at every drop and every %s %s.",
		fixed(u.FromSI(units.Length, hw), 1)+" "+L, strconv.FormatFloat(ex, 'f', -1, 64), trimNum(sectionInterval[u], 1), L)
	for k, i := range idx {
		v.Figures = append(v.Figures, drawSection(&st[i], &secs[k], pick[i], hw, sx, ex, u))
	}
	return v
}

func drawSection(s *planner.StationResult, x *xsSection, what string, hw, sx, ex float64, u units.System) figure {
	n := numbers{u}
	sy := sx * ex
	lo, hi := x.levelRange(hw)
	zb := (lo+hi)/2 - xsHeight/(2*sy)
	X := axis{-hw, xsLeft, sx}
	Y := axis{zb, xsTop + xsHeight, -sy}
	P := func(p xsPoint) pt { return pt{X.at(p.a), Y.at(p.z)} }
	title := n.station(s.Chainage)
	if what != "" {
		title += ", " + what
	}
	sv := newSVG(xsWidth, xsTop+xsHeight+xsBottom, "Cross-section at "+title)
	pw := xsWidth - xsLeft - xsRight
	sv.rect("frame", xsLeft, xsTop, pw, xsHeight)
	zu0, zu1 := u.FromSI(units.Length, zb), u.FromSI(units.Length, zb+xsHeight/sy)
	zs := niceStep((zu1 - zu0) / 4)
	for _, t := range ticks(zu0, zu1, zs) {
		y := Y.at(u.ToSI(units.Length, t))
		sv.line("grid", xsLeft, y, xsLeft+pw, y)
		sv.text("tick", "end", xsLeft-3, y+3.5, trimNum(t, zs))
	}
	hu := u.FromSI(units.Length, hw)
	as := niceStep(2 * hu / 6)
	for _, t := range ticks(-hu, hu, as) {
		xx := X.at(u.ToSI(units.Length, t))
		sv.line("grid", xx, xsTop, xx, xsTop+xsHeight)
		sv.text("tick", "middle", xx, xsTop+xsHeight+12, trimNum(t, as))
	}
	sv.text("tick", "middle", xsLeft+pw/2, xsTop+xsHeight+25, "offset ("+u.Symbol(units.Length)+"), left − / right +")
	for _, p := range x.cut {
		pts := make([]pt, len(p))
		for i, q := range p {
			pts[i] = P(q)
		}
		sv.polygon("cutarea", pts)
	}
	for _, p := range x.fill {
		pts := make([]pt, len(p))
		for i, q := range p {
			pts[i] = P(q)
		}
		sv.polygon("fillarea", pts)
	}
	// Water, design line, ground, catch points.
	b := x.design[4].a
	if w := x.water; w[1].z > x.bed {
		sv.polygon("waterarea", []pt{P(w[0]), P(w[1]), P(xsPoint{b, x.bed}), P(xsPoint{-b, x.bed})})
		sv.path("water", []pt{P(w[0]), P(w[1])})
	}
	var g []pt
	g = append(g, P(xsPoint{-hw, x.ground(-hw)}))
	for _, a := range x.groundPts {
		if math.Abs(a) < hw {
			g = append(g, P(xsPoint{a, x.ground(a)}))
		}
	}
	g = append(g, P(xsPoint{hw, x.ground(hw)}))
	sv.path("ground", g)
	d := make([]pt, len(x.design))
	for i, p := range x.design {
		d[i] = P(p)
	}
	sv.path("design", d)
	for _, c := range []earthwork.Catch{x.catchL, x.catchR} {
		cls := "catch"
		if !c.Found {
			cls = "catchx"
		}
		p := P(xsPoint{c.Offset, c.Level})
		sv.circle(cls, p.x, p.y, 3)
	}
	A := func(v float64) string { return n.q(units.Area, v, 2) }
	ground := "ground: the DEM cross-section"
	if s.Cross == nil {
		ground = "ground taken level across the section"
	}
	notes := []string{
		fmt.Sprintf("Bed %s, water %s, top of bank %s", n.level(s.Invert), n.level(s.WaterSurface), n.level(s.TopOfBank)),
		fmt.Sprintf("Cut %s (brown), fill %s (green); %s", A(s.CutArea), A(s.FillArea), ground),
		fmt.Sprintf("Catch points %s left, %s right%s", n.length(-x.catchL.Offset), n.length(x.catchR.Offset), notFound(x.catchL, x.catchR)),
	}
	return figure{SVG: sv.html(), Caption: title, Notes: notes}
}

func notFound(l, r earthwork.Catch) string {
	switch {
	case !l.Found && !r.Found:
		return " (both beyond the sampled section: open circles)"
	case !l.Found:
		return " (left beyond the sampled section: open circle)"
	case !r.Found:
		return " (right beyond the sampled section: open circle)"
	}
	return ""
}
