package hydraulics

import (
	"fmt"
	"math"
)

// StandardStep computes a subcritical water-surface profile by the standard
// step method (Chow 1959, Ch. 10, from memory; reference sheet §5.3) in
// channel ch for discharge q (m³/s). chainages (m, increasing downstream)
// are the stations; startDepth (m) is the depth at the last one, the
// downstream control (a structure, or critical depth at a free overfall).
// Going upstream, each step solves
//
//	z_u + y_u + α·V_u²/2g = z_d + y_d + α·V_d²/2g + ½·(Sf_u + Sf_d)·Δx
//
// for y_u on the subcritical branch (y_u > yc), one step per pair of
// stations, exactly as the hand method does. Its accuracy depends on the
// spacing: near critical depth the profile is steep and needs short steps.
// [WaterSurfaceProfile] refines the steps itself. The depths returned line
// up with chainages. It panics if chainages do not increase (programmer
// error) and returns an error wrapping [ErrInfeasible] when a step has no
// subcritical solution (the profile would pass through critical depth).
func StandardStep(c Consts, ch Channel, q float64, startDepth float64, chainages []float64) ([]float64, error) {
	depths := make([]float64, len(chainages))
	return depths, StandardStepInto(c, ch, q, startDepth, chainages, depths)
}

// StandardStepInto is [StandardStep] writing into depths, which must be as
// long as chainages; it does not allocate.
func StandardStepInto(c Consts, ch Channel, q float64, startDepth float64, chainages, depths []float64) error {
	return stepProfile(c, ch, q, startDepth, chainages, depths, false)
}

// stepProfile runs the standard step over chainages into depths; with
// refine, each interval is divided adaptively (see stepper.refined).
func stepProfile(c Consts, ch Channel, q float64, startDepth float64, chainages, depths []float64, refine bool) error {
	if len(depths) != len(chainages) {
		panic("hydraulics: StandardStepInto: depths and chainages differ in length")
	}
	for i := 1; i < len(chainages); i++ {
		if !(chainages[i] > chainages[i-1]) {
			panic("hydraulics: StandardStep: chainages must increase")
		}
	}
	if err := ch.Validate(); err != nil {
		return err
	}
	if err := checkFlow(c, ch.Section, q); err != nil {
		return err
	}
	if len(chainages) == 0 {
		return nil
	}
	yc, err := CriticalDepth(c, ch.Section, q)
	if err != nil {
		return err
	}
	if !(startDepth >= yc*(1-1e-9)) || math.IsInf(startDepth, 0) {
		return fmt.Errorf("%w: start depth %g m is below critical depth %.4g m; the standard step here follows subcritical profiles only", ErrInvalid, startDepth, yc)
	}
	st := stepper{c: c, ch: ch, q: q, yc: yc}
	last := len(chainages) - 1
	depths[last] = startDepth
	for i := last - 1; i >= 0; i-- {
		dx := chainages[i+1] - chainages[i]
		var y float64
		if refine {
			y, err = st.refined(depths[i+1], dx, 0)
		} else {
			y, err = st.step(depths[i+1], dx)
		}
		if err != nil {
			return fmt.Errorf("standard step from chainage %.3f m to %.3f m: %w", chainages[i+1], chainages[i], err)
		}
		depths[i] = y
	}
	return nil
}

// stepper takes standard steps upstream in one channel at one discharge.
type stepper struct {
	c     Consts
	ch    Channel
	q, yc float64
}

// step returns the depth a distance dx upstream of depth yd (one step).
func (st stepper) step(yd, dx float64) (float64, error) {
	c, s, q, n := st.c, st.ch.Section, st.q, st.ch.N
	a := c.alpha()
	b, z := s.BottomWidth, s.SideSlope
	dp := 2 * math.Sqrt(1+z*z)
	// Head to match at the upstream section, measured from its bed.
	target := SpecificEnergy(c, s, q, yd) + 0.5*FrictionSlope(c, s, q, n, yd)*dx - st.ch.Slope*dx
	f := func(y float64) (float64, float64) {
		ar := (b + z*y) * y
		t := b + 2*z*y
		p := b + dp*y
		v := q / ar
		sf := FrictionSlope(c, s, q, n, y)
		dE := 1 - a*v*v*t/(c.G*ar)
		dSf := -2 * sf * (5*t/(3*ar) - 2*dp/(3*p))
		return y + a*v*v/(2*c.G) - 0.5*sf*dx - target, dE - 0.5*dx*dSf
	}
	if f0, _ := f(st.yc); f0 > 0 {
		return 0, fmt.Errorf("%w: no subcritical depth: the profile reaches critical depth", ErrInfeasible)
	}
	hi, err := expandUp(math.Max(yd, st.yc)*1.5, func(y float64) float64 { v, _ := f(y); return v })
	if err != nil {
		return 0, err
	}
	return solveBracket(st.yc, hi, 1e-13*hi, f)
}

