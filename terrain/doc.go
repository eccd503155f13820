// Package terrain reads ground elevations from a DEM and converts
// coordinates between CRSs through GDAL/PROJ. It is one of the two project
// packages that use GDAL (cgo).
//
// A [DEM] samples elevations in metres at points given in the DEM's own CRS,
// bilinearly (the default) or from the nearest cell. It reads only the blocks
// the samples touch, through a bounded cache of float32 blocks, so memory
// does not grow with the raster. A cell is invalid when it holds the band's
// nodata value, a value that is not finite, or, in metres, a value outside
// [Options.ValidRange] (by default [DefaultValidRange], -500 to 9000 m); a
// sample whose interpolation stencil touches an invalid cell is NaN. Points
// outside the raster are reported by [OutsideError].
//
// # Which DEMs Open accepts
//
// [Open] lets GDAL use only the drivers of an allow-list ([DEMDrivers]):
// GTiff (GeoTIFF and Cloud Optimized GeoTIFF), VRT, AAIGrid and
// GRASSASCIIGrid (ASCII grids), AIG (Arc/Info binary grid, given by its
// hdr.adf), EHdr (.bil/.flt with .hdr), ENVI, HFA (Erdas .img), USGSDEM,
// SRTMHGT, DTED, GSAG, GSBG and GS7BG (Surfer grids), XYZ, netCDF and BT.
// The package registers these drivers with GDAL and no others. Left out on
// purpose: MEM, which reads raw process memory named by an address in the
// file name (MEM:::DATAPOINTER=…); drivers that fetch from servers by
// themselves (WMS, WCS, …); formats whose header may point at bands in
// other files (PCIDSK, MRF, …); image formats (PNG, JPEG, …); and every
// other driver.
//
// Before GDAL sees a DEM, Open checks it, and refuses with an error that
// matches [ErrBadDEM] (and [ErrFormatRefused], [ErrVRTRefused] or
// [ErrNotAFile]) and says in one line what is wrong and what to do:
//
//   - The path must name a regular, non-empty file, locally or on one of
//     GDAL's /vsimem/, /vsizip/, /vsigzip/, /vsitar/, /vsicurl/, /vsis3/,
//     /vsigs/, /vsiaz/, /vsiadls/, /vsioss/, /vsiswift/ or /vsiwebhdfs/
//     file systems; never a directory, device, pipe, a file under /proc,
//     /sys or /dev (also through a link), a GDAL connection string
//     (MEM:::…, HDF5:…, vrt://…), a URL without /vsicurl/, or VRT XML in
//     place of a file name.
//   - A VRT (a file whose first kilobyte holds <VRTDataset, or named .vrt)
//     is read, up to 16 MiB, and parsed as GDAL parses it (element and
//     attribute names in any case, values from an attribute or a child
//     element alike). It is refused when it uses a VRTRawRasterBand (raw
//     bytes of any file), a pixel function in Python or with code, open
//     options, a DTD, XML character references, a band or dataset type
//     other than the sourced, derived (C pixel functions) and warped ones,
//     or any element outside those gdalbuildvrt, gdal_translate and
//     gdalwarp write (so no geolocation, RPC or pansharpening elements,
//     which name datasets of their own). Every file it names
//     (SourceFilename, SourceDataset) passes the same checks as the DEM
//     itself, relative to the VRT where it says so; a named VRT is
//     inspected in turn, to 4 VRT files in a chain and 100,000 files in
//     all, and one that names itself is refused; any other named file must
//     be recognised by a driver of the allow-list.
//   - Overview, mask and Erdas auxiliary files that GDAL may open beside a
//     file (x.tif.ovr, x.tif.msk, x.tif.aux, x.aux, in any case) are
//     checked like VRT sources.
//
// The package also sets GDAL_VRT_ENABLE_PYTHON=NO for the process, which
// GDAL 3.6 obeys, and GDAL_MEM_ENABLE_OPEN=NO and
// GDAL_VRT_ENABLE_RAWRASTERBAND=NO, which GDAL 3.6 does not know (they take
// effect from GDAL 3.10 on); on 3.6 the checks above and the missing MEM
// driver do their work. The checks run before GDAL opens the file, so a
// file changed between the check and the open is not covered.
//
// # Coordinate transforms
//
// [Transform] converts coordinates between two CRSs in traditional GIS order
// (x = longitude or easting, y = latitude or northing). Transforms with a
// lon/lat side should use [LonLat] (EPSG:4326 in that order), which GDAL
// builds far faster than OGC:CRS84 for the same coordinates; OGC:CRS84 given
// by users is taken as LonLat. [SharedTransform] keeps one Transform per CRS
// pair for the life of the process, safe for concurrent use, derives a
// pair's inverse from the forward one, and skips PROJ when both CRSs are the
// same. [CRSInfo] tells the caller whether a CRS is geographic and what its
// linear unit is, so it can decide where to measure chainage; its results
// are cached too. CRS definitions are never read from files or URLs.
//
// The CRS of a local GeoTIFF whose GeoKeys are the plain ones GDAL writes
// for a projected CRS given by EPSG code (and no side-car or option that
// could change it) is built from that code directly, which is what GDAL
// does for such keys with fewer PROJ database lookups first; any other DEM's
// CRS is GDAL's reading (geokeys.go).
//
// Tests, the demo and the benchmark write rasters with [WriteGeoTIFF]: a
// tiled, compressed GeoTIFF, written atomically.
//
// GDAL's own block cache is global to the process. Unless GDAL_CACHEMAX is
// already set in the environment, the first call into this package sets it
// to 64 MB so that GDAL's cache, on top of ours, stays small.
package terrain
