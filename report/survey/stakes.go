package survey

import (
	"fmt"
	"math"
	"sort"
	"strconv"

	"canalstep/alignment"
	"canalstep/planner"
	"canalstep/planner/earthwork"
)

// Kind is what a stake point marks.
type Kind string

// Stake kinds (see the package documentation).
const (
	Centreline          Kind = "centreline"
	TopOfBankLeft       Kind = "top_of_bank_left"
	TopOfBankRight      Kind = "top_of_bank_right"
	BankHingeLeft       Kind = "bank_hinge_left"
	BankHingeRight      Kind = "bank_hinge_right"
	CatchLeft           Kind = "catch_left"
	CatchRight          Kind = "catch_right"
	CrestLeft           Kind = "crest_left"
	CrestRight          Kind = "crest_right"
	BasinUpstreamLeft   Kind = "basin_upstream_left"
	BasinUpstreamRight  Kind = "basin_upstream_right"
	BasinDownstreamLeft Kind = "basin_downstream_left"
	BasinDownstreamRt   Kind = "basin_downstream_right"
	EndSillLeft         Kind = "end_sill_left"
	EndSillRight        Kind = "end_sill_right"
	TransitionEndLeft   Kind = "transition_end_left"
	TransitionEndRight  Kind = "transition_end_right"
)

// Stake is one stake point. Lengths and levels are metres; coordinates are
// in their CRS's units.
type Stake struct {
	ID   string // unique within the alignment
	Kind Kind
	// Drop is the 1-based number of the drop a structure point belongs
	// to, 0 for a section point.
	Drop int
	// Station is the label of Chainage; Chainage (m) and Offset (m,
	// negative left looking downstream) place the point on the route.
	Station          string
	Chainage, Offset float64
	X, Y             float64 // work CRS
	DEMX, DEMY       float64 // the DEM's CRS
	Lon, Lat         float64 // WGS 84, degrees
	Ground           float64 // m
	Design           float64 // level of the design surface, m
	// Slope is the H:V ratio of the face the point marks (the inner side
	// slope at a top of bank, the outer fill or cut slope at a hinge or a
	// catch point); NaN where none applies.
	Slope float64
	Note  string // a remark for the surveyor, or ""
}

// CutFill is ground − design (m): positive cut, negative fill.
func (s *Stake) CutFill() float64 { return s.Ground - s.Design }

// Notes the stakes carry.
const (
	noteCatchBeyond = "catch point beyond the sampled cross-section: ground taken level there; find it on site"
	noteDropStation = "drop station: upstream bed; the structure points follow"
	noteWaterEdge   = "wall end at the design water's edge"
)

