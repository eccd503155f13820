package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"strings"
	"text/tabwriter"

	"canalstep/planner"
	"canalstep/planner/hydraulics"
	"canalstep/report"
	"canalstep/report/units"
)

// parseFlows reads a comma-separated list of discharges as fractions of the
// design flow ("0.25,0.5,1"). Every item must be a finite positive number.
func parseFlows(s string) ([]float64, error) {
	sys := units.SI
	return (&designFlags{sys: &sys}).parseList("flows", s, units.Ratio, "check_flow", "0.25,0.5,1")
}

// dropFlowResult is the outlet check at one discharge.
type dropFlowResult struct {
	Fraction           sig6     `json:"fraction"`
	Flow               sig6     `json:"flow"`
	DownstreamDepth    sig6     `json:"downstream_depth"`
	TailwaterDepth     sig6     `json:"tailwater_depth"`
	SequentDepth       sig6     `json:"sequent_depth"`
	TailwaterRatio     sig6     `json:"tailwater_ratio"`
	Margin             sig6     `json:"margin"`
	JumpState          string   `json:"jump_state"`
	ToeFroude          sig6     `json:"toe_froude"`
	RequiredDepression sig6     `json:"required_depression"`
	Warnings           []string `json:"warnings"`
}

// notchResult is a trapezoidal control notch in the crest.
type notchResult struct {
	SillWidth   sig6 `json:"sill_width"`
	SideFlare   sig6 `json:"side_flare"` // horizontal per vertical
	Coefficient sig6 `json:"discharge_coefficient"`
}

// dropResult is the JSON output of `canalstep drop`, in the units of
// --units (lengths m or ft, discharge m³/s or cfs).
type dropResult struct {
	Units             string           `json:"units"`
	LengthUnit        string           `json:"length_unit"`
	FlowUnit          string           `json:"flow_unit"`
	Flow              sig6             `json:"flow"`
	CrestWidth        sig6             `json:"crest_width"`
	BedFall           sig6             `json:"bed_fall"`
	Transition        string           `json:"transition"`
	OutletLoss        sig6             `json:"outlet_loss_coefficient"`
	UpstreamDepth     sig6             `json:"upstream_depth"`
	DownstreamDepth   sig6             `json:"downstream_depth"`
	CrestRaise        sig6             `json:"crest_raise"`
	ControlWidth      sig6             `json:"control_width"`
	BasinDepression   sig6             `json:"basin_depression"`
	DropHeight        sig6             `json:"drop_height"`
	DropNumber        sig6             `json:"drop_number"`
	CriticalDepth     sig6             `json:"critical_depth"`
	BrinkDepth        sig6             `json:"brink_depth"`
	ImpactLength      sig6             `json:"impact_length"`
	PoolDepth         sig6             `json:"pool_depth"`
	ToeDepth          sig6             `json:"toe_depth"`
	ToeFroude         sig6             `json:"toe_froude"`
	JumpType          string           `json:"jump_type"`
	SequentDepth      sig6             `json:"sequent_depth"`
	BelangerSequent   sig6             `json:"belanger_sequent_depth"`
	JumpLength        sig6             `json:"jump_length"`
	BasinLength       sig6             `json:"basin_length"`
	EndSill           sig6             `json:"end_sill"`
	SAFBasinLength    sig6             `json:"saf_basin_length"`
	SAFMinTailwater   sig6             `json:"saf_min_tailwater"`
	WallHeight        sig6             `json:"wall_height"`
	TransitionLength  sig6             `json:"transition_length"`
	Notch             *notchResult     `json:"notch,omitempty"`
	TailwaterDepth    sig6             `json:"tailwater_depth"`
	JumpState         string           `json:"jump_state"`
	FallLoss          sig6             `json:"fall_loss"`
	JumpLoss          sig6             `json:"jump_loss"`
	EnergyLoss        sig6             `json:"energy_loss"`
	DissipatedPowerKW sig6             `json:"dissipated_power_kw"`
	Flows             []dropFlowResult `json:"flows"`
	Warnings          []string         `json:"warnings"` // about the structure; each flow has its own
	SafetyNotice      string           `json:"safety_notice"`
}

