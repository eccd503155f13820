package planner

import (
	"fmt"
	"math"

	"canalstep/planner/earthwork"
)

// bound reasons: which constraint set an elevation bound at a station.
const (
	whyMaxCut = iota
	whyMaxFill
	whyFixed
	whyMinWater
	whyEnd
	whyStart
	whyOfftake
	whyCommand
	whyCount
)

// whyKinds names each bound reason as a constraint kind.
var whyKinds = [whyCount]Kind{
	KindMaxCut, KindMaxFill, KindFixedInvert, KindMinWaterLevel, KindEndInvert, KindStartInvert, KindOfftake, KindCommand,
}

// core is the discretised problem the dynamic programme solves. Bed
// elevations are z(i, k, g) = z0 + k·step − grade[g]·(c[i] − c[0]): k is the
// index of the reach's bed line on the step grid, constant along a reach.
type core struct {
	c        []float64 // chainage (m)
	z0, step float64
	grades   []float64
	sec      []earthwork.Sections // per grade
	heights  []float64
	hSteps   []int
	dropCost []float64
	arrive   [][]int // [h][j]: first station a drop of height h at j lets the next drop sit at, -1: no drop there
	costs    earthwork.Costs
	volume   earthwork.VolumeMethod
	keep     float64 // 1 − shrinkage
	invKeep  float64 // 1/(1 − shrinkage)

	maxMemory    int64       // bytes the state arrays may take; 0: no limit
	zlo, zhi     [][]float64 // [g][i] bed elevation bounds (m)
	loWhy, hiWhy [][]uint8   // [g][i] reason of each bound
}

// solution is the optimiser's plan in grid terms.
type solution struct {
	cost   float64
	drops  []dropPick // in chainage order
	grades []int      // grade index of each reach (len(drops)+1)
	k      []int      // bed-line index of each reach
	states int64      // station states evaluated
}

type dropPick struct {
	station, height int
}

// slot holds drop candidates made at station j for the heights whose
// spacing frees the next drop at station a: for each target grade, the
// candidates that may still win, in rising bed-line order. They merge into
// the free states at a, where the next drop may sit.
type slot struct {
	j, a int
	ent  [][]entry // per target grade
}

// entry is one drop candidate: the best cost so far at the drop station
// plus the drop, minus the target line's running earthwork there.
type entry struct {
	v    float64
	k    int32 // target bed line
	code uint8 // height index × grades + grade of the reach upstream of the drop
}

// lines holds one grade's state arrays over its bed-line index range: line
// k is at index k − km.
type lines struct {
	km    int
	f     []float64 // free states: cost so far minus the running earthwork of the line
	p     []float64 // running earthwork of the line since it became feasible
	since []int32   // station where the line last entered the window
	// Cut and fill areas (m²) at the current and the previous station;
	// the two swap roles at every station.
	cut, fill, cutPrev, fillPrev []float64
	run                          earthwork.Runs
}

// pointRuns serves earthwork.Runs from a Sections that lacks it.
type pointRuns struct{ s earthwork.Sections }

func (r pointRuns) AreasRun(i int, base, step float64, k0 int, cut, fill []float64) {
	for x := range cut {
		cut[x], fill[x] = r.s.Areas(i, base+float64(k0+x)*step)
	}
}

func (r pointRuns) MidAreasRun(i int, base, step, rise float64, k0 int, cut, fill []float64) {
	for x := range cut {
		bed := base + float64(k0+x)*step
		cut[x], fill[x] = r.s.MidAreas(i, bed+rise, bed)
	}
}

func runsOf(s earthwork.Sections) earthwork.Runs {
	if r, ok := s.(earthwork.Runs); ok {
		return r
	}
	return pointRuns{s}
}

func ceilIdx(x float64) int  { return int(math.Ceil(x - 1e-7)) }
func floorIdx(x float64) int { return int(math.Floor(x + 1e-7)) }

