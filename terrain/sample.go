package terrain

import (
	"errors"
	"fmt"
	"math"
)

// OutsideError is returned by [DEM.Sample] when some points lie outside the
// raster. Their elevations are NaN; all other points are sampled.
type OutsideError struct {
	Indices []int // positions in the input slices, increasing
	Total   int   // number of points asked for
}

func (e *OutsideError) Error() string {
	if len(e.Indices) == 1 {
		return fmt.Sprintf("1 of %d points falls outside the DEM", e.Total)
	}
	return fmt.Sprintf("%d of %d points fall outside the DEM", len(e.Indices), e.Total)
}

var errClosed = errors.New("DEM is closed")

// Sample writes into out the ground elevation in metres at each point
// (xs[i], ys[i]), given in the DEM's CRS.
//
// Bilinear interpolates between the four cell centres around the point. The
// stencil is clamped at the raster's edges, so a point in the outer half of
// an edge cell takes the edge cells' values. With fractional offsets tx, ty
// from the upper-left centre z00 of the stencil:
//
//	z = (1-ty)·((1-tx)·z00 + tx·z10) + ty·((1-tx)·z01 + tx·z11)
//
// Nearest returns the value of the cell containing the point. Raw values
// are converted with the band's scale and offset and then to metres with
// Options.ZUnits.
//
// A cell is invalid when it holds the band's nodata value, or a value that
// is not finite or, in metres, outside Options.ValidRange. A point whose
// stencil has an invalid cell with non-zero weight gets NaN; the caller
// decides how to report it. Points outside the raster (beyond
// its outer edge, or with NaN coordinates) get NaN too, and Sample returns an
// *OutsideError listing them after sampling the rest. Other errors (a block
// that cannot be read) stop sampling.
//
// Sample reads only the blocks the points touch, through the block cache;
// sampling points in route order reuses each block. On a cache miss it looks
// a few thousand points ahead and decodes the blocks they need in parallel
// (see Options.Readers). It panics if the slices differ in length.
func (d *DEM) Sample(xs, ys, out []float64) error {
	if len(ys) != len(xs) || len(out) != len(xs) {
		panic(fmt.Sprintf("terrain: Sample with %d xs, %d ys, %d out", len(xs), len(ys), len(out)))
	}
	d.mu.Lock()
	defer d.mu.Unlock()
	if d.closed {
		return errClosed
	}
	d.ahead = lookahead{xs: xs, ys: ys}
	defer func() { d.ahead = lookahead{} }()
	var outside []int
	for i, x := range xs {
		d.ahead.pos = i
		fc, fr, inside := d.locate(x, ys[i])
		if !inside {
			out[i] = math.NaN()
			outside = append(outside, i)
			continue
		}
		c0, r0 := d.origin(fc, fr)
		var raw float64
		var err error
		if d.info.Method == Nearest {
			raw, err = d.nearest(c0, r0)
		} else {
			raw, err = d.bilinear(c0, r0, fc, fr)
		}
		if err != nil {
			return err
		}
		out[i] = raw*d.mul + d.add
	}
	if outside != nil {
		return &OutsideError{Indices: outside, Total: len(xs)}
	}
	return nil
}

// locate returns the point's fractional column and row counted from the
// first cell centre, and whether the point lies on the raster (false for
// NaN coordinates).
func (d *DEM) locate(x, y float64) (fc, fr float64, inside bool) {
	fc = (x-d.gt[0])/d.gt[1] - 0.5
	fr = (y-d.gt[3])/d.gt[5] - 0.5
	inside = fc >= -0.5 && fc <= d.fw-0.5 && fr >= -0.5 && fr <= d.fh-0.5
	return fc, fr, inside
}

// origin returns the first cell a sample at (fc, fr) reads: the cell
// containing it for Nearest, the upper-left cell of the 2×2 stencil for
// Bilinear, clamped so that the stencil stays on the raster.
func (d *DEM) origin(fc, fr float64) (c0, r0 int) {
	if d.info.Method == Nearest {
		return min(int(fc+0.5), d.w-1), min(int(fr+0.5), d.h-1) // fc ≥ -0.5: truncation is floor
	}
	return min(max(int(math.Floor(fc)), 0), d.w-2), min(max(int(math.Floor(fr)), 0), d.h-2)
}

