package hydraulics_test

import (
	"fmt"

	"canalstep/planner/hydraulics"
)

// The canal of these examples is case SI-1 of the reference sheet: bed
// 3 m, side slopes 1.5:1, concrete n = 0.015, slope 0.0004, 10 m³/s.
var (
	canal = hydraulics.Section{BottomWidth: 3, SideSlope: 1.5}
	reach = hydraulics.Channel{Section: canal, N: 0.015, Slope: 0.0004}
)

func ExampleSection() {
	y := 1.5 // m
	fmt.Printf("A = %.4f m², P = %.4f m, T = %.4f m, R = %.4f m, D = %.4f m\n",
		canal.Area(y), canal.WettedPerimeter(y), canal.TopWidth(y), canal.HydraulicRadius(y), canal.HydraulicDepth(y))
	// Output: A = 7.8750 m², P = 8.4083 m, T = 7.5000 m, R = 0.9366 m, D = 1.0500 m
}

func ExampleNormalDepth() {
	yn, err := hydraulics.NormalDepth(hydraulics.SI(), canal, 10, 0.015, 0.0004)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("normal depth %.4f m\n", yn)
	// Output: normal depth 1.4961 m
}

// Chow's trapezoid in US units (reference sheet T1-1), run as printed.
func ExampleNormalDepth_us() {
	yn, _ := hydraulics.NormalDepth(hydraulics.US(), hydraulics.Section{BottomWidth: 20, SideSlope: 2}, 400, 0.025, 0.0016)
	fmt.Printf("normal depth %.2f ft\n", yn)
	// Output: normal depth 3.36 ft
}

func ExampleCriticalDepth() {
	yc, _ := hydraulics.CriticalDepth(hydraulics.SI(), canal, 10)
	fmt.Printf("critical depth %.4f m\n", yc)
	// Output: critical depth 0.8916 m
}

func ExampleVelocity() {
	fmt.Printf("V = %.4f m/s\n", hydraulics.Velocity(canal, 10, 1.4961))
	// Output: V = 1.2746 m/s
}

func ExampleFroude() {
	fmt.Printf("F = %.4f\n", hydraulics.Froude(hydraulics.SI(), canal, 10, 1.4961))
	// Output: F = 0.3976
}

func ExampleSpecificEnergy() {
	fmt.Printf("E = %.4f m\n", hydraulics.SpecificEnergy(hydraulics.SI(), canal, 10, 1.4961))
	// Output: E = 1.5789 m
}

func ExampleFrictionSlope() {
	fmt.Printf("Sf = %.3e m/m at 2.0 m depth\n", hydraulics.FrictionSlope(hydraulics.SI(), canal, 10, 0.015, 2.0))
	// Output: Sf = 1.260e-04 m/m at 2.0 m depth
}

func ExampleVelocityLimitedSlopes() {
	// Earth canal, n = 0.025: at most 1.07 m/s, at least 0.6 m/s.
	lim, err := hydraulics.VelocityLimitedSlopes(hydraulics.SI(), canal, 10, 0.025, 1.07, 0.6)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("slope %.3e to %.3e m/m (depth %.3f to %.3f m)\n", lim.MinSlope, lim.MaxSlope, lim.DepthAtMin, lim.DepthAtMax)
	// Output: slope 1.443e-04 to 6.895e-04 m/m (depth 2.480 to 1.689 m)
}

func ExampleKennedySlopeLimits() {
	_, err := hydraulics.KennedySlopeLimits(hydraulics.SI(), canal, 10, 0.025, 0.76, 1)
	fmt.Println(err)
	// Output: hydraulics: infeasible design: the flattest non-silting slope 0.00036913 is steeper than the steepest non-eroding slope 0.00027283; widen or narrow the bed, change the side slope or roughness, line the canal, or relax a velocity limit
}

func ExampleFreeboard() {
	f := hydraulics.Freeboard(10, 1.4961, hydraulics.FreeboardRule{})
	fmt.Printf("freeboard %.3f m (C = %.3f m), bank height %.3f m\n", f, hydraulics.USBRFreeboardCoefficient(10), 1.4961+f)
	// Output: freeboard 0.972 m (C = 0.632 m), bank height 2.468 m
}

