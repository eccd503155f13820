package terrain

/*
#include <stdlib.h>
#include <cpl_conv.h>
#include <ogr_srs_api.h>
*/
import "C"

import (
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"unsafe"
)

// The CRS of a GeoTIFF DEM, fast.
//
// GDAL builds a GeoTIFF's CRS from its GeoKeys through libgeotiff, which
// looks up each part of the definition (projection, datum, ellipsoid, prime
// meridian, units) in PROJ's database before GDAL builds the whole CRS from
// its EPSG code anyway: about 13 ms of CPU a process beside 15 ms for the
// EPSG code alone (the first PROJ lookup of a process opens the database),
// measured side by side on Debian's GDAL 3.6. For the GeoKeys GDAL itself
// writes for a projected CRS given by EPSG code, and nothing else,
// geoTIFFCRS reads the code from the file and builds the CRS from it, which
// is what GDAL does for such keys, and the WKT is the one GDAL reports
// (checked in the tests across UTM, state plane in US feet, national grids
// and equal-area CRSs). Any other file, key, citation, side-car that may
// carry a CRS, or configuration option that changes how GDAL reads one,
// leaves the CRS to GDAL.

// GeoKey IDs (GeoTIFF 1.0, section 6.2) and the TIFF tags that hold them.
const (
	tagGeoKeyDirectory = 34735
	tagGeoDoubleParams = 34736
	tagGeoASCIIParams  = 34737

	keyModelType       = 1024 // GTModelTypeGeoKey: 1 projected
	keyRasterType      = 1025 // GTRasterTypeGeoKey: 1 PixelIsArea, 2 PixelIsPoint
	keyCitation        = 1026 // GTCitationGeoKey
	keyGeogCitation    = 2049 // GeogCitationGeoKey
	keyGeogAngularUnit = 2054 // GeogAngularUnitsGeoKey
	keyProjectedCRS    = 3072 // ProjectedCSTypeGeoKey
	keyProjLinearUnits = 3076 // ProjLinearUnitsGeoKey

	unitDegree = 9102 // EPSG angle unit "degree"
)

// geoTIFFConfig are GDAL configuration options that change how GDAL reads
// a GeoTIFF's CRS; when any is set, GDAL reads it.
var geoTIFFConfig = []string{"GDAL_GEOREF_SOURCES", "GTIFF_SRS_SOURCE", "GTIFF_REPORT_COMPD_CS", "GTIFF_LINEAR_UNITS",
	"GTIFF_ESRI_CITATION", "OSR_WKT_FORMAT", "OSR_USE_NON_DEPRECATED", "OSR_ADD_TOWGS84_ON_IMPORT_FROM_EPSG"}

// geoTIFFCRS returns the CRS of the local GeoTIFF at path when its GeoKeys
// are the plain ones of a projected CRS given by EPSG code (see above), and
// ok false otherwise.
func geoTIFFCRS(path string) (c CRS, ok bool) {
	code, keys, ascii, ok := plainGeoKeys(path)
	if !ok || !configUnset() || hasCRSSidecar(path) {
		return CRS{}, false
	}
	s, err := parseSRS("EPSG:" + strconv.Itoa(code))
	if err != nil {
		return CRS{}, false
	}
	defer s.close()
	if !s.isProjected() || !s.matches(keys, ascii) {
		return CRS{}, false
	}
	c, err = s.describe()
	if err != nil || c.EPSG != code {
		return CRS{}, false
	}
	return c, true
}

func configUnset() bool {
	for _, k := range geoTIFFConfig {
		ck := C.CString(k)
		v := C.CPLGetConfigOption(ck, nil)
		C.free(unsafe.Pointer(ck))
		if v != nil {
			return false
		}
	}
	return true
}

// hasCRSSidecar reports whether a side-car that GDAL reads before or
// instead of the GeoKeys may hold a CRS: DEM.tif.aux.xml, DEM.tif.aux or
// DEM.aux, in any letter case (GDAL matches side-cars without regard to
// case). A folder that cannot be listed counts as having one.
func hasCRSSidecar(path string) bool {
	dir, base := filepath.Split(path)
	if dir == "" {
		dir = "."
	}
	stem := strings.TrimSuffix(base, filepath.Ext(base))
	f, err := os.Open(dir)
	if err != nil {
		return true
	}
	defer f.Close()
	for {
		names, err := f.Readdirnames(256)
		for _, n := range names {
			for _, c := range [...]string{base + ".aux.xml", base + ".aux", stem + ".aux"} {
				if strings.EqualFold(n, c) {
					return true
				}
			}
		}
		if err == io.EOF {
			return false
		}
		if err != nil {
			return true
		}
	}
}