// window returns the bed-line indices of grade g that satisfy the bounds at
// station i.
func (p *core) window(g, i int) (lo, hi int) {
	s := p.grades[g]
	d := p.c[i] - p.c[0]
	lo = ceilIdx((p.zlo[g][i] - p.z0 + s*d) / p.step)
	hi = floorIdx((p.zhi[g][i] - p.z0 + s*d) / p.step)
	return lo, hi
}

func (p *core) bed(g, i, k int) float64 {
	return p.z0 + float64(k)*p.step - p.grades[g]*(p.c[i]-p.c[0])
}

// earthwork is Costs.Earthwork with the shrinkage factors precomputed; it
// must agree with Costs.Earthwork (checked by the plan's cost test).
func (p *core) earthwork(cut, fill float64) float64 {
	c := &p.costs
	v := c.Cut*cut + c.Fill*fill
	if usable := cut * p.keep; usable > fill {
		return v + c.Waste*(cut-fill*p.invKeep)
	} else {
		return v + c.Borrow*(fill-usable)
	}
}

// phaseOffsets groups grades whose bed lines are in step at station i: for
// each grade, rep[g] is the first grade of its group and off[g] the index
// shift with k_g = k_rep + off[g] at equal bed elevation.
func (p *core) phaseOffsets(i int, rep, off []int) {
	d := p.c[i] - p.c[0]
	for g := range p.grades {
		rep[g], off[g] = g, 0
		for r := 0; r < g; r++ {
			if rep[r] != r {
				continue
			}
			m := (p.grades[g] - p.grades[r]) * d / p.step
			if mr := math.Round(m); math.Abs(m-mr) < 1e-6 {
				rep[g], off[g] = r, int(mr)
				break
			}
		}
	}
}

// windows returns the bed-line windows of every grade at every station
// (the start is fixed at k = 0) and each grade's index range over them.
func (p *core) windows() (wlo, whi [][]int, kmin, kmax []int) {
	n, G := len(p.c), len(p.grades)
	wlo, whi = make([][]int, G), make([][]int, G)
	kmin, kmax = make([]int, G), make([]int, G)
	for g := 0; g < G; g++ {
		wlo[g] = make([]int, n)
		whi[g] = make([]int, n)
		kmin[g], kmax[g] = math.MaxInt, math.MinInt
		for i := 0; i < n; i++ {
			lo, hi := p.window(g, i)
			if i == 0 { // the start is fixed at k = 0
				if lo <= 0 && 0 <= hi {
					lo, hi = 0, 0
				} else {
					lo, hi = 1, 0
				}
			}
			wlo[g][i], whi[g][i] = lo, hi
			if lo <= hi {
				kmin[g] = min(kmin[g], lo)
				kmax[g] = max(kmax[g], hi)
			}
		}
		if kmin[g] > kmax[g] {
			kmin[g], kmax[g] = 0, -1
		}
	}
	return wlo, whi, kmin, kmax
}

// footprint estimates the bytes solve allocates, before it allocates them:
// per grade and bed line the state arrays (six float64 and an int32); per
// state one decision byte; per station and grade the windows and decision
// offsets; the drop candidates in flight (at most every state of every
// slot that can be pending at once, 16 bytes each); and the scratch of the
// drop candidates. It returns the bytes and the number of states.
func (p *core) footprint(wlo, whi [][]int, kmin, kmax []int) (bytes, states int64) {
	n, G := len(p.c), len(p.grades)
	var span, widest int64
	perStation := make([]int64, n)
	for g := 0; g < G; g++ {
		m := int64(kmax[g] - kmin[g] + 1)
		span += m
		widest = max(widest, m)
		for i := 0; i < n; i++ {
			w := int64(max(0, whi[g][i]-wlo[g][i]+1))
			states += w
			perStation[i] += w
		}
	}
	// Slots pending at once: one per drop station and distinct arrival,
	// alive from the drop station to the arrival.
	live := make([]int32, n+1)
	for j := 0; j < n; j++ {
		for h := range p.arrive {
			a := p.arrive[h][j]
			if a < 0 {
				continue
			}
			seen := false
			for e := 0; e < h; e++ {
				seen = seen || p.arrive[e][j] == a
			}
			if !seen {
				live[j]++
				live[a]--
			}
		}
	}
	var maxLive, run, maxStation int64
	for i := 0; i < n; i++ {
		run += int64(live[i])
		maxLive = max(maxLive, run)
		maxStation = max(maxStation, perStation[i])
	}
	maxH := 0
	for _, h := range p.hSteps {
		maxH = max(maxH, h)
	}
	scratch := (int64(G)*widest + int64(maxH)) * 9 // drop candidate scratch (cost and grade)
	scratch += widest * 16                         // mid-section areas
	bytes = span*52 + states + int64(n)*int64(G)*24 + maxLive*maxStation*16 + scratch
	return bytes, states
}