func ExampleRand() {
	g := hydraulics.Rand(hydraulics.SI(), 3.0, 1.5) // q = 3 m²/s over a 1.5 m drop
	fmt.Printf("D_N %.5f, yc %.4f m, Ld %.4f m, yp %.4f m, y1 %.4f m, y2 %.4f m\n",
		g.DropNumber, g.CriticalDepth, g.ImpactLength, g.PoolDepth, g.ToeDepth, g.SequentDepth)
	// Output: D_N 0.27183, yc 0.9717 m, Ld 4.5375 m, yp 1.1263 m, y1 0.4657 m, y2 1.7517 m
}

func ExampleBelangerSequent() {
	fmt.Printf("y2 = %.4f m\n", hydraulics.BelangerSequent(hydraulics.SI(), 3.0, 0.4657))
	// Output: y2 = 1.7657 m
}

func ExampleDesignDrop() {
	d, err := hydraulics.DesignDrop(hydraulics.SI(), hydraulics.DropInput{
		Q: 10, CrestWidth: 3, Height: 1.2, Downstream: reach, HoldFlows: []float64{2.5, 5},
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("crest raise %.3f m, basin floor %.3f m below bed, drop %.3f m\n", d.CrestRaise, d.BasinDepression, d.DropHeight)
	fmt.Printf("y1 %.3f m, y2 %.3f m, tailwater %.3f m (%s), basin %.2f m long\n", d.ToeDepth, d.SequentDepth, d.TailwaterDepth, d.JumpState, d.BasinLength)
	fmt.Printf("head loss %.3f m\n", d.EnergyLoss)
	// Output:
	// crest raise 0.015 m, basin floor 0.678 m below bed, drop 1.893 m
	// y1 0.478 m, y2 1.938 m, tailwater 2.132 m (in_basin), basin 15.10 m long
	// head loss 1.200 m
}

func ExampleCheckOutlet() {
	in := hydraulics.DropInput{Q: 10, CrestWidth: 3, Height: 1.2, Downstream: reach}
	d, _ := hydraulics.DesignDrop(hydraulics.SI(), in)
	for _, q := range []float64{2.5, 5, 10} {
		o, _ := hydraulics.CheckOutlet(hydraulics.SI(), d, in, q)
		fmt.Printf("%4.1f m³/s: tailwater %.3f m, needs %.3f m: %s\n", q, o.TailwaterDepth, o.SequentDepth, o.JumpState)
	}
	// Output:
	//  2.5 m³/s: tailwater 1.410 m, needs 0.917 m: drowned
	//  5.0 m³/s: tailwater 1.727 m, needs 1.333 m: in_basin
	// 10.0 m³/s: tailwater 2.132 m, needs 1.938 m: in_basin
}

func ExampleTransitionLoss() {
	tr, _ := hydraulics.LookupTransition("warped")
	fmt.Printf("warped outlet, 2.2 → 1.27 m/s: loss %.4f m\n", hydraulics.TransitionLoss(hydraulics.SI(), tr.Outlet, 2.2, 1.27))
	// Output: warped outlet, 2.2 → 1.27 m/s: loss 0.0329 m
}

func ExampleStandardStep() {
	// M1 backwater upstream of a structure that holds 2.0 m.
	depths, _ := hydraulics.StandardStep(hydraulics.SI(), reach, 10, 2.0, []float64{-2000, -1000, -500, 0})
	for _, y := range depths {
		fmt.Printf("%.3f m ", y)
	}
	fmt.Println()
	// Output: 1.598 m 1.752 m 1.865 m 2.000 m
}

func ExampleDirectStep() {
	x, _ := hydraulics.DirectStep(hydraulics.SI(), reach, 10, []float64{2.0, 1.9, 1.8})
	fmt.Printf("%.1f m %.1f m %.1f m\n", x[0], x[1], x[2])
	// Output: 0.0 m -362.8 m -773.3 m
}

func ExampleDesignNotch() {
	// Cd = 0.70 is a placeholder, not a calibrated coefficient.
	nt, _ := hydraulics.DesignNotch(hydraulics.SI(), reach, 10, 5, 0.70)
	fmt.Printf("sill %.4f m, sides %.4f H:V\n", nt.SillWidth, nt.SideFlare)
	// Output: sill 1.4490 m, sides 0.9982 H:V
}

func ExampleDischarge() {
	q := hydraulics.Discharge(hydraulics.SI(), canal, 0.015, 0.0004, 1.4961)
	fmt.Printf("Manning discharge at 1.4961 m: %.3f m³/s\n", q)
	// Output: Manning discharge at 1.4961 m: 10.000 m³/s
}

func ExampleSection_DepthForArea() {
	fmt.Printf("depth for 7.875 m²: %.4f m\n", canal.DepthForArea(7.875))
	// Output: depth for 7.875 m²: 1.5000 m
}

func ExampleSlopeForVelocity() {
	s, y, _ := hydraulics.SlopeForVelocity(hydraulics.SI(), canal, 10, 0.025, 0.76)
	fmt.Printf("V = 0.76 m/s on slope %.4e m/m at depth %.4f m\n", s, y)
	// Output: V = 0.76 m/s on slope 2.7283e-04 m/m at depth 2.1260 m
}

func ExampleKennedyVelocity() {
	fmt.Printf("Kennedy V0 at 1.9739 m depth, m = 1: %.4f m/s\n", hydraulics.KennedyVelocity(1, 1.9739))
	// Output: Kennedy V0 at 1.9739 m depth, m = 1: 0.8499 m/s
}

func ExampleBankHeight() {
	fmt.Printf("bank %.3f m above the bed with 0.5 m freeboard\n", hydraulics.BankHeight(10, 1.4961, hydraulics.FreeboardRule{Fixed: 0.5}))
	// Output: bank 1.996 m above the bed with 0.5 m freeboard
}

func ExampleCrestRaise() {
	// Upstream energy 1.5789 m, critical depth 1.0424 m on a 3 m crest.
	fmt.Printf("crest raise %.4f m\n", hydraulics.CrestRaise(1.5789, 1.0424))
	// Output: crest raise 0.0153 m
}

func ExampleControlWidth() {
	fmt.Printf("bed-level control width %.3f m\n", hydraulics.ControlWidth(hydraulics.SI(), 10, 1.5789))
	// Output: bed-level control width 2.956 m
}

func ExampleJumpType() {
	for _, f1 := range []float64{1.5, 3.0, 6.0} {
		fmt.Printf("F1 %.1f: %s\n", f1, hydraulics.JumpType(f1))
	}
	// Output:
	// F1 1.5: undular
	// F1 3.0: oscillating
	// F1 6.0: steady
}

func ExampleJumpLength() {
	y1, y2, f1 := 0.1691, 1.0167, 4.591 // m, m, toe Froude number
	fmt.Printf("6.9(y2-y1) %.2f m, 6.1 y2 %.2f m, Silvester %.2f m\n",
		hydraulics.JumpLength(y1, y2), hydraulics.JumpLengthUSBR(y2), hydraulics.JumpLengthSilvester(y1, f1))
	// Output: 6.9(y2-y1) 5.85 m, 6.1 y2 6.20 m, Silvester 6.00 m
}

func ExampleNotchDischarge() {
	nt := hydraulics.Notch{SillWidth: 1.449, SideFlare: 0.9982}
	fmt.Printf("%.3f m³/s at 1.4961 m head (Cd 0.70, placeholder)\n", hydraulics.NotchDischarge(hydraulics.SI(), nt, 0.70, 1.4961))
	// Output: 10.000 m³/s at 1.4961 m head (Cd 0.70, placeholder)
}

func ExampleWaterSurfaceProfile() {
	// M2 drawdown towards a free overfall at full canal width: critical
	// depth at the brink (chainage 0), bank 2.2 m above the bed.
	yc, _ := hydraulics.CriticalDepth(hydraulics.SI(), canal, 10)
	pts, _ := hydraulics.WaterSurfaceProfile(hydraulics.SI(), reach, 10, yc, []float64{-1000, -300, -50, 0}, 2.2)
	for _, p := range pts {
		fmt.Printf("%6.0f m: depth %.3f m, V %.3f m/s, F %.2f, freeboard %.3f m\n", p.Chainage, p.Depth, p.Velocity, p.Froude, p.Freeboard)
	}
	// Output:
	//  -1000 m: depth 1.431 m, V 1.357 m/s, F 0.43, freeboard 0.769 m
	//   -300 m: depth 1.294 m, V 1.564 m/s, F 0.52, freeboard 0.906 m
	//    -50 m: depth 1.100 m, V 1.955 m/s, F 0.69, freeboard 1.100 m
	//      0 m: depth 0.892 m, V 2.586 m/s, F 1.00, freeboard 1.308 m
}
