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
// of stations.
func WriteGroundCSV(w io.Writer, p *alignment.Profile, u Units) error {
	b := make([]byte, 0, 64*1024)
	b = append(b, "station,"+u.Column("chainage", units.Length)+",easting,northing,lon,lat,"+u.Column("ground", units.Length)+"\n"...)
	for i := range p.Stations {
		s := &p.Stations[i]
		label := u.Station(s.Chainage)
		if strings.ContainsAny(label, ",\"\n\r") {
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
