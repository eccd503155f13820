// Package gpkg writes layer sets (report/layers) to an OGC GeoPackage
// through GDAL's GPKG driver (godal, cgo).
//
// All layers are written in the caller's CRS (the DEM's), in one database
// transaction: a reader never sees some layers without the others, and a
// failure leaves no file. The writer only creates a file at a path that does
// not exist yet; callers stage it in a temporary folder and rename it into
// place when the whole plan has been written (outdir.Stage).
//
// The file is the same bytes on every run as far as GDAL allows: GDAL
// stamps each table's gpkg_contents.last_change with the clock, unless the
// configuration option OGR_CURRENT_DATE names the time (GDAL 3.6.2 honours
// it). Write sets that option, for its own thread only, to Options.Date,
// which the caller derives from the inputs, never from the wall clock.
//
// This package and terrain are the two project packages that import godal.
package gpkg

/*
#cgo pkg-config: gdal
#include <stdlib.h>
#include <cpl_conv.h>
*/
import "C"

import (
	"encoding/binary"
	"errors"
	"fmt"
	"math"
	"os"
	"runtime"
	"strconv"
	"strings"
	"sync"
	"time"
	"unsafe"

	"github.com/airbusgeo/godal"

	"canalstep/report/layers"
)

// Options says how to write a GeoPackage.
type Options struct {
	// CRS is the coordinate reference system of every layer: "EPSG:n" or a
	// WKT definition (WKT1 or WKT2). Coordinates are X then Y as GDAL's
	// traditional GIS order has them (easting then northing; longitude then
	// latitude), whatever axis order the CRS declares.
	CRS string
	// Date is written as every layer's gpkg_contents.last_change, in UTC to
	// the millisecond. Set it from the inputs (the DEM's or the design
	// file's date) so that reruns give the same file; the zero time is
	// written as 0001-01-01T00:00:00.000Z.
	Date time.Time
}

var registerOnce sync.Once
var registerErr error

// register registers GDAL's GeoPackage driver only, once per process.
func register() error {
	registerOnce.Do(func() { registerErr = godal.RegisterVector(godal.GeoPackage) })
	return registerErr
}

// Write validates ls and writes it as a new GeoPackage at path, which must
// not exist. Real values are rounded to their field's Decimals, as
// report/geojson writes them, and NaN is NULL. On any error the file is
// removed and nothing is left at path.
func Write(path string, ls []layers.Layer, o Options) error {
	if err := layers.Validate(ls); err != nil {
		return fmt.Errorf("gpkg: %w", err)
	}
	if _, err := os.Lstat(path); err == nil {
		return fmt.Errorf("gpkg: %s already exists (write to a new staging path)", path)
	} else if !errors.Is(err, os.ErrNotExist) {
		return fmt.Errorf("gpkg: %w", err)
	}
	if err := register(); err != nil {
		return fmt.Errorf("gpkg: register the GeoPackage driver: %w", err)
	}
	sr, err := spatialRef(o.CRS)
	if err != nil {
		return fmt.Errorf("gpkg: %w", err)
	}
	defer sr.Close()
	date := o.Date.UTC().Format("2006-01-02T15:04:05.000Z")
	err = withDate(date, func() error { return write(path, ls, sr) })
	if err != nil {
		os.Remove(path)
		return fmt.Errorf("gpkg: write %s: %w", path, err)
	}
	return nil
}

// spatialRef parses "EPSG:n" or a WKT definition. It does not pass the text
// to GDAL's user-input parser, which would also open files and URLs.
func spatialRef(crs string) (*godal.SpatialRef, error) {
	s := strings.TrimSpace(crs)
	if code, ok := strings.CutPrefix(strings.ToUpper(s), "EPSG:"); ok {
		n, err := strconv.Atoi(code)
		if err != nil || n <= 0 {
			return nil, fmt.Errorf("CRS %q: want EPSG:<positive code> or WKT", crs)
		}
		sr, err := godal.NewSpatialRefFromEPSG(n)
		if err != nil {
			return nil, fmt.Errorf("CRS %q: %w", crs, err)
		}
		return sr, nil
	}
	if i := strings.IndexByte(s, '['); i <= 0 || !isKeyword(s[:i]) {
		return nil, fmt.Errorf("CRS %q: want EPSG:<code> or a WKT definition", shorten(crs))
	}
	sr, err := godal.NewSpatialRefFromWKT(s)
	if err != nil {
		return nil, fmt.Errorf("CRS %q: %w", shorten(crs), err)
	}
	return sr, nil
}

