package terrain

import (
	"errors"
	"fmt"
	"sync"

	"github.com/airbusgeo/godal"
)

// prefetchChunk is how many points [DEM.Sample] looks ahead, on a cache
// miss, to find the blocks it will need, so that several can be decoded at
// once.
const prefetchChunk = 8192

// lookahead is the batch of points [DEM.Sample] is working through, so that
// a cache miss can look at the points that follow.
type lookahead struct {
	xs, ys []float64
	pos    int // index of the point being sampled
	done   int // points before this index have been prefetched
}

// reader is one GDAL handle that decodes blocks; a GDAL dataset must not be
// used by two threads at once, so each parallel reader has its own. pool[0]
// reads through the DEM's own dataset.
type reader struct {
	ds   *godal.Dataset // opened for this reader (nil for pool[0])
	band godal.Band     // for windowed reads (RasterIO)
	raw  rawDataset     // for whole-block reads, opened on first use
}

// prefetch decodes, in parallel, the blocks that the points in xs, ys need
// and the cache does not hold, when there are at least two and they fit
// comfortably in the cache. Otherwise it leaves the work to the sampling
// loop, which decodes blocks one at a time as it meets them. Cached blocks
// that the points need are touched, so that the slots taken for the new
// blocks evict other ones.
func (d *DEM) prefetch(xs, ys []float64) error {
	if d.readers < 2 {
		return nil
	}
	missing := d.missing[:0]
	defer func() { d.missing = missing[:0] }()
	last := -1
	note := func(bx, by int) bool {
		key := by*d.ntx + bx
		if key == last {
			return true
		}
		last = key
		if d.cache.get(key) != nil {
			return true
		}
		for _, k := range missing {
			if k == key {
				return true
			}
		}
		missing = append(missing, key)
		return len(missing) <= d.cache.cap/2
	}
	span := d.span()
	for i, x := range xs {
		fc, fr, inside := d.locate(x, ys[i])
		if !inside {
			continue
		}
		c0, r0 := d.origin(fc, fr)
		c1, r1 := c0+span, r0+span
		bx0, bx1, by0, by1 := c0/d.tw, c1/d.tw, r0/d.th, r1/d.th
		ok := note(bx0, by0)
		if bx1 != bx0 {
			ok = ok && note(bx1, by0)
		}
		if by1 != by0 {
			ok = ok && note(bx0, by1)
			if bx1 != bx0 {
				ok = ok && note(bx1, by1)
			}
		}
		if !ok {
			return nil // too many blocks for the cache: decode them lazily
		}
	}
	if len(missing) < 2 {
		return nil
	}
	if err := d.openReaders(); err != nil {
		return nil // parallel decoding is an optimisation only
	}

	// Take the cache slots here, on this goroutine; the readers only fill
	// them.
	blocks := make([]*block, len(missing))
	for i, key := range missing {
		blocks[i] = d.newSlot(key)
	}
	errs := make([]error, len(d.pool))
	var wg sync.WaitGroup
	for r := range d.pool {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := r; i < len(blocks); i += len(d.pool) {
				if err := d.fill(&d.pool[r], blocks[i]); err != nil {
					errs[r] = err
					return
				}
			}
		}()
	}
	wg.Wait()
	if err := errors.Join(errs...); err != nil {
		for _, b := range blocks {
			d.cache.release(b)
		}
		return err
	}
	for _, b := range blocks {
		d.cache.add(b)
	}
	d.blocksRead += len(blocks)
	return nil
}

// openReaders opens the extra GDAL handles for parallel decoding, once.
func (d *DEM) openReaders() error {
	for len(d.pool) < d.readers {
		r := reader{}
		var err error
		if d.direct {
			r.raw, err = openRaw(d.info.Path)
		} else if r.ds, err = openRaster(d.info.Path); err == nil {
			r.band = r.ds.Bands()[0]
		}
		if err != nil {
			d.readers = len(d.pool) // do not try again
			return err
		}
		d.pool = append(d.pool, r)
	}
	return nil
}

// closeReaders closes the readers' own handles.
func (d *DEM) closeReaders() error {
	var errs []error
	for _, r := range d.pool {
		r.raw.close()
		if r.ds != nil {
			errs = append(errs, r.ds.Close())
		}
	}
	d.pool = nil
	return errors.Join(errs...)
}

// newSlot takes a cache slot for block key and sets its geometry. Whole
// block reads fill a full block even at the raster's edges.
func (d *DEM) newSlot(key int) *block {
	x0, y0 := key%d.ntx*d.tw, key/d.ntx*d.th
	w, h := min(d.tw, d.w-x0), min(d.th, d.h-y0)
	var b *block
	if d.direct {
		b = d.cache.slot(d.tw * d.th)
		w = d.tw
	} else {
		b = d.cache.slot(w * h)
	}
	b.key, b.x0, b.y0, b.w, b.h = key, x0, y0, w, h
	return b
}

// fill decodes block b with reader r.
func (d *DEM) fill(r *reader, b *block) error {
	var err error
	if d.direct {
		if r.raw.h == nil {
			r.raw, err = openRaw(d.info.Path)
		}
		if err == nil {
			err = r.raw.readBlock(b.x0/d.tw, b.y0/d.th, b.data)
		}
	} else {
		err = r.band.Read(b.x0, b.y0, b.data, b.w, b.h)
	}
	if err != nil {
		return fmt.Errorf("read DEM block at column %d, row %d: %w", b.x0, b.y0, err)
	}
	return nil
}
