package hydraulics

import (
	"math"
	"math/rand/v2"
	"testing"
)

// randomCase draws a canal from a seeded generator over wide ranges (bed
// width 0–200 m, side slope 0–4, Q 1e-4–1e4 m³/s, n 0.009–0.06, slope
// 1e-6–0.1), excluding the section without area.
func randomCase(r *rand.Rand) (Section, float64, float64, float64) {
	s := Section{BottomWidth: 200 * r.Float64() * r.Float64(), SideSlope: 4 * r.Float64()}
	switch r.IntN(6) {
	case 0:
		s.SideSlope = 0
	case 1:
		s.BottomWidth = 0
	}
	if s.BottomWidth+s.SideSlope == 0 {
		s.BottomWidth = 1
	}
	q := math.Pow(10, -4+8*r.Float64())
	n := 0.009 + 0.051*r.Float64()
	slope := math.Pow(10, -6+5*r.Float64())
	return s, q, n, slope
}

// Property tests of reference sheet §1.8 ([D]: exact consequences of the
// equations). Manning at the solved depth returns Q to 1e-9 relative; α·Q²T/(gA³)
// = 1 and F = 1 at critical depth to 1e-9; normal depth falls strictly as
// the slope rises.
func TestUniformFlowProperties(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 1))
	c := SI()
	for i := 0; i < 5000; i++ {
		s, q, n, slope := randomCase(r)
		yn, err := NormalDepth(c, s, q, n, slope)
		if err != nil {
			t.Fatalf("%+v q %g n %g S %g: %v", s, q, n, slope, err)
		}
		if got := Discharge(c, s, n, slope, yn); !relClose(got, q, 1e-9) {
			t.Fatalf("%+v q %g n %g S %g: Manning at yn %g gives %.15g", s, q, n, slope, yn, got)
		}
		yn2, err := NormalDepth(c, s, q, n, slope*1.01)
		if err != nil || !(yn2 < yn) {
			t.Fatalf("%+v q %g: yn %g at S %g, %g at 1.01·S (%v)", s, q, yn, slope, yn2, err)
		}
		yc, err := CriticalDepth(c, s, q)
		if err != nil {
			t.Fatal(err)
		}
		a := s.Area(yc)
		if crit := q * q * s.TopWidth(yc) / (c.G * a * a * a); math.Abs(crit-1) > 1e-9 {
			t.Fatalf("%+v q %g: Q²T/(gA³) = %.15g at yc", s, q, crit)
		}
		if f := Froude(c, s, q, yc); math.Abs(f-1) > 1e-9 {
			t.Fatalf("%+v q %g: Froude %.15g at yc", s, q, f)
		}
	}
}

// TestSpecificEnergyMinimum: E(yc) is the minimum of E(y) (central
// differences, [D]), and for a rectangle Emin = 1.5·yc and Vc² = g·yc.
func TestSpecificEnergyMinimum(t *testing.T) {
	c := SI()
	for _, s := range []Section{{3, 1.5}, {4, 0}, {0, 2}} {
		yc, _ := CriticalDepth(c, s, 10)
		h := 1e-4 * yc
		e0 := SpecificEnergy(c, s, 10, yc)
		el, er := SpecificEnergy(c, s, 10, yc-h), SpecificEnergy(c, s, 10, yc+h)
		if !(el > e0 && er > e0) || math.Abs(er-el)/(2*h) > 1e-6 {
			t.Errorf("%+v: E(yc) = %.12g not a minimum (%.12g, %.12g)", s, e0, el, er)
		}
		if s.SideSlope == 0 {
			v := Velocity(s, 10, yc)
			if !relClose(e0, 1.5*yc, 1e-12) || !relClose(v*v, c.G*yc, 1e-12) {
				t.Errorf("rectangle: Emin %.12g vs 1.5yc %.12g; Vc² %.12g vs g·yc %.12g", e0, 1.5*yc, v*v, c.G*yc)
			}
		}
	}
}