// solve runs the dynamic programme. It returns the least-cost plan or an
// *InfeasibleError.
//
// The free state of bed line k of grade g at a station is the least cost
// of a profile that reaches it and may drop there. A drop candidate made at
// station j for line k of grade g waits in a slot until the station a where
// the next drop may sit, and joins the free state of line k there if it is
// cheaper and the line stayed inside the window from j to a. Candidates
// that cannot win are dropped at j (pruning of dominated states): the
// candidate for line k is stored relative to the line's running earthwork
// as v = cost + drop − p_j[k], exactly as it is compared at a with the free
// state f_a[k]; along one unbroken run of the line (since[k] ≤ j) f only
// falls (it is lowered by merges, and reset only when the line leaves the
// window, which restarts since[k] after j), so f_a[k] ≤ f_j[k]. A
// candidate with v ≥ f_j[k] therefore fails the merge at a whatever happens
// in between: it is a state at the same station, grade and bed line as the
// free state, no cheaper, and more constrained (it may not drop before a),
// so discarding it changes neither the optimum nor any decision byte.
func (p *core) solve() (*solution, error) {
	n, G, H := len(p.c), len(p.grades), len(p.heights)
	wlo, whi, kmin, kmax := p.windows()
	// Bound the work before allocating.
	need, states0 := p.footprint(wlo, whi, kmin, kmax)
	if p.maxMemory > 0 && need > p.maxMemory {
		return nil, &TooBigError{States: states0, Bytes: need, Limit: p.maxMemory}
	}
	HG := H * G
	if HG > 255 {
		return nil, fmt.Errorf("%w: %d drop heights × %d grades is too many; use at most 255 combinations", ErrInput, H, G)
	}
	inf := math.Inf(1)
	ls := make([]lines, G)
	widest := 0
	for g := 0; g < G; g++ {
		m := kmax[g] - kmin[g] + 1
		widest = max(widest, m)
		block := make([]float64, 6*m)
		L := &ls[g]
		L.km, L.since, L.run = kmin[g], make([]int32, m), runsOf(p.sec[g])
		L.f, L.p = block[0:m:m], block[m:2*m:2*m]
		L.cut, L.fill = block[2*m:3*m:3*m], block[3*m:4*m:4*m]
		L.cutPrev, L.fillPrev = block[4*m:5*m:5*m], block[5*m:]
		for x := range L.f {
			L.f[x] = inf
		}
	}
	maxH := 0
	for _, h := range p.hSteps {
		maxH = max(maxH, h)
	}
	midCut, midFill := make([]float64, widest), make([]float64, widest)
	// Decisions: one byte per state, 0 = no improving drop arrival here.
	decOff := make([]int, n*G+1)
	for i := 0; i < n; i++ {
		for g := 0; g < G; g++ {
			w := max(0, whi[g][i]-wlo[g][i]+1)
			decOff[i*G+g+1] = decOff[i*G+g] + w
		}
	}
	dec := make([]uint8, decOff[n*G])
	arrivals := make([][]int32, n) // drop station of each slot merged at a station
	pending := make([][]*slot, n)
	var free []*slot
	newSlot := func(j, a int) *slot {
		var s *slot
		if k := len(free); k > 0 {
			s, free = free[k-1], free[:k-1]
		} else {
			s = &slot{ent: make([][]entry, G)}
		}
		s.j, s.a = j, a
		for g := range s.ent {
			s.ent[g] = s.ent[g][:0]
		}
		return s
	}
	killMask := make([]uint8, n)
	var states int64

	// Station 0.
	for g := 0; g < G; g++ {
		if wlo[g][0] > whi[g][0] {
			continue
		}
		L := &ls[g]
		x := 0 - L.km
		L.f[x], L.p[x], L.since[x] = 0, 0, 0
		L.cut[x], L.fill[x] = p.sec[g].Areas(0, p.z0)
	}
	live := false
	for g := 0; g < G; g++ {
		live = live || wlo[g][0] <= whi[g][0]
		L := &ls[g]
		L.cut, L.cutPrev, L.fill, L.fillPrev = L.cutPrev, L.cut, L.fillPrev, L.fill
	}
	// conflicts collects every stretch where no profile survives; after one
	// the programme restarts from every bed line that meets the bounds, as
	// if the conflict were resolved, to find the stretches after it.
	var conflicts []Conflict
	reseed := false
	if !live {
		conflicts = append(conflicts, p.conflict(0, 0, killMaskStart(p)))
		reseed = true
	}

	rep := make([]int, G)
	off := make([]int, G)
	bCost := make([]float64, widest+maxH)
	bArg := make([]uint8, widest+maxH)
	var arrAt []int  // distinct arrival stations of the drops at a station
	var arrH [][]int // heights arriving at each
	pendingLive := 0
	lastLive := 0

	for i := 1; i < n; i++ {
		l := p.c[i] - p.c[i-1]
		di := p.c[i] - p.c[0]
		for g := 0; g < G; g++ {
			L := &ls[g]
			states += int64(max(0, whi[g][i]-wlo[g][i]+1))
			p.advance(L, g, i, l, di, wlo[g][i-1], whi[g][i-1], wlo[g][i], whi[g][i], killMask, midCut, midFill)
			L.cut, L.cutPrev, L.fill, L.fillPrev = L.cutPrev, L.cut, L.fillPrev, L.fill
		}
		// Drop arrivals: the next drop may sit here.
		for si, sl := range pending[i] {
			if (si+1)*HG > 255 {
				return nil, fmt.Errorf("%w: drops from %d stations with %d heights × %d grades free the next drop at chainage %.2f m; use fewer heights or grades", ErrInput, len(pending[i]), H, G, p.c[i])
			}
			arrivals[i] = append(arrivals[i], int32(sl.j))
			for g := 0; g < G; g++ {
				L := &ls[g]
				lo, hi := wlo[g][i], whi[g][i]
				f, sn := L.f, L.since
				dbase := decOff[i*G+g] - lo
				j := int32(sl.j)
				base := uint8(1 + si*HG)
				for _, e := range sl.ent[g] {
					k := int(e.k)
					if k < lo || k > hi {
						continue
					}
					if x := k - L.km; e.v < f[x] && sn[x] <= j {
						f[x] = e.v
						dec[dbase+k] = base + e.code
					}
				}
			}
			pendingLive--
			free = append(free, sl)
		}
		pending[i] = nil

		// Liveness. A station where no bed line meets the bounds stops
		// every path, including drops still in flight.
		open := false
		for g := 0; g < G && !open; g++ {
			open = wlo[g][i] <= whi[g][i]
		}
		if !open {
			for g := 0; g < G; g++ {
				killMask[i] |= 1<<p.loWhy[g][i] | 1<<p.hiWhy[g][i]
			}
			conflicts = append(conflicts, p.conflict(i, i, killMask))
			lastLive, reseed = i, true
			continue
		}
		if reseed { // restart after a conflict: every bed line here is a start
			for g := 0; g < G; g++ {
				L := &ls[g]
				for k := wlo[g][i]; k <= whi[g][i]; k++ {
					x := k - L.km
					L.f[x], L.p[x], L.since[x] = 0, 0, int32(i)
				}
			}
			reseed = false
		}
		any := false
		for g := 0; g < G && !any; g++ {
			L := &ls[g]
			for k := wlo[g][i]; k <= whi[g][i]; k++ {
				if L.f[k-L.km] < inf {
					any = true
					break
				}
			}
		}
		if any {
			lastLive = i
		} else if pendingLive == 0 {
			conflicts = append(conflicts, p.conflict(lastLive, i, killMask))
			lastLive, reseed = i, true
			continue
		}
		if !any || i == n-1 {
			continue
		}
		// Drop candidates at station i: the distinct arrivals, each with
		// the heights that arrive there in rising order.
		arrAt, arrH = arrAt[:0], arrH[:0]
		for h := 0; h < H; h++ {
			a := p.arrive[h][i]
			if a < 0 {
				continue
			}
			x := 0
			for x < len(arrAt) && arrAt[x] != a {
				x++
			}
			if x == len(arrAt) {
				arrAt = append(arrAt, a)
				if x < cap(arrH) {
					arrH = append(arrH, arrH[:x+1][x][:0])
				} else {
					arrH = append(arrH, nil)
				}
			}
			arrH[x] = append(arrH[x], h)
		}
		if len(arrAt) == 0 {
			continue
		}
		p.phaseOffsets(i, rep, off)
		for r := 0; r < G; r++ {
			if rep[r] != r {
				continue
			}
			// b[y]: the least free cost over the group's grades on the bed
			// line k = y + blo − off[g], and which grade holds it; padded
			// with maxH infinities so every drop's source index is inside.
			blo, bhi, members := math.MaxInt, math.MinInt, 0
			for g := 0; g < G; g++ {
				if rep[g] == r && wlo[g][i] <= whi[g][i] {
					blo = min(blo, wlo[g][i]-off[g])
					bhi = max(bhi, whi[g][i]-off[g])
					members++
				}
			}
			if blo > bhi {
				continue
			}
			m := bhi - blo + 1
			bCost, bArg = grow(bCost, m+maxH), growU8(bArg, m+maxH)
			b, barg := bCost, bArg
			uniform := -1 // the one grade of every b, or −1 (barg tells)
			if members == 1 && wlo[r][i] <= whi[r][i] {
				uniform = r
				L := &ls[r]
				x0 := wlo[r][i] - L.km
				f, pp := L.f[x0:x0+m], L.p[x0:x0+m]
				for y := range f {
					b[y] = f[y] + pp[y]
				}
				for y := m; y < len(b); y++ {
					b[y] = inf
				}
			} else {
				for y := range b {
					b[y] = inf
				}
				for g := 0; g < G; g++ {
					if rep[g] != r {
						continue
					}
					L := &ls[g]
					for k := wlo[g][i]; k <= whi[g][i]; k++ {
						x := k - L.km
						if v := L.f[x] + L.p[x]; v < b[k-off[g]-blo] {
							b[k-off[g]-blo], barg[k-off[g]-blo] = v, uint8(g)
						}
					}
				}
			}
			// The finite costs lie in b[ylo..yhi]: targets whose every
			// source is outside have no candidate.
			ylo, yhi := 0, m-1
			for ylo <= yhi && b[ylo] == inf {
				ylo++
			}
			for yhi >= ylo && b[yhi] == inf {
				yhi--
			}
			for ai, a := range arrAt {
				// One slot per (drop station, arrival) holds every target
				// grade and every height arriving there; find or make it.
				var sl *slot
				for _, q := range pending[a] {
					if q.j == i {
						sl = q
					}
				}
				fresh := sl == nil
				if fresh {
					sl = newSlot(i, a)
				}
				anyV := false
				for g := 0; g < G; g++ {
					if rep[g] != r || wlo[g][i] > whi[g][i] {
						continue
					}
					var finite bool
					sl.ent[g], finite = p.candidates(&ls[g], wlo[g][i], whi[g][i], off[g]+blo, b, ylo, yhi, barg, uniform, arrH[ai], sl.ent[g][:0])
					anyV = anyV || finite
				}
				if fresh {
					if anyV {
						pending[a] = append(pending[a], sl)
						pendingLive++
					} else {
						free = append(free, sl)
					}
				}
			}
		}
	}

	// Best end state.
	best, bg, bk := inf, -1, 0
	for g := 0; g < G; g++ {
		L := &ls[g]
		for k := wlo[g][n-1]; k <= whi[g][n-1]; k++ {
			x := k - L.km
			if v := L.f[x] + L.p[x]; v < best {
				best, bg, bk = v, g, k
			}
		}
	}
	if bg < 0 && (len(conflicts) == 0 || conflicts[len(conflicts)-1].station != n-1) {
		conflicts = append(conflicts, p.conflict(lastLive, n-1, killMask))
	}
	if len(conflicts) > 0 {
		return nil, &InfeasibleError{Conflicts: conflicts}
	}
	// Backtrack.
	sol := &solution{cost: best, states: states}
	t, g, k := n-1, bg, bk
	var revDrops []dropPick
	revGrades := []int{g}
	revK := []int{k}
	for t > 0 {
		code := dec[decOff[t*G+g]+k-wlo[g][t]]
		if code == 0 {
			t--
			continue
		}
		c := int(code) - 1
		j := int(arrivals[t][c/HG])
		h, gp := (c%HG)/G, c%G
		m := (p.grades[gp] - p.grades[g]) * (p.c[j] - p.c[0]) / p.step
		kp := k + p.hSteps[h] + int(math.Round(m))
		revDrops = append(revDrops, dropPick{station: j, height: h})
		t, g, k = j, gp, kp
		revGrades = append(revGrades, g)
		revK = append(revK, k)
	}
	if k != 0 {
		return nil, fmt.Errorf("planner: internal error: backtrack ended at bed line %d, not the start", k)
	}
	for x := len(revDrops) - 1; x >= 0; x-- {
		sol.drops = append(sol.drops, revDrops[x])
	}
	for x := len(revGrades) - 1; x >= 0; x-- {
		sol.grades = append(sol.grades, revGrades[x])
		sol.k = append(sol.k, revK[x])
	}
	return sol, nil
}