// runDrop implements `canalstep drop`: a straight drop with its stilling
// basin, designed at the design flow and checked at a list of flows.
func runDrop(_ context.Context, args []string, stdout, _ io.Writer) error {
	sys, _, err := preParse(args)
	if err != nil {
		return err
	}
	fs := newFlagSet("drop", stdout)
	n := numberFlags{fs, &sys}
	var flow, width, height, crestRaise, depression, notchCd float64
	holdRatio := hydraulics.DefaultSmallMarginRatio
	L := units.Length
	n.add(&flow, units.Flow, "flow", planner.Ranges["flow"], "design discharge (m³/s, or cfs with --units us)")
	n.add(&width, L, "width", planner.Ranges["crest_width"], "width of the crest and of the rectangular basin (m or ft); the canal bed width is a common choice")
	n.add(&height, L, "height", planner.Ranges["drop_height"], "bed fall at the drop, upstream bed to downstream bed (m or ft)")
	var cf canalFlags
	cf.register(n, "canal (the same above and below the drop)")
	transition := fs.String("transition", "none", "outlet transition type for the loss coefficient Co: none (0, conservative for sweep-out), warped, cylinder-quadrant, simplified-straight, straight-line, square-ended (Chow 1959 ch. 17 after Hinds 1928)")
	flowsFlag := fs.String("flows", "0.25,0.5,1", "flows to check, as fractions of the design flow, each in "+planner.Ranges["check_flow"].String()+"; the basin floor is set to hold the jump at all of them")
	n.add(&holdRatio, units.Ratio, "hold-ratio", holdRange, "tailwater / required sequent depth the basin floor is designed for (1.10: common practice)")
	n.add(&crestRaise, L, "crest-raise", structureRange, "fix the crest height above the upstream bed (m or ft) instead of designing it")
	n.add(&depression, L, "depression", structureRange, "fix the basin floor depression below the downstream bed (m or ft) instead of designing it")
	n.add(&notchCd, units.Ratio, "notch-cd", notchCoeffRange, "also design a trapezoidal control notch that holds normal depth at 100 % and 50 % of the design flow, with this calibrated discharge coefficient (no default: take it from a calibrated source)")
	var of outputFlags
	u, ok, err := of.parseCommand(fs, args, stdout,
		"canalstep drop --flow Q --width B --height H --bottom-width B --side-slope Z --roughness N --slope S [--transition TYPE] [--flows 0.25,0.5,1] [--units si|us] [--json]",
		"A straight (vertical) drop with a plain stilling basin: Rand (1955) geometry, hydraulic jump,\nbasin length, crest raise to hold the upstream normal depth, basin floor depression, and the\ntailwater check (swept_out, in_basin, drowned) at each flow.\nNumbers are in the --units unit; each flag's range is the physical range its value must lie in.")
	if !ok {
		return err
	}
	if err := requireFlags(fs, "flow", "width", "height", "bottom-width", "side-slope", "roughness", "slope"); err != nil {
		return err
	}
	tr, err := hydraulics.LookupTransition(*transition)
	if err != nil {
		return usagef("--transition: %v", err)
	}
	fractions, err := parseFlows(*flowsFlag)
	if err != nil {
		return err
	}

	lm := unitLength(u)
	c := hydraulics.SI()
	q := flow
	in := hydraulics.DropInput{
		Q: q, CrestWidth: width, Height: height,
		Downstream: cf.channel(), TransitionLoss: tr.Outlet, HoldRatio: holdRatio,
	}
	for _, f := range fractions {
		if f != 1 {
			in.HoldFlows = append(in.HoldFlows, f*q)
		}
	}
	if fs.Changed("crest-raise") {
		in.CrestRaise = &crestRaise
	}
	if fs.Changed("depression") {
		in.Depression = &depression
	}
	d, err := hydraulics.DesignDrop(c, in)
	if err != nil {
		if errors.Is(err, hydraulics.ErrInvalid) {
			return usageError{fmt.Errorf("drop: %w", err)}
		}
		return fmt.Errorf("drop: %w", err)
	}
	res := dropResult{
		Units: unitsName(u), LengthUnit: u.LengthUnit(), FlowUnit: flowUnit(u),
		Flow: sig6(u.FromSI(units.Flow, q)), CrestWidth: sig6(width / lm), BedFall: sig6(height / lm),
		Transition: tr.Name, OutletLoss: sig6(tr.Outlet),
		UpstreamDepth: sig6(d.UpstreamDepth / lm), DownstreamDepth: sig6(d.DownstreamDepth / lm),
		CrestRaise: sig6(d.CrestRaise / lm), ControlWidth: sig6(d.ControlWidth / lm),
		BasinDepression: sig6(d.BasinDepression / lm), DropHeight: sig6(d.DropHeight / lm),
		DropNumber: sig6(d.DropNumber), CriticalDepth: sig6(d.CriticalDepth / lm), BrinkDepth: sig6(d.BrinkDepth / lm),
		ImpactLength: sig6(d.ImpactLength / lm), PoolDepth: sig6(d.PoolDepth / lm), ToeDepth: sig6(d.ToeDepth / lm),
		ToeFroude: sig6(d.ToeFroude), JumpType: d.JumpType,
		SequentDepth: sig6(d.SequentDepth / lm), BelangerSequent: sig6(d.BelangerDepth / lm),
		JumpLength: sig6(d.JumpLength / lm), BasinLength: sig6(d.BasinLength / lm), EndSill: sig6(d.EndSill / lm),
		SAFBasinLength: sig6(d.SAFBasinLength / lm), SAFMinTailwater: sig6(d.SAFMinTailwater / lm),
		WallHeight: sig6(d.WallHeight / lm), TransitionLength: sig6(d.TransitionLength / lm),
		TailwaterDepth: sig6(d.TailwaterDepth / lm), JumpState: string(d.JumpState),
		FallLoss: sig6(d.FallLoss / lm), JumpLoss: sig6(d.JumpLoss / lm), EnergyLoss: sig6(d.EnergyLoss / lm),
		// P = ρ·g·Q·ΔH with ρ = 1000 kg/m³ (reference sheet §3.4).
		DissipatedPowerKW: sig6(1000 * c.G * q * d.EnergyLoss / 1000),
		Warnings:          append([]string{}, d.Warnings...),
		SafetyNotice:      report.SafetyNotice,
	}
	if fs.Changed("notch-cd") {
		nt, err := hydraulics.DesignNotch(c, in.Downstream, q, q/2, notchCd)
		if err != nil {
			return fmt.Errorf("drop: control notch: %w", err)
		}
		res.Notch = &notchResult{SillWidth: sig6(nt.SillWidth / lm), SideFlare: sig6(nt.SideFlare), Coefficient: sig6(notchCd)}
	}
	for _, f := range fractions {
		o, err := hydraulics.CheckOutlet(c, d, in, f*q)
		if err != nil {
			return fmt.Errorf("drop: outlet check at %g × design flow: %w", f, err)
		}
		res.Flows = append(res.Flows, dropFlowResult{
			Fraction: sig6(f), Flow: sig6(f * u.FromSI(units.Flow, q)),
			DownstreamDepth: sig6(o.DownstreamDepth / lm), TailwaterDepth: sig6(o.TailwaterDepth / lm),
			SequentDepth: sig6(o.SequentDepth / lm), TailwaterRatio: sig6(o.TailwaterRatio), Margin: sig6(o.Margin / lm),
			JumpState: string(o.JumpState), ToeFroude: sig6(o.ToeFroude), RequiredDepression: sig6(o.RequiredDepression / lm),
			Warnings: append([]string{}, o.Warnings...),
		})
	}
	if of.asJSON {
		return writeJSON(stdout, res)
	}
	return printDrop(stdout, res, u)
}

