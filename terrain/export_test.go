package terrain

// GDALCalls returns how many times this package has asked GDAL to open or
// identify a file, so that tests can tell a refused DEM never reached GDAL.
func GDALCalls() int64 { return gdalCalls.Load() }

// SetHandleLimit sets how many PROJ handles t may clone, for benchmarks
// that compare one handle behind a lock with a pool.
func SetHandleLimit(t *Transform, n int) {
	t.mu.Lock()
	t.limit = n
	t.mu.Unlock()
}

// IsIdentity reports whether t skips PROJ.
func IsIdentity(t *Transform) bool { return t.identity }
