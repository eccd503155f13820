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
// A point whose stencil has a nodata or NaN cell with non-zero weight gets
// NaN; the caller decides how to report it. Points outside the raster (beyond
// its outer edge, or with NaN coordinates) get NaN too, and Sample returns an
// *OutsideError listing them after sampling the rest. Other errors (a block
// that cannot be read) stop sampling.
//
// Sample reads only the blocks the points touch, through the block cache;
// sampling points in route order reuses each block. Looking a few thousand
// points ahead, it decodes the blocks they need in parallel (see
// Options.Readers). It panics if the slices differ in length.
func (d *DEM) Sample(xs, ys, out []float64) error {
	if len(ys) != len(xs) || len(out) != len(xs) {
		panic(fmt.Sprintf("terrain: Sample with %d xs, %d ys, %d out", len(xs), len(ys), len(out)))
	}
	d.mu.Lock()
	defer d.mu.Unlock()
	if d.closed {
		return errClosed
	}
	var outside []int
	x0, dx, y0, dy := d.gt[0], d.gt[1], d.gt[3], d.gt[5]
	hiC, hiR := d.fw-0.5, d.fh-0.5
	for i, x := range xs {
		if i%prefetchChunk == 0 {
			end := min(i+prefetchChunk, len(xs))
			if err := d.prefetch(xs[i:end], ys[i:end]); err != nil {
				return err
			}
		}
		fc := (x-x0)/dx - 0.5 // column of the point, 0 at the first cell centre
		fr := (ys[i]-y0)/dy - 0.5
		if !(fc >= -0.5 && fc <= hiC && fr >= -0.5 && fr <= hiR) {
			out[i] = math.NaN()
			outside = append(outside, i)
			continue
		}
		var raw float64
		var err error
		if d.info.Method == Nearest {
			raw, err = d.nearest(fc, fr)
		} else {
			raw, err = d.bilinear(fc, fr)
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

// bad reports whether a raw cell value is nodata or NaN.
func (d *DEM) bad(v float32) bool {
	return v != v || (d.hasNoData && v == d.noData)
}

// nearest returns the raw value of the cell containing (fc, fr), or NaN.
func (d *DEM) nearest(fc, fr float64) (float64, error) {
	c := min(int(fc+0.5), d.w-1) // fc ≥ -0.5, so truncation is floor
	r := min(int(fr+0.5), d.h-1)
	v, err := d.cell(c, r)
	if err != nil {
		return 0, err
	}
	if d.bad(v) {
		return math.NaN(), nil
	}
	return float64(v), nil
}

// bilinear interpolates raw values at (fc, fr), or returns NaN when a cell
// with non-zero weight is nodata.
func (d *DEM) bilinear(fc, fr float64) (float64, error) {
	c0 := min(max(int(math.Floor(fc)), 0), d.w-2)
	r0 := min(max(int(math.Floor(fr)), 0), d.h-2)
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
	x0, y0 := bx*d.tw, by*d.th
	w, h := min(d.tw, d.w-x0), min(d.th, d.h-y0)
	b := d.cache.slot(w * h)
	if err := d.band.Read(x0, y0, b.data, w, h); err != nil {
		d.cache.release()
		return nil, fmt.Errorf("read DEM block at column %d, row %d: %w", x0, y0, err)
	}
	b.key, b.x0, b.y0, b.w = key, x0, y0, w
	d.blocksRead++
	d.cache.add(b)
	return b, nil
}
