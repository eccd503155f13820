package report

import (
	"encoding/csv"
	"io"
	"strconv"

	"canalstep/alignment"
	"canalstep/report/textsafe"
	"canalstep/report/units"
)

// WriteCurvesCSV writes the horizontal curve table of a route: for each
// circular curve its number, the vertex it replaces (as the vertex stands
// in the alignment file), the side it turns to, the deflection (degrees),
// radius, tangent length, curve length, long chord and external distance
// (in u's length unit), and the station, chainage and work-CRS coordinates
// (easting, northing, in the CRS's own unit, to the millimetre) of its
// start (PC), end (PT) and tangent intersection (PI). start is the
// chainage (m) of the route's first point.
func WriteCurvesCSV(w io.Writer, r *alignment.Route, start float64, u Units) error {
	cw := csv.NewWriter(w)
	L := func(name string) string { return u.Column(name, units.Length) }
	head := []string{"curve", "vertex", "turns", "deflection_deg", L("radius"), L("tangent"), L("length"), L("chord"), L("external"),
		"pc_station", L("pc_chainage"), "pc_easting", "pc_northing", "pt_station", L("pt_chainage"), "pt_easting", "pt_northing",
		"pi_easting", "pi_northing"}
	if err := cw.Write(head); err != nil {
		return err
	}
	for i, c := range r.Curves {
		pc, pt := start+c.PCDistance, start+c.PTDistance
		rec := []string{strconv.Itoa(i + 1), textsafe.CSVCell(c.At), c.Side(), fixed(c.DeflectionDegrees(), 6),
			fixed(u.Length(c.Radius), 3), fixed(u.Length(c.Tangent), 3), fixed(u.Length(c.Length), 3),
			fixed(u.Length(c.Chord), 3), fixed(u.Length(c.External), 3),
			u.Station(pc), fixed(u.Length(pc), 3), fixed(c.PC[0], 3), fixed(c.PC[1], 3),
			u.Station(pt), fixed(u.Length(pt), 3), fixed(c.PT[0], 3), fixed(c.PT[1], 3),
			fixed(c.PI[0], 3), fixed(c.PI[1], 3)}
		if err := cw.Write(rec); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}