// advance carries grade g's lines L from station i−1 (window olo..ohi) to
// station i (window nlo..nhi), l metres on and di from the start: lines
// that leave the window die (their bound is noted in killMask), lines that
// enter start a new feasible run, lines in both windows add the segment's
// earthwork, and every line in the window gets its areas at i in L.cut and
// L.fill (L.cutPrev, L.fillPrev hold those at i−1).
func (p *core) advance(L *lines, g, i int, l, di float64, olo, ohi, nlo, nhi int, killMask []uint8, midCut, midFill []float64) {
	inf := math.Inf(1)
	km := L.km
	f, pp, sn := L.f, L.p, L.since
	if olo <= ohi {
		for k := olo; k <= min(ohi, nlo-1); k++ { // below the window
			if f[k-km] < inf {
				killMask[i] |= 1 << p.loWhy[g][i]
			}
			f[k-km] = inf
		}
		for k := max(olo, nlo, nhi+1); k <= ohi; k++ { // above it
			if f[k-km] < inf {
				killMask[i] |= 1 << p.hiWhy[g][i]
			}
			f[k-km] = inf
		}
	}
	if nlo > nhi {
		return
	}
	enter := func(lo, hi int) {
		for k := lo; k <= hi; k++ {
			x := k - km
			sn[x], pp[x], f[x] = int32(i), 0, inf
		}
	}
	a, bnd := max(nlo, olo), min(nhi, ohi)
	if olo > ohi || a > bnd {
		enter(nlo, nhi)
	} else {
		enter(nlo, a-1)
		enter(bnd+1, nhi)
	}
	s := p.grades[g]
	zb := p.z0 - s*di
	L.run.AreasRun(i, zb, p.step, nlo, L.cut[nlo-km:nhi-km+1], L.fill[nlo-km:nhi-km+1])
	if a > bnd {
		return
	}
	// Lines in the window at both stations add the segment's earthwork.
	x0, x1 := a-km, bnd-km+1
	pp = pp[x0:x1]
	c0, c1, f0, f1 := L.cutPrev[x0:x1], L.cut[x0:x1], L.fillPrev[x0:x1], L.fill[x0:x1]
	c1, f0, f1 = c1[:len(pp)], f0[:len(pp)], f1[:len(pp)]
	c0 = c0[:len(pp)]
	if p.volume == earthwork.AverageEndArea {
		hl := l / 2
		for x := range pp {
			pp[x] += p.earthwork(hl*(c0[x]+c1[x]), hl*(f0[x]+f1[x]))
		}
		return
	}
	mc, mf := midCut[:len(pp)], midFill[:len(pp)]
	L.run.MidAreasRun(i, zb, p.step, s*l, a, mc, mf)
	for x := range pp {
		pp[x] += p.earthwork(earthwork.PrismoidalVolume(l, c0[x], mc[x], c1[x]), earthwork.PrismoidalVolume(l, f0[x], mf[x], f1[x]))
	}
}

