package html

import (
	"math"
	"strconv"
	"strings"

	"canalstep/planner/hydraulics"
	"canalstep/report/units"
)

// numbers formats SI values in one unit system for the report's text.
type numbers struct{ u units.System }

// q prints v (SI) in the unit of quantity k with prec decimals and the
// symbol: "1.250 m".
func (n numbers) q(k units.Quantity, v float64, prec int) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return "n/a"
	}
	return n.u.Format(k, v, prec)
}

// bare prints v (SI) in the unit of k without the symbol.
func (n numbers) bare(k units.Quantity, v float64, prec int) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return "n/a"
	}
	return fixed(n.u.FromSI(k, v), prec)
}

func (n numbers) length(v float64) string { return n.q(units.Length, v, 2) }
func (n numbers) level(v float64) string  { return n.q(units.Length, v, 3) }
func (n numbers) volume(v float64) string {
	return grouped(n.u.FromSI(units.Volume, v), 0) + " " + n.u.Symbol(units.Volume)
}
func (n numbers) station(c float64) string {
	return n.u.Station(c)
}

// fixed prints v with prec decimals, "-0" as "0".
func fixed(v float64, prec int) string {
	s := strconv.FormatFloat(v, 'f', prec, 64)
	if strings.Trim(s, "-0.") == "" {
		s = strings.TrimPrefix(s, "-")
	}
	return s
}

// grouped prints v with prec decimals and its whole part in groups of
// three digits separated by commas: "1,234,567.8".
func grouped(v float64, prec int) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return "n/a"
	}
	s := fixed(v, prec)
	sign := ""
	if strings.HasPrefix(s, "-") {
		sign, s = "-", s[1:]
	}
	whole, frac := s, ""
	if i := strings.IndexByte(s, '.'); i >= 0 {
		whole, frac = s[:i], s[i:]
	}
	var b strings.Builder
	for i, c := range whole {
		if i > 0 && (len(whole)-i)%3 == 0 {
			b.WriteByte(',')
		}
		b.WriteRune(c)
	}
	return sign + b.String() + frac
}

// cost prints an amount in the currency of the unit prices, whole units.
func cost(v float64) string { return grouped(v, 0) }

// percent prints a fraction as a percentage: "12.5 %".
func percent(f float64, prec int) string {
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return "n/a"
	}
	return fixed(100*f, prec) + " %"
}

// grade prints a bed grade (m/m, the same in every unit system) with its
// fall per thousand: "0.00130 (1.30 ‰)".
func grade(g float64) string {
	return strconv.FormatFloat(g, 'f', 5, 64) + " (" + fixed(1000*g, 2) + " ‰)"
}

// slope prints a side slope H:V: "1.5:1".
func slope(z float64) string { return strconv.FormatFloat(z, 'f', -1, 64) + ":1" }

// flowShare prints a checked flow as a share of the design flow: "25 %".
func flowShare(f float64) string {
	return strconv.FormatFloat(math.Round(1000*f)/10, 'f', -1, 64) + " %"
}

// jumpWords words a jump state.
func jumpWords(s hydraulics.JumpState) string {
	switch s {
	case hydraulics.SweptOut:
		return "swept out"
	case hydraulics.InBasin:
		return "held in the basin"
	case hydraulics.Drowned:
		return "drowned"
	case "":
		return "n/a"
	}
	return strings.ReplaceAll(string(s), "_", " ")
}

// yesNo words a boolean.
func yesNo(b bool) string {
	if b {
		return "yes"
	}
	return "no"
}
