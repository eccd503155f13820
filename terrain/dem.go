package terrain

import (
	"errors"
	"fmt"
	"math"
	"runtime"
	"strings"
	"sync"

	"github.com/airbusgeo/godal"
)

// Method is the interpolation used by [DEM.Sample].
type Method int

const (
	// Bilinear interpolates between the four cell centres around the point.
	Bilinear Method = iota
	// Nearest takes the value of the cell that contains the point, as
	// gdallocationinfo does.
	Nearest
)

// String returns "bilinear" or "nearest".
func (m Method) String() string {
	switch m {
	case Bilinear:
		return "bilinear"
	case Nearest:
		return "nearest"
	}
	return fmt.Sprintf("Method(%d)", int(m))
}

// Range is a closed interval of elevations in metres.
type Range struct {
	Min, Max float64 // m
}

// DefaultValidRange is the range of elevations [Options.ValidRange] takes
// when nil: -500 m to 9000 m, which holds all dry land on Earth (the Dead
// Sea shore lies near -430 m and the highest summit near 8850 m; both from
// memory) and leaves out the fill values DEMs use for missing data
// (-32768, -3.4e38, 3e38) and spikes such as 1e9.
func DefaultValidRange() Range { return Range{Min: -500, Max: 9000} }

// Contains reports whether z (m) lies in the range; never for NaN.
func (r Range) Contains(z float64) bool { return z >= r.Min && z <= r.Max }

// Options controls how [Open] reads a DEM. The zero value is valid.
type Options struct {
	// ZUnits is the vertical unit of the DEM's values: "m" (the default when
	// empty), "ft" (international foot, 0.3048 m) or "us-ft" (US survey
	// foot, 1200/3937 m). Most DEMs do not record it, so the user states it.
	ZUnits string
	// Method is the interpolation; the zero value is Bilinear.
	Method Method
	// CacheBlocks bounds the number of decoded blocks kept in memory. Zero
	// means enough blocks for about 32 MB, and at least 16; never more than
	// the raster has.
	CacheBlocks int
	// Readers is the number of GDAL handles that decode blocks in parallel
	// (each extra one is a second open of the same path). Zero means
	// min(GOMAXPROCS, 4); 1 decodes on the calling goroutine only.
	Readers int
	// ValidRange is the range of elevations, in metres after the band's
	// scale and offset and the ZUnits conversion, that a cell may hold. A
	// cell outside it, or not finite (NaN, ±Inf), counts as nodata. Nil
	// means [DefaultValidRange]; a non-nil range is used as given, so
	// &Range{} admits 0 m only. Both ends must be finite, Min ≤ Max.
	ValidRange *Range
}

// Errors returned (wrapped, with the path) by [Open] for DEMs that cannot be
// sampled. Test with errors.Is; each also matches [ErrBadDEM].
var (
	ErrNoGeoTransform = errors.New("DEM has no georeferencing (geotransform)")
	ErrNoCRS          = errors.New("DEM has no coordinate reference system; assign one with gdal_edit.py -a_srs EPSG:n")
	ErrRotated        = errors.New("rotated rasters are not supported; warp it north-up with gdalwarp")
)

// Metres per vertical unit accepted in Options.ZUnits.
var zUnitToMetre = map[string]float64{
	"m":     1,
	"ft":    0.3048,        // international foot, exact (1959 agreement; from memory)
	"us-ft": 1200.0 / 3937, // US survey foot, exact (from memory)
}

// maxTileSide bounds a cached block's side in cells, so that one cached
// block never exceeds 1 MB of float32 whatever the file's own blocks are.
const maxTileSide = 512

// stripRows is the height of the cached bands used for strip-organised
// files (blocks fewer than 64 rows high).
const stripRows = 256

// defaultCacheBytes is the memory the default CacheBlocks aims for.
const defaultCacheBytes = 32 << 20

// Info describes an open DEM.
type Info struct {
	Path          string
	Width, Height int        // cells
	CellX, CellY  float64    // cell size in CRS units, both positive
	GeoTransform  [6]float64 // GDAL order: x0, dx, rot, y0, rot, dy (dy < 0 for north-up)
	CRSWKT        string     // the DEM's CRS as WKT
	EPSG          int        // 0 when the CRS has no EPSG code
	Geographic    bool       // the CRS is lon/lat in degrees
	// LinearUnitToMetre is metres per CRS unit for a projected CRS (1 for
	// metre, 0.304800609601219 for US survey foot); 0 when geographic.
	LinearUnitToMetre float64
	NoData            float64 // raw nodata value as stored in the file
	HasNoData         bool
	Scale, Offset     float64 // elevation = raw*Scale + Offset (then × ZUnits to metres)
	DataType          string  // the band's data type, e.g. "Float32"
	BlockX, BlockY    int     // the file's block size in cells
	// CacheBlockX and CacheBlockY are the size in cells of the blocks the
	// cache holds: the file's blocks, or bands of rows for strip files, or
	// 512-cell windows for very large blocks.
	CacheBlockX, CacheBlockY int
	CacheBlocks              int    // capacity of the block cache
	ZUnits                   string // vertical unit assumed: "m", "ft" or "us-ft"
	Method                   Method
	ValidRange               Range // elevations (m) taken as data; others are nodata
}

