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
//
// Every slot has room for blockLen values, so an evicted slot can take any
// block and the cache never holds more than cap×blockLen values. Slots are
// carved from slabs mapped with allocFloat32s, so that a fresh process fills
// its cache with a few large page faults rather than one per 4 KB.
type blockCache struct {
	cap      int
	blockLen int // float32 values per slot
	m        map[int]*block
	last     *block
	tick     uint64
	pending  int // slots handed out and not yet added or released
	made     int // slots carved so far
	slab     []float32
	frees    []func()
	spare    []*block // released slots
}

// init empties the cache, sets its capacity in slots of blockLen values and
// unmaps the previous slabs.
func (c *blockCache) init(capacity, blockLen int) {
	for _, f := range c.frees {
		f()
	}
	*c = blockCache{cap: capacity, blockLen: blockLen, m: make(map[int]*block, min(capacity, 64))}
}

// newSlot carves a slot from the current slab, mapping a new slab of at
// least 32 slots (and at least 2 MB) when it is used up.
func (c *blockCache) newSlot() []float32 {
	if len(c.slab) < c.blockLen {
		n := max(32, hugePage/4/c.blockLen)
		n = max(min(n, c.cap-c.made), 1)
		var free func()
		c.slab, free = allocFloat32s(n * c.blockLen)
		c.frees = append(c.frees, free)
	}
	s := c.slab[:c.blockLen:c.blockLen]
	c.slab = c.slab[c.blockLen:]
	c.made++
	return s
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

// slot returns a block to fill with n ≤ blockLen values: a new one while the
// cache has room, else the least recently used one, removed from the map.
// The caller fills it and calls add, or release if filling failed.
func (c *blockCache) slot(n int) *block {
	c.pending++
	if k := len(c.spare); k > 0 {
		b := c.spare[k-1]
		c.spare = c.spare[:k-1]
		b.data = b.data[:n]
		return b
	}
	if len(c.m)+c.pending <= c.cap || len(c.m) == 0 {
		return &block{data: c.newSlot()[:n]}
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
	lru.data = lru.data[:n]
	return lru
}

// release gives back slot b, which could not be filled.
func (c *blockCache) release(b *block) {
	c.pending--
	c.spare = append(c.spare, b)
}

// add inserts a filled block.
func (c *blockCache) add(b *block) {
	c.pending--
	c.tick++
	b.used = c.tick
	c.m[b.key] = b
	c.last = b
}
