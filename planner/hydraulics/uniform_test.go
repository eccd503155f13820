package hydraulics

import (
	"errors"
	"math"
	"testing"
)

// relClose reports whether got is within rel relative (or abs absolute, for
// values near zero) of want.
func relClose(got, want, rel float64) bool {
	return math.Abs(got-want) <= rel*math.Abs(want)
}

// chowChannel is the trapezoid of Chow (1959), Ch. 6 uniform-flow example
// (believed Example 6-2; number and printed answer from memory): b 20 ft,
// z 2, S0 0.0016, n 0.025, Q 400 cfs, US units with k = 1.486, g = 32.2.
var chowChannel = Channel{Section{BottomWidth: 20, SideSlope: 2}, 0.025, 0.0016}

// si1 is case SI-1 of the reference sheet §1.8 (values [C], g = 9.81).
var si1 = Channel{Section{BottomWidth: 3, SideSlope: 1.5}, 0.015, 0.0004}

func TestNormalDepthPublished(t *testing.T) {
	// T1-1: Chow (1959) prints yn = 3.36 ft (from memory). Tolerance
	// ±0.01 ft: the printed answer has two decimals.
	y, err := NormalDepth(US(), chowChannel.Section, 400, chowChannel.N, chowChannel.Slope)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(y-3.36) > 0.01 {
		t.Errorf("Chow normal depth = %.4f ft, printed 3.36 ft ± 0.01", y)
	}
}

func TestCriticalDepthPublished(t *testing.T) {
	// T1-2: Chow (1959) Ch. 4, same channel, yc ≈ 2.15 ft (printed value
	// from memory); ±0.01 ft for a two-decimal printed answer.
	y, err := CriticalDepth(US(), chowChannel.Section, 400)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(y-2.15) > 0.01 {
		t.Errorf("Chow critical depth = %.4f ft, printed 2.15 ft ± 0.01", y)
	}
}

func TestSectionCases(t *testing.T) {
	// Values computed by the reference sheet §1.8 ([C]: its own float64
	// computation, not published numbers) with g = 32.2 (US) or 9.81 (SI),
	// α = 1. Tolerance 1e-4 relative: the sheet prints 4–5 figures.
	c11 := US()
	tests := []struct {
		name                    string
		c                       Consts
		ch                      Channel
		q                       float64
		yn, v, f, yc, emin, e   float64
		area, perim, top, r, hd float64
	}{
		{name: "T1-1/T1-2 Chow", c: c11, ch: chowChannel, q: 400,
			yn: 3.3610, v: 4.4538, f: 0.4790, yc: 2.1477, emin: 3.0602, e: 3.6690,
			area: 89.812, perim: 35.031, top: 33.444, r: 2.5638, hd: 2.6854},
		{name: "SI-1", c: SI(), ch: si1, q: 10,
			yn: 1.4961, v: 1.2746, f: 0.3976, yc: 0.8916, emin: 1.2324, e: 1.5789,
			area: 7.8456, perim: 8.3942, top: 7.4882, r: 0.9347},
		{name: "SI-2", c: SI(), ch: Channel{Section{1.5, 1.5}, 0.025, 0.0003}, q: 2,
			yn: 1.1666, v: 0.5275, f: 0.1934, yc: 0.4787, emin: 0.6595},
		{name: "R-1 rectangle", c: SI(), ch: Channel{Section{4, 0}, 0.014, 0.001}, q: 6,
			yn: 0.9086, v: 1.6508, f: 0.5529, yc: 0.6121, emin: 0.9182},
	}
	const tol = 1e-4
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			s := tc.ch.Section
			yn, err := NormalDepth(tc.c, s, tc.q, tc.ch.N, tc.ch.Slope)
			if err != nil {
				t.Fatal(err)
			}
			yc, err := CriticalDepth(tc.c, s, tc.q)
			if err != nil {
				t.Fatal(err)
			}
			check := func(what string, got, want float64) {
				t.Helper()
				// The sheet rounds to 4 decimals: allow half a unit of the
				// last printed digit as well.
				if want != 0 && !relClose(got, want, tol) && math.Abs(got-want) > 5e-5 {
					t.Errorf("%s = %.6g, want %.6g (tol %g rel or 5e-5 abs)", what, got, want, tol)
				}
			}
			check("yn", yn, tc.yn)
			check("V", Velocity(s, tc.q, yn), tc.v)
			check("F", Froude(tc.c, s, tc.q, yn), tc.f)
			check("E", SpecificEnergy(tc.c, s, tc.q, yn), tc.e)
			check("yc", yc, tc.yc)
			check("Emin", SpecificEnergy(tc.c, s, tc.q, yc), tc.emin)
			check("A", s.Area(yn), tc.area)
			check("P", s.WettedPerimeter(yn), tc.perim)
			check("T", s.TopWidth(yn), tc.top)
			check("R", s.HydraulicRadius(yn), tc.r)
			check("D", s.HydraulicDepth(yn), tc.hd)
		})
	}
}

func TestNormalDepthBadInput(t *testing.T) {
	s := si1.Section
	tests := []struct {
		name        string
		s           Section
		q, n, slope float64
	}{
		{"negative flow", s, -1, 0.015, 0.001},
		{"NaN flow", s, math.NaN(), 0.015, 0.001},
		{"zero roughness", s, 10, 0, 0.001},
		{"zero slope", s, 10, 0.015, 0},
		{"adverse slope", s, 10, 0.015, -0.001},
		{"negative side slope", Section{3, -1}, 10, 0.015, 0.001},
		{"no area", Section{0, 0}, 10, 0.015, 0.001},
		{"negative width", Section{-3, 1}, 10, 0.015, 0.001},
	}
	for _, tc := range tests {
		if _, err := NormalDepth(SI(), tc.s, tc.q, tc.n, tc.slope); !errors.Is(err, ErrInvalid) {
			t.Errorf("%s: err = %v, want ErrInvalid", tc.name, err)
		}
	}
	if y, err := NormalDepth(SI(), s, 0, 0.015, 0.001); err != nil || y != 0 {
		t.Errorf("zero flow: %v, %v; want 0, nil", y, err)
	}
}