// refined steps dx upstream from yd by step doubling: it compares one step
// with two half steps and halves the interval until they agree within
// 1e-7 of the depth (depth ≥ 1) or 1e-7 absolute, at most 30 levels deep.
func (st stepper) refined(yd, dx float64, level int) (float64, error) {
	one, err1 := st.step(yd, dx)
	mid, err := st.step(yd, dx/2)
	if err != nil {
		return 0, err
	}
	two, err := st.step(mid, dx/2)
	if err != nil {
		return 0, err
	}
	if err1 == nil && math.Abs(one-two) <= 1e-7*math.Max(1, two) || level >= 30 {
		return two, nil
	}
	if mid, err = st.refined(yd, dx/2, level+1); err != nil {
		return 0, err
	}
	return st.refined(mid, dx/2, level+1)
}

// DirectStep returns the distance (m) from the first depth to each depth of
// a gradually varied profile in a prismatic channel by the direct step
// method (Chow 1959, Ch. 10, from memory; reference sheet §5.2):
//
//	Δx = (E2 − E1) / (S0 − ½·(Sf1 + Sf2))
//
// Distances are positive downstream: an M1 backwater computed upstream from
// a control gives negative distances. depths must not cross normal or
// critical depth; a step with S0 = S̄f is an error.
func DirectStep(c Consts, ch Channel, q float64, depths []float64) ([]float64, error) {
	if err := ch.Validate(); err != nil {
		return nil, err
	}
	if err := checkFlow(c, ch.Section, q); err != nil {
		return nil, err
	}
	out := make([]float64, len(depths))
	for i := 1; i < len(depths); i++ {
		y1, y2 := depths[i-1], depths[i]
		e1 := SpecificEnergy(c, ch.Section, q, y1)
		e2 := SpecificEnergy(c, ch.Section, q, y2)
		sf := 0.5 * (FrictionSlope(c, ch.Section, q, ch.N, y1) + FrictionSlope(c, ch.Section, q, ch.N, y2))
		den := ch.Slope - sf
		if den == 0 || !(y1 > 0 && y2 > 0) {
			return nil, fmt.Errorf("%w: direct step from %g m to %g m crosses normal depth or has no length", ErrInvalid, y1, y2)
		}
		out[i] = out[i-1] + (e2-e1)/den
	}
	return out, nil
}

// ProfilePoint is one station of a water-surface profile.
type ProfilePoint struct {
	Chainage  float64 // m, increasing downstream
	Depth     float64 // m above the bed
	Velocity  float64 // mean velocity, m/s
	Froude    float64
	Freeboard float64 // bank height minus depth, m (negative: overtopped)
}

// WaterSurfaceProfile computes the subcritical profile of [StandardStep]
// at the given stations, dividing each interval adaptively (step doubling)
// until the depth no longer changes (1e-7 relative), so the result does not
// depend on the station spacing, even in the steep drawdown just above a
// free overfall. It adds the velocity, Froude number and remaining freeboard
// below a top of bank bankHeight (m above the bed) at each station.
func WaterSurfaceProfile(c Consts, ch Channel, q, startDepth float64, chainages []float64, bankHeight float64) ([]ProfilePoint, error) {
	depths := make([]float64, len(chainages))
	if err := stepProfile(c, ch, q, startDepth, chainages, depths, true); err != nil {
		return nil, err
	}
	pts := make([]ProfilePoint, len(depths))
	for i, y := range depths {
		pts[i] = ProfilePoint{
			Chainage:  chainages[i],
			Depth:     y,
			Velocity:  Velocity(ch.Section, q, y),
			Froude:    Froude(c, ch.Section, q, y),
			Freeboard: bankHeight - y,
		}
	}
	return pts, nil
}
