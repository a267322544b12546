package forcefield

import "ringsieve/screening/mol"

// WithHydrogens returns a copy of m in which every implicit hydrogen is an explicit atom bonded
// to its parent. The atoms of m keep their indices; the new hydrogens follow in parent order. A
// tetrahedral centre's chirality order names its new hydrogen in place of the implicit one, so
// stereo survives the copy. m is not changed.
func WithHydrogens(m *mol.Molecule) *mol.Molecule {
	out := &mol.Molecule{Atoms: make([]mol.Atom, len(m.Atoms)), Bonds: make([]mol.Bond, len(m.Bonds))}
	copy(out.Atoms, m.Atoms)
	copy(out.Bonds, m.Bonds)
	for i := range m.Atoms {
		a := &out.Atoms[i]
		n := a.HCount
		a.HCount = 0
		for k := 0; k < n; k++ {
			h := len(out.Atoms)
			out.Atoms = append(out.Atoms, mol.Atom{Z: 1, Bracket: true, Pos: a.Pos})
			out.Bonds = append(out.Bonds, mol.Bond{A: i, B: h, Order: mol.BondSingle, Pos: a.Pos})
			if k == 0 {
				for j := 0; j < a.NChiral && j < 4; j++ {
					if a.ChiralOrder[j] == -1 {
						a.ChiralOrder[j] = h
					}
				}
			}
		}
		if a.Z != 1 {
			a.Bracket = true // hydrogens are explicit now
		}
	}
	out.Index()
	return out
}
