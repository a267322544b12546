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
	// local numbers: a sparse index (loc[a] is a's position in atoms when atoms holds a there)
	// for molecules of up to 256 atoms, else binary search (atoms is sorted)
	var locStack [256]uint16
	sparse := len(m.Atoms) <= len(locStack)
	if sparse {
		for i, a := range atoms {
			locStack[a] = uint16(i)
		}
	}
	local := func(a int) (int, bool) {
		if sparse {
			i := int(locStack[a])
			return i, i < len(atoms) && atoms[i] == a
		}
		i := sort.SearchInts(atoms, a)
		return i, i < len(atoms) && atoms[i] == a
	}
	for _, a := range atoms {
		at := &m.Atoms[a]
		sb = appendSmallInt(sb, at.Z)
		if r.AromaticAtom[a] {
			sb = append(sb, 'a')
		}
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
			sb = appendSmallInt(sb, i)
			sb = append(sb, '-')
			sb = appendSmallInt(sb, j)
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

// appendSmallInt appends v in decimal as strconv.AppendInt does, without its call for the
// numbers below 100 that atomic numbers and local atom numbers mostly are.
func appendSmallInt(b []byte, v int) []byte {
	switch {
	case v >= 0 && v < 10:
		return append(b, byte('0'+v))
	case v >= 10 && v < 100:
		return append(b, byte('0'+v/10), byte('0'+v%10))
	}
	return strconv.AppendInt(b, int64(v), 10)
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
