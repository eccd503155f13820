package terrain

// block is one cached window of the DEM's band, row-major float32 raw values.
type block struct {
	key    int // by*ntx + bx
	x0, y0 int // first column and row
	w      int // row stride in cells (edge blocks may hold fewer columns)
	h      int // rows
	data   []float32
	used   uint64 // tick of the last use, for eviction
}

// blockCache holds at most cap decoded blocks and evicts the least recently
// used one. Lookups along a route hit the same block many times in a row, so
// the last block found is remembered apart from the map.
type blockCache struct {
	cap     int
	m       map[int]*block
	last    *block
	tick    uint64
	pending int // slots handed out and not yet added or released
}

func (c *blockCache) init(capacity int) {
	c.cap = capacity
	c.m = make(map[int]*block, capacity)
	c.last = nil
	c.tick = 0
	c.pending = 0
}

// get returns the cached block with key, or nil.
func (c *blockCache) get(key int) *block {
	if b := c.last; b != nil && b.key == key {
		return b
	}
	b := c.m[key]
	if b != nil {
		c.tick++
		b.used = c.tick
		c.last = b
	}
	return b
}

// slot returns a block to fill with n values: a new one while the cache
// has room, else the least recently used one, removed from the map. The
// caller fills it and calls add, or release if filling failed.
func (c *blockCache) slot(n int) *block {
	c.pending++
	if len(c.m)+c.pending <= c.cap || len(c.m) == 0 {
		return &block{data: make([]float32, n)}
	}
	var lru *block
	for _, b := range c.m {
		if lru == nil || b.used < lru.used {
			lru = b
		}
	}
	delete(c.m, lru.key)
	if c.last == lru {
		c.last = nil
	}
	if cap(lru.data) < n {
		lru.data = make([]float32, n)
	}
	lru.data = lru.data[:n]
	return lru
}

// release gives back a slot that could not be filled.
func (c *blockCache) release() { c.pending-- }

// add inserts a filled block.
func (c *blockCache) add(b *block) {
	c.pending--
	c.tick++
	b.used = c.tick
	c.m[b.key] = b
	c.last = b
}
