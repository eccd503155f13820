package terrain

/*
#cgo pkg-config: gdal
#include <stdlib.h>
#include <string.h>
#include <cpl_conv.h>
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
// buffer with GDALReadBlock, bypassing GDAL's block cache. Only the drivers
// in allowed (a NULL-terminated list) may open path.
static GDALDatasetH canalstepOpenRaw(const char *path, char **allowed) {
	return GDALOpenEx(path, GDAL_OF_RASTER | GDAL_OF_READONLY, (const char *const *)allowed, NULL, NULL);
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

// safetyConfig are the GDAL configuration options setup sets for the whole
// process, over whatever the environment says. Options that GDAL 3.6 does
// not know are harmless there and take effect on newer GDAL.
var safetyConfig = [][2]string{
	// Never run Python code from a VRT's pixel function (GDAL 2.2 and later,
	// so effective on 3.6).
	{"GDAL_VRT_ENABLE_PYTHON", "NO"},
	// Never open an in-memory dataset by name, MEM:::DATAPOINTER=… (GDAL
	// 3.10 and later; on older GDAL the MEM driver is simply not registered
	// here, and the path and VRT checks refuse such names).
	{"GDAL_MEM_ENABLE_OPEN", "NO"},
	// Never read a VRTRawRasterBand (GDAL 3.10 and later; the VRT check
	// refuses them on every version).
	{"GDAL_VRT_ENABLE_RAWRASTERBAND", "NO"},
}

var (
	setupOnce sync.Once
	// gdalCalls counts the GDAL calls that open or identify a file, so that
	// tests can tell that a refused DEM never reached GDAL.
	gdalCalls atomic.Int64
	// cAllowed is demDrivers' short names as a NULL-terminated C array,
	// made once by setup and kept for the life of the process.
	cAllowed **C.char
)

// setup bounds GDAL's block cache, sets the safety options and registers
// the drivers of the allow-list, once per process. os.Setenv reaches C's
// environment in a cgo program, and GDAL reads GDAL_CACHEMAX lazily on
// first use of its cache.
func setup() {
	setupOnce.Do(func() {
		if os.Getenv("GDAL_CACHEMAX") == "" {
			os.Setenv("GDAL_CACHEMAX", gdalCacheMB)
		}
		for _, kv := range safetyConfig {
			k, v := C.CString(kv[0]), C.CString(kv[1])
			C.CPLSetConfigOption(k, v)
			C.free(unsafe.Pointer(k))
			C.free(unsafe.Pointer(v))
		}
		registerDrivers()
		arr := (*[1 << 10]*C.char)(C.malloc(C.size_t(len(demDrivers)+1) * C.size_t(unsafe.Sizeof((*C.char)(nil)))))
		for i, d := range demDrivers {
			arr[i] = C.CString(d.name)
		}
		arr[len(demDrivers)] = nil
		cAllowed = &arr[0]
	})
}

// openRaster opens path read-only as a raster with the drivers of the
// allow-list only. GDAL reads the folder to find side-car files (.hdr,
// .prj, .aux.xml), which checkDEM has inspected.
func openRaster(path string) (*godal.Dataset, error) {
	setup()
	gdalCalls.Add(1)
	return godal.Open(path, godal.RasterOnly(), godal.Drivers(driverNames()...), godal.SiblingFiles())
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
	setup()
	cpath := C.CString(path)
	defer C.free(unsafe.Pointer(cpath))
	var h C.GDALDatasetH
	gdalCalls.Add(1)
	msg := quietly(func() { h = C.canalstepOpenRaw(cpath, cAllowed) })
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
