package layers

import (
	"math"
	"strconv"
)

// FormatFixed appends v to dst with exactly decimals decimals, rounded
// correctly from the binary value (strconv's 'f' format), and returns the
// extended buffer. A result that rounds to zero is written without a minus
// sign ("-0.000" reads as a sign error). With trim, trailing zeros and a
// trailing decimal point are dropped ("12.500" becomes "12.5", "3.000"
// becomes "3"). NaN and infinities are the caller's to handle; they are
// appended as strconv writes them.
func FormatFixed(dst []byte, v float64, decimals int, trim bool) []byte {
	start := len(dst)
	dst = strconv.AppendFloat(dst, v, 'f', decimals, 64)
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return dst
	}
	if trim && decimals > 0 {
		end := len(dst)
		for dst[end-1] == '0' {
			end--
		}
		if dst[end-1] == '.' {
			end--
		}
		dst = dst[:end]
	}
	if dst[start] == '-' && allZero(dst[start+1:]) {
		dst = append(dst[:start], dst[start+1:]...)
	}
	return dst
}

func allZero(b []byte) bool {
	for _, c := range b {
		if c != '0' && c != '.' {
			return false
		}
	}
	return true
}

func parseFixed(b []byte) (float64, error) { return strconv.ParseFloat(string(b), 64) }
