package hydraulics

import (
	"math"
	"testing"
)

// TestDesignDropSI is T4-2 of the reference sheet §4.3 ([C]: the sheet's own
// computation, Rand + energy equation, g = 9.81): SI-1 canal on both sides,
// bed fall 1.2 m, crest and basin 3.0 m wide, depression designed for
// tailwater = Rand y2 (HoldRatio 1). Tolerance ±1e-3 m on depths and ±2e-3 m
// on d_s (nested bisections in the sheet); lengths ±0.01 m as printed.
func TestDesignDropSI(t *testing.T) {
	tests := []struct {
		co                            float64
		ds, h, dn, ld, y1, f1, y2, lb float64
		lbSAF                         float64
	}{
		{co: 0.0, ds: 0.475, h: 1.691, dn: 0.2344, ld: 4.914, y1: 0.493, f1: 3.08, y2: 1.897, lb: 14.60, lbSAF: 7.57},
		{co: 0.5, ds: 0.429, h: 1.644, dn: 0.2548, ld: 4.888, y1: 0.497, f1: 3.04, y2: 1.887, lb: 14.48, lbSAF: 7.55},
	}
	for _, tc := range tests {
		d, err := DesignDrop(SI(), DropInput{Q: 10, CrestWidth: 3, Height: 1.2, Downstream: si1, TransitionLoss: tc.co, HoldRatio: 1})
		if err != nil {
			t.Fatal(err)
		}
		for _, c := range []struct {
			what      string
			got, want float64
			tol       float64
		}{
			{"crest raise p", d.CrestRaise, 0.0153, 1e-4}, // sheet: p = 0.0153 m
			{"critical depth", d.CriticalDepth, 1.0424, 1e-4},
			{"control width", d.ControlWidth, 2.956, 1e-3}, // sheet §4.5: B_c = 2.956 m
			{"d_s", d.BasinDepression, tc.ds, 2e-3},
			{"h", d.DropHeight, tc.h, 2e-3},
			{"D_N", d.DropNumber, tc.dn, 1e-3},
			{"Ld", d.ImpactLength, tc.ld, 5e-3},
			{"y1", d.ToeDepth, tc.y1, 1e-3},
			{"F1", d.ToeFroude, tc.f1, 0.01},
			{"y2", d.SequentDepth, tc.y2, 1e-3},
			{"TW", d.TailwaterDepth, tc.y2, 1e-3},
			{"LB plain", d.BasinLength, tc.lb, 0.01},
			{"LB SAF", d.SAFBasinLength, tc.lbSAF, 0.01},
			{"energy loss = Δ", d.EnergyLoss, 1.2, 1e-9}, // §3.4: equals the bed fall when both canals match
		} {
			if math.Abs(c.got-c.want) > c.tol {
				t.Errorf("Co %.1f: %s = %.5f, want %.5f ± %g", tc.co, c.what, c.got, c.want, c.tol)
			}
		}
		if d.JumpState != InBasin {
			t.Errorf("Co %.1f: jump state %s, want in_basin", tc.co, d.JumpState)
		}
	}
}
