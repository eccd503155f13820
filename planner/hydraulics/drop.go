package hydraulics

import (
	"fmt"
	"math"
)

// Channel is a uniform reach of canal: its section, Manning roughness and
// bed slope.
type Channel struct {
	Section Section
	N       float64 // Manning roughness n
	Slope   float64 // bed slope, m/m (positive downhill)
}

// Validate reports whether the channel has a valid section, a positive
// roughness and a positive slope.
func (ch Channel) Validate() error {
	if err := ch.Section.Validate(); err != nil {
		return err
	}
	if !positive(ch.N) {
		return fmt.Errorf("%w: Manning roughness n = %g must be positive", ErrInvalid, ch.N)
	}
	if !positive(ch.Slope) {
		return fmt.Errorf("%w: bed slope %g must be positive", ErrInvalid, ch.Slope)
	}
	return nil
}

// JumpState says where the hydraulic jump below a drop stands.
type JumpState string

const (
	// SweptOut: the tailwater is below the sequent depth the jump needs; the
	// jump is repelled downstream out of the basin.
	SweptOut JumpState = "swept_out"
	// InBasin: the tailwater holds the jump in the basin.
	InBasin JumpState = "in_basin"
	// Drowned: the tailwater is well above the sequent depth; the jump is
	// submerged. A submerged roller is a drowning hazard.
	Drowned JumpState = "drowned"
)

// Default margins of the tailwater check, as ratios of tailwater to the
// sequent depth the jump requires (reference sheet §4.3; common practice,
// no source; USBR basin guidance uses margins of a few percent, from memory).
const (
	DefaultSmallMarginRatio = 1.10 // below: held, but with a small margin (warning)
	DefaultDrownedRatio     = 1.30 // above: drowned jump
)

// Validity range of Rand's relations in yc/h, recalled as Chanson's
// statement (from memory, unverified): outside it results are extrapolated.
const (
	RandMinYcOverH = 0.045
	RandMaxYcOverH = 1.0
)

// RandGeometry is the flow geometry at a straight drop by Rand (1955).
type RandGeometry struct {
	DropNumber    float64 // D_N = q²/(g·h³), dimensionless
	CriticalDepth float64 // yc = (q²/g)^(1/3) on the crest, m
	ImpactLength  float64 // Ld: drop wall to the toe of the jump (section of depth y1), m
	PoolDepth     float64 // yp: pool behind the nappe, m
	ToeDepth      float64 // y1: supercritical depth at the toe, m
	SequentDepth  float64 // y2: tailwater depth the jump requires, m
}

// Rand returns the straight-drop geometry for unit discharge q (m²/s) over
// a drop of height h (m, crest to basin floor), from Rand, W. (1955), "Flow
// geometry at straight drop spillways", Proc. ASCE 81, Paper 791 (synopsis
// seen; coefficients from memory as reproduced by Chow 1959, Novak et al.
// 2007 §10.3.2, Chanson 2004 and FHWA HEC-14):
//
//	D_N = q²/(g·h³)
//	Ld/h = 4.30·D_N^0.27    yp/h = 1.00·D_N^0.22
//	y1/h = 0.54·D_N^0.425   y2/h = 1.66·D_N^0.27
//
// They assume a rectangular drop and basin of one width, a subcritical
// approach with critical depth at the brink, an aerated nappe, a horizontal
// floor and a jump that is not drowned. q and h must be positive.
func Rand(c Consts, q, h float64) RandGeometry {
	d := q * q / (c.G * h * h * h)
	return RandGeometry{
		DropNumber:    d,
		CriticalDepth: math.Cbrt(q * q / c.G),
		ImpactLength:  4.30 * h * math.Pow(d, 0.27),
		PoolDepth:     h * math.Pow(d, 0.22),
		ToeDepth:      0.54 * h * math.Pow(d, 0.425),
		SequentDepth:  1.66 * h * math.Pow(d, 0.27),
	}
}

