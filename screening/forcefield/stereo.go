package forcefield

import (
	"math"

	"ringsieve/screening/mol"
)

// Stereo holds the stereo elements a 3-D structure must honour: the handedness of tetrahedral
// centres and the cis/trans geometry of double bonds. Atom indices refer to the molecule with
// explicit hydrogens (WithHydrogens keeps heavy-atom indices).
type Stereo struct {
	Centres []Centre
	Olefins []OlefinGeometry
}

// Centre is a tetrahedral centre: with the neighbours in the order Nbrs, the chirality volume
// (see chiralVolume) has the sign Sign (−1 for a SMILES '@' written in that order).
type Centre struct {
	Atom int
	Nbrs [4]int
	Sign int
}

// OlefinGeometry fixes the substituents X on A and Y on B of the double bond A=B cis (Trans
// false) or trans.
type OlefinGeometry struct {
	X, A, B, Y int
	Trans      bool
	// Written is true when the geometry comes from '/' '\' marks or coordinates, false for an
	// unmarked ring double bond taken as cis.
	Written bool
}

// StereoFromGraph reads the stereo elements of m (hydrogens explicit): every atom with a
// tetrahedral tag and four neighbours in its chirality order; every double bond with '/' '\'
// marks on both ends; and every unmarked double bond in a ring, which is taken as cis (the
// reading chemists give an unmarked ring olefin; rings under eight atoms allow nothing else).
func StereoFromGraph(m *mol.Molecule) Stereo {
	var st Stereo
	for a := range m.Atoms {
		nb := m.Atoms[a].ChiralNbrs()
		if nb == nil || m.Degree(a) != 4 {
			continue
		}
		c := Centre{Atom: a, Sign: -1}
		copy(c.Nbrs[:], nb)
		ok := true
		for _, x := range c.Nbrs {
			if x < 0 || m.BondBetween(a, x) < 0 {
				ok = false
			}
		}
		if !ok {
			continue
		}
		if m.Atoms[a].Chiral == 2 {
			c.Sign = 1
		}
		st.Centres = append(st.Centres, c)
	}
	for bi, b := range m.Bonds {
		if b.Order != mol.BondDouble || m.Degree(b.A) < 2 || m.Degree(b.B) < 2 {
			continue
		}
		x, sx := markedNbr(m, b.A, b.B)
		y, sy := markedNbr(m, b.B, b.A)
		if x >= 0 && y >= 0 {
			st.Olefins = append(st.Olefins, OlefinGeometry{X: x, A: b.A, B: b.B, Y: y, Trans: sx != sy, Written: true})
			continue
		}
		if px, py, ok := ringPath(m, bi); ok {
			st.Olefins = append(st.Olefins, OlefinGeometry{X: px, A: b.A, B: b.B, Y: py})
		}
	}
	return st
}

// markedNbr returns a neighbour x of a (other than other) whose bond carries a '/' or '\' mark,
// with the side it stands on, or −1.
func markedNbr(m *mol.Molecule, a, other int) (int, int) {
	for _, x := range m.NeighborAtoms(a) {
		if x == other {
			continue
		}
		bi := m.BondBetween(a, x)
		if m.Bonds[bi].Dir == 0 {
			continue
		}
		s := 1
		if m.Bonds[bi].Dir == '\\' {
			s = -1
		}
		if m.Bonds[bi].DirFrom != a {
			s = -s
		}
		return x, s
	}
	return -1, 0
}

// RingNeighbours returns, for bond bi in a ring, the atoms of its smallest ring next to its first
// atom (A) and next to its second (B); ok is false when the bond is in no ring.
func RingNeighbours(m *mol.Molecule, bi int) (nextA, nextB int, ok bool) { return ringPath(m, bi) }

// ringPath returns, for bond bi in a ring, the atoms of its smallest ring next to A and next
// to B; ok is false when the bond is in no ring.
func ringPath(m *mol.Molecule, bi int) (nextA, nextB int, ok bool) {
	ring := smallestRingThrough(m, bi) // B, the atom before B, …, the atom after A, A
	if len(ring) < 3 {
		return -1, -1, false
	}
	return ring[len(ring)-2], ring[1], true
}

// chiralVolume is the signed volume (n1−n0)·((n2−n0)×(n3−n0)) of the tetrahedron of a
// centre's four neighbours, in Å³: negative when, seen from n0, the other three run
// anticlockwise (a SMILES '@' in that order). It does not depend on where the centre atom sits.
func chiralVolume(x []float64, c Centre) float64 {
	o := at(x, c.Nbrs[0])
	return dot(sub(at(x, c.Nbrs[1]), o), cross(sub(at(x, c.Nbrs[2]), o), sub(at(x, c.Nbrs[3]), o)))
}

// centreSign is the sign of a centre's chirality volume at x (0 when flat within 0.01 Å³).
func centreSign(x []float64, c Centre) int {
	v := chiralVolume(x, c)
	switch {
	case v > 0.01:
		return 1
	case v < -0.01:
		return -1
	}
	return 0
}

// Dihedral returns the dihedral angle i–j–k–l at x in degrees (−180, 180].
func Dihedral(x []float64, i, j, k, l int) float64 {
	phi, _ := dihedral(x, i, j, k, l, false)
	return phi * radToDeg
}

// StereoViolations lists, for coordinates x, the centres with the wrong handedness (or flat)
// and the double bonds with the wrong geometry (|dihedral X–A–B–Y| under 90° for trans, over
// 90° for cis).
func (st Stereo) StereoViolations(x []float64) (centres []Centre, olefins []OlefinGeometry) {
	for _, c := range st.Centres {
		if centreSign(x, c) != c.Sign {
			centres = append(centres, c)
		}
	}
	for _, o := range st.Olefins {
		d := math.Abs(Dihedral(x, o.X, o.A, o.B, o.Y))
		if (d > 90) != o.Trans {
			olefins = append(olefins, o)
		}
	}
	return centres, olefins
}

// StereoFromCoords reads the stereo elements of m as they stand at x: the handedness of every
// four-connected atom with at least three different heavy-atom or hydrogen neighbours (all
// four-connected atoms, which does no harm for the non-stereogenic ones), and the geometry of
// every double bond with a substituent on each end.
func StereoFromCoords(m *mol.Molecule, x []float64) Stereo {
	var st Stereo
	for a := range m.Atoms {
		if m.Degree(a) != 4 || m.Atoms[a].Z == 1 {
			continue
		}
		nb := m.NeighborAtoms(a)
		c := Centre{Atom: a, Nbrs: [4]int{nb[0], nb[1], nb[2], nb[3]}}
		c.Sign = centreSign(x, c)
		if c.Sign != 0 {
			st.Centres = append(st.Centres, c)
		}
	}
	for _, b := range m.Bonds {
		if b.Order != mol.BondDouble {
			continue
		}
		xa, yb := -1, -1
		for _, n := range m.NeighborAtoms(b.A) {
			if n != b.B {
				xa = n
				break
			}
		}
		for _, n := range m.NeighborAtoms(b.B) {
			if n != b.A {
				yb = n
				break
			}
		}
		if xa < 0 || yb < 0 {
			continue
		}
		d := math.Abs(Dihedral(x, xa, b.A, b.B, yb))
		st.Olefins = append(st.Olefins, OlefinGeometry{X: xa, A: b.A, B: b.B, Y: yb, Trans: d > 90, Written: true})
	}
	return st
}
