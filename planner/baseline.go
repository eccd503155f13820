package planner

import (
	"math"
	"sort"
)

// Baseline methods.
const (
	MethodEvenSpacing = "even_spacing"
	MethodByEye       = "by_eye"
)

// evenSpacing builds the classic hand method's profile: average ground
// slope from the end elevations, the steepest candidate grade (on ground
// flatter than that, the steepest candidate not steeper than the ground,
// else the flattest), the largest drop height, n = ceil((ground fall −
// grade·length)/height) drops at the stations nearest to equal fractions of
// the length.
func (q *prepared) evenSpacing() *Baseline {
	c, g := q.c, q.g
	n := len(c)
	length := c[n-1] - c[0]
	fall := g[0] - g[n-1]
	gi := len(q.grades) - 1
	for i, s := range q.grades { // sorted steepest first
		if s <= fall/length {
			gi = i
			break
		}
	}
	grade := q.grades[gi]
	h := q.heights[len(q.heights)-1]
	nd := int(math.Max(0, math.Ceil((fall-grade*length)/h-1e-9)))
	nd = min(nd, n) // no more drops than stations, whatever the ground says
	var drops []dropSpec
	for k := 1; k <= nd; k++ {
		target := c[0] + float64(k)*length/float64(nd+1)
		i := sort.SearchFloat64s(c, target)
		if i > 0 && (i == n || target-c[i-1] < c[i]-target) {
			i--
		}
		i = min(max(i, 1), n-2)
		if len(drops) > 0 && drops[len(drops)-1].station >= i {
			continue // stations too coarse for this many drops
		}
		drops = append(drops, dropSpec{station: i, height: h})
	}
	b := q.baselinePlan(MethodEvenSpacing, drops, gi)
	b.AverageGroundSlope, b.DropHeight = fall/length, h
	return b
}

// byEye builds the by-eye method of drafting a long section: run the bed
// at the steepest candidate grade from the start invert and, walking
// downstream, put in a drop wherever the design water surface (normal
// depth) stands more than Design.ByEyeRise above the ground plus the
// command margin there, and a drop may stand there (not at a control
// station, not within the minimum reach of the start, at least the last
// drop's spacing from it, and leaving this drop's spacing before the end).
// Its height is the largest allowed height that, looking ahead over the
// stretch before the next drop could stand (the drop's spacing), keeps the
// cut within the maximum cut depth and, where a command margin is asked,
// the water surface at or above the ground plus the margin; where no height
// does, no drop there. It ignores an end invert.
func (q *prepared) byEye() *Baseline {
	c, g := q.c, q.g
	n := len(c)
	d := &q.d
	grade, y := q.grades[0], q.depth[0]
	var drops []dropSpec
	z, start := q.z0, 0              // bed line: z at station start
	lastC, lastH := math.Inf(-1), -1 // last drop's chainage and height index
	for i := 1; i <= n-2; i++ {
		bed := z - grade*(c[i]-c[start])
		ground := g[i]
		if m := q.margin[i]; !math.IsNaN(m) {
			ground += m
		}
		excess := bed + y - ground
		if excess <= d.ByEyeRise || !q.dropAllowed(i) {
			continue
		}
		if lastH >= 0 && c[i]-lastC < q.spacing[lastH]-1e-9 {
			continue
		}
		pick := -1
		for h := len(q.heights) - 1; h >= 0 && pick < 0; h-- { // the largest that holds over the look-ahead
			if c[n-1]-c[i] < q.spacing[h]-1e-9 {
				continue
			}
			ok := true
			for k := i; k < n && c[k]-c[i] <= q.spacing[h]+1e-9 && ok; k++ {
				b := bed - q.heights[h] - grade*(c[k]-c[i])
				ok = g[k]-b <= d.MaxCutDepth+1e-9
				if m := q.margin[k]; !math.IsNaN(m) {
					ok = ok && b+y >= g[k]+m-1e-9
				}
			}
			if ok {
				pick = h
			}
		}
		if pick < 0 {
			continue
		}
		drops = append(drops, dropSpec{station: i, height: q.heights[pick]})
		z, start = bed-q.heights[pick], i
		lastC, lastH = c[i], pick
	}
	b := q.baselinePlan(MethodByEye, drops, 0)
	b.Rise = d.ByEyeRise
	b.AverageGroundSlope = (g[0] - g[n-1]) / (c[n-1] - c[0])
	b.DropHeight = q.heights[len(q.heights)-1]
	return b
}

