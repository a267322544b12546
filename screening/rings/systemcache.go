package rings

import (
	"slices"

	"ringsieve/screening/internal/memo"
	"ringsieve/screening/internal/scratch"
	"ringsieve/screening/mol"
)

// Ring systems met before: the shortest-path searches of perception (one per ring bond that is
// not on a plain cycle) depend only on the system's bonds — which atoms each joins, in the
// order of the molecule's bond list, the atoms numbered in ascending order — and not on
// elements, bond orders or anything outside the system: a path that closes a ring with a bond
// runs on ring bonds only, and the search meets the system's atoms in the same order whatever
// hangs off them (an atom reached over a bridge can never be the first to reach one of the
// system's). So the searches of a system are cached under that numbered bond list and read
// back, renumbered, for every later molecule with the same system written the same way — a
// norbornene core with any substituents, say. TestSystemCacheMatchesSearch compares perception
// with and without the cache over the reference structures.

// systemSearch is the cached outcome of a ring system's searches, by local bond number (the
// system's bonds in ascending order): the size of the ring each bond's search found, and the
// ring it added (an index into rings; -1 when the ring was found before, through an earlier
// bond). Rings are local atom numbers then local bond numbers. Never written once cached.
type systemSearch struct {
	size  []int32
	ring  []int32
	rings [][]int32 // atoms then bonds, len/2 each
}

// systemBond is, per bond of a cached system, where to read its search: the system, the
// bond's local number, and where the system's atoms and bonds start in the workspace's lists.
type systemBond struct {
	sys              *systemSearch
	local            int
	atomsAt, bondsAt int
}

// systemCache holds the searches of ring systems met (design choice: 50,000 systems, a few
// megabytes, before it starts afresh).
var systemCache = memo.New[*systemSearch](50_000)

// ResetCache empties the cache of ring systems' searches (benchmarks of a cold start, tests).
func ResetCache() { systemCache.Reset() }

// maxSystemAtoms bounds the systems cached (their local numbers are written as single bytes).
const maxSystemAtoms = 255

// globalRing renumbers cached ring r into molecule atoms and bonds (the system's atoms and
// bonds in ascending order), in tr's storage.
func (s *systemSearch) globalRing(r int32, atoms, bonds []int, tr *[2][]int) (path, pathBonds []int) {
	lr := s.rings[r]
	n := len(lr) / 2
	path, pathBonds = tr[0][:0], tr[1][:0]
	for _, a := range lr[:n] {
		path = append(path, atoms[a])
	}
	for _, b := range lr[n:] {
		pathBonds = append(pathBonds, bonds[b])
	}
	tr[0], tr[1] = path, pathBonds
	return path, pathBonds
}

// searchSystems returns, per bond, the cached searches of the ring system it lies on, for the
// ring bonds that are not on a plain cycle; systems not yet cached are searched here and cached.
// Bonds of systems too large to cache (and every bond, without cached) are left to the
// caller's search (sys nil).
func (w *workspace) searchSystems(m *mol.Molecule, inRing []bool, cycleOf [][]int, pathScratch []int, cached bool) []systemBond {
	nb, na := len(m.Bonds), len(m.Atoms)
	w.searched = scratch.Zeroed(w.searched, nb)
	if !cached {
		return w.searched
	}
	// the systems: atoms joined by ring bonds that are not on a plain cycle (searched), numbered
	// by their lowest atom's turn
	searched := func(bi int) bool { return inRing[bi] && cycleOf[bi] == nil }
	w.sysOf = scratch.Zeroed(w.sysOf, na)
	sysOf := w.sysOf // system number + 1; 0: none
	systems := 0
	stack := w.stack[:0]
	for a := 0; a < na; a++ {
		if sysOf[a] != 0 {
			continue
		}
		on := false
		for _, bi := range m.Neighbors(a) {
			if searched(bi) {
				on = true
				break
			}
		}
		if !on {
			continue
		}
		systems++
		sysOf[a] = systems
		stack = append(stack[:0], a)
		for len(stack) > 0 {
			x := stack[len(stack)-1]
			stack = stack[:len(stack)-1]
			for _, bi := range m.Neighbors(x) {
				if o := m.Other(bi, x); searched(bi) && sysOf[o] == 0 {
					sysOf[o] = systems
					stack = append(stack, o)
				}
			}
		}
	}
	w.stack = stack[:0]
	if systems == 0 {
		return w.searched
	}
	// each system's atoms and bonds in ascending order, one run per system
	w.sysAtoms, w.sysBonds = w.sysAtoms[:0], w.sysBonds[:0]
	w.sysLocal = scratch.Zeroed(w.sysLocal, na)
	for s := 1; s <= systems; s++ {
		atomsAt, bondsAt := len(w.sysAtoms), len(w.sysBonds)
		for a := 0; a < na; a++ {
			if sysOf[a] == s {
				w.sysLocal[a] = len(w.sysAtoms) - atomsAt
				w.sysAtoms = append(w.sysAtoms, a)
			}
		}
		for bi := 0; bi < nb; bi++ {
			if searched(bi) && sysOf[m.Bonds[bi].A] == s {
				w.sysBonds = append(w.sysBonds, bi)
			}
		}
		atoms, bonds := w.sysAtoms[atomsAt:], w.sysBonds[bondsAt:]
		if len(atoms) > maxSystemAtoms {
			continue // searched by the caller
		}
		// the key: atom count, then each bond's two local atoms in bond order
		key := append(w.sysKey[:0], byte(len(atoms)))
		for _, bi := range bonds {
			key = append(key, byte(w.sysLocal[m.Bonds[bi].A]), byte(w.sysLocal[m.Bonds[bi].B]))
		}
		w.sysKey = key
		sys := systemCache.DoBytes(key, func(string) *systemSearch {
			return searchSystem(m, atoms, bonds, w.sysLocal, pathScratch)
		})
		for j, bi := range bonds {
			w.searched[bi] = systemBond{sys: sys, local: j, atomsAt: atomsAt, bondsAt: bondsAt}
		}
	}
	return w.searched
}

// searchSystem runs perception's search for each bond of a system (in bond order, as
// PerceiveInto does) and keeps the outcome in local numbers. local holds each of the system's
// atoms' local number.
func searchSystem(m *mol.Molecule, atoms, bonds, local []int, pathScratch []int) *systemSearch {
	s := &systemSearch{size: make([]int32, len(bonds)), ring: make([]int32, len(bonds))}
	var seen [][]int32 // the rings kept, as sorted local bond sets
	for j, bi := range bonds {
		s.ring[j] = -1
		path, pathBonds := shortestPathAvoiding(m, m.Bonds[bi].A, m.Bonds[bi].B, bi, pathScratch)
		if path == nil {
			continue
		}
		s.size[j] = int32(len(path))
		lr := make([]int32, 0, 2*len(path))
		for _, a := range path {
			lr = append(lr, int32(local[a]))
		}
		for _, b := range pathBonds {
			lb, _ := slices.BinarySearch(bonds, b) // bonds is ascending and holds b
			lr = append(lr, int32(lb))
		}
		set := slices.Clone(lr[len(path):])
		slices.Sort(set)
		if slices.ContainsFunc(seen, func(o []int32) bool { return slices.Equal(o, set) }) {
			continue
		}
		seen = append(seen, set)
		s.ring[j] = int32(len(s.rings))
		s.rings = append(s.rings, lr)
	}
	return s
}