// DEM is an open elevation raster (its first band). A DEM is safe for
// concurrent use: a mutex serialises access to the GDAL dataset, which GDAL
// does not allow to be used from two threads at once. For parallel sampling
// open one DEM per goroutine.
type DEM struct {
	mu     sync.Mutex
	ds     *godal.Dataset
	band   godal.Band
	info   Info
	closed bool

	// Sampling constants.
	gt         [6]float64
	w, h       int
	fw, fh     float64 // w, h as float64
	noData     float32
	hasNoData  bool
	mul, add   float64 // metres = raw*mul + add
	valid      Range   // elevations taken as data, m
	rawLo      float32 // raw values whose elevation is in valid, when rawOK
	rawHi      float32
	rawOK      bool
	tw, th     int // cached block size
	ntx        int // cached blocks per row
	cache      blockCache
	blocksRead int
	readers    int      // parallel decoders wanted (Options.Readers)
	pool       []reader // decoders; pool[0] uses ds
	direct     bool     // cached blocks are the file's Float32 blocks: use GDALReadBlock
	missing    []int    // scratch for prefetch
	ahead      lookahead
}

// Open opens the raster at path (a file in one of the formats of
// [DEMDrivers], locally or through GDAL's /vsimem/, /vsizip/, /vsicurl/,
// /vsis3/ … file systems) for sampling its first band. Before GDAL sees the
// file, Open checks the path and, for a VRT, its XML and every file it
// names (see the package documentation), and refuses what is unsafe with
// an error matching [ErrBadDEM]. It refuses rasters without a geotransform
// or CRS, rotated rasters and rasters smaller than 2×2 cells.
func Open(path string, opt Options) (*DEM, error) {
	setup()
	zu := opt.ZUnits
	if zu == "" {
		zu = "m"
	}
	zf, ok := zUnitToMetre[zu]
	if !ok {
		return nil, fmt.Errorf("unknown vertical unit %q; use m, ft or us-ft", opt.ZUnits)
	}
	if opt.Method != Bilinear && opt.Method != Nearest {
		return nil, fmt.Errorf("unknown interpolation method %v", opt.Method)
	}
	if opt.CacheBlocks < 0 {
		return nil, fmt.Errorf("cache size %d blocks is negative", opt.CacheBlocks)
	}
	if opt.Readers < 0 {
		return nil, fmt.Errorf("%d parallel readers is negative", opt.Readers)
	}
	vr := DefaultValidRange()
	if opt.ValidRange != nil {
		vr = *opt.ValidRange
		if math.IsNaN(vr.Min) || math.IsNaN(vr.Max) || math.IsInf(vr.Min, 0) || math.IsInf(vr.Max, 0) || vr.Min > vr.Max {
			return nil, fmt.Errorf("valid elevation range %g to %g m: both ends must be finite and the first not above the second", vr.Min, vr.Max)
		}
	}
	if err := checkDEM(path); err != nil {
		return nil, err
	}
	ds, err := openRaster(path)
	if err != nil {
		msg := strings.Join(strings.Fields(err.Error()), " ") // GDAL's message, on one line
		if identify(path) == "" {
			return nil, refuse(ErrFormatRefused, "cannot open DEM %s: not in a raster format canalstep reads (%s); convert it with gdal_translate -of GTiff",
				showName(path), formatList())
		}
		return nil, refuse(nil, "cannot open DEM %s: %s", showName(path), msg)
	}
	d, err := newDEM(ds, path, zu, zf, vr, opt)
	if err != nil {
		ds.Close()
		return nil, fmt.Errorf("open DEM %s: %w", showName(path), &refusal{kind: kindOf(err), msg: err.Error()})
	}
	return d, nil
}

// kindOf returns err when it is one of the sentinels newDEM returns, else
// nil (the refusal then matches ErrBadDEM only).
func kindOf(err error) error {
	for _, k := range []error{ErrNoGeoTransform, ErrNoCRS, ErrRotated} {
		if err == k {
			return k
		}
	}
	return nil
}

