package alignment

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"
)

// FootM is the international foot in metres (exact by definition, 1959).
const FootM = 0.3048

// maxLabelUnits bounds the chainage FormatStation writes in trade notation
// and ParseStation accepts: 1e12 m or ft, far beyond any real alignment and
// small enough that hundredths stay exact in float64.
const maxLabelUnits = 1e12

// FormatStation writes a chainage given in metres as a station label,
// rounded to hundredths of the display unit:
//
//   - metric: kilometres+metres, "1+250.00" for 1250 m, "0+007.50" for 7.5 m;
//   - US customary (us true): 100-foot stations+feet, "12+50.00" for
//     1250 ft (381 m), with 1 ft = 0.3048 m.
//
// A negative chainage carries a leading minus before the whole label:
// "-0+012.30" is 12.30 m before the origin (a label that rounds to zero has
// no sign). NaN, infinities and magnitudes of 1e12 units or more are
// written as plain numbers, which ParseStation refuses.
func FormatStation(chainageM float64, us bool) string {
	return string(AppendStation(make([]byte, 0, 16), chainageM, us))
}

// AppendStation appends FormatStation(chainageM, us) to b.
func AppendStation(b []byte, chainageM float64, us bool) []byte {
	v, station, width := chainageM, int64(1000), 3
	if us {
		v, station, width = chainageM/FootM, 100, 2
	}
	if !labelled(chainageM, us) {
		return strconv.AppendFloat(b, chainageM, 'f', -1, 64)
	}
	c := int64(math.Round(math.Abs(v) * 100)) // hundredths of the unit
	if v < 0 && c != 0 {
		b = append(b, '-')
	}
	whole, rest := c/(station*100), c%(station*100)
	b = strconv.AppendInt(b, whole, 10)
	b = append(b, '+')
	units := rest / 100
	for p := int64(10); width > 1; width, p = width-1, p*10 {
		if units < p {
			b = append(b, '0')
		}
	}
	b = strconv.AppendInt(b, units, 10)
	f := rest % 100
	return append(b, '.', byte('0'+f/10), byte('0'+f%10))
}

// ParseStation reads a station label written as FormatStation writes it and
// returns the chainage in metres. It accepts an optional leading minus,
// whole stations (decimal digits), "+", exactly three digits of metres
// (metric) or two digits of feet (us), and an optional decimal fraction of
// any length: "1+250", "1+250.5", "-0+012.30", "12+50.00" (us). Surrounding
// spaces are ignored. For every label s that FormatStation can produce,
// FormatStation(ParseStation(s)) == s.
func ParseStation(s string, us bool) (float64, error) {
	station, width, want := 1000.0, 3, "kilometres+metres such as 1+250.00"
	if us {
		station, width, want = 100, 2, "100-ft stations+feet such as 12+50.00"
	}
	bad := func(why string) (float64, error) {
		return 0, fmt.Errorf("station %q: %s; want %s", s, why, want)
	}
	t := strings.TrimSpace(s)
	neg := false
	if rest, ok := strings.CutPrefix(t, "-"); ok {
		neg, t = true, rest
	}
	whole, frac, ok := strings.Cut(t, "+")
	if !ok {
		return bad("no \"+\"")
	}
	if whole == "" || !allDigits(whole) {
		return bad("the part before \"+\" must be whole stations in digits")
	}
	intPart, decPart, hasDot := strings.Cut(frac, ".")
	if len(intPart) != width || !allDigits(intPart) {
		return bad(fmt.Sprintf("the part after \"+\" must start with exactly %d digits", width))
	}
	if hasDot && (decPart == "" || !allDigits(decPart)) {
		return bad("the decimal part must be digits")
	}
	w, err := strconv.ParseFloat(whole, 64)
	if err != nil {
		return bad(err.Error())
	}
	r, err := strconv.ParseFloat(frac, 64)
	if err != nil {
		return bad(err.Error())
	}
	v := w*station + r
	if neg {
		v = -v
	}
	if us {
		v *= FootM
	}
	if !labelled(v, us) {
		return bad("the chainage is out of range")
	}
	return v, nil
}

// labelled reports whether FormatStation writes chainageM in trade
// notation: finite, and below maxLabelUnits once rounded to hundredths.
func labelled(chainageM float64, us bool) bool {
	v := chainageM
	if us {
		v /= FootM
	}
	return math.Round(math.Abs(v)*100) < maxLabelUnits*100 // false for NaN and ±Inf
}

func allDigits(s string) bool {
	for i := 0; i < len(s); i++ {
		if s[i] < '0' || s[i] > '9' {
			return false
		}
	}
	return true
}

// FormatChainage writes a chainage given in metres as a plain length with
// its unit, two decimals: "1250.00 m", or "4101.05 ft" when us is true.
func FormatChainage(chainageM float64, us bool) string {
	if us {
		return strconv.FormatFloat(chainageM/FootM, 'f', 2, 64) + " ft"
	}
	return strconv.FormatFloat(chainageM, 'f', 2, 64) + " m"
}

// maxRanges is how many ranges Ranges lists before summarising the rest.
const maxRanges = 5

// Ranges describes a set of stations, given by their indices into
// stations, as chainage ranges for a message: runs of consecutive indices
// become "A to B", a lone station "A", e.g.
// "chainage 1+230.00 to 1+480.00 and 2+010.00". Labels follow
// FormatStation(…, us). Indices may be unsorted and repeated. At most five
// ranges are listed, then "and N more ranges". It returns "" for no
// indices and panics on an index outside stations (a programmer error).
func Ranges(stations []Station, idx []int, us bool) string {
	if len(idx) == 0 {
		return ""
	}
	ix := slices.Clone(idx)
	slices.Sort(ix)
	ix = slices.Compact(ix)
	if ix[0] < 0 || ix[len(ix)-1] >= len(stations) {
		panic(fmt.Sprintf("alignment.Ranges: index out of range [0, %d): %v", len(stations), ix))
	}
	var parts []string
	runs := 0
	for i := 0; i < len(ix); {
		j := i
		for j+1 < len(ix) && ix[j+1] == ix[j]+1 {
			j++
		}
		runs++
		if runs <= maxRanges {
			p := FormatStation(stations[ix[i]].Chainage, us)
			if j > i {
				p += " to " + FormatStation(stations[ix[j]].Chainage, us)
			}
			parts = append(parts, p)
		}
		i = j + 1
	}
	if more := runs - len(parts); more > 0 {
		parts = append(parts, fmt.Sprintf("%d more range%s", more, plural(more)))
	}
	if len(parts) == 1 {
		return "chainage " + parts[0]
	}
	return "chainage " + strings.Join(parts[:len(parts)-1], ", ") + " and " + parts[len(parts)-1]
}

func plural(n int) string {
	if n == 1 {
		return ""
	}
	return "s"
}