// candidates appends to out the drop candidates at station i into the
// lines L of one grade (window lo..hi) that may still win (see solve): for
// line k the least of b[k − shift + hSteps[h]] + dropCost[h] over the
// heights hs (in rising order, the first of equal costs), less the line's
// running earthwork, kept only below the line's free state. The grade of
// the reach upstream is uniform, or barg's where uniform < 0. finite
// reports whether any candidate, kept or not, has a finite cost: such a
// slot stays pending (as before pruning), which keeps the conflicts found
// for an infeasible problem as they were. Every finite b lies in
// b[ylo..yhi].
func (p *core) candidates(L *lines, lo, hi, shift int, b []float64, ylo, yhi int, barg []uint8, uniform int, hs []int, out []entry) (_ []entry, finite bool) {
	G := len(p.grades)
	// Line k reads b[k − shift + hSteps[h]]: keep the lines that read a
	// finite cost through some height.
	smin, smax := math.MaxInt, math.MinInt
	for _, h := range hs {
		smin, smax = min(smin, p.hSteps[h]), max(smax, p.hSteps[h])
	}
	lo, hi = max(lo, ylo+shift-smax), min(hi, yhi+shift-smin)
	if lo > hi {
		return out, false
	}
	x0 := lo - L.km
	nx := hi - lo + 1
	f, pp := L.f[x0:x0+nx], L.p[x0:x0+nx]
	n0 := len(out)
	// bs[q]: the costs b seen by line lo + x through height hs[q] at x.
	var bsA [3][]float64
	var dsA [3]float64
	bs, ds := bsA[:0], dsA[:0]
	if len(hs) > len(bsA) {
		bs, ds = make([][]float64, 0, len(hs)), make([]float64, 0, len(hs))
	}
	for _, h := range hs {
		y0 := lo - shift + p.hSteps[h]
		bs, ds = append(bs, b[y0:y0+nx]), append(ds, p.dropCost[h])
	}
	switch len(hs) {
	case 1:
		out = keep1(out, lo, f, pp, bs[0], ds[0])
	case 2:
		out = keep2(out, lo, f, pp, bs[0], bs[1], ds[0], ds[1])
	case 3:
		out = keep3(out, lo, f, pp, bs[0], bs[1], bs[2], ds[0], ds[1], ds[2])
	default:
		inf := math.Inf(1)
		for x := range f {
			v := inf
			for q := range bs {
				v = min(v, bs[q][x]+ds[q])
			}
			if r := v - pp[x]; r < f[x] {
				out = append(out, entry{v: r, k: int32(lo + x)})
			}
		}
	}
	// The height of each kept candidate: the first whose cost is the least.
	kept := out[n0:]
	for e := range kept {
		x := int(kept[e].k) - lo
		v, qv := math.Inf(1), 0
		for q := range bs {
			if t := bs[q][x] + ds[q]; t < v {
				v, qv = t, q
			}
		}
		g := uniform
		if g < 0 {
			g = int(barg[lo+x-shift+p.hSteps[hs[qv]]])
		}
		kept[e].code = uint8(hs[qv]*G + g)
	}
	if len(kept) > 0 {
		return out, true
	}
	// Nothing kept: is any candidate finite at all?
	for q := range bs {
		for _, v := range bs[q] {
			if v+ds[q] < math.Inf(1) {
				return out, true
			}
		}
	}
	return out, false
}

