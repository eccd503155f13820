package terrain

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"
	"sync"

	"github.com/airbusgeo/godal"
)

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

// newSpatialRef parses def (anything GDAL's OSRSetFromUserInput accepts:
// "EPSG:n", "OGC:CRS84", WKT, PROJ strings, PROJJSON). godal sets the
// traditional GIS axis order (x = longitude/easting) on every SpatialRef.
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

// CRSInfo parses a CRS definition (as accepted by [NewTransform]) and
// describes it, so a caller can decide whether to measure chainage in that
// CRS or in a local projected one (a UTM zone: EPSG 32600+zone / 32700+zone).
func CRSInfo(def string) (CRS, error) {
	sr, err := newSpatialRef(def)
	if err != nil {
		return CRS{}, err
	}
	defer sr.Close()
	wkt, err := sr.WKT()
	if err != nil {
		return CRS{}, fmt.Errorf("export CRS %q as WKT: %w", shorten(def), err)
	}
	return describe(sr, wkt), nil
}

// describe describes sr, whose WKT export is wkt.
func describe(sr *godal.SpatialRef, wkt string) CRS {
	c := CRS{WKT: wkt, Geographic: sr.Geographic(), Projected: sr.Projected()}
	if c.Projected {
		// Searches the WKT1 tree, so it also finds the horizontal part of a
		// compound CRS.
		if v, ok := sr.AttrValue("PROJCS|UNIT", 1); ok {
			if f, err := strconv.ParseFloat(v, 64); err == nil && f > 0 {
				c.LinearUnitToMetre = f
			}
		}
	}
	c.EPSG = epsgOf(sr, wkt)
	return c
}

// epsgOf returns the EPSG code of sr, identifying it from its definition
// when the definition does not carry one, or 0.
func epsgOf(sr *godal.SpatialRef, wkt string) int {
	if strings.EqualFold(sr.AuthorityName(""), "EPSG") {
		if n, err := strconv.Atoi(sr.AuthorityCode("")); err == nil {
			return n
		}
	}
	cp, err := godal.NewSpatialRef(wkt)
	if err != nil {
		return 0
	}
	defer cp.Close()
	if cp.AutoIdentifyEPSG() != nil || !strings.EqualFold(cp.AuthorityName(""), "EPSG") {
		return 0
	}
	n, _ := strconv.Atoi(cp.AuthorityCode(""))
	return n
}

// Transform converts coordinates between two CRSs through PROJ, in
// traditional GIS order: x is longitude or easting, y latitude or northing,
// whatever the CRS's official axis order. A Transform is safe for concurrent
// use (calls are serialised).
type Transform struct {
	mu       sync.Mutex
	tr       *godal.Transform
	src, dst string
	ok       []bool
}

// NewTransform prepares a transformation from CRS src to CRS dst, each
// anything GDAL accepts ("EPSG:4326", "OGC:CRS84", WKT, PROJ strings).
func NewTransform(src, dst string) (*Transform, error) {
	s, err := newSpatialRef(src)
	if err != nil {
		return nil, err
	}
	defer s.Close()
	d, err := newSpatialRef(dst)
	if err != nil {
		return nil, err
	}
	defer d.Close()
	tr, err := godal.NewTransform(s, d)
	if err != nil {
		return nil, fmt.Errorf("no transformation from %q to %q: %s", shorten(src), shorten(dst), strings.TrimSpace(err.Error()))
	}
	return &Transform{tr: tr, src: src, dst: dst}, nil
}

// TransformError is returned by [Transform.Transform] when some points could
// not be transformed (for example a latitude beyond 90°). Their coordinates
// are set to NaN.
type TransformError struct {
	Indices []int  // positions of the failed points, increasing
	Total   int    // number of points asked for
	Reason  string // PROJ's last message, may be empty
}

func (e *TransformError) Error() string {
	s := fmt.Sprintf("%d of %d points could not be transformed (first: point %d)", len(e.Indices), e.Total, e.Indices[0])
	if e.Reason != "" {
		s += ": " + e.Reason
	}
	return s
}

// Transform converts the points in place. Points that fail become NaN and
// are reported by a *TransformError; the others are converted. It panics if
// the slices differ in length.
func (t *Transform) Transform(xs, ys []float64) error {
	if len(xs) != len(ys) {
		panic(fmt.Sprintf("terrain: Transform with %d xs and %d ys", len(xs), len(ys)))
	}
	if len(xs) == 0 {
		return nil
	}
	t.mu.Lock()
	defer t.mu.Unlock()
	if t.tr == nil {
		return errors.New("transform is closed")
	}
	if cap(t.ok) < len(xs) {
		t.ok = make([]bool, len(xs))
	}
	ok := t.ok[:len(xs)]
	var callErr error
	reason := quietly(func() { callErr = t.tr.TransformEx(xs, ys, nil, ok) })
	var failed []int
	for i, good := range ok {
		if !good || math.IsInf(xs[i], 0) || math.IsInf(ys[i], 0) || math.IsNaN(xs[i]) || math.IsNaN(ys[i]) {
			xs[i], ys[i] = math.NaN(), math.NaN()
			failed = append(failed, i)
		}
	}
	if failed != nil {
		return &TransformError{Indices: failed, Total: len(xs), Reason: reason}
	}
	if callErr != nil { // no failed point but PROJ still complained
		return fmt.Errorf("transform %q to %q: %v %s", shorten(t.src), shorten(t.dst), callErr, reason)
	}
	return nil
}

// Close releases the transformation.
func (t *Transform) Close() error {
	t.mu.Lock()
	defer t.mu.Unlock()
	if t.tr != nil {
		t.tr.Close()
		t.tr = nil
	}
	return nil
}