// BelangerSequent returns the depth (m) sequent to depth y1 (m) of unit
// discharge q (m²/s) in a hydraulic jump on a horizontal rectangular floor
// (Belanger's equation; Chow 1959, Ch. 3 and 15, from memory):
//
//	y2/y1 = ½·(sqrt(1 + 8·F1²) − 1),   F1 = q/(y1·sqrt(g·y1))
func BelangerSequent(c Consts, q, y1 float64) float64 {
	f1 := q / (y1 * math.Sqrt(c.G*y1))
	return 0.5 * y1 * (math.Sqrt(1+8*f1*f1) - 1)
}

// JumpType names the form of a hydraulic jump by its inflow Froude number
// f1, after USBR as given by Chow (1959, Ch. 15; from memory): undular
// (1–1.7), weak (1.7–2.5), oscillating (2.5–4.5), steady (4.5–9), strong
// (above 9). Below 1 there is no jump ("none").
func JumpType(f1 float64) string {
	switch {
	case f1 < 1:
		return "none"
	case f1 < 1.7:
		return "undular"
	case f1 < 2.5:
		return "weak"
	case f1 < 4.5:
		return "oscillating"
	case f1 < 9:
		return "steady"
	}
	return "strong"
}

// JumpLength returns the length (m) of a hydraulic jump between depths y1
// and y2 (m) as Lj = 6.9·(y2 − y1), usually attributed to Elevatorski
// (1959) and used by Novak et al. (2007) for drop basins (from memory,
// unverified). Peterka's Lj ≈ 6·y2 and Silvester's relation agree within
// about 10 % for the inflow Froude numbers of canal drops.
func JumpLength(y1, y2 float64) float64 { return 6.9 * (y2 - y1) }

// JumpLengthUSBR returns the jump length (m) as 6.1·y2 from the USBR curve
// for roughly 4.5 < F1 < 13 (Peterka 1958, EM 25, and Chow 1959 Fig. 15-4;
// from memory); shorter outside that range.
func JumpLengthUSBR(y2 float64) float64 { return 6.1 * y2 }

// JumpLengthSilvester returns the jump length (m) on a horizontal
// rectangular floor as Lj = 9.75·y1·(F1 − 1)^1.01 (Silvester 1964, J. Hydr.
// Div. ASCE 90(HY1); from memory, unverified).
func JumpLengthSilvester(y1, f1 float64) float64 { return 9.75 * y1 * math.Pow(f1-1, 1.01) }

// DefaultTransitionAngle is the angle (degrees) between the water-surface
// edge and the centre line of a transition that Hinds and USBR practice
// limit it to, about 12.5° (from memory, unverified; an Indian code summary
// gives a 1 in 5 splay for expansions, 11.3°).
const DefaultTransitionAngle = 12.5

// TransitionLength returns the length (m) of a straight transition that
// changes the top width by deltaT (m, either sign) with each side at
// angleDeg degrees to the centre line: L = |ΔT| / (2·tan θ) (reference
// sheet §4.1, derived).
func TransitionLength(deltaT, angleDeg float64) float64 {
	return math.Abs(deltaT) / (2 * math.Tan(angleDeg*math.Pi/180))
}

// CrestRaise returns the height p (m) of a rectangular crest above the
// upstream bed that makes the upstream specific energy equal upstreamEnergy
// (m) when critical depth yc (m) forms on the crest: p = E − 1.5·yc
// (reference sheet §4.5, derived; approach losses neglected). A negative
// result means the crest is narrower than the control width: even at bed
// level it chokes the flow and backs the water up. (The sheet says "too
// wide"; the algebra says too narrow: a narrower crest has a larger yc.)
func CrestRaise(upstreamEnergy, yc float64) float64 { return upstreamEnergy - 1.5*yc }

