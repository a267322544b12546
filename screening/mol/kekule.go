package mol

// KekulizeBudget bounds the backtracking search for a Kekulé structure so that no input can make
// a reader run for long; a system that needs more steps is reported as not kekulizable (design
// choice: far above what any real aromatic system needs).
const KekulizeBudget = 200000

// needsDouble tells whether an atom written aromatic must take one double bond in the Kekulé
// structure: its bonded valence (aromatic bonds counted once) plus hydrogens falls one short of
// the element's valence at that charge.
func (m *Molecule) needsDouble(i int) bool {
	a := &m.Atoms[i]
	sum := 0
	for _, bi := range m.Neighbors(i) {
		b := &m.Bonds[bi]
		if b.Order == BondDouble && !b.Aromatic {
			return false // already has an explicit double bond (e.g. exocyclic C=O)
		}
		sum += b.Order
	}
	if !a.Bracket {
		switch a.Z {
		case 6:
			return sum <= 3
		case 7, 15, 5:
			return sum == 2
		default:
			return false
		}
	}
	target := 0
	switch a.Z {
	case 6, 14, 32:
		target = 4 - Abs(a.Charge)
	case 7, 15, 33, 51:
		target = 3 + a.Charge
	case 8, 16, 34, 52:
		target = 2 + a.Charge
	case 5:
		target = 3 - a.Charge
	default:
		return false
	}
	return sum+a.HCount < target
}

// Abs is the absolute value of an int.
func Abs(x int) int {
	if x < 0 {
		return -x
	}
	return x
}

// Kekulize turns written aromatic bonds into alternating single and double bonds by finding a
// perfect matching over the atoms that need a double bond. It needs the adjacency (Index). When
// no matching exists (or the search budget runs out) it returns the first atom of the
// unmatched system and false, leaving the bond orders unchanged.
func (m *Molecule) Kekulize() (failedAtom int, ok bool) {
	n := len(m.Atoms)
	aromatic := false
	for i := range m.Atoms {
		if m.Atoms[i].Aromatic {
			aromatic = true
			break
		}
	}
	if !aromatic {
		return -1, true
	}
	// scratch reused from the molecule's earlier use: two flag sets, the matching, the visiting
	// order and the queue
	if cap(m.kekFlags) < 2*n {
		m.kekFlags = make([]bool, 2*n)
	}
	flags := m.kekFlags[:2*n]
	clear(flags)
	need, seen := flags[:n], flags[n:]
	if cap(m.kekInts) < 3*n {
		m.kekInts = make([]int, 3*n)
	}
	ints := m.kekInts[:3*n]
	mate, order, queue := ints[:n], ints[n:n:2*n], ints[2*n:2*n:3*n]
	for i := range m.Atoms {
		if m.Atoms[i].Aromatic && m.needsDouble(i) {
			need[i] = true
		}
	}
	// visit needing atoms in breadth-first order so assignments propagate along rings
	for s := 0; s < n; s++ {
		if !need[s] || seen[s] {
			continue
		}
		q := append(queue[:0], s)
		seen[s] = true
		for k := 0; k < len(q); k++ {
			a := q[k]
			order = append(order, a)
			for _, bi := range m.Neighbors(a) {
				o := m.Other(bi, a)
				if need[o] && !seen[o] && m.Bonds[bi].Aromatic {
					seen[o] = true
					q = append(q, o)
				}
			}
		}
	}
	for i := range mate {
		mate[i] = -1
	}
	steps := 0
	var solve func(k int) bool
	solve = func(k int) bool {
		for k < len(order) && mate[order[k]] >= 0 {
			k++
		}
		if k == len(order) {
			return true
		}
		steps++
		if steps > KekulizeBudget {
			return false
		}
		a := order[k]
		for _, bi := range m.Neighbors(a) {
			b := &m.Bonds[bi]
			if !b.Aromatic {
				continue
			}
			o := m.Other(bi, a)
			if !need[o] || mate[o] >= 0 {
				continue
			}
			mate[a], mate[o] = bi, bi
			if solve(k + 1) {
				return true
			}
			mate[a], mate[o] = -1, -1
		}
		return false
	}
	if !solve(0) {
		return order[0], false
	}
	for _, a := range order {
		if bi := mate[a]; bi >= 0 {
			m.Bonds[bi].Order = BondDouble
		}
	}
	return -1, true
}

// AssignImplicitHydrogens gives every atom outside brackets its implicit hydrogens: the
// smallest default valence at or above the bonded valence, minus that valence (OpenSMILES 3.1.5;
// elements without default valences get none).
func (m *Molecule) AssignImplicitHydrogens() {
	for i := range m.Atoms {
		a := &m.Atoms[i]
		if a.Bracket || a.Z == 0 {
			continue
		}
		e := ElementByZ(a.Z)
		v := m.BondOrderSum(i)
		h := 0
		for _, dv := range e.Valences {
			if dv >= v {
				h = dv - v
				break
			}
		}
		a.HCount = h
	}
}
