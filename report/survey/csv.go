package survey

import (
	"bufio"
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"strconv"
	"time"

	"canalstep/report/layers"
	"canalstep/report/textsafe"
	"canalstep/report/units"
)

// Header is what the comment lines above the stake list say: the CRS,
// the units, the datum and the DEM.
type Header struct {
	Alignment string
	Units     units.System // chainage, offset and levels
	// CRS names the easting and northing: "EPSG:32634", or a WKT or PROJ
	// definition; UnitToMetre is its linear unit in metres (0 means 1).
	CRS         string
	UnitToMetre float64
	// LocalTM is true when the CRS is the local transverse Mercator of a
	// geographic DEM; WorkCRS is then its PROJ definition.
	LocalTM bool
	WorkCRS string
	// DEM, DEMCRS and ZUnits describe the DEM (Source).
	DEM, DEMCRS, ZUnits string
	Date                time.Time // the inputs' date; zero: not written
}

// NewHeader describes in's stake list.
func NewHeader(in *Input) (Header, error) {
	if in == nil || in.Corridor == nil || in.Corridor.Profile == nil {
		return Header{}, fmt.Errorf("%w: no corridor", ErrInput)
	}
	p := in.Corridor.Profile
	if _, err := workUnit(in.unit()); err != nil {
		return Header{}, err
	}
	h := Header{Alignment: p.Name, Units: in.Units, UnitToMetre: in.unit(), WorkCRS: p.WorkCRS,
		LocalTM: in.geographic(), DEM: in.Source.DEM, DEMCRS: in.Source.DEMCRS, ZUnits: in.Source.ZUnits, Date: in.Source.Date}
	switch {
	case h.LocalTM && in.Source.WorkCRSWKT != "":
		h.CRS = in.Source.WorkCRSWKT
	case h.LocalTM:
		h.CRS = p.WorkCRS
	case in.Source.DEMEPSG > 0:
		h.CRS = "EPSG:" + strconv.Itoa(in.Source.DEMEPSG)
	case in.Source.DEMCRS != "":
		h.CRS = in.Source.DEMCRS
	default:
		h.CRS = p.WorkCRS
	}
	return h, nil
}

// maxHeaderText is the most characters of one header value (a WKT runs to
// a few thousand); longer values are cut with an ellipsis.
const maxHeaderText = 16384

// comment makes s safe on one "# " line: controls, line breaks and
// invisible characters become visible escapes (textsafe.Clip).
func comment(s string) string { return textsafe.Clip(s, maxHeaderText) }

// stakeColumns are the columns after point, kind and station: name,
// quantity and decimals. Easting and northing take the CRS unit's suffix,
// not the user's units: they are coordinates, not lengths to convert.
var stakeColumns = []struct {
	name string
	q    units.Quantity
	prec int
	crs  bool // a coordinate in the CRS's unit
}{
	{"chainage", units.Length, 3, false}, {"offset", units.Length, 3, false},
	{"easting", units.Ratio, 3, true}, {"northing", units.Ratio, 3, true},
	{"lon", units.Ratio, 9, false}, {"lat", units.Ratio, 9, false},
	{"ground", units.Length, 3, false}, {"design_level", units.Length, 3, false}, {"cut_fill", units.Length, 3, false},
	{"slope_h_per_v", units.Ratio, 2, false},
}