// ControlWidth returns the width (m) of a rectangular crest at bed level
// (p = 0) on which discharge q (m³/s) passes critical with specific energy
// e (m): B_c = Q / (sqrt(g/α)·(2e/3)^(3/2)) (reference sheet §4.5, derived).
func ControlWidth(c Consts, q, e float64) float64 {
	return q / (math.Sqrt(c.G/c.alpha()) * math.Pow(2*e/3, 1.5))
}

// DropInput describes a straight drop to design: a rectangular crest of
// width B followed by a rectangular stilling basin of the same width and an
// outlet transition into the downstream canal.
type DropInput struct {
	Q              float64 // design discharge, m³/s
	CrestWidth     float64 // B: width of the crest and of the basin, m
	Height         float64 // bed fall Δ at the drop, from upstream to downstream canal bed, m
	Downstream     Channel // canal below the drop; its normal depth sets the tailwater
	Upstream       Channel // canal above the drop; the zero value means the same as Downstream
	TransitionLoss float64 // outlet (expansion) loss coefficient Co in [0, 1]; see TransitionTypes. 0 is the conservative value for the sweep-out check

	// HoldFlows are further discharges (m³/s) at which the basin must hold
	// the jump; the floor depression is the largest any of them needs.
	HoldFlows []float64
	// HoldRatio is the ratio of tailwater to required sequent depth the
	// floor depression is designed for; 0 means DefaultSmallMarginRatio.
	HoldRatio float64
	// SmallMarginRatio and DrownedRatio classify the jump (0: defaults).
	SmallMarginRatio, DrownedRatio float64
	// TransitionAngle is the angle (degrees) between the water-surface edge
	// and the centre line of the outlet transition; 0 means 12.5°.
	TransitionAngle float64
	// MaxApproachFroude is the approach Froude number above which the
	// upstream flow counts as near critical; 0 means NearCriticalFroude.
	MaxApproachFroude float64
	// CrestRaise and Depression fix the crest height above the upstream bed
	// and the basin-floor depression below the downstream bed (m), to check
	// an existing or chosen structure; nil means design them.
	CrestRaise, Depression *float64
}

func (in DropInput) upstream() Channel {
	if in.Upstream == (Channel{}) {
		return in.Downstream
	}
	return in.Upstream
}

func orDefault(v, def float64) float64 {
	if v > 0 {
		return v
	}
	return def
}

// Drop is a designed straight drop at its design discharge. Depths are above
// the basin floor unless said otherwise; lengths run downstream from the
// drop wall.
type Drop struct {
	Q               float64 // design discharge, m³/s
	CrestWidth      float64 // B, m
	UnitDischarge   float64 // q = Q/B, m²/s
	BedFall         float64 // Δ, m
	CrestRaise      float64 // p: crest above the upstream bed, m
	BasinDepression float64 // d_s: basin floor below the downstream bed, m
	DropHeight      float64 // h = Δ + p + d_s: crest to basin floor, m
	ControlWidth    float64 // width of a bed-level crest that would hold upstream normal depth, m

	DropNumber       float64 // D_N = q²/(g·h³)
	CriticalDepth    float64 // yc on the crest, m
	BrinkDepth       float64 // ≈ 0.715·yc at the brink (Rouse 1936, from memory), m
	ImpactLength     float64 // Ld: wall to the toe of the jump (Rand), m
	PoolDepth        float64 // yp (Rand), m
	ToeDepth         float64 // y1 (Rand), m
	ToeFroude        float64 // F1 at the toe
	JumpType         string  // by F1, see JumpType
	SequentDepth     float64 // y2 required (Rand), m
	BelangerDepth    float64 // Belanger sequent of Rand's y1, m (cross-check of SequentDepth)
	JumpLength       float64 // 6.9·(y2 − y1), m
	BasinLength      float64 // plain basin Ld + Lj, m
	EndSill          float64 // end sill height 0.4·yc (SAF rule, from memory), m
	SAFBasinLength   float64 // SAF straight-drop basin Ld + 2.55·yc (Donnelly & Blaisdell 1954, from memory), m
	SAFMinTailwater  float64 // SAF minimum tailwater 2.15·yc, m
	WallHeight       float64 // basin side walls above the floor: design tailwater + 0.85·yc (SAF rule, from memory), m
	TransitionLength float64 // outlet transition from basin width to the canal's top width at normal depth, m (see TransitionLength)

	UpstreamDepth   float64 // normal depth of the upstream canal, m
	DownstreamDepth float64 // normal depth of the downstream canal, m
	TailwaterDepth  float64 // TW at the basin end, m
	TailwaterRatio  float64 // TW/y2
	JumpState       JumpState

	FallLoss   float64 // E0 − E1: head lost in the fall and pool, m
	JumpLoss   float64 // E1 − E2 across a Belanger jump from y1, m
	EnergyLoss float64 // head lost from the upstream to the downstream canal, m (= Δ when both canals match)

	// Warnings are about the structure: approach flow, crest. The outlet
	// check at the design flow carries its own; AllWarnings joins both.
	// Messages quote only dimensionless numbers, so they read the same in
	// any unit system.
	Warnings []string
	Outlet   OutletCheck // the outlet check at the design flow
}

