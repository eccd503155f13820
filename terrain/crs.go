package terrain

/*
#include <stdlib.h>
#include <cpl_conv.h>
#include <ogr_srs_api.h>

OGRSpatialReferenceH canalstepNewSRS(const char *def); // srs.cpp

// canalstepSame reports whether two CRSs describe the same coordinates.
// With the traditional GIS axis order on both (x = longitude or easting),
// two CRSs that differ only in a geographic CRS's official axis order give
// the same numbers, so the axis order is not compared.
static int canalstepSame(OGRSpatialReferenceH a, OGRSpatialReferenceH b) {
	const char *opts[] = {"CRITERION=EQUIVALENT_EXCEPT_AXIS_ORDER_GEOGCRS",
		"IGNORE_DATA_AXIS_TO_SRS_AXIS_MAPPING=YES", NULL};
	return OSRIsSameEx(a, b, opts);
}

static char *canalstepWKT(OGRSpatialReferenceH sr) {
	char *wkt = NULL;
	if (OSRExportToWkt(sr, &wkt) != OGRERR_NONE) {
		CPLFree(wkt);
		return NULL;
	}
	return wkt;
}
*/
import "C"

import (
	"errors"
	"fmt"
	"strconv"
	"strings"
	"sync"
	"unsafe"

	"github.com/airbusgeo/godal"
)

// LonLat is WGS 84 longitude and latitude in degrees, x = longitude (the
// coordinates of RFC 7946 GeoJSON, in the traditional GIS order). Name it
// for every transform with a lon/lat side: GDAL builds EPSG:4326 transforms
// in well under a millisecond, where the same ones from OGC:CRS84 take tens
// of milliseconds, and gives the same coordinates. [NewTransform] and
// [SharedTransform] take every spelling of OGC:CRS84 as LonLat.
//
// One difference with PROJ's own tool is worth knowing: for a CRS on
// another datum than WGS 84, cs2cs picks another datum transformation from
// OGC:CRS84 than from EPSG:4326 (for NAD83 / California zone 3, EPSG:2227,
// 1.2 m apart), whereas GDAL, and so this package before and after the
// mapping, picks the EPSG:4326 one for both.
const LonLat = "EPSG:4326"

// crs84Names are the spellings of OGC:CRS84 that transforms take as LonLat.
var crs84Names = []string{"OGC:CRS84", "CRS84", "urn:ogc:def:crs:OGC:1.3:CRS84", "urn:ogc:def:crs:OGC::CRS84",
	"http://www.opengis.net/def/crs/OGC/1.3/CRS84", "https://www.opengis.net/def/crs/OGC/1.3/CRS84"}

// transformCRS returns the definition a transform uses for def: LonLat for
// OGC:CRS84 (the same coordinates in traditional GIS order), else def
// without surrounding blanks.
func transformCRS(def string) string {
	d := strings.TrimSpace(def)
	for _, n := range crs84Names {
		if strings.EqualFold(d, n) {
			return LonLat
		}
	}
	return d
}

// CRS describes a coordinate reference system.
type CRS struct {
	WKT        string // as GDAL exports it (WKT1 where possible)
	EPSG       int    // 0 when it has no EPSG code
	Geographic bool   // lon/lat in degrees
	Projected  bool
	// LinearUnitToMetre is metres per unit of a projected CRS's axes (1 for
	// metre, 0.304800609601219 for US survey foot); 0 when geographic or
	// unknown.
	LinearUnitToMetre float64
}

// srs is a parsed CRS (an OGRSpatialReferenceH) in traditional GIS order.
type srs struct{ h C.OGRSpatialReferenceH }

// parseSRS parses def: anything GDAL's SetFromUserInput accepts ("EPSG:n",
// "OGC:CRS84", WKT, PROJ strings, PROJJSON) except file names and URLs,
// which GDAL would otherwise read or fetch as a definition.
func parseSRS(def string) (srs, error) {
	setup()
	if strings.TrimSpace(def) == "" {
		return srs{}, errors.New("empty CRS definition")
	}
	if strings.IndexByte(def, 0) >= 0 {
		return srs{}, fmt.Errorf("unknown CRS %q: it contains a NUL byte", shorten(def))
	}
	cdef := C.CString(def)
	defer C.free(unsafe.Pointer(cdef))
	var h C.OGRSpatialReferenceH
	msg := quietly(func() { h = C.canalstepNewSRS(cdef) })
	if h == nil {
		if msg == "" {
			msg = "not a CRS definition GDAL accepts (an EPSG code, WKT, PROJ string or PROJJSON)"
		}
		return srs{}, fmt.Errorf("unknown CRS %q: %s", shorten(def), strings.TrimSpace(msg))
	}
	return srs{h}, nil
}