// keep1, keep2 and keep3 append the candidates r = min over heights of
// (b_h[x] + d_h) − pp[x] that lie below f[x], for one, two or three heights
// (code left 0).
func keep1(out []entry, lo int, f, pp, b0 []float64, d0 float64) []entry {
	pp, b0 = pp[:len(f)], b0[:len(f)]
	for x := range f {
		if r := b0[x] + d0 - pp[x]; r < f[x] {
			out = append(out, entry{v: r, k: int32(lo + x)})
		}
	}
	return out
}

func keep2(out []entry, lo int, f, pp, b0, b1 []float64, d0, d1 float64) []entry {
	pp, b0, b1 = pp[:len(f)], b0[:len(f)], b1[:len(f)]
	for x := range f {
		if r := min(b0[x]+d0, b1[x]+d1) - pp[x]; r < f[x] {
			out = append(out, entry{v: r, k: int32(lo + x)})
		}
	}
	return out
}

func keep3(out []entry, lo int, f, pp, b0, b1, b2 []float64, d0, d1, d2 float64) []entry {
	pp, b0, b1, b2 = pp[:len(f)], b0[:len(f)], b1[:len(f)], b2[:len(f)]
	for x := range f {
		if r := min(b0[x]+d0, b1[x]+d1, b2[x]+d2) - pp[x]; r < f[x] {
			out = append(out, entry{v: r, k: int32(lo + x)})
		}
	}
	return out
}