// AllWarnings returns the structure's warnings followed by those of the
// outlet check at the design flow.
func (d Drop) AllWarnings() []string {
	return append(append([]string(nil), d.Warnings...), d.Outlet.Warnings...)
}

// OutletCheck is the tailwater check of a drop at one discharge.
type OutletCheck struct {
	Q                  float64   // discharge, m³/s
	CriticalDepth      float64   // on the crest, m
	DropNumber         float64   // D_N
	ToeDepth           float64   // y1 (Rand), m
	ToeFroude          float64   // F1
	SequentDepth       float64   // y2 required (Rand), m
	DownstreamDepth    float64   // normal depth of the downstream canal, m
	TailwaterDepth     float64   // TW above the basin floor at the basin end, m
	TailwaterRatio     float64   // TW/y2
	Margin             float64   // TW − y2, m; negative when swept out
	JumpState          JumpState // swept_out, in_basin or drowned
	RequiredDepression float64   // basin floor depression below the downstream bed that holds the jump at this flow (TW = y2), m
	Warnings           []string
}

// DesignDrop designs a straight drop for in.Q: the crest raise p that keeps
// the upstream canal at its normal depth (inlet control, §4.5), Rand's
// geometry, the jump and basin, and the basin-floor depression d_s that
// makes the tailwater at the basin end reach in.HoldRatio times the
// required sequent depth at the design flow and at every in.HoldFlows
// (reference sheet §3–§4). When the crest would have to sit below the
// upstream bed (a crest narrower than the control width), it stays at bed
// level and a warning gives the control width or suggests a notch.
func DesignDrop(c Consts, in DropInput) (Drop, error) {
	if err := c.validate(); err != nil {
		return Drop{}, err
	}
	switch {
	case !positive(in.Q):
		return Drop{}, fmt.Errorf("%w: design discharge %g m³/s must be positive", ErrInvalid, in.Q)
	case !positive(in.CrestWidth):
		return Drop{}, fmt.Errorf("%w: crest width %g m must be positive", ErrInvalid, in.CrestWidth)
	case !positive(in.Height):
		return Drop{}, fmt.Errorf("%w: drop height (bed fall) %g m must be positive", ErrInvalid, in.Height)
	case !(in.TransitionLoss >= 0 && in.TransitionLoss <= 1):
		return Drop{}, fmt.Errorf("%w: outlet loss coefficient %g must be between 0 and 1", ErrInvalid, in.TransitionLoss)
	}
	for _, v := range []*float64{in.CrestRaise, in.Depression} {
		if v != nil && !(*v >= 0 && !math.IsInf(*v, 1)) {
			return Drop{}, fmt.Errorf("%w: a fixed crest raise or basin depression (%g m) must be zero or positive", ErrInvalid, *v)
		}
	}
	for _, f := range in.HoldFlows {
		if !positive(f) {
			return Drop{}, fmt.Errorf("%w: check discharge %g m³/s must be positive", ErrInvalid, f)
		}
	}
	if err := in.Downstream.Validate(); err != nil {
		return Drop{}, fmt.Errorf("downstream canal: %w", err)
	}
	up := in.upstream()
	if err := up.Validate(); err != nil {
		return Drop{}, fmt.Errorf("upstream canal: %w", err)
	}

	d := Drop{Q: in.Q, CrestWidth: in.CrestWidth, UnitDischarge: in.Q / in.CrestWidth, BedFall: in.Height}
	var err error
	if d.UpstreamDepth, err = NormalDepth(c, up.Section, in.Q, up.N, up.Slope); err != nil {
		return Drop{}, fmt.Errorf("upstream canal: %w", err)
	}
	if d.DownstreamDepth, err = NormalDepth(c, in.Downstream.Section, in.Q, in.Downstream.N, in.Downstream.Slope); err != nil {
		return Drop{}, fmt.Errorf("downstream canal: %w", err)
	}
	eUp := SpecificEnergy(c, up.Section, in.Q, d.UpstreamDepth)
	eDown := SpecificEnergy(c, in.Downstream.Section, in.Q, d.DownstreamDepth)
	if f := Froude(c, up.Section, in.Q, d.UpstreamDepth); f > orDefault(in.MaxApproachFroude, NearCriticalFroude) {
		d.Warnings = append(d.Warnings, fmt.Sprintf("approach flow is near critical (Froude %.2f > %.2f): Rand's relations assume a tranquil approach", f, orDefault(in.MaxApproachFroude, NearCriticalFroude)))
	}

	// Inlet control: raise the crest so the upstream energy stays at E_n.
	d.ControlWidth = ControlWidth(c, in.Q, eUp)
	ycCrest := math.Cbrt(c.alpha() * d.UnitDischarge * d.UnitDischarge / c.G)
	d.CrestRaise = CrestRaise(eUp, ycCrest)
	if in.CrestRaise != nil {
		if math.Abs(*in.CrestRaise-d.CrestRaise) > 0.01*eUp {
			effect, than := "draws down (M2)", "lower"
			if *in.CrestRaise > d.CrestRaise {
				effect, than = "backs up (M1)", "higher"
			}
			d.Warnings = append(d.Warnings, fmt.Sprintf("the fixed crest raise is %s than the height that holds the upstream normal depth: the upstream water surface %s",
				than, effect))
		}
		d.CrestRaise = *in.CrestRaise
	} else if d.CrestRaise < 0 {
		// Critical flow on a bed-level crest this narrow needs more energy
		// than the canal has: the crest chokes the flow and backs water up.
		d.Warnings = append(d.Warnings, fmt.Sprintf("the crest is narrower than the control width (%.2f × it): even at bed level it backs the upstream water up (M1), eating into the freeboard; widen the crest to the control width or use a control notch",
			in.CrestWidth/d.ControlWidth))
		d.CrestRaise = 0
	}

	// Basin-floor depression: the largest any checked flow needs.
	if in.Depression != nil {
		d.BasinDepression = *in.Depression
	} else {
		ratio := orDefault(in.HoldRatio, DefaultSmallMarginRatio)
		for _, q := range append([]float64{in.Q}, in.HoldFlows...) {
			ds, err := requiredDepression(c, in, d.CrestRaise, q, ratio)
			if err != nil {
				return Drop{}, fmt.Errorf("basin depression at %g m³/s: %w", q, err)
			}
			d.BasinDepression = math.Max(d.BasinDepression, ds)
		}
	}
	d.DropHeight = in.Height + d.CrestRaise + d.BasinDepression

	g := Rand(c, d.UnitDischarge, d.DropHeight)
	d.DropNumber, d.CriticalDepth = g.DropNumber, g.CriticalDepth
	d.BrinkDepth = 0.715 * g.CriticalDepth
	d.ImpactLength, d.PoolDepth, d.ToeDepth, d.SequentDepth = g.ImpactLength, g.PoolDepth, g.ToeDepth, g.SequentDepth
	d.ToeFroude = d.UnitDischarge / (g.ToeDepth * math.Sqrt(c.G*g.ToeDepth))
	d.JumpType = JumpType(d.ToeFroude)
	d.BelangerDepth = BelangerSequent(c, d.UnitDischarge, g.ToeDepth)
	d.JumpLength = JumpLength(g.ToeDepth, g.SequentDepth)
	d.BasinLength = g.ImpactLength + d.JumpLength
	d.EndSill = 0.4 * g.CriticalDepth
	d.SAFBasinLength = g.ImpactLength + 2.55*g.CriticalDepth
	d.SAFMinTailwater = 2.15 * g.CriticalDepth

	q := d.UnitDischarge
	e0 := d.DropHeight + 1.5*g.CriticalDepth
	e1 := g.ToeDepth + q*q/(2*c.G*g.ToeDepth*g.ToeDepth)
	d.FallLoss = e0 - e1
	d.JumpLoss = math.Pow(d.BelangerDepth-g.ToeDepth, 3) / (4 * g.ToeDepth * d.BelangerDepth)
	d.EnergyLoss = in.Height + eUp - eDown

	chk, err := CheckOutlet(c, d, in, in.Q)
	if err != nil {
		return Drop{}, err
	}
	d.TailwaterDepth, d.TailwaterRatio, d.JumpState = chk.TailwaterDepth, chk.TailwaterRatio, chk.JumpState
	d.WallHeight = chk.TailwaterDepth + 0.85*g.CriticalDepth
	d.TransitionLength = TransitionLength(in.Downstream.Section.TopWidth(d.DownstreamDepth)-in.CrestWidth, orDefault(in.TransitionAngle, DefaultTransitionAngle))
	d.Outlet = chk
	return d, nil
}