// span is how many cells beyond its origin a sample's stencil reaches.
func (d *DEM) span() int {
	if d.info.Method == Nearest {
		return 0
	}
	return 1
}

// bad reports whether a raw cell value is nodata, or not finite, or in
// metres outside the valid range (NaN fails every comparison; infinities
// lie outside any finite interval).
func (d *DEM) bad(v float32) bool {
	if d.hasNoData && v == d.noData {
		return true
	}
	if d.rawOK {
		return !(v >= d.rawLo && v <= d.rawHi)
	}
	return !d.valid.Contains(cellMetres(v, d.mul, d.add))
}

// nearest returns the raw value of cell (c, r), or NaN.
func (d *DEM) nearest(c, r int) (float64, error) {
	v, err := d.cell(c, r)
	if err != nil {
		return 0, err
	}
	if d.bad(v) {
		return math.NaN(), nil
	}
	return float64(v), nil
}

// bilinear interpolates raw values at (fc, fr) from the stencil whose
// upper-left cell is (c0, r0), or returns NaN when a cell with non-zero
// weight is nodata.
func (d *DEM) bilinear(c0, r0 int, fc, fr float64) (float64, error) {
	tx := min(max(fc-float64(c0), 0), 1)
	ty := min(max(fr-float64(r0), 0), 1)

	var z00, z10, z01, z11 float32
	bx, by := c0/d.tw, r0/d.th
	if (c0+1)/d.tw == bx && (r0+1)/d.th == by {
		b, err := d.block(bx, by)
		if err != nil {
			return 0, err
		}
		i := (r0-b.y0)*b.w + (c0 - b.x0)
		z00, z10 = b.data[i], b.data[i+1]
		z01, z11 = b.data[i+b.w], b.data[i+b.w+1]
	} else { // the stencil straddles blocks
		var err error
		if z00, err = d.cell(c0, r0); err != nil {
			return 0, err
		}
		if z10, err = d.cell(c0+1, r0); err != nil {
			return 0, err
		}
		if z01, err = d.cell(c0, r0+1); err != nil {
			return 0, err
		}
		if z11, err = d.cell(c0+1, r0+1); err != nil {
			return 0, err
		}
	}
	// Cells with zero weight do not count: a point on a cell centre next
	// to nodata keeps its value.
	switch tx {
	case 0:
		z10, z11 = z00, z01
	case 1:
		z00, z01 = z10, z11
	}
	switch ty {
	case 0:
		z01, z11 = z00, z10
	case 1:
		z00, z10 = z01, z11
	}
	if d.bad(z00) || d.bad(z10) || d.bad(z01) || d.bad(z11) {
		return math.NaN(), nil
	}
	top := float64(z00)*(1-tx) + float64(z10)*tx
	bot := float64(z01)*(1-tx) + float64(z11)*tx
	return top*(1-ty) + bot*ty, nil
}

// cell returns the raw value of cell (c, r), which must be inside the raster.
func (d *DEM) cell(c, r int) (float32, error) {
	b, err := d.block(c/d.tw, r/d.th)
	if err != nil {
		return 0, err
	}
	return b.data[(r-b.y0)*b.w+(c-b.x0)], nil
}

// block returns cached block (bx, by), decoding it on a miss.
func (d *DEM) block(bx, by int) (*block, error) {
	key := by*d.ntx + bx
	if b := d.cache.get(key); b != nil {
		return b, nil
	}
	// A miss: decode the blocks the next points need together, unless this
	// stretch of points has been looked at already.
	if a := &d.ahead; d.readers > 1 && a.pos >= a.done {
		a.done = min(a.pos+prefetchChunk, len(a.xs))
		if err := d.prefetch(a.xs[a.pos:a.done], a.ys[a.pos:a.done]); err != nil {
			return nil, err
		}
		if b := d.cache.get(key); b != nil {
			return b, nil
		}
	}
	b := d.newSlot(key)
	if err := d.fill(&d.pool[0], b); err != nil {
		d.cache.release(b)
		return nil, err
	}
	d.blocksRead++
	d.cache.add(b)
	return b, nil
}
