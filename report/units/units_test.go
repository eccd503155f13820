package units

import (
	"fmt"
	"math"
	"testing"
)

// The foot is 0.3048 m exactly, the yard 0.9144 m (international yard and
// pound agreement of 1959; from memory); the US units below follow from it.
func TestConversions(t *testing.T) {
	for _, tc := range []struct {
		q        Quantity
		us, si   float64
		symUS    string
		suffixSI string
	}{
		{Length, 1, 0.3048, "ft", "_m"},
		{Area, 1, 0.3048 * 0.3048, "ft²", "_m2"},
		{Volume, 1, 0.9144 * 0.9144 * 0.9144, "yd³", "_m3"},
		{Flow, 1, 0.3048 * 0.3048 * 0.3048, "cfs", "_m3s"},
		{Velocity, 1, 0.3048, "ft/s", "_mps"},
		{PricePerVolume, 1, 1 / (0.9144 * 0.9144 * 0.9144), "per yd³", "_per_m3"},
		{PricePerLength, 1, 1 / 0.3048, "per ft", "_per_m"},
		{Ratio, 1, 1, "", ""},
	} {
		// Exact definitions: equal to the last bit or within one rounding.
		if got := US.ToSI(tc.q, tc.us); math.Abs(got-tc.si) > 1e-15*tc.si {
			t.Errorf("quantity %d: 1 US unit = %.17g SI, want %.17g", tc.q, got, tc.si)
		}
		if back := US.FromSI(tc.q, US.ToSI(tc.q, 123.456)); math.Abs(back-123.456) > 1e-12 {
			t.Errorf("quantity %d: round trip 123.456 gives %.15g", tc.q, back)
		}
		if SI.ToSI(tc.q, 7) != 7 || US.Symbol(tc.q) != tc.symUS || SI.Suffix(tc.q) != tc.suffixSI {
			t.Errorf("quantity %d: SI identity, symbol %q or suffix %q wrong", tc.q, US.Symbol(tc.q), SI.Suffix(tc.q))
		}
	}
	if SI.Column("ground", Length) != "ground_m" || US.Column("cum_cut", Volume) != "cum_cut_yd3" {
		t.Errorf("column names %q %q", SI.Column("ground", Length), US.Column("cum_cut", Volume))
	}
	// Station labels: 1+250.00 is 1,250 m; 100-ft stations 12+50.00 are
	// 1,250 ft = 381 m (common practice of the trade, no source).
	if SI.Station(1250) != "1+250.00" || US.Station(381) != "12+50.00" {
		t.Errorf("labels %q %q", SI.Station(1250), US.Station(381))
	}
}

func TestValue(t *testing.T) {
	sys := US
	x := 5.0 // an SI default: 5 m
	v := NewValue(&x, Length, &sys).Within(0, 100, true)
	if v.String() != "16.4042" || v.Type() != "ft" {
		t.Errorf("default prints %q (%s), want 5 m in ft", v.String(), v.Type())
	}
	if err := v.Set("10"); err != nil || math.Abs(x-3.048) > 1e-12 {
		t.Errorf("Set(10 ft): %v, stored %.6f m", err, x)
	}
	for _, bad := range []string{"", "ten", "NaN", "Inf", "1e400", "0", "-1", "400"} {
		if err := v.Set(bad); err == nil {
			t.Errorf("Set(%q) accepted", bad)
		}
	}
	if got := v.RangeText(); got != "(0, 328.084] ft" {
		t.Errorf("range %q", got)
	}
	nan := math.NaN()
	if s := NewValue(&nan, Length, &sys).String(); s != "" {
		t.Errorf("an unset value prints %q", s)
	}
}

func ExampleSystem_Format() {
	fmt.Println(SI.Format(Length, 1.25, 3), US.Format(Length, 1.25, 3), US.Format(Volume, 1000, 1))
	// Output: 1.250 m 4.101 ft 1308.0 yd³
}
