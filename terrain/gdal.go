package terrain

/*
#cgo pkg-config: gdal
#include <stdlib.h>
#include <string.h>
#include <cpl_error.h>
#include <gdal.h>

// The handler below keeps the last GDAL/PROJ error message of the calling
// thread instead of printing it on stderr, so that failures reach the caller
// as a Go error and nothing else.
static __thread char canalstepLastErr[512];

static void canalstepKeepError(CPLErr cls, CPLErrorNum code, const char *msg) {
	(void)code;
	if (cls >= CE_Failure && msg != NULL) {
		strncpy(canalstepLastErr, msg, sizeof canalstepLastErr - 1);
		canalstepLastErr[sizeof canalstepLastErr - 1] = 0;
	}
}

static void canalstepPushQuiet(void) {
	canalstepLastErr[0] = 0;
	CPLPushErrorHandler(canalstepKeepError);
}

static void canalstepPopQuiet(char *out, int n) {
	CPLPopErrorHandler();
	strncpy(out, canalstepLastErr, n - 1);
	out[n - 1] = 0;
}

// Raw dataset handles for decoding whole blocks straight into the caller's
// buffer with GDALReadBlock, bypassing GDAL's block cache.
static GDALDatasetH canalstepOpenRaw(const char *path) {
	return GDALOpenEx(path, GDAL_OF_RASTER | GDAL_OF_READONLY, NULL, NULL, NULL);
}

static int canalstepReadBlock(GDALDatasetH ds, int bx, int by, void *buf) {
	return (int)GDALReadBlock(GDALGetRasterBand(ds, 1), bx, by, buf);
}
*/
import "C"

import (
	"fmt"
	"os"
	"runtime"
	"sync"
	"sync/atomic"
	"unsafe"

	"github.com/airbusgeo/godal"
)

// gdalCacheMB is the size of GDAL's own block cache that setup asks for when
// the environment does not set GDAL_CACHEMAX. Our float32 block cache sits
// in front of it; GDAL needs room for the blocks of one cached window (for
// strip files, the strips of one 256-row band).
const gdalCacheMB = "64"

var (
	setupOnce, allOnce sync.Once
	allRegistered      atomic.Bool
)

// setup bounds GDAL's block cache and registers the GeoTIFF driver, once per
// process. os.Setenv reaches C's environment in a cgo program, and GDAL reads
// GDAL_CACHEMAX lazily on first use of its cache.
func setup() {
	setupOnce.Do(func() {
		if os.Getenv("GDAL_CACHEMAX") == "" {
			os.Setenv("GDAL_CACHEMAX", gdalCacheMB)
		}
		if err := godal.RegisterRaster(godal.GTiff); err != nil {
			registerAll()
		}
	})
}

// registerAll registers all of GDAL's drivers, once. Registering the 200-odd
// drivers takes about 12 ms of start-up on a 2-core machine, so it waits
// until a raster is not a GeoTIFF.
func registerAll() {
	allOnce.Do(func() {
		godal.RegisterAll()
		allRegistered.Store(true)
	})
}

// openRaster opens path read-only as a raster: with the GeoTIFF driver
// first, then, if that fails, with every GDAL driver.
func openRaster(path string) (*godal.Dataset, error) {
	setup()
	ds, err := godal.Open(path, godal.RasterOnly())
	if err == nil || allRegistered.Load() {
		return ds, err
	}
	registerAll()
	return godal.Open(path, godal.RasterOnly())
}

// quietly runs f with GDAL's error printing diverted, for the few GDAL calls
// that godal does not route through its own error plumbing (coordinate
// transformation). It returns the last error message GDAL raised during f,
// or "". GDAL's handler stack is per thread, so the goroutine is locked to
// its thread meanwhile.
func quietly(f func()) string {
	runtime.LockOSThread()
	defer runtime.UnlockOSThread()
	C.canalstepPushQuiet()
	var buf [512]C.char
	func() {
		defer C.canalstepPopQuiet(&buf[0], C.int(len(buf)))
		f()
	}()
	return C.GoString((*C.char)(unsafe.Pointer(&buf[0])))
}

// rawDataset is a GDAL dataset opened through the C API, for decoding whole
// blocks with GDALReadBlock: the block is decoded straight into our buffer,
// without a copy in GDAL's block cache. Like any GDAL dataset, it must not
// be used by two threads at once.
type rawDataset struct{ h C.GDALDatasetH }

func openRaw(path string) (rawDataset, error) {
	cpath := C.CString(path)
	defer C.free(unsafe.Pointer(cpath))
	var h C.GDALDatasetH
	msg := quietly(func() { h = C.canalstepOpenRaw(cpath) })
	if h == nil {
		return rawDataset{}, fmt.Errorf("cannot open DEM %s: %s", path, msg)
	}
	return rawDataset{h}, nil
}

// readBlock decodes block (bx, by) of band 1 into buf, which must hold a
// whole block of the band's own data type (Float32 here).
func (r rawDataset) readBlock(bx, by int, buf []float32) error {
	var rc C.int
	msg := quietly(func() { rc = C.canalstepReadBlock(r.h, C.int(bx), C.int(by), unsafe.Pointer(&buf[0])) })
	if rc != 0 {
		return fmt.Errorf("read block (%d, %d): %s", bx, by, msg)
	}
	return nil
}

func (r rawDataset) close() {
	if r.h != nil {
		C.GDALClose(r.h)
	}
}
