package report

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"canalstep/alignment"
	"canalstep/report/units"
)

// WriteGroundCSV writes a ground profile as CSV: station, chainage,
// easting and northing in the work CRS (the DEM's projected CRS, or the
// local transverse Mercator of a geographic DEM; to the millimetre),
// longitude and latitude (1e-8 degree, about 1 mm) and ground. Chainage and
// ground are in u's length unit (to 0.001), and the header says which:
// station,chainage_m,easting,northing,lon,lat,ground_m. No field needs CSV
// quoting (station labels are digits, '+', '-' and '.'), so rows are
// formatted straight into one buffer: profiles run to hundreds of thousands
// of stations. A station's Label is written as it is when it is in u's
// notation (the corridor stage labels stations in the run's), else the label
// is formatted from the chainage.
func WriteGroundCSV(w io.Writer, p *alignment.Profile, u Units) error {
	b := make([]byte, 0, 64*1024)
	b = append(b, "station,"+u.Column("chainage", units.Length)+",easting,northing,lon,lat,"+u.Column("ground", units.Length)+"\n"...)
	for i := range p.Stations {
		s := &p.Stations[i]
		label := s.Label
		if !inNotation(label, u) {
			label = u.Station(s.Chainage)
		}
		if needsQuote(label) {
			return fmt.Errorf("station label %q cannot be written unquoted", label)
		}
		b = append(b, label...)
		for _, f := range [...]struct {
			v    float64
			prec int
		}{{u.Length(s.Chainage), 3}, {s.WorkX, 3}, {s.WorkY, 3}, {s.Lon, 8}, {s.Lat, 8}, {u.Length(s.Ground), 3}} {
			b = append(b, ',')
			b = appendFixed(b, f.v, f.prec)
		}
		b = append(b, '\n')
		if len(b) > 60*1024 {
			if _, err := w.Write(b); err != nil {
				return err
			}
			b = b[:0]
		}
	}
	_, err := w.Write(b)
	return err
}

// fixed formats v with prec decimals; NaN prints as an empty field so
// spreadsheets read it as missing. Negative zero prints as zero.
func fixed(v float64, prec int) string { return string(appendFixed(nil, v, prec)) }

// appendFixed appends fixed(v, prec) to b.
//
// It rounds v·10^prec to an integer and prints that, which is
// strconv.AppendFloat(v, 'f', prec) without its general machinery, when the
// answer is certain: |v·10^prec| < 2^36, so the product carries an error of
// at most half an ulp, under 4e-6, and it lies farther than 1e-5 from a
// half-integer, so that error cannot change the nearest integer. Every other
// value (ties and near-ties, huge values, infinities) goes through strconv.
func appendFixed(b []byte, v float64, prec int) []byte {
	if math.IsNaN(v) {
		return b
	}
	if prec >= 0 && prec < len(pow10) {
		t := v * pow10[prec]
		r := math.Round(t)
		if math.Abs(t) < 1<<36 && math.Abs(t-r) < 0.5-1e-5 {
			return appendScaled(b, int64(r), prec)
		}
	}
	n := len(b)
	b = strconv.AppendFloat(b, v, 'f', prec, 64)
	if b[n] == '-' && allZero(b[n+1:]) {
		b = append(b[:n], b[n+1:]...)
	}
	return b
}

// pow10 holds the exact powers of ten appendFixed scales by.
var pow10 = [...]float64{1, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9}

// appendScaled appends n / 10^prec with prec decimals ("-0.012" for n = -12,
// prec 3; "7" for n = 7, prec 0). Zero carries no sign.
func appendScaled(b []byte, n int64, prec int) []byte {
	if n < 0 {
		b = append(b, '-')
		n = -n
	}
	var d [24]byte // n < 2^36: at most 11 digits and the point
	i := len(d)
	for k := 0; k < prec; k++ {
		i--
		d[i] = byte('0' + n%10)
		n /= 10
	}
	if prec > 0 {
		i--
		d[i] = '.'
	}
	for {
		i--
		d[i] = byte('0' + n%10)
		n /= 10
		if n == 0 {
			break
		}
	}
	return append(b, d[i:]...)
}

// inNotation reports whether label is a station label in u's notation
// (alignment.FormatStation): three digits of metres after the '+' for
// metric, two of feet for US customary, then the decimals.
func inNotation(label string, u Units) bool {
	plus := strings.IndexByte(label, '+')
	if plus < 1 {
		return false
	}
	digits := 0
	for _, c := range []byte(label[plus+1:]) {
		if c == '.' {
			break
		}
		if c < '0' || c > '9' {
			return false
		}
		digits++
	}
	if u == units.US {
		return digits == 2
	}
	return digits == 3
}

// needsQuote reports whether s holds a byte that CSV would have to quote.
func needsQuote(s string) bool {
	for _, c := range []byte(s) {
		switch c {
		case ',', '"', '\n', '\r':
			return true
		}
	}
	return false
}

// allZero reports whether digits holds only '0' and '.'.
func allZero(digits []byte) bool {
	for _, c := range digits {
		if c != '0' && c != '.' {
			return false
		}
	}
	return true
}