func printDrop(w io.Writer, r dropResult, u report.Units) error {
	L, Q := u.LengthUnit(), flowUnit(u)
	fmt.Fprintf(w, "Straight drop: %.4g %s over a %.3f %s bed fall, crest and basin %.3f %s wide (%s units)\n",
		float64(r.Flow), Q, float64(r.BedFall), L, float64(r.CrestWidth), L, strings.ToUpper(r.Units))
	sections := []struct {
		title string
		rows  func(t *table)
	}{
		{"Canal and inlet control", func(t *table) {
			t.add("upstream normal depth", "%.3f %s", float64(r.UpstreamDepth), L)
			t.add("downstream normal depth", "%.3f %s", float64(r.DownstreamDepth), L)
			t.add("crest raise above upstream bed", "%.3f %s", float64(r.CrestRaise), L)
			t.add("control width at bed level", "%.3f %s", float64(r.ControlWidth), L)
			if r.Notch != nil {
				t.add("or a control notch (Cd "+fmt.Sprintf("%.3g", float64(r.Notch.Coefficient))+")", "sill %.3f %s wide, sides %.3f H : 1 V", float64(r.Notch.SillWidth), L, float64(r.Notch.SideFlare))
			}
		}},
		{"Drop (Rand 1955)", func(t *table) {
			t.add("drop height, crest to basin floor", "%.3f %s", float64(r.DropHeight), L)
			t.add("drop number D_N", "%.4f", float64(r.DropNumber))
			t.add("critical depth on the crest", "%.3f %s", float64(r.CriticalDepth), L)
			t.add("brink depth (0.715 yc)", "%.3f %s", float64(r.BrinkDepth), L)
			t.add("impact length, wall to toe", "%.3f %s", float64(r.ImpactLength), L)
			t.add("pool depth", "%.3f %s", float64(r.PoolDepth), L)
			t.add("toe depth y1", "%.3f %s", float64(r.ToeDepth), L)
			t.add("toe Froude number F1", "%.2f (%s jump)", float64(r.ToeFroude), r.JumpType)
			t.add("required sequent depth y2", "%.3f %s (Belanger from y1: %.3f %s)", float64(r.SequentDepth), L, float64(r.BelangerSequent), L)
		}},
		{"Stilling basin (plain, horizontal floor)", func(t *table) {
			t.add("floor depression below downstream bed", "%.3f %s", float64(r.BasinDepression), L)
			t.add("jump length 6.9 (y2 - y1)", "%.3f %s", float64(r.JumpLength), L)
			t.add("basin length", "%.3f %s", float64(r.BasinLength), L)
			t.add("end sill height (0.4 yc)", "%.3f %s", float64(r.EndSill), L)
			t.add("SAF basin alternative: length", "%.3f %s, tailwater at least %.3f %s", float64(r.SAFBasinLength), L, float64(r.SAFMinTailwater), L)
			t.add("tailwater at design flow", "%.3f %s (%s)", float64(r.TailwaterDepth), L, r.JumpState)
			t.add("side walls above floor (TW + 0.85 yc)", "%.3f %s", float64(r.WallHeight), L)
			t.add("outlet transition length (12.5°)", "%.3f %s", float64(r.TransitionLength), L)
		}},
		{"Energy", func(t *table) {
			t.add("lost in the fall and pool", "%.3f %s", float64(r.FallLoss), L)
			t.add("lost in the jump", "%.3f %s", float64(r.JumpLoss), L)
			t.add("head loss canal to canal", "%.3f %s", float64(r.EnergyLoss), L)
			t.add("power dissipated", "%.1f kW", float64(r.DissipatedPowerKW))
		}},
	}
	var t table
	for _, s := range sections {
		t.heading(s.title)
		s.rows(&t)
	}
	if err := t.write(w); err != nil {
		return err
	}
	fmt.Fprintf(w, "Outlet check (transition %s, Co = %.2f)\n", r.Transition, float64(r.OutletLoss))
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintf(tw, "  flow (%s)\ttailwater (%s)\tneeds y2 (%s)\tTW/y2\tmargin (%s)\tdepression needed (%s)\tstate\t\n", Q, L, L, L, L)
	for _, f := range r.Flows {
		fmt.Fprintf(tw, "  %.4g\t%.3f\t%.3f\t%.3f\t%.3f\t%.3f\t%s\t\n", float64(f.Flow), float64(f.TailwaterDepth), float64(f.SequentDepth),
			float64(f.TailwaterRatio), float64(f.Margin), float64(f.RequiredDepression), f.JumpState)
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	warnings := append([]string(nil), r.Warnings...)
	for _, f := range r.Flows {
		for _, s := range f.Warnings {
			warnings = append(warnings, fmt.Sprintf("at %.4g %s: %s", float64(f.Flow), Q, s))
		}
	}
	writeWarnings(w, warnings)
	fmt.Fprintf(w, "\n%s\n", report.SafetyNotice)
	return nil
}
