package terrain

/*
#cgo pkg-config: gdal
#include <string.h>
#include <cpl_error.h>

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
*/
import "C"

import (
	"os"
	"runtime"
	"sync"
	"unsafe"

	"github.com/airbusgeo/godal"
)

// gdalCacheMB is the size of GDAL's own block cache that setup asks for when
// the environment does not set GDAL_CACHEMAX. Our float32 block cache sits
// in front of it, so GDAL needs only enough to decode one block at a time.
const gdalCacheMB = "64"

var setupOnce sync.Once

// setup registers GDAL's drivers and bounds GDAL's block cache, once per
// process. os.Setenv reaches C's environment in a cgo program, and GDAL reads
// GDAL_CACHEMAX lazily on first use of its cache.
func setup() {
	setupOnce.Do(func() {
		if os.Getenv("GDAL_CACHEMAX") == "" {
			os.Setenv("GDAL_CACHEMAX", gdalCacheMB)
		}
		godal.RegisterAll()
	})
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