// baselinePlan evaluates a baseline profile at one grade and checks it.
func (q *prepared) baselinePlan(method string, drops []dropSpec, gi int) *Baseline {
	grades := make([]int, len(drops)+1)
	for i := range grades {
		grades[i] = gi
	}
	pl := q.evaluate(drops, grades)
	q.hydraulics(pl, drops, grades)
	b := &Baseline{Plan: *pl, Method: method, Grade: q.grades[gi]}
	b.Violations = q.violations(pl, drops)
	b.Feasible = len(b.Violations) == 0
	return b
}

// violations lists the constraints a profile breaks, gathered into ranges:
// the stations that break one constraint (one kind and limit) become one
// Violation from the first to the last of them, with the worst value.
func (q *prepared) violations(pl *Plan, drops []dropSpec) []Violation {
	c, g := q.c, q.g
	n := len(c)
	d := &q.d
	vs := newViolationSet(c)
	half := d.Step / 2
	for i := 0; i < n; i++ {
		st := &pl.Stations[i]
		up, down := st.Invert, st.InvertDown
		if cut := g[i] - math.Min(up, down); cut > d.MaxCutDepth+1e-9 {
			vs.add(KindMaxCut, i, d.MaxCutDepth, cut, larger)
		}
		if fill := math.Max(up, down) - g[i]; fill > d.MaxFillHeight+1e-9 {
			vs.add(KindMaxFill, i, d.MaxFillHeight, fill, larger)
		}
		if zf, ok := q.fixedAt[i]; ok && (math.Abs(up-zf) > half || math.Abs(down-zf) > half) {
			vs.add(KindFixedInvert, i, zf, up, larger)
		}
		// Water levels: the design (normal-depth) water surface of the reach
		// upstream, which is what the optimiser's bounds hold.
		ws := up + q.depth[q.gradeIndex(st.Grade)]
		if wl, ok := q.minWLAt[i]; ok && ws < wl-1e-9 {
			vs.add(q.wlKind[i], i, wl, ws, smaller)
		}
		if m := q.margin[i]; !math.IsNaN(m) && ws < g[i]+m-1e-9 {
			vs.add(KindCommand, i, m, ws-g[i], smaller)
		}
	}
	if d.EndInvert != nil && math.Abs(pl.Stations[n-1].Invert-*d.EndInvert) > half {
		vs.add(KindEndInvert, n-1, *d.EndInvert, pl.Stations[n-1].Invert, larger)
	}
	prev := -1
	for x, dr := range drops {
		if !q.dropAllowed(dr.station) {
			vs.add(KindDropPosition, dr.station, 0, 0, larger)
		}
		if prev >= 0 {
			hi := q.heightIndex(drops[x-1].height)
			if gap := c[dr.station] - c[prev]; gap < q.spacing[hi]-1e-9 {
				vs.add(KindDropSpacing, dr.station, q.spacing[hi], gap, smaller)
			}
		}
		prev = dr.station
	}
	if prev >= 0 {
		hi := q.heightIndex(drops[len(drops)-1].height)
		if gap := c[n-1] - c[prev]; gap < q.spacing[hi]-1e-9 {
			vs.add(KindDropSpacing, n-1, q.spacing[hi], gap, smaller)
		}
	}
	return vs.list()
}

func (q *prepared) heightIndex(h float64) int {
	for i, x := range q.heights {
		if x == h {
			return i
		}
	}
	return len(q.heights) - 1
}

func (q *prepared) gradeIndex(s float64) int {
	for i, x := range q.grades {
		if x == s {
			return i
		}
	}
	return 0
}