// geoKey is one GeoKey directory entry.
type geoKey struct {
	id, location, count, value uint16
}

// plainGeoKeys reads the GeoKeys of the first image of the TIFF file at
// path (a local file; /vsi… paths are left to GDAL) and returns the EPSG
// code of its projected CRS when the keys are only those GDAL writes for
// one: model type projected, raster type, the citations, degree as angular
// unit, the projected CRS code and its linear unit. It also returns the
// keys by ID and the GeoASCIIParams text the citations point into.
func plainGeoKeys(path string) (code int, keys map[uint16]geoKey, ascii string, ok bool) {
	if strings.HasPrefix(path, "/vsi") {
		return 0, nil, "", false
	}
	f, err := os.Open(path)
	if err != nil {
		return 0, nil, "", false
	}
	defer f.Close()
	fi, err := f.Stat()
	if err != nil || !fi.Mode().IsRegular() {
		return 0, nil, "", false
	}
	return geoKeysFrom(f, fi.Size())
}

// geoKeysFrom is plainGeoKeys on the TIFF r of size bytes.
func geoKeysFrom(r io.ReaderAt, size int64) (code int, keys map[uint16]geoKey, ascii string, ok bool) {
	tags, err := readTIFFTags(r, size, tagGeoKeyDirectory, tagGeoDoubleParams, tagGeoASCIIParams)
	if err != nil {
		return 0, nil, "", false
	}
	dir, okDir := tags[tagGeoKeyDirectory]
	if !okDir || dir.typ != tiffShort || len(dir.data) < 8 {
		return 0, nil, "", false
	}
	if _, has := tags[tagGeoDoubleParams]; has {
		return 0, nil, "", false // ellipsoid or projection parameters given by value
	}
	u16 := func(i int) uint16 { return dir.order.Uint16(dir.data[2*i:]) }
	n := int(u16(3))
	if u16(0) != 1 || len(dir.data) < 8*(n+1) {
		return 0, nil, "", false
	}
	if a, has := tags[tagGeoASCIIParams]; has {
		if a.typ != tiffASCII {
			return 0, nil, "", false
		}
		ascii = string(a.data)
	}
	keys = make(map[uint16]geoKey, n)
	for i := 1; i <= n; i++ {
		k := geoKey{u16(4 * i), u16(4*i + 1), u16(4*i + 2), u16(4*i + 3)}
		if _, dup := keys[k.id]; dup {
			return 0, nil, "", false
		}
		switch k.id {
		case keyCitation, keyGeogCitation:
			if k.location != tagGeoASCIIParams || int(k.value)+int(k.count) > len(ascii) {
				return 0, nil, "", false
			}
		case keyModelType, keyRasterType, keyGeogAngularUnit, keyProjectedCRS, keyProjLinearUnits:
			if k.location != 0 || k.count != 1 {
				return 0, nil, "", false
			}
		default:
			return 0, nil, "", false
		}
		keys[k.id] = k
	}
	pcs, hasPCS := keys[keyProjectedCRS]
	mt := keys[keyModelType]
	if !hasPCS || mt.value != 1 || pcs.value < 1024 || pcs.value >= 32767 {
		return 0, nil, "", false
	}
	if rt, has := keys[keyRasterType]; has && rt.value != 1 && rt.value != 2 {
		return 0, nil, "", false
	}
	if au, has := keys[keyGeogAngularUnit]; has && au.value != unitDegree {
		return 0, nil, "", false
	}
	return int(pcs.value), keys, ascii, true
}

// isProjected reports whether s is a projected CRS that is not compound.
func (s srs) isProjected() bool {
	return C.OSRIsProjected(s.h) != 0 && C.OSRIsCompound(s.h) == 0
}

// matches reports whether the GeoKeys besides the CRS code agree with s as
// GDAL writes them: the citations are the CRS's and its geographic CRS's
// names (each with or without GDAL's trailing '|'), and the linear unit is
// the CRS's EPSG unit.
func (s srs) matches(keys map[uint16]geoKey, ascii string) bool {
	for id, node := range map[uint16]string{keyCitation: "PROJCS", keyGeogCitation: "PROJCS|GEOGCS"} {
		k, has := keys[id]
		if !has {
			continue
		}
		name, ok := s.attr(node, 0)
		text := ascii[k.value : k.value+k.count]
		if !ok || (text != name && text != name+"|") {
			return false
		}
	}
	if k, has := keys[keyProjLinearUnits]; has {
		cn := C.CString("PROJCS|UNIT")
		code := C.OSRGetAuthorityCode(s.h, cn)
		C.free(unsafe.Pointer(cn))
		if code == nil || C.GoString(code) != strconv.Itoa(int(k.value)) {
			return false
		}
	}
	return true
}

