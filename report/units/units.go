// Package units is canalstep's one door for units: values inside are SI
// (m, m², m³, m/s, m³/s); a System converts them for people at the edges,
// names their symbols and column suffixes, labels stations, and gives the
// command line flag values that read numbers in the user's units and store
// SI.
package units

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"canalstep/alignment"
)

// System is the unit system of what people type and read.
type System int

const (
	SI System = iota // metres, cubic metres per second
	US               // US customary: feet, cubic feet per second, cubic yards
)

// Parse reads a --units value: "si" (or "metric", "m") or "us" (or "ft").
func Parse(s string) (System, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "si", "metric", "m":
		return SI, nil
	case "us", "ft":
		return US, nil
	}
	return SI, fmt.Errorf("units must be si or us, got %q", s)
}

func (s System) String() string {
	if s == US {
		return "us"
	}
	return "si"
}

// Exact conversion factors (by definition).
const (
	FootM       = 0.3048         // international foot, m
	CubicYardM3 = 0.764554857984 // 0.9144³ m³
	CfsM3       = 0.028316846592 // cubic foot per second, m³/s (0.3048³)
)

// Quantity is the kind of a number, which fixes its unit in each system.
type Quantity int

const (
	Length         Quantity = iota // m | ft (levels, widths, depths, chainages)
	Area                           // m² | ft²
	Volume                         // m³ | yd³ (the unit US earthwork is measured and priced in)
	Flow                           // m³/s | cfs
	Velocity                       // m/s | ft/s
	PricePerVolume                 // per m³ | per yd³
	PricePerLength                 // per m | per ft (drop height)
	Ratio                          // dimensionless: slopes H:V, grades m/m, fractions, n
)

// perSI is the size of one unit of q in system s, in SI units.
func (s System) perSI(q Quantity) float64 {
	if s == SI {
		return 1
	}
	switch q {
	case Length, Velocity:
		return FootM
	case Area:
		return FootM * FootM
	case Volume:
		return CubicYardM3
	case Flow:
		return CfsM3
	case PricePerVolume:
		return 1 / CubicYardM3
	case PricePerLength:
		return 1 / FootM
	}
	return 1
}

// FromSI converts v from SI to s's unit of q.
func (s System) FromSI(q Quantity, v float64) float64 { return v / s.perSI(q) }

// ToSI converts v in s's unit of q to SI.
func (s System) ToSI(q Quantity, v float64) float64 { return v * s.perSI(q) }

var symbols = map[Quantity][2]string{
	Length: {"m", "ft"}, Area: {"m²", "ft²"}, Volume: {"m³", "yd³"}, Flow: {"m³/s", "cfs"},
	Velocity: {"m/s", "ft/s"}, PricePerVolume: {"per m³", "per yd³"}, PricePerLength: {"per m", "per ft"}, Ratio: {"", ""},
}

var suffixes = map[Quantity][2]string{
	Length: {"_m", "_ft"}, Area: {"_m2", "_ft2"}, Volume: {"_m3", "_yd3"}, Flow: {"_m3s", "_cfs"},
	Velocity: {"_mps", "_fps"}, PricePerVolume: {"_per_m3", "_per_yd3"}, PricePerLength: {"_per_m", "_per_ft"}, Ratio: {"", ""},
}

// Symbol is the unit's symbol for people: "m", "ft", "m³/s", "yd³".
func (s System) Symbol(q Quantity) string { return symbols[q][s] }

// Suffix is the unit's suffix for column names: "_m", "_ft", "_m3".
func (s System) Suffix(q Quantity) string { return suffixes[q][s] }

// Column names a column for a quantity: Column("ground", Length) is
// "ground_m" or "ground_ft".
func (s System) Column(name string, q Quantity) string { return name + s.Suffix(q) }

// Station labels a chainage (m): 1+250.00 (km+m), or 12+50.00 (100-ft
// stations) in US units.
func (s System) Station(chainageM float64) string { return alignment.FormatStation(chainageM, s == US) }

