package earthwork_test

import (
	"fmt"

	"canalstep/planner/earthwork"
)

func ExampleLevel() {
	// The reference sheet's §6.1 template: b = 3 m, inner slopes 1.5:1,
	// banks 2.1 m high and 4 m wide, outer slopes 2:1; level ground at
	// 100 m, the bed 0, 1 and 1.40871 m (the balancing depth) below it.
	t := earthwork.Template{BedWidth: 3, SideSlope: 1.5, BankHeight: 2.1, BankTopWidth: 4, OuterSlope: 2, CutSlope: 2}
	s := earthwork.Level(t, []float64{100})
	for _, bed := range []float64{100, 99, 98.59129} {
		cut, fill := s.Areas(0, bed)
		_, right := s.Catch(0, bed)
		fmt.Printf("bed %.5f m: cut %.3f m², fill %.3f m², toe of fill %.3f m right\n", bed, cut, fill, right.Offset)
	}
	// Output:
	// bed 100.00000 m: cut 0.000 m², fill 32.235 m², toe of fill 12.850 m right
	// bed 99.00000 m: cut 4.500 m², fill 13.035 m², toe of fill 10.850 m right
	// bed 98.59129 m: cut 7.203 m², fill 7.203 m², toe of fill 10.033 m right
}

func ExampleCross() {
	// Ground falling 1 in 10 to the left across a canal with 1.5:1 cut
	// slopes, sampled every 5 m to 20 m each side; the bed 2.5 m below the
	// centre-line ground, so the right bank stands in cut and the left one
	// on fill.
	t := earthwork.Template{BedWidth: 3, SideSlope: 1.5, BankHeight: 2.1, BankTopWidth: 4, OuterSlope: 2, CutSlope: 1.5}
	offs := []float64{-20, -15, -10, -5, 0, 5, 10, 15, 20}
	lv := make([]float64, len(offs))
	for i, x := range offs {
		lv[i] = 50 + 0.1*x
	}
	s, err := earthwork.Cross(t, [][]float64{offs}, [][]float64{lv})
	if err != nil {
		fmt.Println(err)
		return
	}
	cut, fill := s.Areas(0, 47.5)
	left, right := s.Catch(0, 47.5)
	fmt.Printf("cut %.3f m², fill %.3f m²\n", cut, fill)
	for _, c := range []earthwork.Catch{left, right} {
		kind := "toe of fill"
		if c.Cut {
			kind = "top of cut"
		}
		fmt.Printf("%s at %.3f m, level %.3f m, found %v\n", kind, c.Offset, c.Level, c.Found)
	}
	// Slope stakes by hand (x3 = 8.65 m, top of bank 49.6 m): right
	// 8.65 + 1.5·1.265/(1 − 0.15) = 10.882 m, left 8.65 + 2·0.465/(1 − 0.2)
	// = 9.8125 m; the areas match the shoelace derivation of the tests.
	// Output:
	// cut 22.310 m², fill 1.333 m²
	// toe of fill at -9.812 m, level 49.019 m, found true
	// top of cut at 10.882 m, level 51.088 m, found true
}

func ExampleCosts_Earthwork() {
	// 100 m³ of cut and 50 m³ of fill in one segment at the default prices:
	// 90 m³ of the cut is usable, 50 m³ builds the banks, the surplus goes
	// to spoil.
	c := earthwork.DefaultCosts()
	waste, borrow := c.Balance(100, 50)
	fmt.Printf("waste %.2f m³, borrow %.2f m³, cost %.2f\n", waste, borrow, c.Earthwork(100, 50))
	// Output:
	// waste 44.44 m³, borrow 0.00 m³, cost 788.89
}
