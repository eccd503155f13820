package report

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
)

// GroundRow is one station of a ground profile. Chainage and Ground are in
// metres; X and Y are in the DEM's CRS units; Lon and Lat are WGS 84 degrees.
type GroundRow struct {
	Station  string
	Chainage float64
	X, Y     float64
	Lon, Lat float64
	Ground   float64
}

// WriteGroundCSV writes a ground profile as CSV with the header
// station,chainage,x,y,lon,lat,ground. Chainage and ground are printed in u's
// length unit to the millimetre (0.001 ft in US units), x and y to the
// millimetre of the DEM's CRS unit, lon and lat to 1e-8 degree (about 1 mm).
// No field needs CSV quoting (station labels are digits, '+', '-' and '.'),
// so rows are formatted straight into one buffer: profiles run to hundreds of
// thousands of stations.
func WriteGroundCSV(w io.Writer, rows []GroundRow, u Units) error {
	b := make([]byte, 0, 64*1024)
	b = append(b, "station,chainage,x,y,lon,lat,ground\n"...)
	for _, r := range rows {
		if strings.ContainsAny(r.Station, ",\"\n\r") {
			return fmt.Errorf("station label %q cannot be written unquoted", r.Station)
		}
		b = append(b, r.Station...)
		for _, f := range [...]struct {
			v    float64
			prec int
		}{{u.Length(r.Chainage), 3}, {r.X, 3}, {r.Y, 3}, {r.Lon, 8}, {r.Lat, 8}, {u.Length(r.Ground), 3}} {
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
func appendFixed(b []byte, v float64, prec int) []byte {
	if math.IsNaN(v) {
		return b
	}
	n := len(b)
	b = strconv.AppendFloat(b, v, 'f', prec, 64)
	if b[n] == '-' && allZero(b[n+1:]) {
		b = append(b[:n], b[n+1:]...)
	}
	return b
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
