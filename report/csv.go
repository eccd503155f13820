package report

import (
	"encoding/csv"
	"io"
	"math"
	"strconv"
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
func WriteGroundCSV(w io.Writer, rows []GroundRow, u Units) error {
	cw := csv.NewWriter(w)
	if err := cw.Write([]string{"station", "chainage", "x", "y", "lon", "lat", "ground"}); err != nil {
		return err
	}
	rec := make([]string, 7)
	for _, r := range rows {
		rec[0] = r.Station
		rec[1] = fixed(u.Length(r.Chainage), 3)
		rec[2] = fixed(r.X, 3)
		rec[3] = fixed(r.Y, 3)
		rec[4] = fixed(r.Lon, 8)
		rec[5] = fixed(r.Lat, 8)
		rec[6] = fixed(u.Length(r.Ground), 3)
		if err := cw.Write(rec); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// fixed formats v with prec decimals; NaN prints as an empty field so
// spreadsheets read it as missing. Negative zero prints as zero.
func fixed(v float64, prec int) string {
	if math.IsNaN(v) {
		return ""
	}
	s := strconv.FormatFloat(v, 'f', prec, 64)
	if v < 0 && strconv.FormatFloat(-v, 'f', prec, 64) == strconv.FormatFloat(0, 'f', prec, 64) {
		s = s[1:]
	}
	return s
}