// WriteStakesCSV writes the stake list: comment lines starting "# " (the
// alignment, the safety caution, the horizontal CRS and its unit, lon/lat
// on WGS 84, the vertical unit and datum, the DEM, the sign of cut_fill,
// the inputs' date), then a CSV table with a header row: point, kind,
// station, chainage, offset (negative left looking downstream), easting,
// northing (work CRS, to the millimetre), lon, lat (1e-8°), ground,
// design_level, cut_fill (ground − design: + cut, − fill), slope_h_per_v
// (empty where none applies) and note. Length columns carry the user's
// unit suffix (chainage_m, chainage_ft), easting and northing the CRS's.
// Readers that do not skip '#' comments (Go's csv.Reader with Comment '#',
// pandas' comment='#' do) should skip the header lines.
func WriteStakesCSV(w io.Writer, stakes []Stake, h Header) error {
	if h.UnitToMetre == 0 {
		h.UnitToMetre = 1
	}
	cu, err := workUnit(h.UnitToMetre)
	if err != nil {
		return err
	}
	bw := bufio.NewWriterSize(w, 64<<10)
	u := h.Units
	lu := u.Symbol(units.Length)
	var lines []string
	add := func(format string, args ...any) { lines = append(lines, fmt.Sprintf(format, args...)) }
	add("canalstep stake points of alignment: %s", comment(h.Alignment))
	add("%s", layers.Caution)
	if h.LocalTM {
		add("easting, northing: %s, a local transverse Mercator on WGS 84 centred on the alignment (the DEM is geographic); PROJ: %s",
			cu.name, comment(h.WorkCRS))
		add("local transverse Mercator: %s", comment(h.CRS))
	} else {
		add("easting, northing: %s, CRS %s", cu.name, comment(h.CRS))
	}
	add("lon, lat: WGS 84 (OGC:CRS84) longitude and latitude, degrees")
	vert := "the DEM's values"
	if h.ZUnits != "" {
		vert += " (read in " + comment(h.ZUnits) + ")"
	}
	add("levels (ground, design_level, cut_fill) in %s; chainage and offset in %s; stations in %s", lu, lu, stationNote(u))
	add("datum: levels are on the DEM's vertical datum, from %s; verify against survey control before setting out", vert)
	dem := "(not named)"
	if h.DEM != "" {
		dem = comment(h.DEM)
	}
	add("DEM: %s", dem)
	if h.LocalTM && h.DEMCRS != "" {
		add("DEM CRS: %s", comment(h.DEMCRS))
	}
	add("offset: negative left, positive right, looking downstream; cut_fill = ground - design_level: positive cut, negative fill; slope_h_per_v: horizontal per vertical of the face the point marks")
	if !h.Date.IsZero() {
		add("inputs dated %s", h.Date.UTC().Format("2006-01-02"))
	}
	for _, l := range lines {
		bw.WriteString("# ")
		bw.WriteString(l)
		bw.WriteByte('\n')
	}
	cw := csv.NewWriter(bw)
	head := []string{"point", "kind", "station"}
	for _, c := range stakeColumns {
		if c.crs {
			head = append(head, c.name+cu.suffix)
		} else {
			head = append(head, u.Column(c.name, c.q))
		}
	}
	head = append(head, "note")
	if err := cw.Write(head); err != nil {
		return err
	}
	rec := make([]string, len(head))
	var buf []byte
	num := func(v float64, prec int) string {
		if math.IsNaN(v) {
			return ""
		}
		buf = layers.FormatFixed(buf[:0], v, prec, false)
		return string(buf)
	}
	for i := range stakes {
		s := &stakes[i]
		vals := [...]float64{s.Chainage, s.Offset, s.X, s.Y, s.Lon, s.Lat, s.Ground, s.Design, s.CutFill(), s.Slope}
		rec[0], rec[1], rec[2] = textsafe.CSVCell(s.ID), string(s.Kind), s.Station
		for k, c := range stakeColumns {
			v := vals[k]
			if !c.crs {
				v = u.FromSI(c.q, v)
			}
			rec[3+k] = num(v, c.prec)
		}
		rec[len(rec)-1] = s.Note
		if err := cw.Write(rec); err != nil {
			return err
		}
	}
	cw.Flush()
	if err := cw.Error(); err != nil {
		return err
	}
	return bw.Flush()
}

// stationNote says how station labels read.
func stationNote(u units.System) string {
	if u == units.US {
		return "100-ft stations (12+50.00 is 1,250 ft)"
	}
	return "kilometres+metres (1+250.00 is 1,250 m)"
}
