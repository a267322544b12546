// Package mol is the molecular graph every step reads: atoms, bonds, flat adjacency (one backing
// array per molecule), connected components, the element table, formula and masses, and the
// Kekulé assignment of written aromatic bonds. It imports nothing of ringsieve; rings,
// aromaticity and descriptors are computed by the packages above it and never written back here.
package mol

// Bond orders. Written aromatic bonds are kekulized to 1 or 2 after reading; Bond.Aromatic
// keeps how the bond was written.
const (
	BondUnset  = 0
	BondSingle = 1
	BondDouble = 2
	BondTriple = 3
	BondQuad   = 4
)

// Limits on what one molecule may hold; larger input is refused, not truncated.
const MaxAtoms = 1000

// Atom is one atom of a molecule graph.
type Atom struct {
	Z        int
	Aromatic bool // written aromatic (lower-case in SMILES, aromatic bond type in a molfile); perceived aromaticity is in rings
	Isotope  int
	Charge   int
	HCount   int  // hydrogens on the atom (explicit in brackets, else implicit)
	Bracket  bool // written in brackets: no implicit hydrogens added
	Chiral   int  // 0 none, 1 '@' (anticlockwise), 2 '@@' (clockwise); other classes kept as 0
	Class    int
	Pos      int // character offset in the SMILES (atom index for a molfile)
	// ChiralOrder lists, for a chiral atom, its neighbours in written order (-1 marks the
	// bracket hydrogen); NChiral counts them and may exceed four (then no tetrahedral reading).
	ChiralOrder [4]int
	NChiral     int
}

// AppendChiral records neighbour n at the end of the chirality order of a chiral atom.
func (a *Atom) AppendChiral(n int) {
	if a.Chiral == 0 {
		return
	}
	if a.NChiral < 4 {
		a.ChiralOrder[a.NChiral] = n
	}
	a.NChiral++
}

// PrependChiral records neighbour n first in the chirality order (the atom written before).
func (a *Atom) PrependChiral(n int) {
	if a.Chiral == 0 {
		return
	}
	copy(a.ChiralOrder[1:], a.ChiralOrder[:3])
	a.ChiralOrder[0] = n
	a.NChiral++
}

// ChiralNbrs returns the chirality order, or nil when it does not hold exactly four entries.
func (a *Atom) ChiralNbrs() []int {
	if a.Chiral == 0 || a.NChiral != 4 {
		return nil
	}
	return a.ChiralOrder[:]
}

// Bond is one bond of a molecule graph.
type Bond struct {
	A, B     int
	Order    int  // 1, 2, 3, 4 after kekulization
	Aromatic bool // written as aromatic or between two written-aromatic atoms
	// Dir is the directional mark ('/' or '\\') and DirFrom the atom written before it, used for
	// double-bond geometry; Dir is 0 when the bond carries no mark.
	Dir     byte
	DirFrom int
	Pos     int
}

// Molecule is a molecular graph. Build it by filling Atoms and Bonds and calling Index; the
// adjacency, heavy-atom neighbour lists and components live in flat arrays.
type Molecule struct {
	Atoms []Atom
	Bonds []Bond

	adjStart   []int // per atom: start of its bonds in adjBond (len atoms+1)
	adjBond    []int
	heavyStart []int // per atom: start of its non-hydrogen neighbours in heavy
	heavy      []int
	compStart  []int // per component: start of its atoms in compAtom (len components+1)
	compAtom   []int
	// indexBuf backs all the index arrays above (one allocation per molecule, reused by Reset)
	indexBuf []int
	// kekFlags and kekInts are Kekulize's scratch, kept for the molecule's next use
	kekFlags []bool
	kekInts  []int
}

// Reset empties the molecule, keeping its storage for reuse.
func (m *Molecule) Reset() {
	m.Atoms, m.Bonds = m.Atoms[:0], m.Bonds[:0]
	m.adjStart, m.adjBond, m.heavyStart, m.heavy, m.compStart, m.compAtom = m.adjStart[:0], m.adjBond[:0], m.heavyStart[:0], m.heavy[:0], m.compStart[:0], m.compAtom[:0]
}

// Index builds the adjacency (bonds per atom in bond order), the heavy-atom neighbour lists and
// the connected components. Call it after the atoms and bonds are in place and again after any
// bond is added or removed.
func (m *Molecule) Index() {
	n, nb := len(m.Atoms), len(m.Bonds)
	// one backing array for every index (adjacency, heavy neighbours, components, scratch)
	need := 5*n + 3 + 4*nb
	if cap(m.indexBuf) < need {
		m.indexBuf = make([]int, need)
	}
	buf := m.indexBuf[:need]
	carve := func(size int) []int {
		s := buf[:size:size]
		buf = buf[size:]
		return s
	}
	m.adjStart = carve(n + 1)
	m.adjBond = carve(2 * nb)
	fill := carve(n + 1) // scratch: next free slot per atom; then the heavy-neighbour starts
	m.heavy = carve(2 * nb)[:0]
	m.compStart = carve(n + 1)[:0]
	m.compAtom = carve(n)[:0]
	seen := carve(n)
	for i := range m.adjStart {
		m.adjStart[i] = 0
	}
	for _, b := range m.Bonds {
		m.adjStart[b.A+1]++
		m.adjStart[b.B+1]++
	}
	for i := 1; i <= n; i++ {
		m.adjStart[i] += m.adjStart[i-1]
	}
	copy(fill, m.adjStart)
	for i, b := range m.Bonds {
		m.adjBond[fill[b.A]] = i
		fill[b.A]++
		m.adjBond[fill[b.B]] = i
		fill[b.B]++
	}
	m.heavyStart = fill
	for a := 0; a < n; a++ {
		m.heavyStart[a] = len(m.heavy)
		for _, bi := range m.adjBond[m.adjStart[a]:m.adjStart[a+1]] {
			if o := m.Other(bi, a); m.Atoms[o].Z != 1 {
				m.heavy = append(m.heavy, o)
			}
		}
	}
	m.heavyStart[n] = len(m.heavy)
	m.indexComponents(seen)
}

