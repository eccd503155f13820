package planner

import (
	"bytes"
	"fmt"
	"strings"

	"canalstep/planner/earthwork"
	"canalstep/planner/hydraulics"
)

func ExampleDefaultGrades() {
	// Velocity limits give grades 0.0002–0.0013; a 1 cm step at 10 m stations.
	for _, g := range DefaultGrades(0.0002, 0.0013, 0.01, 10, 5) {
		fmt.Printf("%.4f ", g)
	}
	fmt.Println()
	// Output:
	// 0.0013 0.0011 0.0009 0.0007 0.0005
}

func ExampleCompare() {
	// 1 km of an earth canal (1 m³/s, 1 m bed, 1.5:1 sides, n = 0.025,
	// 0.3–0.9 m/s) on ground falling 1.5 %, default grades and prices.
	c, g := make([]float64, 101), make([]float64, 101)
	for i := range c {
		c[i], g[i] = 10*float64(i), 80-0.015*10*float64(i)
	}
	d := DefaultDesign()
	d.Flow, d.Section, d.Roughness = 1, hydraulics.Section{BottomWidth: 1, SideSlope: 1.5}, 0.025
	d.MaxVelocity, d.MinVelocity = 0.9, 0.3
	p := Problem{Stations: LevelProfile(c, g), Design: d}
	for _, a := range Compare(p, [][]float64{{0.5}, {1.0}, {1.5}, {0.5, 1.0, 1.5}}, 2) {
		if a.Err != nil {
			fmt.Println(a.DropHeights, a.Err)
			continue
		}
		fmt.Printf("heights %v m: %d drops, cut %.0f m³, fill %.0f m³, cost %.0f\n", a.DropHeights,
			a.Result.Totals.DropCount, a.Result.Totals.CutVolume, a.Result.Totals.FillVolume, a.Result.Totals.TotalCost)
	}
	// Output:
	// [0.5] planner: no feasible profile: max fill height cannot be met at chainage 780.00 m: the ground falls faster than the steepest grade 0.0020106 and drops of 0.50 m at their spacing can follow: the bed stays 0.04 m above the fill limit
	// heights [1] m: 12 drops, cut 3390 m³, fill 1878 m³, cost 340548
	// heights [1.5] m: 8 drops, cut 4428 m³, fill 2014 m³, cost 289773
	// heights [0.5 1 1.5] m: 8 drops, cut 4428 m³, fill 2014 m³, cost 289773
}

func ExampleWriteLP() {
	c, g := []float64{0, 10, 20, 30, 40, 50}, []float64{10, 9.8, 9.6, 9.3, 9.1, 8.9}
	d := linearDesign()
	d.Grades, d.DropHeights = []float64{0.005}, []float64{0.5}
	d.Costs = earthwork.Costs{Cut: 4, Fill: 6, DropFixed: 300}
	d.BasinLength = func(float64) float64 { return 4 }
	p := Problem{Stations: LevelProfile(c, g), Design: d}
	var b bytes.Buffer
	if err := WriteLP(&b, p); err != nil {
		fmt.Println(err)
		return
	}
	lines := strings.Split(b.String(), "\n")
	fmt.Println(strings.Join(lines[:3], "\n"))
	// Output:
	// \ canalstep single-grade drop placement: 6 stations, grade 0.005, drop 0.5 m
	// Minimize
	//  cost: + 40 u0 + 60 v0 + 40 p1 + 60 q1 + 40 u1 + 60 v1
}