// Stakes lists the stake points of the plan in order of chainage, each
// station's left to right, a drop's structure after its station. See the
// package documentation for the kinds, ids and levels.
func Stakes(in *Input) ([]Stake, error) {
	if err := in.check(); err != nil {
		return nil, err
	}
	r := in.Result
	n := len(r.Stations)
	if est := 7*n + 12*len(r.Drops); est > MaxStakes {
		return nil, fmt.Errorf("%w: alignment %q would have about %d stake points, more than %d; plan with a wider station spacing",
			ErrInput, in.Corridor.Profile.Name, est, MaxStakes)
	}
	tpl := r.Record.Template
	u := in.unit()
	out := make([]Stake, 0, 7*n+12*len(r.Drops))
	// The drops in order of station (the planner's order; sorted here so
	// that no drop is skipped if it were not).
	order := make([]int, len(r.Drops))
	for x := range order {
		order[x] = x
	}
	sort.SliceStable(order, func(a, b int) bool { return r.Drops[order[a]].Station < r.Drops[order[b]].Station })
	next := 0
	for i := range r.Stations {
		s := &r.Stations[i]
		top := tpl.BedWidth/2 + tpl.SideSlope*s.BankHeight
		hinge := top + tpl.BankTopWidth
		label := in.Units.Station(s.Chainage)
		at := func(kind Kind, prefix string, offset, design, slope float64) int {
			x, y := s.CrossPoint(offset, u)
			out = append(out, Stake{ID: prefix + label, Kind: kind, Station: label, Chainage: s.Chainage, Offset: offset,
				X: x, Y: y, Ground: groundAt(&s.Station, offset), Design: design, Slope: slope})
			return len(out) - 1
		}
		catch := func(kind Kind, prefix string, c earthwork.Catch) {
			if !finite(c.Offset) || !finite(c.Level) {
				return // no catch point (a NaN bed): none is staked
			}
			k := at(kind, prefix, c.Offset, c.Level, outerSlope(r, c.Cut))
			out[k].Ground = c.Level // the catch point is where design meets ground
			if !c.Found {
				out[k].Note = noteCatchBeyond
			}
		}
		catch(CatchLeft, "XL", s.CatchLeft)
		if hinge > top {
			at(BankHingeLeft, "HL", -hinge, s.TopOfBank, outerSlope(r, s.CatchLeft.Cut))
		}
		at(TopOfBankLeft, "TL", -top, s.TopOfBank, tpl.SideSlope)
		c := at(Centreline, "C", 0, s.Invert, math.NaN())
		at(TopOfBankRight, "TR", top, s.TopOfBank, tpl.SideSlope)
		if hinge > top {
			at(BankHingeRight, "HR", hinge, s.TopOfBank, outerSlope(r, s.CatchRight.Cut))
		}
		catch(CatchRight, "XR", s.CatchRight)
		for ; next < len(order) && r.Drops[order[next]].Station == i; next++ {
			out[c].Note = noteDropStation
			out = in.structure(out, order[next])
		}
	}
	uniqueIDs(out)
	if err := in.place(out); err != nil {
		return nil, err
	}
	return out, nil
}

// outerSlope is the slope (H:V) of the face outside a bank: the cut slope
// where the catch point is met in cut, the outer fill slope otherwise.
func outerSlope(r *planner.Result, cut bool) float64 {
	if cut {
		return r.Record.Template.CutSlope
	}
	return r.Record.Template.OuterSlope
}

// structure appends the layout points of drop x: the crest across the canal
// at the drop station, the basin straight downstream along the tangent
// there, the end sill at the basin's end and the outlet transition beyond.
// A drop whose design failed (no basin) has no structure points; its
// warning says why.
func (in *Input) structure(out []Stake, x int) []Stake {
	r := in.Result
	d := r.Drops[x]
	if !(d.BasinLength > 0) || !(d.BasinWidth > 0) {
		return out
	}
	s := &r.Stations[d.Station]
	u := in.unit()
	ux, uy := math.Sin(s.Azimuth), math.Cos(s.Azimuth) // downstream, per metre
	rx, ry := uy, -ux                                  // to the right
	down := r.Reaches[x+1]
	yn := down.NormalDepth
	top := r.Record.BottomWidth + 2*r.Record.SideSlope*yn // water-surface width downstream, m
	w, l, t := d.BasinWidth/2, d.BasinLength, d.TransitionLength
	bed := func(a float64) float64 { return d.DownstreamInvert - down.Grade*a }
	id := "D" + strconv.Itoa(x+1) + "-"
	for _, p := range []struct {
		kind      Kind
		name      string
		along, to float64 // m downstream of the drop wall, m right of the axis
		design    float64
	}{
		{CrestLeft, "CL", 0, -w, d.CrestLevel},
		{CrestRight, "CR", 0, w, d.CrestLevel},
		{BasinUpstreamLeft, "B1", 0, -w, d.BasinFloor},
		{BasinUpstreamRight, "B2", 0, w, d.BasinFloor},
		{BasinDownstreamRt, "B3", l, w, d.BasinFloor},
		{BasinDownstreamLeft, "B4", l, -w, d.BasinFloor},
		{EndSillLeft, "SL", l, -w, d.BasinFloor + d.EndSill},
		{EndSillRight, "SR", l, w, d.BasinFloor + d.EndSill},
		{TransitionEndLeft, "TL", l + t, -top / 2, bed(l+t) + yn},
		{TransitionEndRight, "TR", l + t, top / 2, bed(l+t) + yn},
	} {
		if t == 0 && (p.kind == TransitionEndLeft || p.kind == TransitionEndRight) {
			continue
		}
		st := Stake{ID: id + p.name, Kind: p.kind, Drop: x + 1, Design: p.design, Slope: math.NaN(),
			X: s.WorkX + (p.along*ux+p.to*rx)/u, Y: s.WorkY + (p.along*uy+p.to*ry)/u}
		along, off := in.Corridor.Route.Locate(st.X, st.Y)
		st.Chainage = r.Stations[0].Chainage + along
		st.Offset = off
		st.Station = in.Units.Station(st.Chainage)
		st.Ground = groundBetween(r.Stations, st.Chainage, off)
		if p.kind == TransitionEndLeft || p.kind == TransitionEndRight {
			st.Note = noteWaterEdge
		}
		out = append(out, st)
	}
	return out
}