// indexComponents lists the connected components, each in breadth-first order from its
// lowest-numbered atom.
func (m *Molecule) indexComponents(seen []int) {
	n := len(m.Atoms)
	for i := range seen {
		seen[i] = 0
	}
	for i := 0; i < n; i++ {
		if seen[i] != 0 {
			continue
		}
		start := len(m.compAtom)
		m.compStart = append(m.compStart, start)
		m.compAtom = append(m.compAtom, i)
		seen[i] = 1
		for k := start; k < len(m.compAtom); k++ {
			x := m.compAtom[k]
			for _, bi := range m.Neighbors(x) {
				if o := m.Other(bi, x); seen[o] == 0 {
					seen[o] = 1
					m.compAtom = append(m.compAtom, o)
				}
			}
		}
	}
	m.compStart = append(m.compStart, len(m.compAtom))
}

// Other returns the atom at the far end of bond bi from atom a.
func (m *Molecule) Other(bi, a int) int {
	b := &m.Bonds[bi]
	if b.A == a {
		return b.B
	}
	return b.A
}

// Neighbors returns the bond indices at atom a, in bond order. The slice is shared: read it,
// do not modify it.
func (m *Molecule) Neighbors(a int) []int {
	return m.adjBond[m.adjStart[a]:m.adjStart[a+1]:m.adjStart[a+1]]
}

// NeighborAtoms returns the atoms bonded to a, hydrogens included, in bond order (a new slice).
func (m *Molecule) NeighborAtoms(a int) []int {
	bs := m.Neighbors(a)
	out := make([]int, len(bs))
	for i, bi := range bs {
		out[i] = m.Other(bi, a)
	}
	return out
}

// Degree returns the number of bonds at atom a.
func (m *Molecule) Degree(a int) int { return m.adjStart[a+1] - m.adjStart[a] }

// HeavyNbrs returns the non-hydrogen neighbours of atom a. The slice is shared: read it, do not
// modify it.
func (m *Molecule) HeavyNbrs(a int) []int {
	return m.heavy[m.heavyStart[a]:m.heavyStart[a+1]:m.heavyStart[a+1]]
}

// HeavyDegree returns the number of non-hydrogen neighbours of atom a.
func (m *Molecule) HeavyDegree(a int) int { return m.heavyStart[a+1] - m.heavyStart[a] }

// BondBetween returns the bond index joining a and b, or -1.
func (m *Molecule) BondBetween(a, b int) int {
	for _, bi := range m.Neighbors(a) {
		if m.Other(bi, a) == b {
			return bi
		}
	}
	return -1
}

// HasBond reports a bond between a and b by a scan of the bond list (usable before Index).
func (m *Molecule) HasBond(a, b int) bool {
	for _, bd := range m.Bonds {
		if (bd.A == a && bd.B == b) || (bd.A == b && bd.B == a) {
			return true
		}
	}
	return false
}

// BondOrderSum is the sum of bond orders at atom a (kekulized orders).
func (m *Molecule) BondOrderSum(a int) int {
	s := 0
	for _, bi := range m.Neighbors(a) {
		s += m.Bonds[bi].Order
	}
	return s
}

// TotalH returns the hydrogens on atom a: its hydrogen count plus explicit hydrogen neighbours.
func (m *Molecule) TotalH(a int) int {
	h := m.Atoms[a].HCount
	for _, bi := range m.Neighbors(a) {
		if m.Atoms[m.Other(bi, a)].Z == 1 {
			h++
		}
	}
	return h
}

// ImplicitHCount returns the hydrogens counted on atoms rather than written as atoms.
func (m *Molecule) ImplicitHCount() int {
	n := 0
	for i := range m.Atoms {
		n += m.Atoms[i].HCount
	}
	return n
}

// NumComponents returns the number of connected components.
func (m *Molecule) NumComponents() int { return len(m.compStart) - 1 }

// Component returns the atoms of component i in breadth-first order from its lowest-numbered
// atom. The slice is shared: read it, do not modify it.
func (m *Molecule) Component(i int) []int {
	return m.compAtom[m.compStart[i]:m.compStart[i+1]:m.compStart[i+1]]
}

// Cyclomatic returns bonds − atoms + connected components (the number of independent rings).
func (m *Molecule) Cyclomatic() int { return len(m.Bonds) - len(m.Atoms) + m.NumComponents() }

// HeavyAtomCount returns the number of atoms other than hydrogen.
func (m *Molecule) HeavyAtomCount() int {
	n := 0
	for i := range m.Atoms {
		if m.Atoms[i].Z != 1 {
			n++
		}
	}
	return n
}
