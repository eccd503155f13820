package earthwork

import (
	"errors"
	"math"
	"testing"
)

func TestCostsEarthwork(t *testing.T) {
	// The formula of the Costs doc, worked by hand with DefaultCosts (cut 4,
	// fill 6, shrinkage 0.1, waste 2, borrow 8); exact analytic cases,
	// tolerance for rounding only.
	c := DefaultCosts()
	cases := []struct {
		cut, fill, waste, borrow, cost float64
	}{
		{100, 50, 100 - 50/0.9, 0, 4*100 + 6*50 + 2*(100-50/0.9)}, // surplus: 90 m³ usable for 50 m³ of fill
		{100, 120, 0, 120 - 90, 4*100 + 6*120 + 8*30},             // shortfall of 30 m³ compacted
		{100, 90, 0, 0, 4*100 + 6*90},                             // balanced: usable cut = fill
		{0, 0, 0, 0, 0},
	}
	for _, k := range cases {
		w, b := c.Balance(k.cut, k.fill)
		if math.Abs(w-k.waste) > 1e-12 || math.Abs(b-k.borrow) > 1e-12 {
			t.Errorf("Balance(%g, %g) = %g, %g, want %g, %g", k.cut, k.fill, w, b, k.waste, k.borrow)
		}
		if v := c.Earthwork(k.cut, k.fill); math.Abs(v-k.cost) > 1e-9 {
			t.Errorf("Earthwork(%g, %g) = %.12g, want %.12g", k.cut, k.fill, v, k.cost)
		}
	}
	if d := c.Drop(1.5); d != 15000+10000*1.5 {
		t.Errorf("Drop(1.5) = %g, want 30000 (DefaultCosts doc)", d)
	}
	if err := c.Validate(); err != nil {
		t.Error(err)
	}
	for _, bad := range []Costs{{Shrinkage: 1}, {Shrinkage: -0.1}, {Cut: -1}, {Fill: math.NaN()}, {Borrow: math.Inf(1)}, {DropFixed: -1}} {
		if err := bad.Validate(); !errors.Is(err, ErrInput) {
			t.Errorf("%+v: error %v, want ErrInput", bad, err)
		}
	}
}