// CheckOutlet runs the tailwater check of drop d at discharge q (m³/s): the
// energy equation from the basin end (rectangular, width B, floor d_s below
// the downstream bed) into the downstream canal at normal depth, with the
// outlet loss coefficient Co = in.TransitionLoss (reference sheet §4.3):
//
//	−d_s + TW + α·V_b²/2g = yn + α·V_d²/2g + Co·(α·V_b²/2g − α·V_d²/2g)
//
// solved for the subcritical root TW, then compared with the sequent depth
// Rand's relations require: swept out below it, drowned above
// in.DrownedRatio times it, in the basin between. Warnings name a small
// margin, a drowned jump, an oscillating jump, yc/h outside Rand's range and
// a crest submerged by tailwater.
func CheckOutlet(c Consts, d Drop, in DropInput, q float64) (OutletCheck, error) {
	if !positive(q) {
		return OutletCheck{}, fmt.Errorf("%w: check discharge %g m³/s must be positive", ErrInvalid, q)
	}
	if err := in.Downstream.Validate(); err != nil {
		return OutletCheck{}, fmt.Errorf("downstream canal: %w", err)
	}
	// The drop's own geometry governs; in supplies the canal and the margins.
	in.CrestWidth, in.Height = d.CrestWidth, d.BedFall
	o := OutletCheck{Q: q}
	h := d.BedFall + d.CrestRaise + d.BasinDepression
	b := d.CrestWidth
	qu := q / b
	g := Rand(c, qu, h)
	o.CriticalDepth, o.DropNumber, o.ToeDepth, o.SequentDepth = g.CriticalDepth, g.DropNumber, g.ToeDepth, g.SequentDepth
	o.ToeFroude = qu / (g.ToeDepth * math.Sqrt(c.G*g.ToeDepth))
	e, err := newBasinEnd(c, in, b, q)
	if err != nil {
		return OutletCheck{}, err
	}
	o.DownstreamDepth = e.yn
	var critical bool
	if o.TailwaterDepth, critical, err = e.tailwater(d.BasinDepression); err != nil {
		return OutletCheck{}, err
	}
	o.TailwaterRatio = o.TailwaterDepth / o.SequentDepth
	o.Margin = o.TailwaterDepth - o.SequentDepth
	small := orDefault(in.SmallMarginRatio, DefaultSmallMarginRatio)
	drowned := orDefault(in.DrownedRatio, DefaultDrownedRatio)
	const slack = 1e-9 // ratios designed to a bound land on it to solver tolerance
	switch {
	case o.TailwaterRatio < 1-slack || critical:
		o.JumpState = SweptOut
	case o.TailwaterRatio > drowned:
		o.JumpState = Drowned
	default:
		o.JumpState = InBasin
	}
	if e.steepFroude > 0 {
		// No tailwater from a supercritical canal: report, do not fail, so
		// that a list of flows still gets its other checks.
		o.JumpState = SweptOut
		o.Warnings = append(o.Warnings, fmt.Sprintf("the downstream canal is steep at this flow (Froude %.2f at normal depth) and gives the basin no tailwater; the jump cannot be held by lowering the floor", e.steepFroude))
	} else if o.RequiredDepression, err = requiredDepression(c, in, d.CrestRaise, q, 1); err != nil {
		return OutletCheck{}, err
	}

	switch o.JumpState {
	case SweptOut:
		if e.steepFroude > 0 {
			break
		}
		msg := fmt.Sprintf("jump swept out: the tailwater is only %.2f × the sequent depth the jump needs; lower the basin floor to the required depression, widen the basin, or use an SAF-type basin",
			o.TailwaterRatio)
		if critical {
			msg = "jump swept out: the downstream canal cannot take the basin's flow subcritically, so the basin end chokes at critical depth; lower the basin floor to the required depression or widen the basin"
		}
		o.Warnings = append(o.Warnings, msg)
	case Drowned:
		o.Warnings = append(o.Warnings, fmt.Sprintf("drowned jump (tailwater %.2f × the sequent depth): a submerged roller is a drowning hazard; check the nappe landing against the basin length", o.TailwaterRatio))
	default:
		if o.TailwaterRatio < small-slack {
			o.Warnings = append(o.Warnings, fmt.Sprintf("small tailwater margin: tailwater is %.3f × the sequent depth (below %.2f)", o.TailwaterRatio, small))
		}
	}
	if o.JumpState != SweptOut && o.ToeFroude >= 2.5 && o.ToeFroude < 4.5 {
		o.Warnings = append(o.Warnings, fmt.Sprintf("oscillating jump (F1 = %.2f): waves travel downstream; consider a USBR Type IV basin or wave suppressors", o.ToeFroude))
	}
	if x := g.CriticalDepth / h; x < RandMinYcOverH || x > RandMaxYcOverH {
		o.Warnings = append(o.Warnings, fmt.Sprintf("yc/h = %.3f is outside the range of Rand's relations (%.3f–%.0f): results are extrapolated", x, RandMinYcOverH, RandMaxYcOverH))
	}
	// Tailwater above the crest beyond 0.7·dc (UFC 3-230-16FA, drop
	// structures chapter: the basin works with higher tailwater as long as
	// the depth above the weir does not exceed 0.7·dc).
	if above := o.TailwaterDepth - h; above > 0.7*g.CriticalDepth {
		o.Warnings = append(o.Warnings, fmt.Sprintf("the tailwater stands %.2f·yc above the crest (more than 0.7·yc): the crest is submerged and the upstream level rises", above/g.CriticalDepth))
	}
	return o, nil
}

