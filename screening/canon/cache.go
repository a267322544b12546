package canon

import (
	"sort"
	"strconv"

	"ringsieve/screening/internal/memo"
	"ringsieve/screening/mol"
	"ringsieve/screening/rings"
)

// WrittenSignature describes the subgraph of atoms (sorted, as in the molecule) exactly as
// written: element, aromaticity, charge, whether a boron, nitrogen or phosphorus atom has three
// connections (bonds and hydrogens: what decides a pyrrole-type nitrogen when the subgraph is
// perceived on its own), and the bonds among them with local numbers and orders, less skip.
// Two molecules with the same signature have the same subgraph, so anything computed from the
// subgraph alone can be cached under it. It is not canonical (another atom order gives another
// signature), which only costs a cache miss.
func WrittenSignature(m *mol.Molecule, r *rings.Rings, atoms []int, skip int, extra string) string {
	// built on the stack when it fits (the common case); only the string is allocated
	var stack [512]byte
	sb := stack[:0]
	// atoms is sorted: local numbers by binary search
	local := func(a int) (int, bool) {
		i := sort.SearchInts(atoms, a)
		return i, i < len(atoms) && atoms[i] == a
	}
	for _, a := range atoms {
		sb = strconv.AppendInt(sb, int64(m.Atoms[a].Z), 10)
		if r.AromaticAtom[a] {
			sb = append(sb, 'a')
		}
		at := &m.Atoms[a]
		if at.Charge != 0 {
			sb = append(sb, 'q')
			sb = strconv.AppendInt(sb, int64(at.Charge), 10)
		}
		if (at.Z == 5 || at.Z == 7 || at.Z == 15) && m.Degree(a)+at.HCount == 3 {
			sb = append(sb, 't')
		}
		sb = append(sb, ',')
	}
	sb = append(sb, '|')
	for i, a := range atoms {
		for _, bi := range m.Neighbors(a) {
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
			if r.AromaticBond[bi] {
				sb = append(sb, 'a')
			}
			sb = append(sb, ' ')
		}
	}
	sb = append(sb, extra...)
	return string(sb)
}

// keyMemo caches skeleton keys by written signature (50,000 entries: a design choice, a few
// megabytes).
var keyMemo = memo.New[string](50000)

// ResetCache empties the skeleton-key cache (benchmarks of a cold start).
func ResetCache() { keyMemo.Reset() }

// CachedSkeletonKey is SkeletonKey with the written-subgraph cache.
func CachedSkeletonKey(m *mol.Molecule, r *rings.Rings, atoms []int, skip int) string {
	return KeyForSignature(WrittenSignature(m, r, atoms, skip, ""), m, r, atoms, skip)
}

// KeyForSignature is CachedSkeletonKey for a signature already computed.
func KeyForSignature(sig string, m *mol.Molecule, r *rings.Rings, atoms []int, skip int) string {
	if k, ok := keyMemo.Get(sig); ok {
		return k
	}
	k := SkeletonKey(m, r, atoms, skip)
	keyMemo.Put(sig, k)
	return k
}
