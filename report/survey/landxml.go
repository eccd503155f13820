package survey

import (
	"canalstep/report/landxml"
	"canalstep/report/layers"
)

// profileName names the design profile in plan.xml.
const profileName = "design bed"

// LandXMLDocument returns plan.xml's document: the horizontal alignment as
// the route's straights and arcs (LandXML Line and Curve), the design bed
// as PVIs (its start, both sides of every drop, its end: the bed's grade
// changes only at drops) and the stake points as CgPoints named by their
// id, coded by their kind, at their design level.
//
// The file's linear unit is the work CRS's, because LandXML has one unit
// for coordinates, stations and levels and the coordinates must be in the
// unit of the CRS they are given in: metres for a metric CRS (always for a
// geographic DEM's local transverse Mercator), US survey feet or
// international feet for a CRS in those, whatever in.Units says.
// The CRS is the DEM's EPSG code (and WKT) for a projected DEM; for a
// geographic DEM the local transverse Mercator as WKT (Source.WorkCRSWKT)
// and, by name, its PROJ definition.
func LandXMLDocument(in *Input, stakes []Stake) (*landxml.Document, error) {
	if err := in.check(); err != nil {
		return nil, err
	}
	cu, _ := workUnit(in.unit()) // checked
	p, r, route := in.Corridor.Profile, in.Result, in.Corridor.Route
	u := in.unit()
	pt := func(x, y float64) landxml.Point { return landxml.Point{Easting: x * u, Northing: y * u} }

	doc := &landxml.Document{Date: in.Source.Date, Unit: cu.xml, Version: in.Source.Version}
	switch {
	case in.geographic():
		doc.CRS = landxml.CRS{Name: "local transverse Mercator: " + p.WorkCRS, WKT: in.Source.WorkCRSWKT}
	case in.Source.DEMEPSG > 0:
		doc.CRS = landxml.CRS{EPSG: in.Source.DEMEPSG, WKT: in.Source.DEMCRS}
	default:
		doc.CRS = landxml.CRS{WKT: in.Source.DEMCRS}
	}

	name := layers.Text(p.Name)
	if name == "" {
		name = p.Folder
	}
	a := landxml.Alignment{Name: name, Desc: "canal centre line", StaStart: r.Stations[0].Chainage}
	for _, e := range route.Elements {
		if !(e.To > e.From) {
			continue // shorter than chainage resolution
		}
		s, t := pt(e.Start[0], e.Start[1]), pt(e.End[0], e.End[1])
		if e.Curve == 0 {
			a.Segments = append(a.Segments, landxml.LineSegment(s, t))
		} else {
			a.Segments = append(a.Segments, landxml.ArcSegment(s, t, pt(e.Centre[0], e.Centre[1]), e.Turn > 0))
		}
	}

	a.Profile = landxml.Profile{Name: profileName}
	// Each reach from its start to its end: where one reach ends at a drop
	// and the next starts, the two points at the drop's station are its
	// crest side and its toe, in that order.
	for _, rc := range r.Reaches {
		a.Profile.Points = append(a.Profile.Points,
			landxml.ProfilePoint{Station: rc.From, Elevation: rc.StartInvert},
			landxml.ProfilePoint{Station: rc.To, Elevation: rc.EndInvert})
	}

	a.Stakes = make([]landxml.Stake, len(stakes))
	for k := range stakes {
		s := &stakes[k]
		a.Stakes[k] = landxml.Stake{Name: s.ID, Code: string(s.Kind), Desc: s.Note, Point: pt(s.X, s.Y), Elevation: s.Design}
	}
	doc.Alignments = []landxml.Alignment{a}
	return doc, nil
}
