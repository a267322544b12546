package forcefield

import (
	"errors"

	"ringsieve/screening/mol"
)

// ringSet holds every simple ring of three to six atoms (the force field types atoms, angles and
// torsions by membership in small rings, and MMFF aromaticity looks at five- and six-membered
// rings only).
type ringSet struct {
	rings  [][]int // atoms in ring order
	atomIn [][]int // ring indices per atom
}

// maxRingWork bounds the ring enumeration (path extensions); beyond it the molecule is refused as
// too complex (design choice: far above any monomer, even cage compounds).
const maxRingWork = 2_000_000

var errRingWork = errors.New("too many small rings to enumerate")

// smallRings lists every simple ring of 3 … 6 atoms of m, each once, starting from its lowest
// atom index.
func smallRings(m *mol.Molecule) (*ringSet, error) {
	n := len(m.Atoms)
	rs := &ringSet{atomIn: make([][]int, n)}
	onPath := make([]bool, n)
	path := make([]int, 0, 6)
	work := 0
	var dfs func(start, a int) error
	dfs = func(start, a int) error {
		work++
		if work > maxRingWork {
			return errRingWork
		}
		for _, o := range m.HeavyNbrs(a) {
			if o == start && len(path) >= 3 && path[1] < a {
				ring := append([]int(nil), path...)
				idx := len(rs.rings)
				rs.rings = append(rs.rings, ring)
				for _, x := range ring {
					rs.atomIn[x] = append(rs.atomIn[x], idx)
				}
				continue
			}
			if o <= start || onPath[o] || len(path) == 6 {
				continue
			}
			onPath[o] = true
			path = append(path, o)
			if err := dfs(start, o); err != nil {
				return err
			}
			path = path[:len(path)-1]
			onPath[o] = false
		}
		return nil
	}
	for s := 0; s < n; s++ {
		if m.Atoms[s].Z == 1 {
			continue
		}
		path = append(path[:0], s)
		onPath[s] = true
		if err := dfs(s, s); err != nil {
			return nil, err
		}
		onPath[s] = false
	}
	return rs, nil
}

// inRingOf reports whether atom a is in a ring of exactly size atoms.
func (rs *ringSet) inRingOf(a, size int) bool {
	for _, r := range rs.atomIn[a] {
		if len(rs.rings[r]) == size {
			return true
		}
	}
	return false
}

// sameRing reports whether all the atoms lie in one ring of exactly size atoms.
func (rs *ringSet) sameRing(size int, atoms ...int) bool {
	for _, r := range rs.atomIn[atoms[0]] {
		ring := rs.rings[r]
		if len(ring) != size {
			continue
		}
		all := true
		for _, a := range atoms[1:] {
			found := false
			for _, x := range ring {
				if x == a {
					found = true
					break
				}
			}
			if !found {
				all = false
				break
			}
		}
		if all {
			return true
		}
	}
	return false
}
