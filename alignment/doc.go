// Package alignment reads canal alignments from GeoJSON and stations them:
// it places stations along the route at a fixed spacing, at every vertex and
// at the end, and labels them in trade notation. Given a radius, it fits a
// simple circular curve at every vertex and stations the route along the
// arcs, with the PC and PT of each curve as stations and a curve table.
//
// Chainage is measured in metres along the alignment in a projected work
// CRS (the DEM's CRS, or a local UTM zone when the DEM is geographic). The
// package itself knows no CRS maths: coordinate transforms come in through
// the [Transformer] interface, which the command layer fills with GDAL/PROJ.
// Everything here is pure Go and safe to use from many goroutines, since no
// function keeps state between calls.
//
// The entry points are [Read] (GeoJSON to [Alignment]s) and [ReadScheme]
// (the same with each alignment's own controls, [Overrides], and the
// [Offtake]s the canal must command); [Stations] and [StationsWith] (an
// alignment and its [Frames] to [Station]s, the latter with curves and the
// [Route]); [FitCurves] and [StationRoute] (the same steps for a line
// already in the work CRS; [StationLine] for a polyline);
// [Route.Locate] and [NearestStation] (where an offtake falls on the
// line); [FormatStation] and [ParseStation] (labels such as 1+250.00 or,
// in US customary units, 12+50.00), and [Ranges] (station indices to
// readable chainage ranges for messages).
package alignment