// TestSIUSSameAnswer: the Chow channel run in feet with g and k converted
// exactly from SI (g = 9.81/0.3048 ft/s², k = 0.3048^(-1/3)) gives the SI
// depths to 1e-9 (reference sheet §1.8, [D]). With the printed US constants
// (32.2, 1.486) the answer moves by less than 1e-3 relative.
func TestSIUSSameAnswer(t *testing.T) {
	const ft = 0.3048
	usExact := Consts{G: 9.81 / ft, K: math.Pow(ft, -1.0/3)}
	sUS := chowChannel.Section
	sSI := Section{BottomWidth: sUS.BottomWidth * ft, SideSlope: sUS.SideSlope}
	qUS := 400.0
	qSI := qUS * cfsM3
	ynUS, _ := NormalDepth(usExact, sUS, qUS, 0.025, 0.0016)
	ynSI, _ := NormalDepth(SI(), sSI, qSI, 0.025, 0.0016)
	ycUS, _ := CriticalDepth(usExact, sUS, qUS)
	ycSI, _ := CriticalDepth(SI(), sSI, qSI)
	if !relClose(ynUS*ft, ynSI, 1e-9) || !relClose(ycUS*ft, ycSI, 1e-9) {
		t.Errorf("yn %.12g ft = %.12g m vs SI %.12g m; yc %.12g m vs %.12g m", ynUS, ynUS*ft, ynSI, ycUS*ft, ycSI)
	}
	ynPrinted, _ := NormalDepth(US(), sUS, qUS, 0.025, 0.0016)
	ycPrinted, _ := CriticalDepth(US(), sUS, qUS)
	if !relClose(ynPrinted*ft, ynSI, 1e-3) || !relClose(ycPrinted*ft, ycSI, 1e-3) {
		t.Errorf("printed US constants: yn %.6g m vs %.6g m; yc %.6g m vs %.6g m", ynPrinted*ft, ynSI, ycPrinted*ft, ycSI)
	}
	// The drop number is dimensionless: the same drop in SI and in feet.
	gSI := Rand(SI(), 3, 1.5)
	gUS := Rand(Consts{G: 9.81 / ft, K: 1}, 3/(ft*ft), 1.5/ft)
	if !relClose(gSI.DropNumber, gUS.DropNumber, 1e-12) || !relClose(gSI.ToeDepth, gUS.ToeDepth*ft, 1e-12) || !relClose(gSI.ImpactLength, gUS.ImpactLength*ft, 1e-12) {
		t.Errorf("Rand SI %+v vs US %+v", gSI, gUS)
	}
}

// TestSolverExtremes: the solver converges for extreme but valid input.
func TestSolverExtremes(t *testing.T) {
	c := SI()
	for _, tc := range []struct {
		s           Section
		q, n, slope float64
	}{
		{Section{1000, 0}, 1e-9, 0.01, 0.5},
		{Section{1e-9, 100}, 1e7, 0.2, 1e-9},
		{Section{0, 1e-6}, 1, 0.01, 1e-3},
		{Section{1e-3, 0}, 1e6, 0.01, 1e-3},
		{Section{5, 1e6}, 1, 0.01, 1e-3},
	} {
		yn, err := NormalDepth(c, tc.s, tc.q, tc.n, tc.slope)
		if err != nil || !relClose(Discharge(c, tc.s, tc.n, tc.slope, yn), tc.q, 1e-9) {
			t.Errorf("%+v q %g: yn %g, %v", tc.s, tc.q, yn, err)
		}
		yc, err := CriticalDepth(c, tc.s, tc.q)
		if err != nil || math.Abs(Froude(c, tc.s, tc.q, yc)-1) > 1e-9 {
			t.Errorf("%+v q %g: yc %g, %v", tc.s, tc.q, yc, err)
		}
	}
}
