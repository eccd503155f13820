package main

import (
	"io"
	"math"
	"testing"
)

// TestUSDropHeightsAndStep: with --units us, drop heights left at their
// default stay 0.5, 1.0 and 1.5 m on a 1 cm grid, and heights given in feet
// (1 ft = 0.3048 m exactly, by definition) get a 0.01 ft grid so that they
// are whole steps.
func TestUSDropHeightsAndStep(t *testing.T) {
	base := []string{"--units", "us", "--flow", "35", "--bottom-width", "6", "--side-slope", "1.5", "--roughness", "0.025", "--max-velocity", "3"}
	for _, tc := range []struct {
		extra   []string
		heights []float64 // m
		step    float64   // m
	}{
		{nil, []float64{0.5, 1, 1.5}, 0.01},
		{[]string{"--drop-heights", "2,3"}, []float64{0.6096, 0.9144}, 0.003048},
		{[]string{"--drop-heights", "2,3", "--step", "0.1"}, []float64{0.6096, 0.9144}, 0.03048},
	} {
		args := append(append([]string{}, base...), tc.extra...)
		s, err := newPlanSetup("plan", args, io.Discard)
		if err != nil {
			t.Fatal(err)
		}
		if ok, err := s.parse(args); !ok || err != nil {
			t.Fatalf("%v: %v", tc.extra, err)
		}
		d, err := s.design.design("plan")
		if err != nil {
			t.Fatalf("%v: %v", tc.extra, err)
		}
		const tol = 1e-12 // exact conversions, rounding only
		if len(d.DropHeights) != len(tc.heights) || math.Abs(d.Step-tc.step) > tol {
			t.Fatalf("%v: heights %v, step %g; want %v, %g", tc.extra, d.DropHeights, d.Step, tc.heights, tc.step)
		}
		for i, h := range tc.heights {
			if math.Abs(d.DropHeights[i]-h) > tol {
				t.Errorf("%v: height %d is %.6f m, want %.6f m", tc.extra, i, d.DropHeights[i], h)
			}
		}
	}
}
