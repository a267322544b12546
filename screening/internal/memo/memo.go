// Package memo is a bounded concurrent cache for values computed from immutable keys (canonical
// keys, written signatures, group lists).
package memo

import (
	"maps"
	"sync"
	"sync/atomic"
)

// Memo is a bounded concurrent cache: when it holds more than max entries it starts afresh, so
// adversarial input cannot grow it without limit. Values must not be mutated after Put.
//
// Reads of entries that have settled take no lock: they look up a typed map that is never
// written after it is published (a snapshot). New entries go to a map under a mutex, which is
// published as the next snapshot once the lookups that had to take the mutex since the last
// snapshot outnumber its entries — so copying costs each miss a constant on average, and a
// cache whose keys have all been seen is read without locks. A map keyed by string, unlike
// sync.Map's keys of type any, hashes and compares the key without boxing it in an interface.
type Memo[V any] struct {
	max  int
	read atomic.Pointer[map[string]V] // the snapshot: never written once stored

	mu     sync.Mutex
	all    map[string]V // every entry: the snapshot's and the newer ones
	misses int          // lookups that took mu since the last snapshot
}

// New returns an empty cache of at most max entries.
func New[V any](max int64) *Memo[V] {
	c := &Memo[V]{max: int(max)}
	c.Reset()
	return c
}

// Get returns the value stored under k.
func (c *Memo[V]) Get(k string) (V, bool) {
	if v, ok := (*c.read.Load())[k]; ok {
		return v, true
	}
	return c.getLocked(k)
}

// GetBytes is Get for a key held in a byte slice; a hit on a settled entry allocates nothing.
func (c *Memo[V]) GetBytes(k []byte) (V, bool) {
	if v, ok := (*c.read.Load())[string(k)]; ok {
		return v, true
	}
	return c.getLocked(string(k))
}

// getLocked looks up a key the snapshot does not hold, counting the miss and publishing a new
// snapshot when such lookups outnumber the entries.
func (c *Memo[V]) getLocked(k string) (V, bool) {
	c.mu.Lock()
	defer c.mu.Unlock()
	v, ok := c.all[k]
	c.misses++
	if c.misses >= len(c.all) {
		snap := maps.Clone(c.all)
		c.read.Store(&snap)
		c.misses = 0
	}
	return v, ok
}

// Put stores v under k.
func (c *Memo[V]) Put(k string, v V) {
	c.mu.Lock()
	defer c.mu.Unlock()
	if _, ok := c.all[k]; !ok && len(c.all) >= c.max {
		c.resetLocked()
	}
	c.all[k] = v
}

// Do returns the value stored under k, computing it with fn and storing it first when there is
// none (two callers may both compute a missing value; the values are equal by contract).
func (c *Memo[V]) Do(k string, fn func() V) V {
	if v, ok := c.Get(k); ok {
		return v
	}
	v := fn()
	c.Put(k, v)
	return v
}

// DoBytes is Do for a key built in a byte slice (on a caller's stack): a hit allocates
// nothing; on a miss fn gets the key as a string (the one stored).
func (c *Memo[V]) DoBytes(k []byte, fn func(key string) V) V {
	if v, ok := c.GetBytes(k); ok {
		return v
	}
	key := string(k)
	v := fn(key)
	c.Put(key, v)
	return v
}

// Reset empties the cache (benchmarks of cold starts).
func (c *Memo[V]) Reset() {
	c.mu.Lock()
	defer c.mu.Unlock()
	c.resetLocked()
}

func (c *Memo[V]) resetLocked() {
	empty := map[string]V{}
	c.read.Store(&empty)
	c.all = map[string]V{}
	c.misses = 0
}