func grow(s []float64, n int) []float64 {
	if cap(s) < n {
		return make([]float64, n)
	}
	return s[:n]
}

func growU8(s []uint8, n int) []uint8 {
	if cap(s) < n {
		return make([]uint8, n)
	}
	return s[:n]
}

func killMaskStart(p *core) []uint8 {
	m := make([]uint8, len(p.c))
	for g := range p.grades {
		m[0] |= 1<<p.loWhy[g][0] | 1<<p.hiWhy[g][0]
	}
	m[0] |= 1 << whyStart
	return m
}

// conflict describes the stretch ending at station i where the bounds
// named in killMask cut off every profile that survived to lastLive.
func (p *core) conflict(lastLive, i int, killMask []uint8) Conflict {
	var mask uint8
	start := i
	for s := i; s >= 0 && s > lastLive-1; s-- {
		if killMask[s] != 0 {
			mask |= killMask[s]
			start = s
		}
	}
	if mask == 0 {
		// Nothing was killed by a bound: every state failed the spacing
		// of drops.
		return Conflict{Kinds: []Kind{KindDropSpacing}, Cause: CauseSpacing, From: p.c[lastLive], To: p.c[i],
			Hint: "drops cannot be spaced by their basin, transition and minimum reach here", Flags: []string{"--min-reach", "--drop-heights"}}
	}
	// Extend the range back over the run of stations where the same bounds
	// were already cutting states off.
	for start > 0 && start > lastLive && killMask[start-1]&mask != 0 {
		start--
	}
	var kinds []Kind
	for w := 0; w < whyCount; w++ {
		if mask&(1<<w) != 0 {
			kinds = append(kinds, whyKinds[w])
		}
	}
	return Conflict{Kinds: kinds, From: p.c[start], To: p.c[i], station: i, startStation: start}
}
