// Package terrain reads ground elevations from a DEM (any raster GDAL opens,
// including /vsi… paths) and converts coordinates between CRSs through
// GDAL/PROJ. It is the only project package that uses GDAL (cgo).
//
// A [DEM] samples elevations in metres at points given in the DEM's own CRS,
// bilinearly (the default) or from the nearest cell. It reads only the blocks
// the samples touch, through a bounded cache of float32 blocks, so memory
// does not grow with the raster. A sample whose interpolation stencil touches
// nodata is NaN; points outside the raster are reported by [OutsideError].
//
// [Transform] converts coordinates between two CRSs in traditional GIS order
// (x = longitude or easting, y = latitude or northing). [CRSInfo] tells the
// caller whether a CRS is geographic and what its linear unit is, so it can
// decide where to measure chainage.
//
// Tests, the demo and the benchmark write rasters with [WriteGeoTIFF]: a
// tiled, compressed GeoTIFF, written atomically.
//
// GDAL's own block cache is global to the process. Unless GDAL_CACHEMAX is
// already set in the environment, the first call into this package sets it
// to 64 MB so that GDAL's cache, on top of ours, stays small. The package
// registers GDAL's GeoTIFF driver first and all other drivers only when a
// raster is not a GeoTIFF, which saves start-up time in the common case;
// code elsewhere that needs other drivers calls godal.RegisterAll itself.
package terrain