func newDEM(ds *godal.Dataset, path, zu string, zf float64, vr Range, opt Options) (*DEM, error) {
	st := ds.Structure()
	if st.NBands < 1 {
		return nil, errors.New("raster has no bands")
	}
	gt, err := ds.GeoTransform()
	if err != nil {
		return nil, ErrNoGeoTransform
	}
	if gt[2] != 0 || gt[4] != 0 {
		return nil, ErrRotated
	}
	if gt[1] == 0 || gt[5] == 0 || math.IsNaN(gt[1]) || math.IsNaN(gt[5]) {
		return nil, fmt.Errorf("geotransform %v has a zero cell size", gt)
	}
	if st.SizeX < 2 || st.SizeY < 2 {
		return nil, fmt.Errorf("raster is %d×%d cells; at least 2×2 are needed", st.SizeX, st.SizeY)
	}
	crs, fast := CRS{}, false
	if ds.Driver().ShortName() == "GTiff" {
		crs, fast = geoTIFFCRS(path)
	}
	if !fast {
		wkt := ds.Projection()
		if wkt == "" {
			return nil, ErrNoCRS
		}
		if crs, err = CRSInfo(wkt); err != nil {
			return nil, fmt.Errorf("the DEM's CRS: %w", err)
		}
		crs.WKT = wkt
	}
	wkt := crs.WKT
	band := ds.Bands()[0]
	bs := band.Structure()
	nd, hasND := band.NoData()
	scale, offset := bs.Scale, bs.Offset
	if scale == 0 { // GDAL reports 1/0 when unset; 0 would flatten the DEM
		scale = 1
	}
	if math.IsNaN(scale) || math.IsInf(scale, 0) || math.IsNaN(offset) || math.IsInf(offset, 0) {
		return nil, fmt.Errorf("band scale %g and offset %g must be finite; set them with gdal_edit.py -scale 1 -offset 0", scale, offset)
	}
	tw, th := cacheBlockSize(st.SizeX, st.SizeY, bs.BlockSizeX, bs.BlockSizeY)
	nblocks := opt.CacheBlocks
	if nblocks == 0 {
		nblocks = max(16, defaultCacheBytes/(4*tw*th))
		// More slots than the raster has blocks would never be used.
		nblocks = min(nblocks, ((st.SizeX+tw-1)/tw)*((st.SizeY+th-1)/th))
	}
	d := &DEM{
		ds:   ds,
		band: band,
		info: Info{
			Path:              path,
			Width:             st.SizeX,
			Height:            st.SizeY,
			CellX:             math.Abs(gt[1]),
			CellY:             math.Abs(gt[5]),
			GeoTransform:      gt,
			CRSWKT:            wkt,
			EPSG:              crs.EPSG,
			Geographic:        crs.Geographic,
			LinearUnitToMetre: crs.LinearUnitToMetre,
			NoData:            nd,
			HasNoData:         hasND,
			Scale:             scale,
			Offset:            offset,
			DataType:          bs.DataType.String(),
			BlockX:            bs.BlockSizeX,
			BlockY:            bs.BlockSizeY,
			CacheBlockX:       tw,
			CacheBlockY:       th,
			CacheBlocks:       nblocks,
			ZUnits:            zu,
			Method:            opt.Method,
			ValidRange:        vr,
		},
		gt:        gt,
		w:         st.SizeX,
		h:         st.SizeY,
		fw:        float64(st.SizeX),
		fh:        float64(st.SizeY),
		noData:    float32(nd),
		hasNoData: hasND,
		mul:       scale * zf,
		add:       offset * zf,
		valid:     vr,
		tw:        tw,
		th:        th,
		ntx:       (st.SizeX + tw - 1) / tw,
		readers:   opt.Readers,
	}
	if d.readers == 0 {
		d.readers = min(runtime.GOMAXPROCS(0), 4)
	}
	d.rawLo, d.rawHi, d.rawOK = rawInterval(vr, d.mul, d.add)
	d.pool = []reader{{band: band}}
	d.direct = bs.DataType == godal.Float32 && tw == bs.BlockSizeX && th == bs.BlockSizeY
	d.cache.init(nblocks, tw*th)
	return d, nil
}

// cacheBlockSize chooses the size of the blocks the cache holds: the file's
// own blocks when they are at most 512×512, 512-cell windows aligned to them
// when they are larger, and bands of about 256 rows (at most 512 columns
// wide) for strip-organised files, whose blocks span the width and are a few
// rows high. GDAL's own cache keeps the decoded strips meanwhile.
func cacheBlockSize(w, h, bx, by int) (tw, th int) {
	if bx <= 0 || by <= 0 {
		bx, by = 256, 256
	}
	tw, th = min(bx, maxTileSide), min(by, maxTileSide)
	if bx >= w && by < 64 { // strips
		th = (stripRows + by - 1) / by * by // whole strips
		th = min(th, maxTileSide)
	}
	return min(tw, w), min(th, h)
}

// Info returns the DEM's description.
func (d *DEM) Info() Info { return d.info }

// BlocksRead returns how many blocks have been decoded from the file since
// Open (each miss of the block cache counts one).
func (d *DEM) BlocksRead() int {
	d.mu.Lock()
	defer d.mu.Unlock()
	return d.blocksRead
}

// Close releases the GDAL dataset. Sampling after Close returns an error.
func (d *DEM) Close() error {
	d.mu.Lock()
	defer d.mu.Unlock()
	if d.closed {
		return nil
	}
	d.closed = true
	d.cache.init(0, 0)
	return errors.Join(d.closeReaders(), d.ds.Close())
}
