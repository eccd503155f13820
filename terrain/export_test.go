package terrain

// GDALCalls returns how many times this package has asked GDAL to open or
// identify a file, so that tests can tell a refused DEM never reached GDAL.
func GDALCalls() int64 { return gdalCalls.Load() }