// Format prints v (SI) in s's unit of q with prec decimals and the symbol:
// "1.250 m", "4.101 ft".
func (s System) Format(q Quantity, v float64, prec int) string {
	out := strconv.FormatFloat(s.FromSI(q, v), 'f', prec, 64)
	if sym := s.Symbol(q); sym != "" {
		out += " " + sym
	}
	return out
}

// Value is a command-line flag value of quantity Q: Set reads the number in
// the user's units (the System pointed to at the time of Set) and stores
// SI; String prints it back in those units. It satisfies pflag.Value and
// flag.Value.
type Value struct {
	p   *float64
	q   Quantity
	sys *System
	// Range, when set, is the physical range (SI) a value must lie in.
	min, max     float64
	minExclusive bool
	ranged       bool
}

// NewValue returns a flag value for *p (SI), whose default is *p.
func NewValue(p *float64, q Quantity, sys *System) *Value { return &Value{p: p, q: q, sys: sys} }

// Within sets the physical range (SI) Set accepts.
func (v *Value) Within(min, max float64, minExclusive bool) *Value {
	v.min, v.max, v.minExclusive, v.ranged = min, max, minExclusive, true
	return v
}

// Set parses a number in the user's units and stores it in SI.
func (v *Value) Set(s string) error {
	x, err := strconv.ParseFloat(strings.TrimSpace(s), 64)
	if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
		return fmt.Errorf("%q is not a finite number", clip(s))
	}
	si := v.sys.ToSI(v.q, x)
	if v.ranged && (si > v.max || si < v.min || (v.minExclusive && si == v.min)) {
		return fmt.Errorf("%s is outside %s", s, v.RangeText())
	}
	*v.p = si
	return nil
}

// RangeText prints the accepted range in the user's units: "(0, 32808.4] ft".
func (v *Value) RangeText() string {
	if !v.ranged {
		return ""
	}
	open := "["
	if v.minExclusive {
		open = "("
	}
	f := func(x float64) string { return strconv.FormatFloat(v.sys.FromSI(v.q, x), 'g', 6, 64) }
	out := open + f(v.min) + ", " + f(v.max) + "]"
	if sym := v.sys.Symbol(v.q); sym != "" {
		out += " " + sym
	}
	return out
}

// String prints the value in the user's units.
func (v *Value) String() string {
	if v == nil || v.p == nil || math.IsNaN(*v.p) {
		return ""
	}
	return strconv.FormatFloat(round(v.sys.FromSI(v.q, *v.p), 6), 'g', -1, 64)
}

// Type names the value's unit for help texts.
func (v *Value) Type() string {
	if sym := v.sys.Symbol(v.q); sym != "" {
		return strings.ReplaceAll(sym, " ", "-")
	}
	return "number"
}

func round(x float64, sig int) float64 {
	if x == 0 || math.IsNaN(x) || math.IsInf(x, 0) {
		return x
	}
	f, _ := strconv.ParseFloat(strconv.FormatFloat(x, 'g', sig, 64), 64)
	return f
}

// clip shortens an echoed bad value to 80 characters.
func clip(s string) string {
	r := []rune(s)
	if len(r) > 80 {
		return string(r[:77]) + "..."
	}
	return s
}

// Shorthands for the writers and plots.

// Length converts metres to s's length unit.
func (s System) Length(m float64) float64 { return s.FromSI(Length, m) }

// LengthUnit is the symbol of s's length unit.
func (s System) LengthUnit() string { return s.Symbol(Length) }

// Area converts square metres to s's area unit.
func (s System) Area(m2 float64) float64 { return s.FromSI(Area, m2) }

// Volume converts cubic metres to s's volume unit (cubic yards in US units).
func (s System) Volume(m3 float64) float64 { return s.FromSI(Volume, m3) }

// VolumeUnit is the symbol of s's volume unit.
func (s System) VolumeUnit() string { return s.Symbol(Volume) }

// Velocity converts m/s to s's velocity unit.
func (s System) Velocity(ms float64) float64 { return s.FromSI(Velocity, ms) }

// VelocityUnit is the symbol of s's velocity unit.
func (s System) VelocityUnit() string { return s.Symbol(Velocity) }

// FlowUnit is the symbol of s's discharge unit.
func (s System) FlowUnit() string { return s.Symbol(Flow) }
