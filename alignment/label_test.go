package alignment

import (
	"math"
	"strings"
	"testing"
)

// Labels follow the station notation of route surveying: metric km+metres
// ("1+234.567", here to two decimals as the issue asks) and US customary
// 100-ft stations "12+34.56" = 1234.56 ft (NAVEDTRA Equipment Operator—Basic,
// ch. 15, seen as a secondary summary; the issue's own examples 1+250.00 and
// 12+50.00). A leading minus for negative chainage is common practice, no
// source. 1 ft = 0.3048 m exactly (international yard and pound agreement,
// 1959), so 1250 ft = 381 m exactly.
var stationLabels = []struct {
	m     float64
	us    bool
	label string
}{
	{1250, false, "1+250.00"},
	{0, false, "0+000.00"},
	{7.5, false, "0+007.50"},
	{999.996, false, "1+000.00"}, // rounding carries into the kilometre
	{1234567.891, false, "1234+567.89"},
	{-12.3, false, "-0+012.30"},
	{-1250, false, "-1+250.00"},
	{-0.004, false, "0+000.00"}, // rounds to zero: no sign
	{381, true, "12+50.00"},
	{0.3048, true, "0+01.00"},
	{30.48, true, "1+00.00"},
	{1, true, "0+03.28"}, // 1 m = 3.2808399 ft
	{-3.048, true, "-0+10.00"},
	{1609.344, true, "52+80.00"}, // the statute mile, 5280 ft
}

func TestFormatStation(t *testing.T) {
	for _, tt := range stationLabels {
		if got := FormatStation(tt.m, tt.us); got != tt.label {
			t.Errorf("FormatStation(%v, us=%v) = %q, want %q", tt.m, tt.us, got, tt.label)
		}
	}
	for _, v := range []float64{math.NaN(), math.Inf(1), 2e12} {
		got := FormatStation(v, false)
		if strings.Contains(got, "+") && !strings.HasPrefix(got, "+Inf") {
			t.Errorf("FormatStation(%v) = %q, want a plain number", v, got)
		}
		if _, err := ParseStation(got, false); err == nil {
			t.Errorf("ParseStation(%q) accepted a label outside trade notation", got)
		}
	}
}

func TestParseStation(t *testing.T) {
	// Parsing each canonical label gives its chainage back, to 0.005 of a
	// unit (labels are rounded to hundredths).
	for _, tt := range stationLabels {
		got, err := ParseStation(tt.label, tt.us)
		if err != nil {
			t.Errorf("ParseStation(%q): %v", tt.label, err)
			continue
		}
		unit := 1.0
		if tt.us {
			unit = FootM
		}
		if math.Abs(got-tt.m) > 0.005*unit+1e-9 {
			t.Errorf("ParseStation(%q, us=%v) = %v, want %v ± %v", tt.label, tt.us, got, tt.m, 0.005*unit)
		}
		if back := FormatStation(got, tt.us); back != tt.label {
			t.Errorf("FormatStation(ParseStation(%q)) = %q", tt.label, back)
		}
	}
	// Non-canonical but valid forms (exact decimal values).
	for _, tt := range []struct {
		s    string
		us   bool
		want float64
	}{
		{"1+250", false, 1250},
		{" 1+250.5 ", false, 1250.5},
		{"0+012.3456", false, 12.3456},
		{"01+000", false, 1000},
		{"12+50", true, 381},
		{"-0+10", true, -3.048},
	} {
		got, err := ParseStation(tt.s, tt.us)
		if err != nil || math.Abs(got-tt.want) > 1e-9 {
			t.Errorf("ParseStation(%q, us=%v) = %v, %v; want %v", tt.s, tt.us, got, err, tt.want)
		}
	}
	for _, tt := range []struct {
		s  string
		us bool
	}{
		{"", false}, {"1250", false}, {"1+25", false}, {"1+2500", false}, {"12+50.00", false},
		{"1+250.00", true}, {"+250.00", false}, {"1+250.", false}, {"1+250.0a", false},
		{"1+ 250", false}, {"--1+250", false}, {"1e3+000", false}, {"0x1+000", false},
		{"1+250+000", false}, {"Inf+000", false}, {"99999999999+000.00", false},
	} {
		if got, err := ParseStation(tt.s, tt.us); err == nil {
			t.Errorf("ParseStation(%q, us=%v) = %v, want an error", tt.s, tt.us, got)
		}
	}
	_, err := ParseStation("12+5", true)
	if err == nil || err.Error() != `station "12+5": the part after "+" must start with exactly 2 digits; want 100-ft stations+feet such as 12+50.00` {
		t.Errorf("ParseStation error = %v", err)
	}
}

func TestFormatChainage(t *testing.T) {
	// 381 m = 1250 ft exactly (1959 definition of the foot).
	for _, tt := range []struct {
		m    float64
		us   bool
		want string
	}{
		{1250, false, "1250.00 m"}, {381, true, "1250.00 ft"}, {-0.5, false, "-0.50 m"},
	} {
		if got := FormatChainage(tt.m, tt.us); got != tt.want {
			t.Errorf("FormatChainage(%v, %v) = %q, want %q", tt.m, tt.us, got, tt.want)
		}
	}
}

func TestRanges(t *testing.T) {
	st := make([]Station, 21)
	for i := range st {
		st[i].Chainage = 1200 + 10*float64(i) // stations 1+200 ... 1+400
	}
	for _, tt := range []struct {
		idx  []int
		us   bool
		want string
	}{
		{nil, false, ""},
		{[]int{2}, false, "chainage 1+220.00"},
		{[]int{3, 4, 5}, false, "chainage 1+230.00 to 1+250.00"},
		{[]int{10, 8, 9, 3, 4, 5, 4}, false, "chainage 1+230.00 to 1+250.00 and 1+280.00 to 1+300.00"},
		{[]int{0, 2, 4}, false, "chainage 1+200.00, 1+220.00 and 1+240.00"},
		{[]int{0, 2, 4, 6, 8, 10, 12, 14}, false, "chainage 1+200.00, 1+220.00, 1+240.00, 1+260.00, 1+280.00 and 3 more ranges"},
		{[]int{0, 2, 4, 6, 8, 10}, false, "chainage 1+200.00, 1+220.00, 1+240.00, 1+260.00, 1+280.00 and 1 more range"},
		{[]int{0, 1}, true, "chainage 39+37.01 to 39+69.82"}, // 1200 m = 3937.0079 ft
	} {
		if got := Ranges(st, tt.idx, tt.us); got != tt.want {
			t.Errorf("Ranges(%v, us=%v) = %q, want %q", tt.idx, tt.us, got, tt.want)
		}
	}
	defer func() {
		if recover() == nil {
			t.Error("Ranges with an index past the end did not panic")
		}
	}()
	Ranges(st, []int{21}, false)
}
