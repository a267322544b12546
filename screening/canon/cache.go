package canon

import (
	"slices"
	"sort"
	"strconv"
	"sync/atomic"

	"ringsieve/screening/internal/memo"
	"ringsieve/screening/mol"
	"ringsieve/screening/rings"
)

// WrittenSignature describes the subgraph of atoms (sorted, as in the molecule) exactly as
// written: element, aromaticity, charge, whether a boron, nitrogen or phosphorus atom has three
// connections (bonds and hydrogens: what decides a pyrrole-type nitrogen when the subgraph is
// perceived on its own), and the bonds among them with local numbers and orders, less skip,
// listed by local numbers (so the order the bonds were written in does not matter).
// Two molecules with the same signature have the same subgraph, so anything computed from the
// subgraph alone can be cached under it. It is not canonical (another atom order gives another
// signature), which only costs a cache miss; values cached under it must therefore be computed
// from the subgraph as numbered by the atoms' order (see thermo's extract).
func WrittenSignature(m *mol.Molecule, r *rings.Rings, atoms []int, skip int, extra string) string {
	// built on the stack when it fits (the common case); only the string is allocated
	var stack [512]byte
	return string(AppendWrittenSignature(stack[:0], m, r, atoms, skip, extra))
}

// AppendWrittenSignature appends WrittenSignature to sb: a cache look-up by a signature built
// in a caller's buffer allocates nothing when it hits (memo.GetBytes).
func AppendWrittenSignature(sb []byte, m *mol.Molecule, r *rings.Rings, atoms []int, skip int, extra string) []byte {
	return appendSignature(sb, m, r, atoms, skip, extra, false)
}

// appendSignature is AppendWrittenSignature; full adds to each atom every label StructureKey
// reads: its isotope, its hydrogen count (implicit and written) and its bond-order sum.
func appendSignature(sb []byte, m *mol.Molecule, r *rings.Rings, atoms []int, skip int, extra string, full bool) []byte {
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
		if uint(at.Z) < 10 { // hydrogen to fluorine: one digit, written here (the call costs more)
			sb = append(sb, byte('0'+at.Z))
		} else {
			sb = appendSmallInt(sb, at.Z)
		}
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
		if full {
			if at.Isotope != 0 {
				sb = append(sb, 'i')
				sb = strconv.AppendInt(sb, int64(at.Isotope), 10)
			}
			sb = append(sb, 'h')
			sb = appendSmallInt(sb, at.HCount)
			sb = append(sb, 'H')
			sb = appendSmallInt(sb, m.TotalH(a))
			sb = append(sb, 'v')
			sb = appendSmallInt(sb, m.BondOrderSum(a))
		}
		sb = append(sb, ',')
	}
	sb = append(sb, '|')
	// each atom's bonds to later atoms, by the later atom's local number: the signature depends
	// on the atoms' order alone, not on the order the bonds were written in
	var later [8]laterBond
	for i, a := range atoms {
		ls := later[:0]
		for _, bi := range m.Neighbors(a) {
			if bi == skip {
				continue
			}
			if j, ok := local(m.Other(bi, a)); ok && j > i {
				ls = append(ls, laterBond{j, bi})
			}
		}
		for x := 1; x < len(ls); x++ { // insertion sort: an atom has a handful of bonds
			for y := x; y > 0 && ls[y].j < ls[y-1].j; y-- {
				ls[y], ls[y-1] = ls[y-1], ls[y]
			}
		}
		for _, l := range ls {
			if l.j < 10 { // both local numbers have one digit (i < l.j)
				sb = append(sb, byte('0'+i), '-', byte('0'+l.j), byte('0'+m.Bonds[l.bond].Order))
			} else {
				sb = appendSmallInt(sb, i)
				sb = append(sb, '-')
				sb = appendSmallInt(sb, l.j)
				sb = append(sb, byte('0'+m.Bonds[l.bond].Order))
			}
			if r.AromaticBond[l.bond] {
				sb = append(sb, 'a')
			}
			sb = append(sb, ' ')
		}
	}
	return append(sb, extra...)
}

// laterBond is a bond of WrittenSignature's current atom to the atom of local number j.
type laterBond struct{ j, bond int }

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

// ResetCache empties the skeleton-key and structure-key caches (benchmarks of a cold start).
func ResetCache() {
	signedMemo.Reset()
	structureMemo.Reset()
}

// structureMemo caches structure keys by full written signature (20,000 entries: a design
// choice, a few megabytes).
var structureMemo = memo.New[string](20000)

// CachedStructureKey is StructureKey cached under the atoms' written signature with every label
// StructureKey reads (charge, isotope, hydrogen count, bond-order sum): the same signature
// describes the same labelled graph, whose canonical key is the same.
func CachedStructureKey(m *mol.Molecule, r *rings.Rings, atoms []int) string {
	if len(m.Atoms) > 256 && !slices.IsSorted(atoms) {
		return StructureKey(m, r, atoms) // the signature's binary search needs sorted atoms
	}
	var stack [1024]byte
	sig := appendSignature(stack[:0], m, r, atoms, -1, "|structure", true)
	return structureMemo.DoBytes(sig, func(string) string { return StructureKey(m, r, atoms) })
}

// signedSubgraph is a written signature kept as a string together with its subgraph's key.
type signedSubgraph struct{ sig, key string }

// signedMemo caches skeleton keys by written signature, with the signature itself, so that every
// structure with one ring system shares the signature's string (50,000 entries: a design
// choice, a few megabytes).
var signedMemo = memo.New[signedSubgraph](50000)

// SignatureAndKey returns the written signature of atoms (no skipped bond, no suffix) and the
// subgraph's SkeletonKey, cached under the signature: from the shipped seeds (SetKeySeed) or
// computed on a miss. The signature is a string shared by every subgraph written alike: a
// signature seen before costs no allocation.
func SignatureAndKey(m *mol.Molecule, r *rings.Rings, atoms []int) (sig, key string) {
	var stack [512]byte
	b := AppendWrittenSignature(stack[:0], m, r, atoms, -1, "")
	e := signedMemo.DoBytes(b, func(sig string) signedSubgraph {
		if seed := keySeed.Load(); seed != nil {
			if k, ok := (*seed)(sig); ok {
				return signedSubgraph{sig, k}
			}
		}
		return signedSubgraph{sig, SkeletonKey(m, r, atoms, -1)}
	})
	return e.sig, e.key
}

// keySeed looks up keys shipped with the program by signature (SetKeySeed).
var keySeed atomic.Pointer[func(sig string) (string, bool)]

// SetKeySeed installs f, consulted when the skeleton-key cache misses before a key is computed:
// it returns the key of the subgraph a signature (without suffix, no skipped bond) describes,
// when it knows one. The screening's thermodynamics package installs the keys of the ring
// systems it ships estimates for (thermo/seeds.go); f must return only canonical keys as
// SkeletonKey computes them.
func SetKeySeed(f func(sig string) (string, bool)) { keySeed.Store(&f) }
