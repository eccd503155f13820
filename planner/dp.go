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
// spacing frees the next drop at station a: for each target grade and
// bed-line index, the best cost so far minus the target's running earthwork
// at j. They merge into the free states at a, where the next drop may sit.
type slot struct {
	j, a int
	lo   []int       // per grade: first bed-line index held
	vals [][]float64 // per grade
	hg   [][]uint8   // per grade: height index × grades + grade of the reach upstream of the drop
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

// solve runs the dynamic programme. It returns the least-cost plan or an
// *InfeasibleError.
func (p *core) solve() (*solution, error) {
	n, G, H := len(p.c), len(p.grades), len(p.heights)
	wlo := make([][]int, G)
	whi := make([][]int, G)
	kmin := make([]int, G)
	kmax := make([]int, G)
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
	// Bound the work before allocating: the state arrays span each grade's
	// bed-line range, and one decision byte is kept per state.
	var states0, span int64
	for g := 0; g < G; g++ {
		span += int64(kmax[g] - kmin[g] + 1)
		for i := 0; i < n; i++ {
			states0 += int64(max(0, whi[g][i]-wlo[g][i]+1))
		}
	}
	if need := span*36 + states0 + int64(n)*int64(G)*16; p.maxMemory > 0 && need > p.maxMemory {
		return nil, &TooBigError{States: states0, Bytes: need, Limit: p.maxMemory}
	}
	// Per-grade state arrays over the bed-line index range.
	ft := make([][]float64, G) // cost so far minus running earthwork of the bed line
	pr := make([][]float64, G) // running earthwork of the bed line since it became feasible
	ec := make([][]float64, G) // cut area at the previous station
	ef := make([][]float64, G) // fill area at the previous station
	since := make([][]int32, G)
	inf := math.Inf(1)
	for g := 0; g < G; g++ {
		m := kmax[g] - kmin[g] + 1
		ft[g] = make([]float64, m)
		pr[g] = make([]float64, m)
		ec[g] = make([]float64, m)
		ef[g] = make([]float64, m)
		since[g] = make([]int32, m)
		for x := range ft[g] {
			ft[g][x] = inf
		}
	}
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
	HG := H * G
	if HG > 255 {
		return nil, fmt.Errorf("%w: %d drop heights × %d grades is too many; use at most 255 combinations", ErrInput, H, G)
	}
	pending := make([][]*slot, n)
	var free []*slot
	newSlot := func(j, a int) *slot {
		var s *slot
		if k := len(free); k > 0 {
			s, free = free[k-1], free[:k-1]
		} else {
			s = &slot{lo: make([]int, G), vals: make([][]float64, G), hg: make([][]uint8, G)}
		}
		s.j, s.a = j, a
		for g := 0; g < G; g++ {
			s.vals[g], s.hg[g] = s.vals[g][:0], s.hg[g][:0]
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
		x := 0 - kmin[g]
		ft[g][x], pr[g][x], since[g][x] = 0, 0, 0
		ec[g][x], ef[g][x] = p.sec[g].Areas(0, p.z0)
	}
	live := false
	for g := 0; g < G; g++ {
		live = live || wlo[g][0] <= whi[g][0]
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
	var bScratch []float64
	var bArg []uint8
	pendingLive := 0
	lastLive := 0

	for i := 1; i < n; i++ {
		l := p.c[i] - p.c[i-1]
		di := p.c[i] - p.c[0]
		for g := 0; g < G; g++ {
			olo, ohi := wlo[g][i-1], whi[g][i-1]
			nlo, nhi := wlo[g][i], whi[g][i]
			f, pp, cc, ff, sn := ft[g], pr[g], ec[g], ef[g], since[g]
			km := kmin[g]
			for k := olo; k <= ohi; k++ { // states that leave the window die
				if k < nlo || k > nhi {
					x := k - km
					if f[x] < inf {
						if k < nlo {
							killMask[i] |= 1 << p.loWhy[g][i]
						} else {
							killMask[i] |= 1 << p.hiWhy[g][i]
						}
					}
					f[x] = inf
				}
			}
			sec := p.sec[g]
			s := p.grades[g]
			// Bed lines entering the window start a new feasible run.
			for k := nlo; k <= nhi; k++ {
				if k >= olo && k <= ohi {
					continue
				}
				x := k - km
				sn[x], pp[x], f[x] = int32(i), 0, inf
			}
			// Bed lines in the window at both stations add the segment's
			// earthwork; every line in the window records its end areas.
			a, bnd := max(nlo, olo), min(nhi, ohi)
			zb := p.z0 - s*di
			if p.volume == earthwork.AverageEndArea && a <= bnd {
				hl := l / 2
				for k := a; k <= bnd; k++ {
					x := k - km
					ac, af := sec.Areas(i, zb+float64(k)*p.step)
					pp[x] += p.earthwork(hl*(cc[x]+ac), hl*(ff[x]+af))
					cc[x], ff[x] = ac, af
				}
			} else if a <= bnd {
				for k := a; k <= bnd; k++ {
					x := k - km
					z := zb + float64(k)*p.step
					ac, af := sec.Areas(i, z)
					cm, fm := sec.MidAreas(i, z+s*l, z)
					pp[x] += p.earthwork(earthwork.PrismoidalVolume(l, cc[x], cm, ac), earthwork.PrismoidalVolume(l, ff[x], fm, af))
					cc[x], ff[x] = ac, af
				}
			}
			for k := nlo; k <= nhi; k++ {
				if k >= a && k <= bnd {
					k = bnd
					continue
				}
				x := k - km
				cc[x], ff[x] = sec.Areas(i, zb+float64(k)*p.step)
			}
			states += int64(max(0, nhi-nlo+1))
		}
		// Drop arrivals: the next drop may sit here.
		for si, sl := range pending[i] {
			if (si+1)*HG > 255 {
				return nil, fmt.Errorf("%w: drops from %d stations with %d heights × %d grades free the next drop at chainage %.2f m; use fewer heights or grades", ErrInput, len(pending[i]), H, G, p.c[i])
			}
			arrivals[i] = append(arrivals[i], int32(sl.j))
			for g := 0; g < G; g++ {
				vals := sl.vals[g]
				if len(vals) == 0 {
					continue
				}
				lo := max(sl.lo[g], wlo[g][i])
				hi := min(sl.lo[g]+len(vals)-1, whi[g][i])
				f, sn := ft[g], since[g]
				km := kmin[g]
				dbase := decOff[i*G+g] - wlo[g][i]
				for k := lo; k <= hi; k++ {
					v := vals[k-sl.lo[g]]
					x := k - km
					if v < f[x] && int(sn[x]) <= sl.j {
						f[x] = v
						dec[dbase+k] = uint8(1 + si*HG + int(sl.hg[g][k-sl.lo[g]]))
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
				for k := wlo[g][i]; k <= whi[g][i]; k++ {
					x := k - kmin[g]
					ft[g][x], pr[g][x], since[g][x] = 0, 0, int32(i)
				}
			}
			reseed = false
		}
		any := false
		for g := 0; g < G && !any; g++ {
			f := ft[g]
			for k := wlo[g][i]; k <= whi[g][i]; k++ {
				if f[k-kmin[g]] < inf {
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
		// Drop candidates at station i.
		dropHere := false
		for h := 0; h < H; h++ {
			dropHere = dropHere || p.arrive[h][i] >= 0
		}
		if !dropHere {
			continue
		}
		p.phaseOffsets(i, rep, off)
		for r := 0; r < G; r++ {
			if rep[r] != r {
				continue
			}
			blo, bhi := math.MaxInt, math.MinInt
			for g := 0; g < G; g++ {
				if rep[g] == r && wlo[g][i] <= whi[g][i] {
					blo = min(blo, wlo[g][i]-off[g])
					bhi = max(bhi, whi[g][i]-off[g])
				}
			}
			if blo > bhi {
				continue
			}
			m := bhi - blo + 1
			if cap(bScratch) < m {
				bScratch = make([]float64, m)
				bArg = make([]uint8, m)
			}
			b, barg := bScratch[:m], bArg[:m]
			for x := range b {
				b[x] = inf
			}
			for g := 0; g < G; g++ {
				if rep[g] != r {
					continue
				}
				f, pp := ft[g], pr[g]
				for k := wlo[g][i]; k <= whi[g][i]; k++ {
					x := k - kmin[g]
					if f[x] < inf {
						v := f[x] + pp[x]
						if y := k - off[g] - blo; v < b[y] {
							b[y], barg[y] = v, uint8(g)
						}
					}
				}
			}
			for h0 := 0; h0 < H; h0++ {
				a := p.arrive[h0][i]
				if a < 0 {
					continue
				}
				seen := false
				for h := 0; h < h0; h++ {
					seen = seen || p.arrive[h][i] == a
				}
				if seen {
					continue // handled with the first height arriving at a
				}
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
					lo, hi := wlo[g][i], whi[g][i]
					sl.lo[g] = lo
					vals := grow(sl.vals[g], hi-lo+1)
					hg := growU8(sl.hg[g], hi-lo+1)
					for x := range vals {
						vals[x] = inf
					}
					for h := h0; h < H; h++ {
						if p.arrive[h][i] != a {
							continue
						}
						dc := p.dropCost[h]
						sh := p.hSteps[h] - off[g] - blo // y = k + sh indexes b
						k0, k1 := max(lo, -sh), min(hi, m-1-sh)
						code := uint8(h * G)
						for k := k0; k <= k1; k++ {
							y := k + sh
							if v := b[y] + dc; v < vals[k-lo] {
								vals[k-lo], hg[k-lo] = v, code+barg[y]
							}
						}
					}
					pp := pr[g][lo-kmin[g]:]
					for x, v := range vals {
						if v < inf {
							vals[x] = v - pp[x]
							anyV = true
						}
					}
					sl.vals[g], sl.hg[g] = vals, hg
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
		for k := wlo[g][n-1]; k <= whi[g][n-1]; k++ {
			x := k - kmin[g]
			if v := ft[g][x] + pr[g][x]; v < best {
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
