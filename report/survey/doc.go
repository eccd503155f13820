// Package survey turns one planned alignment into the deliverables of the
// people who set the canal out and map it: the stake list (stakes.csv), the
// GIS layers (plan.geojson in WGS 84 lon/lat, plan.gpkg in the DEM's CRS)
// and the LandXML 1.2 file for survey controllers and civil design software
// (plan.xml).
//
// Everything is computed from the corridor (stations, cross-sections, the
// route with its curves and the coordinate frames) and the planner's
// result; nothing is read from disk and nothing global is kept, so one
// alignment is one pure job.
//
// # Stake points
//
// At every station, left to right looking downstream (offsets negative to
// the left):
//
//	XL  catch_left          where the left outer slope meets the ground
//	HL  bank_hinge_left     outer edge of the left bank top, where the outer slope starts
//	TL  top_of_bank_left    inner edge of the left bank top (the side slope's top)
//	C   centreline          the bed on the centre line
//	TR, HR, XR              the same on the right
//
// The point id is the letters followed by the station label ("TL0+250.00",
// or "TL12+50.00" in 100-ft stations); the hinge points are left out where
// the bank top has no width (they would stand on the top-of-bank points).
// Offsets follow the plan's template at the station: bed width b, inner
// side slope z, bank height H (StationResult.BankHeight) and bank top width
// W: the top of bank at b/2 + z·H, the hinge W further out, the catch point
// where the planner found it (StationResult.CatchLeft/Right).
//
// Each drop n (counted from upstream) adds its structure, set out straight
// along the tangent at its station, the crest across the canal there:
//
//	Dn-CL, Dn-CR  crest_left, crest_right            crest ends, width = basin width
//	Dn-B1..B4     basin_upstream_left, _right,        basin floor corners: B1 and B2
//	              basin_downstream_right, _left        under the crest ends (a vertical
//	                                                   drop wall), B3 and B4 one basin
//	                                                   length downstream
//	Dn-SL, Dn-SR  end_sill_left, end_sill_right      top of the end sill, at the basin's end
//	Dn-TL, Dn-TR  transition_end_left, _right        end of the outlet transition walls,
//	                                                   at the canal's water's edge
//
// A point id that would repeat (two stations within 1 cm share a label) gets
// "/2", "/3" appended, so ids stay unique as survey controllers need.
//
// Elevations: ground is the DEM's level at the point as the plan sampled it
// (the station's cross-section, interpolated linearly across and, for
// structure points between stations, along the line; level ground across
// the section when the plan took it so); design is the level of the design
// surface there. cut_fill is ground − design: positive is cut (excavate),
// negative is fill (build up), the sign a surveyor writes on a stake.
//
// # Coordinates
//
// Easting and northing are in the work CRS: the DEM's projected CRS, or,
// for a geographic DEM, the local transverse Mercator the corridor stage
// measured chainage in (named in every file's header). Longitude and
// latitude are WGS 84 (OGC:CRS84) through the corridor's transform. The GIS
// layers are given in lon/lat (GeoJSON) and in the DEM's CRS (GeoPackage;
// lon/lat on the DEM's datum for a geographic DEM).
package survey