// place fills in the lon/lat and DEM coordinates of every stake, two
// batched transforms.
func (in *Input) place(st []Stake) error {
	n := len(st)
	xs, ys := make([]float64, n), make([]float64, n)
	for i := range st {
		xs[i], ys[i] = st[i].X, st[i].Y
	}
	dx, dy := append([]float64(nil), xs...), append([]float64(nil), ys...)
	if err := transform(in.Corridor.Frames.WorkToLonLat, xs, ys); err != nil {
		return fmt.Errorf("survey: stake points to lon/lat: %w", err)
	}
	if err := transform(in.Corridor.Frames.WorkToDEM, dx, dy); err != nil {
		return fmt.Errorf("survey: stake points to the DEM's CRS: %w", err)
	}
	for i := range st {
		st[i].Lon, st[i].Lat, st[i].DEMX, st[i].DEMY = xs[i], ys[i], dx[i], dy[i]
	}
	return nil
}

// uniqueIDs appends "/2", "/3", ... to an id already used.
func uniqueIDs(st []Stake) {
	seen := make(map[string]int, len(st))
	for i := range st {
		id := st[i].ID
		if k := seen[id]; k > 0 {
			for {
				k++
				cand := id + "/" + strconv.Itoa(k)
				if seen[cand] == 0 {
					seen[id] = k
					st[i].ID = cand
					seen[cand] = 1
					break
				}
			}
			continue
		}
		seen[id] = 1
	}
}

// groundAt is the ground (m) offset metres across the line at station s:
// linear between the cross-section's sampled points, level beyond its ends
// (as the earthwork takes it), the centre-line ground without a section.
func groundAt(s *alignment.Station, offset float64) float64 {
	if s.Cross == nil || len(s.Cross.Offsets) == 0 || len(s.Cross.Offsets) != len(s.Cross.Levels) {
		return s.Ground
	}
	o, z := s.Cross.Offsets, s.Cross.Levels
	k := sort.SearchFloat64s(o, offset)
	switch {
	case k == 0:
		return z[0]
	case k == len(o):
		return z[len(z)-1]
	}
	t := (offset - o[k-1]) / (o[k] - o[k-1])
	return z[k-1] + t*(z[k]-z[k-1])
}

// groundBetween is the ground (m) at a chainage (m) and offset (m): the
// cross-sections of the two stations around the chainage, interpolated
// linearly along the line.
func groundBetween(st []planner.StationResult, chainage, offset float64) float64 {
	k := sort.Search(len(st), func(i int) bool { return st[i].Chainage >= chainage })
	switch {
	case k == 0:
		return groundAt(&st[0].Station, offset)
	case k == len(st):
		return groundAt(&st[k-1].Station, offset)
	}
	a, b := &st[k-1], &st[k]
	t := (chainage - a.Chainage) / (b.Chainage - a.Chainage)
	return (1-t)*groundAt(&a.Station, offset) + t*groundAt(&b.Station, offset)
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
