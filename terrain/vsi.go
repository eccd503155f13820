package terrain

/*
#define _GNU_SOURCE
#include <stdlib.h>
#include <sys/stat.h>
#include <cpl_vsi.h>
#include <cpl_string.h>
#include <gdal.h>

// canalstepStat stats path through GDAL's virtual file systems. kind is 1
// for a regular file, 2 for a folder, 3 for anything else.
static int canalstepStat(const char *path, int *kind, long long *size) {
	VSIStatBufL st;
	if (VSIStatExL(path, &st, VSI_STAT_EXISTS_FLAG | VSI_STAT_NATURE_FLAG | VSI_STAT_SIZE_FLAG) != 0) {
		return -1;
	}
	*kind = S_ISREG(st.st_mode) ? 1 : S_ISDIR(st.st_mode) ? 2 : 3;
	*size = (long long)st.st_size;
	return 0;
}

static VSILFILE *canalstepOpenRead(const char *path) { return VSIFOpenL(path, "rb"); }

static long long canalstepReadSome(VSILFILE *f, void *buf, size_t n) { return (long long)VSIFReadL(buf, 1, n, f); }

static void canalstepCloseFile(VSILFILE *f) { VSIFCloseL(f); }

static const char *canalstepIdentify(const char *path, char **allowed) {
	GDALDriverH d = GDALIdentifyDriverEx(path, GDAL_OF_RASTER, (const char *const *)allowed, NULL);
	return d == NULL ? NULL : GDALGetDriverShortName(d);
}
*/
import "C"

import (
	"errors"
	"slices"
	"unsafe"
)

// fileKind is what a path names.
type fileKind int

const (
	regularFile fileKind = iota + 1
	folder
	otherFile // device, pipe, socket
)

var errVSINotFound = errors.New("not found")

// vsiStat stats a path of GDAL's virtual file systems (/vsimem/, /vsizip/,
// /vsicurl/, …).
func vsiStat(path string) (fileKind, int64, error) {
	cpath := C.CString(path)
	defer C.free(unsafe.Pointer(cpath))
	var kind C.int
	var size C.longlong
	var rc C.int
	quietly(func() { rc = C.canalstepStat(cpath, &kind, &size) })
	if rc != 0 {
		return 0, 0, errVSINotFound
	}
	return fileKind(kind), int64(size), nil
}

// vsiReadHead reads at most n bytes from the start of a virtual-file-system
// path, to its end whatever size a stat reported, in 64 kB steps so that a
// small file costs a small buffer.
func vsiReadHead(path string, n int) ([]byte, error) {
	cpath := C.CString(path)
	defer C.free(unsafe.Pointer(cpath))
	var f *C.VSILFILE
	msg := quietly(func() { f = C.canalstepOpenRead(cpath) })
	if f == nil {
		if msg == "" {
			msg = "cannot be opened"
		}
		return nil, errors.New(msg)
	}
	defer C.canalstepCloseFile(f)
	var buf []byte
	for len(buf) < n {
		step := min(n-len(buf), 64<<10)
		buf = slices.Grow(buf, step)
		chunk := buf[len(buf) : len(buf)+step]
		var got C.longlong
		quietly(func() { got = C.canalstepReadSome(f, unsafe.Pointer(&chunk[0]), C.size_t(step)) })
		buf = buf[:len(buf)+int(got)]
		if int(got) < step {
			break
		}
	}
	return buf, nil
}

// identify returns the short name of the allow-list driver that recognises
// the file at path, or "" when none does.
func identify(path string) string {
	setup()
	cpath := C.CString(path)
	defer C.free(unsafe.Pointer(cpath))
	var name *C.char
	gdalCalls.Add(1)
	quietly(func() { name = C.canalstepIdentify(cpath, cAllowed) })
	if name == nil {
		return ""
	}
	return C.GoString(name)
}

// vsiReadDir lists a folder of a virtual file system, or returns nil when
// it cannot be listed.
func vsiReadDir(dir string) []string {
	cdir := C.CString(dir)
	defer C.free(unsafe.Pointer(cdir))
	var list **C.char
	quietly(func() { list = C.VSIReadDir(cdir) })
	if list == nil {
		return nil
	}
	defer C.CSLDestroy(list)
	n := int(C.CSLCount(list))
	names := make([]string, 0, n)
	for _, p := range unsafe.Slice(list, n) {
		names = append(names, C.GoString(p))
	}
	return names
}
