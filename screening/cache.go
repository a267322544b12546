package screening

import (
	"sort"
	"strconv"
	"sync"
	"sync/atomic"
)

// memo is a bounded concurrent cache: when it holds more than max entries it starts afresh, so
// adversarial input cannot grow it without limit. Values must not be mutated after Store.
type memo[V any] struct {
	max int64
	n   atomic.Int64
	m   atomic.Pointer[sync.Map]
}

func newMemo[V any](max int64) *memo[V] {
	c := &memo[V]{max: max}
	c.m.Store(&sync.Map{})
	return c
}

func (c *memo[V]) get(k string) (V, bool) {
	v, ok := c.m.Load().Load(k)
	if !ok {
		var zero V
		return zero, false
	}
	return v.(V), true
}

func (c *memo[V]) put(k string, v V) {
	if c.n.Add(1) > c.max {
		c.m.Store(&sync.Map{})
		c.n.Store(1)
	}
	c.m.Load().Store(k, v)
}

// writtenSignature describes the subgraph of atoms (sorted, as in the molecule) exactly as
// written: element, aromaticity, and the bonds among them with local numbers and orders, less
// skip. Two molecules with the same signature have the same subgraph, so anything computed from
// the subgraph alone can be cached under it. It is not canonical (another atom order gives
// another signature), which only costs a cache miss.
func writtenSignature(m *Molecule, atoms []int, skip int, extra string) string {
	sb := make([]byte, 0, 12*len(atoms)+len(extra))
	// atoms is sorted: local numbers by binary search
	local := func(a int) (int, bool) {
		i := sort.SearchInts(atoms, a)
		return i, i < len(atoms) && atoms[i] == a
	}
	for _, a := range atoms {
		at := &m.Atoms[a]
		sb = strconv.AppendInt(sb, int64(at.Z), 10)
		if at.Aromatic {
			sb = append(sb, 'a')
		}
		sb = append(sb, ',')
	}
	sb = append(sb, '|')
	for i, a := range atoms {
		for _, bi := range m.adj[a] {
			if bi == skip {
				continue
			}
			j, ok := local(m.Other(bi, a))
			if !ok || j < i {
				continue
			}
			b := &m.Bonds[bi]
			sb = strconv.AppendInt(sb, int64(i), 10)
			sb = append(sb, '-')
			sb = strconv.AppendInt(sb, int64(j), 10)
			sb = append(sb, byte('0'+b.Order))
			if b.Aromatic {
				sb = append(sb, 'a')
			}
			sb = append(sb, ' ')
		}
	}
	sb = append(sb, extra...)
	return string(sb)
}

var (
	keyMemo = newMemo[string](50000)
	gasMemo = newMemo[GasEstimate](50000)
)

// cachedSkeletonKey is SkeletonKey with the written-subgraph cache.
func cachedSkeletonKey(m *Molecule, atoms []int, skip int) string {
	sig := writtenSignature(m, atoms, skip, "")
	if k, ok := keyMemo.get(sig); ok {
		return k
	}
	k := SkeletonKey(m, atoms, skip)
	keyMemo.put(sig, k)
	return k
}

// keyForSignature is cachedSkeletonKey for a signature already computed (skip = -1).
func keyForSignature(sig string, m *Molecule, atoms []int) string {
	if k, ok := keyMemo.get(sig); ok {
		return k
	}
	k := SkeletonKey(m, atoms, -1)
	keyMemo.put(sig, k)
	return k
}