// TIFF field types used here.
const (
	tiffASCII = 2
	tiffShort = 3
)

// tiffField is one tag's value as stored.
type tiffField struct {
	typ   uint16
	order binary.ByteOrder
	data  []byte
}

// maxGeoTagBytes bounds the size of a GeoTIFF tag's value read here; real
// ones are a few hundred bytes.
const maxGeoTagBytes = 64 << 10

var errTIFF = errors.New("not a TIFF file this reader takes")

// readTIFFTags reads the tags wanted of the first IFD of the TIFF or
// BigTIFF r of size bytes, refusing oversized or out-of-file values.
func readTIFFTags(r io.ReaderAt, size int64, wanted ...uint16) (map[uint16]tiffField, error) {
	var head [16]byte
	if _, err := r.ReadAt(head[:], 0); err != nil {
		return nil, err
	}
	var order binary.ByteOrder
	switch string(head[:2]) {
	case "II":
		order = binary.LittleEndian
	case "MM":
		order = binary.BigEndian
	default:
		return nil, errTIFF
	}
	big := false
	var ifd int64
	switch order.Uint16(head[2:]) {
	case 42:
		ifd = int64(order.Uint32(head[4:]))
	case 43:
		if order.Uint16(head[4:]) != 8 || order.Uint16(head[6:]) != 0 {
			return nil, errTIFF
		}
		big, ifd = true, int64(order.Uint64(head[8:]))
	default:
		return nil, errTIFF
	}
	countSize, entrySize, inline := int64(2), int64(12), int64(4)
	if big {
		countSize, entrySize, inline = 8, 20, 8
	}
	if ifd < 8 || ifd > size-countSize {
		return nil, errTIFF
	}
	buf := make([]byte, countSize)
	if _, err := r.ReadAt(buf, ifd); err != nil {
		return nil, err
	}
	var n int64
	if big {
		n = int64(order.Uint64(buf))
	} else {
		n = int64(order.Uint16(buf))
	}
	if n <= 0 || n > 4096 || ifd+countSize+n*entrySize > size {
		return nil, errTIFF
	}
	entries := make([]byte, n*entrySize)
	if _, err := r.ReadAt(entries, ifd+countSize); err != nil {
		return nil, err
	}
	out := map[uint16]tiffField{}
	for i := int64(0); i < n; i++ {
		e := entries[i*entrySize : (i+1)*entrySize]
		tag, typ := order.Uint16(e), order.Uint16(e[2:])
		want := false
		for _, w := range wanted {
			want = want || tag == w
		}
		if !want {
			continue
		}
		var width int64
		switch typ {
		case 1, 2, 6, 7:
			width = 1
		case tiffShort, 8:
			width = 2
		case 4, 9, 11:
			width = 4
		case 5, 10, 12, 16, 17, 18:
			width = 8
		default:
			return nil, fmt.Errorf("%w: tag %d has field type %d", errTIFF, tag, typ)
		}
		var count int64
		var val []byte
		if big {
			count, val = int64(order.Uint64(e[4:])), e[12:20]
		} else {
			count, val = int64(order.Uint32(e[4:])), e[8:12]
		}
		if count < 0 || count > maxGeoTagBytes/width {
			return nil, fmt.Errorf("%w: tag %d is too large", errTIFF, tag)
		}
		bytes := count * width
		data := make([]byte, bytes)
		if bytes <= inline {
			copy(data, val)
		} else {
			off := int64(order.Uint32(val))
			if big {
				off = int64(order.Uint64(val))
			}
			if off < 0 || off > size-bytes {
				return nil, fmt.Errorf("%w: tag %d lies outside the file", errTIFF, tag)
			}
			if _, err := r.ReadAt(data, off); err != nil {
				return nil, err
			}
		}
		if _, dup := out[tag]; dup {
			return nil, fmt.Errorf("%w: tag %d twice", errTIFF, tag)
		}
		out[tag] = tiffField{typ: typ, order: order, data: data}
	}
	return out, nil
}
