// Package memo is a bounded concurrent cache for values computed from immutable keys (canonical
// keys, written signatures, group lists).
package memo

import (
	"sync"
	"sync/atomic"
)

// Memo is a bounded concurrent cache: when it holds more than max entries it starts afresh, so
// adversarial input cannot grow it without limit. Values must not be mutated after Put.
type Memo[V any] struct {
	max int64
	n   atomic.Int64
	m   atomic.Pointer[sync.Map]
}

// New returns an empty cache of at most max entries.
func New[V any](max int64) *Memo[V] {
	c := &Memo[V]{max: max}
	c.m.Store(&sync.Map{})
	return c
}

// Get returns the value stored under k.
func (c *Memo[V]) Get(k string) (V, bool) {
	v, ok := c.m.Load().Load(k)
	if !ok {
		var zero V
		return zero, false
	}
	return v.(V), true
}

// Put stores v under k.
func (c *Memo[V]) Put(k string, v V) {
	if c.n.Add(1) > c.max {
		c.m.Store(&sync.Map{})
		c.n.Store(1)
	}
	c.m.Load().Store(k, v)
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

// Reset empties the cache (benchmarks of cold starts).
func (c *Memo[V]) Reset() {
	c.m.Store(&sync.Map{})
	c.n.Store(0)
}
