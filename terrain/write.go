package terrain

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"

	"github.com/airbusgeo/godal"
)

// Grid is a raster to write with [WriteGeoTIFF]: one Float32 band.
type Grid struct {
	Width, Height int        // cells
	GeoTransform  [6]float64 // GDAL order: x0, dx, 0, y0, 0, dy (dy < 0 for north-up)
	// EPSG is the CRS's EPSG code; 0 writes no CRS unless WithCRS is given.
	EPSG      int
	NoData    float64
	HasNoData bool
	// Data holds Width×Height values, row-major from the top row. Leave it
	// nil and set Rows instead to write a large raster band by band.
	Data []float32
	// Rows, used when Data is nil, fills dst (n rows of Width values) with
	// rows row0 … row0+n-1.
	Rows func(row0, n int, dst []float32) error
}

// WriteOption adjusts how [WriteGeoTIFF] writes.
type WriteOption func(*writeOpts)

type writeOpts struct {
	tile        int // tile side; 0 with strips
	stripRows   int // rows per strip when > 0
	compress    string
	scale, off  float64
	scaleOffset bool
	crs         string
}

// WithTileSize writes square tiles of n cells (a multiple of 16; default 256).
func WithTileSize(n int) WriteOption { return func(o *writeOpts) { o.tile, o.stripRows = n, 0 } }

// WithStrips writes a strip-organised file with rows rows per strip.
func WithStrips(rows int) WriteOption { return func(o *writeOpts) { o.stripRows, o.tile = rows, 0 } }

// WithCompression sets the GTiff COMPRESS option (default "DEFLATE"; "NONE"
// for none).
func WithCompression(c string) WriteOption { return func(o *writeOpts) { o.compress = c } }

// WithScaleOffset records a band scale and offset (elevation = raw*scale +
// offset), as some DEMs stored as integers do.
func WithScaleOffset(scale, offset float64) WriteOption {
	return func(o *writeOpts) { o.scale, o.off, o.scaleOffset = scale, offset, true }
}

// WithCRS sets the CRS from any definition GDAL accepts, overriding
// Grid.EPSG.
func WithCRS(def string) WriteOption { return func(o *writeOpts) { o.crs = def } }

// writeBandRows is the number of rows [WriteGeoTIFF] asks Grid.Rows for at a
// time (one row of 256-cell tiles).
const writeBandRows = 256

// WriteGeoTIFF writes g as a Float32 GeoTIFF, by default tiled 256×256 and
// DEFLATE-compressed. It writes to a temporary file in the same folder and
// renames it into place when complete, so a failure leaves no partial file
// (a /vsi… path is written directly). Compression uses all CPUs.
func WriteGeoTIFF(path string, g Grid, opts ...WriteOption) (err error) {
	setup()
	o := writeOpts{tile: 256, compress: "DEFLATE"}
	for _, f := range opts {
		f(&o)
	}
	if g.Width < 1 || g.Height < 1 {
		return fmt.Errorf("write %s: grid is %d×%d cells", path, g.Width, g.Height)
	}
	if g.Data != nil && len(g.Data) != g.Width*g.Height {
		return fmt.Errorf("write %s: grid has %d values for %d×%d cells", path, len(g.Data), g.Width, g.Height)
	}
	if g.Data == nil && g.Rows == nil {
		return fmt.Errorf("write %s: grid has neither Data nor Rows", path)
	}

	target := path
	if !strings.HasPrefix(path, "/vsi") {
		dir := filepath.Dir(path)
		f, ferr := os.CreateTemp(dir, "."+filepath.Base(path)+".tmp-*")
		if ferr != nil {
			return fmt.Errorf("write %s: %w", path, ferr)
		}
		target = f.Name()
		f.Close()
		defer func() { // err is the named result

			if err != nil {
				os.Remove(target)
			}
		}()
	}

	co := []string{"COMPRESS=" + o.compress, "NUM_THREADS=ALL_CPUS", "BIGTIFF=IF_SAFER"}
	if o.stripRows > 0 {
		co = append(co, fmt.Sprintf("BLOCKYSIZE=%d", o.stripRows))
	} else {
		co = append(co, "TILED=YES", fmt.Sprintf("BLOCKXSIZE=%d", o.tile), fmt.Sprintf("BLOCKYSIZE=%d", o.tile))
	}
	// godal.Create silently replaces an existing file; target is our own
	// temporary file (or a /vsi path the caller chose).
	ds, err := godal.Create(godal.GTiff, target, 1, godal.Float32, g.Width, g.Height, godal.CreationOption(co...))
	if err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	if err := fillDataset(ds, g, o); err != nil {
		ds.Close()
		return fmt.Errorf("write %s: %w", path, err)
	}
	if err := ds.Close(); err != nil { // Close flushes
		return fmt.Errorf("write %s: %w", path, err)
	}
	if target != path {
		// os.CreateTemp made the file private; a DEM is an ordinary file.
		if err := os.Chmod(target, 0o644); err != nil {
			return fmt.Errorf("write %s: %w", path, err)
		}
		if err := os.Rename(target, path); err != nil {
			return fmt.Errorf("write %s: %w", path, err)
		}
	}
	return nil
}

func fillDataset(ds *godal.Dataset, g Grid, o writeOpts) error {
	if err := ds.SetGeoTransform(g.GeoTransform); err != nil {
		return fmt.Errorf("set geotransform: %w", err)
	}
	crs := o.crs
	if crs == "" && g.EPSG != 0 {
		crs = fmt.Sprintf("EPSG:%d", g.EPSG)
	}
	if crs != "" {
		sr, err := newSpatialRef(crs)
		if err != nil {
			return err
		}
		err = ds.SetSpatialRef(sr)
		sr.Close()
		if err != nil {
			return fmt.Errorf("set CRS: %w", err)
		}
	}
	b := ds.Bands()[0]
	if g.HasNoData {
		if err := b.SetNoData(g.NoData); err != nil {
			return fmt.Errorf("set nodata: %w", err)
		}
	}
	if o.scaleOffset {
		if err := b.SetScaleOffset(o.scale, o.off); err != nil {
			return fmt.Errorf("set scale and offset: %w", err)
		}
	}
	if g.Data != nil {
		return b.Write(0, 0, g.Data, g.Width, g.Height)
	}
	buf := make([]float32, g.Width*min(writeBandRows, g.Height))
	for r0 := 0; r0 < g.Height; r0 += writeBandRows {
		n := min(writeBandRows, g.Height-r0)
		dst := buf[:g.Width*n]
		if err := g.Rows(r0, n, dst); err != nil {
			return fmt.Errorf("rows %d-%d: %w", r0, r0+n-1, err)
		}
		if err := b.Write(0, r0, dst, g.Width, n); err != nil {
			return fmt.Errorf("rows %d-%d: %w", r0, r0+n-1, err)
		}
	}
	return nil
}