func isKeyword(s string) bool {
	for i := 0; i < len(s); i++ {
		c := s[i]
		if !('A' <= c && c <= 'Z' || c == '_' || '0' <= c && c <= '9') {
			return false
		}
	}
	return true
}

func shorten(s string) string {
	if len(s) > 60 {
		return s[:60] + "…"
	}
	return s
}

// withDate runs f with GDAL's OGR_CURRENT_DATE set to date for this thread
// only: the goroutine is locked to its OS thread, so every GDAL call f makes
// (including the dataset's close, where GDAL writes last_change) sees it,
// and concurrent writers with other dates do not.
func withDate(date string, f func() error) error {
	runtime.LockOSThread()
	defer runtime.UnlockOSThread()
	key := C.CString("OGR_CURRENT_DATE")
	val := C.CString(date)
	defer C.free(unsafe.Pointer(key))
	defer C.free(unsafe.Pointer(val))
	C.CPLSetThreadLocalConfigOption(key, val) // GDAL copies both strings
	defer C.CPLSetThreadLocalConfigOption(key, nil)
	return f()
}

func write(path string, ls []layers.Layer, sr *godal.SpatialRef) (err error) {
	ds, err := godal.CreateVector(godal.GeoPackage, path)
	if err != nil {
		return err
	}
	closed := false
	defer func() {
		if !closed {
			if cerr := ds.Close(); err == nil {
				err = cerr
			}
		}
	}()
	if err := ds.StartTransaction(); err != nil {
		return fmt.Errorf("start transaction: %w", err)
	}
	for i := range ls {
		if err := writeLayer(ds, &ls[i], sr); err != nil {
			ds.RollbackTransaction()
			return fmt.Errorf("layer %q: %w", ls[i].Name, err)
		}
	}
	if err := syncLayers(ds); err != nil {
		ds.RollbackTransaction()
		return err
	}
	if err := describeLayers(ds); err != nil {
		ds.RollbackTransaction()
		return err
	}
	if err := ds.CommitTransaction(); err != nil {
		return fmt.Errorf("commit: %w", err)
	}
	closed = true
	if err := ds.Close(); err != nil {
		return fmt.Errorf("close: %w", err)
	}
	return nil
}

// syncLayers makes GDAL finish every layer inside the transaction: before
// it runs an SQL statement, GDAL's GeoPackage driver syncs each layer to the
// database (the spatial index it defers while features are added, the
// extent and last_change in gpkg_contents). Without this, GDAL would build
// the spatial indexes at close, after the commit, in transactions of its
// own.
func syncLayers(ds *godal.Dataset) error {
	rs, err := ds.ExecuteSQL("SELECT 1")
	if err != nil {
		return fmt.Errorf("sync layers: %w", err)
	}
	if rs != nil {
		if err := rs.Close(); err != nil {
			return fmt.Errorf("sync layers: %w", err)
		}
	}
	return nil
}

// describeLayers sets every layer's description in gpkg_contents, which
// GIS programs show as the layer's abstract, to layers.Caution, a constant
// quoted as an SQL string literal (quotes doubled).
func describeLayers(ds *godal.Dataset) error {
	rs, err := ds.ExecuteSQL("UPDATE gpkg_contents SET description = '" + strings.ReplaceAll(layers.Caution, "'", "''") + "'")
	if err != nil {
		return fmt.Errorf("describe layers: %w", err)
	}
	if rs != nil {
		rs.Close()
	}
	return nil
}

var geometryTypes = map[layers.Kind]godal.GeometryType{
	layers.Point:      godal.GTPoint,
	layers.LineString: godal.GTLineString,
	layers.Polygon:    godal.GTPolygon,
}