// basinEnd is the energy balance between the basin end and the downstream
// canal at one discharge, prepared once so that the tailwater can be solved
// for many floor depressions:
//
//	TW + beta/TW² = ds + rhs0,   beta = (1 − Co)·α·Q²/(2g·B²)
type basinEnd struct {
	yn   float64 // downstream normal depth, m
	rhs0 float64 // yn + (1 − Co)·α·V_d²/2g, m
	beta float64 // m³
	tm   float64 // depth at which the left side is least, m

	steepFroude float64 // Froude number of the downstream normal flow when it is supercritical, else 0
}

func newBasinEnd(c Consts, in DropInput, b, q float64) (basinEnd, error) {
	ch := in.Downstream
	yn, err := NormalDepth(c, ch.Section, q, ch.N, ch.Slope)
	if err != nil {
		return basinEnd{}, fmt.Errorf("downstream canal: %w", err)
	}
	w := (1 - in.TransitionLoss) * c.alpha()
	vd := Velocity(ch.Section, q, yn)
	beta := w * q * q / (2 * c.G * b * b)
	e := basinEnd{yn: yn, rhs0: yn + w*vd*vd/(2*c.G), beta: beta, tm: math.Cbrt(2 * beta)}
	if f := Froude(c, ch.Section, q, yn); f >= 1 {
		e.steepFroude = f
	}
	return e, nil
}

