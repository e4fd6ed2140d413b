package sessions

import (
	"container/list"
	"hash/maphash"
	"slices"
	"sync"
	"unsafe"

	"matchbench/rfmath"
)

// DefaultSweepCacheBytes is the memory budget of decoded sweeps used when
// [Options.SweepCacheBytes] is zero.
const DefaultSweepCacheBytes = 256 << 20

// sweepKey names a stored sweep.
type sweepKey struct{ session, sweep string }

// sweepCache keeps decoded sweeps in memory within a budget of bytes. The
// least recently used sweep leaves first when a new one would go over the
// budget; a sweep that left is decoded again from its stored bytes when it
// is next asked for. Sweeps with the same frequency grid (sweeps measured
// with one analyser setting) share one copy of it.
//
// The bytes counted are those of the numbers: frequencies (once per
// distinct grid), reference impedances, data and extracted traces. Sweeps
// handed out stay valid after they leave the cache; they are garbage once
// their last user drops them.
type sweepCache struct {
	mu    sync.Mutex
	limit int64
	used  int64
	lru   list.List // of *sweepEntry; the most recently used at the front
	byKey map[sweepKey]*list.Element
	grids map[uint64][]*grid // by hash of the frequencies
	seed  maphash.Seed
}

// sweepEntry is a decoded sweep kept in memory, with its reflection traces
// extracted on first use.
type sweepEntry struct {
	key   sweepKey
	sw    *rfmath.Sweep
	grid  *grid
	c     *sweepCache
	bytes int64 // own bytes (not the grid's); guarded by c.mu
	gone  bool  // left the cache; guarded by c.mu

	mu     sync.Mutex
	traces [][]complex128 // [port-1], nil until used
}

// grid is a frequency grid shared by the cached sweeps that have it.
type grid struct {
	hash uint64
	freq []float64
	refs int
}

// SweepCacheStats describes the decoded-sweep cache of a store.
type SweepCacheStats struct {
	Sweeps int   // decoded sweeps held
	Grids  int   // distinct frequency grids among them
	Bytes  int64 // bytes of numbers held, each grid counted once
	Limit  int64 // the budget
}

func newSweepCache(limit int64) *sweepCache {
	if limit <= 0 {
		limit = DefaultSweepCacheBytes
	}
	return &sweepCache{limit: limit, byKey: map[sweepKey]*list.Element{}, grids: map[uint64][]*grid{}, seed: maphash.MakeSeed()}
}

const (
	float64Bytes    = int64(unsafe.Sizeof(float64(0)))
	complex128Bytes = int64(unsafe.Sizeof(complex128(0)))
)

// get returns the entry of k, marking it the most recently used, or nil.
func (c *sweepCache) get(k sweepKey) *sweepEntry {
	c.mu.Lock()
	defer c.mu.Unlock()
	el := c.byKey[k]
	if el == nil {
		return nil
	}
	c.lru.MoveToFront(el)
	return el.Value.(*sweepEntry)
}

// put keeps sw under k (unless an entry is there already, which is
// returned instead) and makes room by evicting the least recently used
// entries. sw must be the cache's own: its FreqHz may be replaced by an
// equal shared grid. A sweep larger than the whole budget is returned in an
// entry but not kept.
func (c *sweepCache) put(k sweepKey, sw *rfmath.Sweep) *sweepEntry {
	h := c.hashGrid(sw.FreqHz)
	c.mu.Lock()
	defer c.mu.Unlock()
	if el := c.byKey[k]; el != nil {
		c.lru.MoveToFront(el)
		return el.Value.(*sweepEntry)
	}
	e := &sweepEntry{key: k, sw: sw, c: c,
		bytes: float64Bytes*int64(len(sw.Z0)) + complex128Bytes*int64(len(sw.Data))}
	e.grid = c.shareGrid(h, sw)
	c.used += e.bytes
	c.byKey[k] = c.lru.PushFront(e)
	c.evict()
	return e
}

// hashGrid hashes the bits of a frequency grid.
func (c *sweepCache) hashGrid(f []float64) uint64 {
	if len(f) == 0 {
		return 0
	}
	return maphash.Bytes(c.seed, unsafe.Slice((*byte)(unsafe.Pointer(&f[0])), len(f)*int(float64Bytes)))
}

// shareGrid points sw at the shared copy of its grid, adding one if none
// is held. c.mu is held.
func (c *sweepCache) shareGrid(h uint64, sw *rfmath.Sweep) *grid {
	for _, g := range c.grids[h] {
		if slices.Equal(g.freq, sw.FreqHz) {
			g.refs++
			sw.FreqHz = g.freq
			return g
		}
	}
	g := &grid{hash: h, freq: sw.FreqHz, refs: 1}
	c.grids[h] = append(c.grids[h], g)
	c.used += float64Bytes * int64(len(g.freq))
	return g
}

// evict removes least recently used entries until the cache is within its
// budget. c.mu is held.
func (c *sweepCache) evict() {
	for c.used > c.limit {
		el := c.lru.Back()
		if el == nil {
			return
		}
		c.remove(el)
	}
}

// remove takes an entry out of the cache. c.mu is held.
func (c *sweepCache) remove(el *list.Element) {
	e := c.lru.Remove(el).(*sweepEntry)
	delete(c.byKey, e.key)
	e.gone = true
	c.used -= e.bytes
	g := e.grid
	if g.refs--; g.refs == 0 {
		c.used -= float64Bytes * int64(len(g.freq))
		gs := slices.DeleteFunc(c.grids[g.hash], func(x *grid) bool { return x == g })
		if len(gs) == 0 {
			delete(c.grids, g.hash)
		} else {
			c.grids[g.hash] = gs
		}
	}
}

// drop removes the entry of k, if any.
func (c *sweepCache) drop(k sweepKey) {
	c.mu.Lock()
	defer c.mu.Unlock()
	if el := c.byKey[k]; el != nil {
		c.remove(el)
	}
}

// dropSession removes every entry of session sid.
func (c *sweepCache) dropSession(sid string) {
	c.mu.Lock()
	defer c.mu.Unlock()
	for k, el := range c.byKey {
		if k.session == sid {
			c.remove(el)
		}
	}
}

// grow counts n more bytes of entry e (a trace it extracted), evicting
// others if that goes over the budget.
func (c *sweepCache) grow(e *sweepEntry, n int64) {
	c.mu.Lock()
	defer c.mu.Unlock()
	if e.gone {
		return
	}
	e.bytes += n
	c.used += n
	c.evict()
}

func (c *sweepCache) stats() SweepCacheStats {
	c.mu.Lock()
	defer c.mu.Unlock()
	s := SweepCacheStats{Sweeps: c.lru.Len(), Bytes: c.used, Limit: c.limit}
	for _, gs := range c.grids {
		s.Grids += len(gs)
	}
	return s
}

// trace returns S(port, port) at every point, shared: for a 1-port sweep
// the data themselves, otherwise extracted once and counted in the cache.
func (e *sweepEntry) trace(port int) []complex128 {
	if e.sw.Ports == 1 {
		return e.sw.Data
	}
	e.mu.Lock()
	defer e.mu.Unlock()
	if e.traces == nil {
		e.traces = make([][]complex128, e.sw.Ports)
	}
	if e.traces[port-1] == nil {
		e.traces[port-1] = e.sw.Param(nil, port-1, port-1)
		e.c.grow(e, complex128Bytes*int64(len(e.traces[port-1])))
	}
	return e.traces[port-1]
}