var fieldTypes = map[layers.Type]godal.FieldType{
	layers.String:  godal.FTString,
	layers.Real:    godal.FTReal,
	layers.Integer: godal.FTInt64,
}

func writeLayer(ds *godal.Dataset, l *layers.Layer, sr *godal.SpatialRef) error {
	opts := make([]godal.CreateLayerOption, 0, len(l.Fields))
	for _, f := range l.Fields {
		opts = append(opts, godal.NewFieldDefinition(f.Name, fieldTypes[f.Type]))
	}
	lyr, err := ds.CreateLayer(l.Name, sr, geometryTypes[l.Kind], opts...)
	if err != nil {
		return fmt.Errorf("create: %w", err)
	}
	// godal hands out field handles only through a feature; a feature made
	// without a geometry is not yet added to the layer (OGR_F_Create).
	tmpl, err := lyr.NewFeature(nil)
	if err != nil {
		return fmt.Errorf("feature template: %w", err)
	}
	byName := tmpl.Fields()
	tmpl.Close()
	handles := make([]godal.Field, len(l.Fields))
	for j, f := range l.Fields {
		h, ok := byName[f.Name]
		if !ok {
			return fmt.Errorf("field %q was not created", f.Name)
		}
		handles[j] = h
	}
	var wkb []byte
	for k := range l.Features {
		wkb = appendWKB(wkb[:0], l.Kind, l.Features[k].Parts)
		if err := writeFeature(lyr, wkb, l, k, handles); err != nil {
			return fmt.Errorf("feature %d: %w", k, err)
		}
	}
	return nil
}

func writeFeature(lyr godal.Layer, wkb []byte, l *layers.Layer, k int, handles []godal.Field) error {
	geom, err := godal.NewGeometryFromWKB(wkb, nil)
	if err != nil {
		return fmt.Errorf("geometry: %w", err)
	}
	defer geom.Close()
	feat, err := lyr.NewFeature(nil)
	if err != nil {
		return err
	}
	defer feat.Close()
	if err := feat.SetGeometry(geom); err != nil {
		return fmt.Errorf("geometry: %w", err)
	}
	for j, f := range l.Fields {
		v := l.Features[k].Values[j]
		var err error
		switch f.Type {
		case layers.String:
			err = feat.SetFieldValue(handles[j], v.Text())
		case layers.Real:
			if v.Missing() {
				continue // unset is NULL
			}
			err = feat.SetFieldValue(handles[j], f.Round(v.Real()))
		case layers.Integer:
			err = feat.SetFieldValue(handles[j], v.Int())
		}
		if err != nil {
			return fmt.Errorf("field %q: %w", f.Name, err)
		}
	}
	return lyr.CreateFeature(feat)
}

// appendWKB appends the little-endian OGC well-known binary of a 2D
// geometry (OGC 06-103r4, Simple Features Common Architecture 1.2.1, §8.2:
// byte order 1, uint32 type 1 Point / 2 LineString / 3 Polygon, uint32
// counts, float64 X then Y). Polygon rings are oriented as GeoJSON wants
// them (exterior counterclockwise), so both files carry the same rings.
func appendWKB(b []byte, kind layers.Kind, parts [][]layers.Coord) []byte {
	b = append(b, 1)
	b = binary.LittleEndian.AppendUint32(b, uint32(kind)) // layers.Kind matches the WKB codes
	switch kind {
	case layers.Point:
		b = appendXY(b, parts[0][0])
	case layers.LineString:
		b = appendRing(b, parts[0])
	case layers.Polygon:
		rings := layers.Oriented(parts)
		b = binary.LittleEndian.AppendUint32(b, uint32(len(rings)))
		for _, r := range rings {
			b = appendRing(b, r)
		}
	}
	return b
}

func appendRing(b []byte, cs []layers.Coord) []byte {
	b = binary.LittleEndian.AppendUint32(b, uint32(len(cs)))
	for _, c := range cs {
		b = appendXY(b, c)
	}
	return b
}

func appendXY(b []byte, c layers.Coord) []byte {
	b = binary.LittleEndian.AppendUint64(b, math.Float64bits(c[0]))
	return binary.LittleEndian.AppendUint64(b, math.Float64bits(c[1]))
}