// tailwater returns the subcritical depth TW at the basin end with the floor
// ds below the downstream bed. critical is true when the downstream canal
// has too little energy for a subcritical basin-end depth; TW is then the
// basin's critical depth.
func (e basinEnd) tailwater(ds float64) (tw float64, critical bool, err error) {
	rhs := ds + e.rhs0
	if e.beta == 0 {
		return rhs, false, nil
	}
	if 1.5*e.tm >= rhs {
		return e.tm, true, nil
	}
	beta := e.beta
	tw, err = solveBracket(e.tm, rhs, 1e-12*rhs, func(t float64) (float64, float64) {
		return t + beta/(t*t) - rhs, 1 - 2*beta/(t*t*t)
	})
	return tw, false, err
}

// randSequent is Rand's y2 = 1.66·h·D_N^0.27 alone (see [Rand]).
func randSequent(c Consts, q, h float64) float64 {
	return 1.66 * h * math.Pow(q*q/(c.G*h*h*h), 0.27)
}

// requiredDepression returns the basin floor depression d_s ≥ 0 (m) at which
// the tailwater at discharge q reaches ratio times Rand's sequent depth for
// the drop height Δ + p + d_s. Raising d_s raises TW almost one for one and
// y2 only slowly, so the difference rises with d_s and bisection applies.
func requiredDepression(c Consts, in DropInput, p, q, ratio float64) (float64, error) {
	b := in.CrestWidth
	e, err := newBasinEnd(c, in, b, q)
	if err != nil {
		return 0, err
	}
	if e.steepFroude > 0 {
		return 0, fmt.Errorf("%w: the downstream canal is steep at %.4g m³/s (Froude %.2f at normal depth), so it gives the basin no tailwater; a drop needs a mild canal below it", ErrInfeasible, q, e.steepFroude)
	}
	var solveErr error
	gap := func(ds float64) float64 {
		tw, critical, err := e.tailwater(ds)
		if err != nil {
			solveErr = err
			return math.Inf(1)
		}
		if critical {
			// The canal cannot take the basin's flow subcritically: the
			// basin end chokes and holds no jump. Deepening the floor
			// adds the energy that lifts the flow out subcritically.
			return math.Inf(-1)
		}
		return tw - ratio*randSequent(c, q/b, in.Height+p+ds)
	}
	if gap(0) >= 0 {
		return 0, solveErr
	}
	hi, err := expandUp(math.Max(in.Height, 0.1), gap)
	if err != nil {
		return 0, err
	}
	lo := 0.0
	for hi-lo > 1e-10*math.Max(1, hi) {
		mid := 0.5 * (lo + hi)
		if gap(mid) >= 0 {
			hi = mid
		} else {
			lo = mid
		}
	}
	return hi, solveErr
}