func (s srs) close() { C.OSRRelease(s.h) }

// same reports whether s and o describe the same coordinates (in the
// traditional GIS order both use).
func (s srs) same(o srs) bool { return C.canalstepSame(s.h, o.h) != 0 }

// describe describes s.
func (s srs) describe() (CRS, error) {
	cw := C.canalstepWKT(s.h)
	if cw == nil {
		return CRS{}, errors.New("cannot export the CRS as WKT")
	}
	c := CRS{WKT: C.GoString(cw), Geographic: C.OSRIsGeographic(s.h) != 0, Projected: C.OSRIsProjected(s.h) != 0}
	C.CPLFree(unsafe.Pointer(cw))
	if c.Projected {
		// Searches the WKT1 tree, so it also finds the horizontal part of a
		// compound CRS.
		if v, ok := s.attr("PROJCS|UNIT", 1); ok {
			if f, err := strconv.ParseFloat(v, 64); err == nil && f > 0 {
				c.LinearUnitToMetre = f
			}
		}
	}
	c.EPSG = s.epsg()
	return c, nil
}

func (s srs) attr(path string, child int) (string, bool) {
	cp := C.CString(path)
	defer C.free(unsafe.Pointer(cp))
	v := C.OSRGetAttrValue(s.h, cp, C.int(child))
	if v == nil {
		return "", false
	}
	return C.GoString(v), true
}

// epsg returns the EPSG code of the CRS's root, identifying it from its
// definition when the definition does not carry one, or 0.
func (s srs) epsg() int {
	if n := authorityEPSG(s.h); n != 0 {
		return n
	}
	cp := C.OSRClone(s.h)
	if cp == nil {
		return 0
	}
	defer C.OSRRelease(cp)
	var rc C.OGRErr
	quietly(func() { rc = C.OSRAutoIdentifyEPSG(cp) })
	if rc != C.OGRERR_NONE {
		return 0
	}
	return authorityEPSG(cp)
}

func authorityEPSG(h C.OGRSpatialReferenceH) int {
	name, code := C.OSRGetAuthorityName(h, nil), C.OSRGetAuthorityCode(h, nil)
	if name == nil || code == nil || !strings.EqualFold(C.GoString(name), "EPSG") {
		return 0
	}
	n, _ := strconv.Atoi(C.GoString(code))
	return n
}

// newSpatialRef parses def for godal (used when writing rasters). godal
// sets the traditional GIS axis order on every SpatialRef.
func newSpatialRef(def string) (*godal.SpatialRef, error) {
	setup()
	if strings.TrimSpace(def) == "" {
		return nil, errors.New("empty CRS definition")
	}
	sr, err := godal.NewSpatialRef(def)
	if err != nil {
		return nil, fmt.Errorf("unknown CRS %q: %s", shorten(def), strings.TrimSpace(err.Error()))
	}
	return sr, nil
}

// shorten cuts a long CRS definition (a WKT string) for error messages.
func shorten(s string) string {
	if len(s) > 60 {
		return s[:57] + "..."
	}
	return s
}

// maxCached bounds each process-wide cache (CRS descriptions, shared
// transforms), so that a stream of distinct hostile definitions cannot grow
// memory without end; past it, results are computed and not kept.
const maxCached = 256

// infoCache holds CRSInfo results, errors included, by definition.
var infoCache struct {
	sync.Mutex
	m map[string]infoResult
}

type infoResult struct {
	crs CRS
	err error
}

// CRSInfo parses a CRS definition (as accepted by [NewTransform]) and
// describes it, so a caller can decide whether to measure chainage in that
// CRS or in a local projected one (a UTM zone: EPSG 32600+zone / 32700+zone).
// Results are kept for the life of the process (up to 256 definitions), so
// asking again costs a map lookup.
func CRSInfo(def string) (CRS, error) {
	infoCache.Lock()
	r, ok := infoCache.m[def]
	infoCache.Unlock()
	if ok {
		return r.crs, r.err
	}
	r.crs, r.err = crsInfo(def)
	infoCache.Lock()
	if infoCache.m == nil {
		infoCache.m = map[string]infoResult{}
	}
	if len(infoCache.m) < maxCached {
		infoCache.m[def] = r
	}
	infoCache.Unlock()
	return r.crs, r.err
}

func crsInfo(def string) (CRS, error) {
	s, err := parseSRS(def)
	if err != nil {
		return CRS{}, err
	}
	defer s.close()
	c, err := s.describe()
	if err != nil {
		return CRS{}, fmt.Errorf("CRS %q: %w", shorten(def), err)
	}
	return c, nil
}
