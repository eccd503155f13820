package planner

import (
	"bytes"
	"fmt"
	"strings"

	"canalstep/planner/hydraulics"
)

func ExampleTemplate_Areas() {
	// The reference sheet's §6.1 template: b = 3 m, inner slopes 1.5:1,
	// banks 2.1 m high and 4 m wide, outer slopes 2:1.
	t := Template{BedWidth: 3, SideSlope: 1.5, BankHeight: 2.1, BankTopWidth: 4, OuterSlope: 2, CutSlope: 2}
	for _, d := range []float64{0, 1, 1.40871} {
		cut, fill := t.Areas(d)
		fmt.Printf("bed %.5f m below ground: cut %.3f m², fill %.3f m²\n", d, cut, fill)
	}
	// Output:
	// bed 0.00000 m below ground: cut 0.000 m², fill 32.235 m²
	// bed 1.00000 m below ground: cut 4.500 m², fill 13.035 m²
	// bed 1.40871 m below ground: cut 7.203 m², fill 7.203 m²
}

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
	p := Problem{Chainage: c, Ground: g, Flow: 1, Section: hydraulics.Section{BottomWidth: 1, SideSlope: 1.5},
		Roughness: 0.025, MaxVelocity: 0.9, MinVelocity: 0.3}
	for _, a := range Compare(p, nil, [][]float64{{0.5}, {1.0}, {1.5}, {0.5, 1.0, 1.5}}, 2) {
		if a.Err != nil {
			fmt.Println(a.DropHeights, a.Err)
			continue
		}
		fmt.Printf("heights %v m: %d drops, cut %.0f m³, fill %.0f m³, cost %.0f\n", a.DropHeights,
			a.Result.Totals.DropCount, a.Result.Totals.CutVolume, a.Result.Totals.FillVolume, a.Result.Totals.TotalCost)
	}
	// Output:
	// [0.5] planner: no feasible profile: maximum fill height cannot be met between chainage 740.00 m and 780.00 m; the ground falls faster than the steepest grade and the allowed drops at their minimum spacing can follow; allow higher drops, more fill or a shorter minimum reach
	// heights [1] m: 12 drops, cut 3390 m³, fill 1878 m³, cost 340548
	// heights [1.5] m: 8 drops, cut 4428 m³, fill 2014 m³, cost 289773
	// heights [0.5 1 1.5] m: 8 drops, cut 4428 m³, fill 2014 m³, cost 289773
}

func ExampleWriteLP() {
	c, g := []float64{0, 10, 20, 30, 40, 50}, []float64{10, 9.8, 9.6, 9.3, 9.1, 8.9}
	p := Problem{Chainage: c, Ground: g, Flow: 0.5, Section: hydraulics.Section{BottomWidth: 0.5, SideSlope: 1},
		Roughness: 0.015, MaxVelocity: 2.0, MinVelocity: 0.6, Grades: []float64{0.005}, DropHeights: []float64{0.5},
		MinReach: 5, Template: &Template{BedWidth: 2, BankHeight: 1}, Costs: &Costs{Cut: 4, Fill: 6, DropFixed: 300}}
	var b bytes.Buffer
	if err := WriteLP(&b, p, &Settings{BasinLength: func(float64) float64 { return 4 }, TransitionLength: 1}); err != nil {
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
