package forcefield

import (
	"fmt"

	"ringsieve/screening/mol"
)

// MMFF atom typing, written from the symbolic-type definitions of the MMFF94 papers (Halgren,
// J. Comput. Chem. 1996, 17, 490 and 616; the definitions are in data/mmffdef.par): each heavy
// atom gets a numeric type from its element, coordination, bonds, charge, neighbours and small
// rings; aromaticity is MMFF's own (five- and six-membered rings only); a hydrogen takes its
// type from its parent's.

// TypeError reports an atom the force field has no type for.
type TypeError struct {
	Atom int
	Msg  string
}

func (e *TypeError) Error() string { return fmt.Sprintf("atom %d: %s", e.Atom+1, e.Msg) }

// Is makes every TypeError match ErrNotCovered.
func (e *TypeError) Is(target error) bool { return target == ErrNotCovered }

// hydrogen classes of a parent atom (the MMFF hydrogen types it gives its hydrogens)
const (
	hNone  = 0
	hHC    = 5  // on carbon, silicon, phosphorus
	hHOR   = 21 // alcohol
	hHNR   = 23 // amine, pyrrole
	hHOCO  = 24 // acid, on P–O
	hHN_C  = 27 // imine, azo
	hHNCO  = 28 // amide, enamine, sulfonamide and other sp2-like N
	hHOCC  = 29 // enol, phenol, HO–C=N
	hHOH   = 31 // water
	hHOS   = 33 // on S–O
	hHNR_p = 36 // on positive nitrogen
	hHOp   = 50 // oxonium
	hHOeqp = 52 // oxenium
	hHS    = 71 // thiol
)

type typer struct {
	m        *mol.Molecule
	rs       *ringSet
	arom     []bool // MMFF aromatic atom
	aromBond []bool
	aromRing []bool // per ring of rs
	types    []int
	hclass   []int
}

// assignTypes returns the MMFF numeric type of every atom of m (explicit hydrogens) and which
// atoms MMFF counts aromatic.
func assignTypes(m *mol.Molecule, rs *ringSet) ([]int, []bool, error) {
	t := &typer{m: m, rs: rs, arom: make([]bool, len(m.Atoms)), aromBond: make([]bool, len(m.Bonds)),
		aromRing: make([]bool, len(rs.rings)), types: make([]int, len(m.Atoms)), hclass: make([]int, len(m.Atoms))}
	t.aromaticity()
	five := t.fiveRingTypes()
	for a := range m.Atoms {
		if m.Atoms[a].Z == 1 {
			continue
		}
		var err error
		if ft, ok := five[a]; ok {
			t.types[a] = ft
			switch {
			case m.Atoms[a].Z == 6:
				t.hclass[a] = hHC
			case ft == 39:
				t.hclass[a] = hHNR
			case ft == 81:
				t.hclass[a] = hHNR_p
			}
			continue
		}
		switch m.Atoms[a].Z {
		case 6:
			t.types[a], t.hclass[a] = t.carbon(a), hHC
		case 7:
			t.types[a], t.hclass[a] = t.nitrogen(a)
		case 8:
			t.types[a], t.hclass[a] = t.oxygen(a)
		case 16:
			t.types[a], t.hclass[a] = t.sulfur(a)
		case 15:
			t.types[a], t.hclass[a] = t.phosphorus(a), hHC
		case 14:
			t.types[a], t.hclass[a] = 19, hHC
		default:
			t.types[a], err = t.other(a)
		}
		if err != nil {
			return nil, nil, err
		}
		if t.types[a] == 0 {
			return nil, nil, &TypeError{Atom: a, Msg: "no MMFF atom type for this bonding"}
		}
	}
	for a := range m.Atoms {
		if m.Atoms[a].Z != 1 {
			continue
		}
		nb := m.HeavyNbrs(a)
		if m.Degree(a) != 1 {
			return nil, nil, &TypeError{Atom: a, Msg: "hydrogen bonded to other than one atom"}
		}
		p := m.Other(m.Neighbors(a)[0], a)
		if len(nb) == 0 { // H–H
			return nil, nil, &TypeError{Atom: a, Msg: "no MMFF type for H2"}
		}
		if t.hclass[p] == hNone {
			return nil, nil, &TypeError{Atom: a, Msg: "no MMFF type for a hydrogen on this atom"}
		}
		t.types[a] = t.hclass[p]
	}
	return t.types, t.arom, nil
}

// bond helpers

func (t *typer) order(a, b int) int {
	if bi := t.m.BondBetween(a, b); bi >= 0 {
		return t.m.Bonds[bi].Order
	}
	return 0
}

// multiple returns the number of double and triple bonds at a and the partner of the last
// double bond.
func (t *typer) multiple(a int) (double, triple, partner int) {
	partner = -1
	for _, bi := range t.m.Neighbors(a) {
		switch t.m.Bonds[bi].Order {
		case mol.BondDouble:
			double++
			partner = t.m.Other(bi, a)
		case mol.BondTriple:
			triple++
			partner = t.m.Other(bi, a)
		}
	}
	return
}

func (t *typer) z(a int) int      { return t.m.Atoms[a].Z }
func (t *typer) charge(a int) int { return t.m.Atoms[a].Charge }

// terminal counts the neighbours of a with atomic number z that have no other neighbour.
func (t *typer) terminal(a, z int) int {
	n := 0
	for _, o := range t.m.HeavyNbrs(a) {
		if t.z(o) == z && t.m.Degree(o) == 1 {
			n++
		}
	}
	return n
}

// doubleTo reports whether a has a double bond to an atom of atomic number z (0: any).
func (t *typer) doubleTo(a, z int) bool {
	for _, bi := range t.m.Neighbors(a) {
		if t.m.Bonds[bi].Order == mol.BondDouble && (z == 0 || t.z(t.m.Other(bi, a)) == z) {
			return true
		}
	}
	return false
}

// tripleTo reports whether a has a triple bond to an atom of atomic number z (0: any).
func (t *typer) tripleTo(a, z int) bool {
	for _, bi := range t.m.Neighbors(a) {
		if t.m.Bonds[bi].Order == mol.BondTriple && (z == 0 || t.z(t.m.Other(bi, a)) == z) {
			return true
		}
	}
	return false
}

// aromaticity marks MMFF-aromatic rings: five- and six-membered rings whose π electrons number
// six, counting two for each ring bond that is double (or already aromatic through a fused ring)
// and, in a five-membered ring, two for one lone-pair donor (neutral three-connected N,
// two-connected O or S, or an anionic two-connected N or C). A ring with an exocyclic double
// bond (a ring carbonyl, a methylene) is not aromatic. Fused rings are revisited until nothing
// changes, so a ring whose fusion bond is single in the Kekulé structure becomes aromatic once
// its neighbour has.
func (t *typer) aromaticity() {
	m := t.m
	for changed := true; changed; {
		changed = false
		for ri, ring := range t.rs.rings {
			if t.aromRing[ri] || (len(ring) != 5 && len(ring) != 6) {
				continue
			}
			pi, donors, ok := 0, 0, true
			inRing := func(x int) bool {
				for _, y := range ring {
					if x == y {
						return true
					}
				}
				return false
			}
			for k, a := range ring {
				b := ring[(k+1)%len(ring)]
				bi := m.BondBetween(a, b)
				if m.Bonds[bi].Order == mol.BondDouble || t.aromBond[bi] {
					pi += 2
				}
				// the atom must carry a π bond in the ring (or be the donor)
				hasRingPi, exo := false, false
				for _, bj := range m.Neighbors(a) {
					o := m.Other(bj, a)
					switch {
					case inRing(o) && (m.Bonds[bj].Order == mol.BondDouble || t.aromBond[bj]):
						hasRingPi = true
					case !inRing(o) && m.Bonds[bj].Order == mol.BondDouble && !t.aromBond[bj]:
						exo = true
					case !inRing(o) && m.Bonds[bj].Order == mol.BondTriple:
						exo = true
					}
				}
				if exo {
					ok = false
					break
				}
				if !hasRingPi {
					if len(ring) == 5 && t.donor(a) {
						donors++
					} else {
						ok = false
						break
					}
				}
			}
			if !ok || donors > 1 {
				continue
			}
			if len(ring) == 5 && donors == 1 {
				pi += 2
			}
			if pi != 6 {
				continue
			}
			t.aromRing[ri] = true
			changed = true
			for k, a := range ring {
				t.arom[a] = true
				t.aromBond[m.BondBetween(a, ring[(k+1)%len(ring)])] = true
			}
		}
	}
}

// donor reports a lone-pair donor of a five-membered aromatic ring.
func (t *typer) donor(a int) bool {
	switch t.z(a) {
	case 7:
		return (t.charge(a) == 0 && t.m.Degree(a) == 3) || (t.charge(a) == -1 && t.m.Degree(a) == 2)
	case 8, 16:
		return t.charge(a) == 0 && t.m.Degree(a) == 2
	case 6:
		return t.charge(a) == -1 && t.m.Degree(a) == 3
	}
	return false
}

// fiveRingTypes types the atoms of five-membered aromatic rings: α and β to the one lone-pair
// donor (C5A 63, C5B 64, N5A 65, N5B 66), the donor itself (NPYL 39, OFUR 59, STHI 44), and
// the generic types where no single donor orients the ring (C5 78, N5 79), in imidazolium-type
// cations (CIM+ 80, NIM+ 81) and in azole anions (N5M 76). An atom also in a six-membered
// aromatic ring keeps its five-ring type.
func (t *typer) fiveRingTypes() map[int]int {
	out := map[int]int{}
	generic := map[int]bool{}
	for ri, ring := range t.rs.rings {
		if !t.aromRing[ri] || len(ring) != 5 {
			continue
		}
		donor, cation, anion := -1, false, false
		for _, a := range ring {
			if t.charge(a) == 1 && t.z(a) == 7 {
				cation = true
			}
			if t.charge(a) == -1 {
				anion = true
			}
			if t.donor(a) && !t.ringPi(a, ring) {
				donor = a
			}
		}
		for k, a := range ring {
			prev, next := ring[(k+4)%5], ring[(k+1)%5]
			var ty int
			switch {
			case anion:
				ty = map[int]int{6: 78, 7: 76}[t.z(a)]
			case cation:
				ty = t.cationRingType(a, ring)
			case a == donor:
				ty = map[int]int{7: 39, 8: 59, 16: 44}[t.z(a)]
			case donor < 0:
				ty = map[int]int{6: 78, 7: 79}[t.z(a)]
			case prev == donor || next == donor:
				ty = map[int]int{6: 63, 7: 65}[t.z(a)]
			default:
				ty = map[int]int{6: 64, 7: 66}[t.z(a)]
			}
			if t.z(a) == 7 && t.charge(a) == 0 && t.m.Degree(a) == 3 && !t.ringPi(a, ring) && !anion && ty != 81 {
				ty = 39 // a pyrrole-type nitrogen in a ring with several of them
			}
			if t.z(a) == 7 && t.isNOxide(a) && ty != 39 {
				ty = 82
			}
			if old, seen := out[a]; seen && old != ty {
				generic[a] = true
			}
			out[a] = ty
		}
	}
	for a := range generic {
		switch t.z(a) {
		case 6:
			out[a] = 78
		case 7:
			if out[a] != 39 && out[a] != 76 && out[a] != 81 {
				out[a] = 79
			}
		}
	}
	for a, ty := range out {
		if ty == 0 {
			delete(out, a)
		}
	}
	return out
}

// ringPi reports a double (or aromatic) bond from a to another atom of the ring.
func (t *typer) ringPi(a int, ring []int) bool {
	for _, bi := range t.m.Neighbors(a) {
		o := t.m.Other(bi, a)
		for _, x := range ring {
			if x == o && (t.m.Bonds[bi].Order == mol.BondDouble) {
				return true
			}
		}
	}
	return false
}

// cationRingType types an atom of an imidazolium-like five-membered cation: the nitrogens NIM+
// (81), the carbon between two nitrogens CIM+ (80), other carbons C5 (78).
func (t *typer) cationRingType(a int, ring []int) int {
	switch t.z(a) {
	case 7:
		if t.m.Degree(a) == 3 {
			return 81
		}
		return 79
	case 6:
		n := 0
		for _, o := range t.m.HeavyNbrs(a) {
			for _, x := range ring {
				if x == o && t.z(o) == 7 && t.m.Degree(o) == 3 {
					n++
				}
			}
		}
		if n == 2 {
			return 80
		}
		return 78
	case 8:
		return 59
	case 16:
		return 44
	}
	return 0
}

// isNOxide reports a nitrogen carrying a terminal anionic oxygen.
func (t *typer) isNOxide(a int) bool {
	for _, o := range t.m.HeavyNbrs(a) {
		if t.z(o) == 8 && t.m.Degree(o) == 1 && t.charge(o) == -1 {
			return true
		}
	}
	return false
}

func (t *typer) carbon(a int) int {
	m := t.m
	if t.arom[a] {
		return 37
	}
	double, triple, partner := t.multiple(a)
	switch {
	case triple > 0:
		if t.charge(a) == -1 && t.z(partner) == 7 && t.charge(partner) == 1 {
			return 60 // isonitrile carbon
		}
		return 4
	case double >= 2:
		return 4 // allenic, ketene, isocyanate carbons
	case double == 1:
		switch t.z(partner) {
		case 8, 16:
			// carboxylate and dithiocarboxylate carbons: =O (=S) with a terminal O− (S−) beside it
			for _, o := range m.HeavyNbrs(a) {
				if o != partner && t.z(o) == t.z(partner) && m.Degree(o) == 1 && t.charge(o) == -1 {
					return 41
				}
			}
			return 3
		case 7:
			if t.charge(partner) == 1 && t.amidinium(a) {
				return 57
			}
			return 3
		case 6:
			if t.rs.inRingOf(a, 4) {
				return 30
			}
			return 2
		}
		return 2
	}
	if m.Degree(a) < 4 {
		return 2 // a three-connected carbon without a multiple bond (radical, carbocation) is typed sp2
	}
	if t.rs.inRingOf(a, 3) {
		return 22
	}
	if t.rs.inRingOf(a, 4) {
		return 20
	}
	return 1
}

// amidinium reports a carbon double-bonded to N+ and single-bonded to another three-connected
// neutral nitrogen (amidinium, guanidinium: the positive charge is shared).
func (t *typer) amidinium(c int) bool {
	for _, o := range t.m.HeavyNbrs(c) {
		if t.z(o) == 7 && t.order(c, o) == mol.BondSingle && t.m.Degree(o) == 3 && t.charge(o) == 0 {
			return true
		}
	}
	return false
}

// guanidiniumN counts the nitrogens of the carbon c (a guanidinium carbon has three).
func (t *typer) nitrogensOn(c int) int {
	n := 0
	for _, o := range t.m.HeavyNbrs(c) {
		if t.z(o) == 7 {
			n++
		}
	}
	return n
}

func (t *typer) nitrogen(a int) (int, int) {
	m := t.m
	q, deg := t.charge(a), m.Degree(a)
	if t.arom[a] {
		// six-membered aromatic rings (five-membered ones are typed by fiveRingTypes)
		switch {
		case t.isNOxide(a):
			return 69, hNone
		case q == 1:
			return 58, hHNR_p
		}
		return 38, hNone
	}
	double, triple, partner := t.multiple(a)
	switch {
	case triple > 0:
		if q == 1 && t.z(partner) == 6 && t.charge(partner) == -1 {
			return 61, hNone // isonitrile nitrogen
		}
		return 42, hNone
	case double == 2:
		return 53, hNone // central N of an azide, =N=
	case double == 1:
		pz := t.z(partner)
		switch {
		case q == -1 && deg == 1:
			return 47, hNone // terminal azide nitrogen
		case q == 1 && pz == 8 && t.terminal(a, 8) >= 2:
			return 45, hNone // nitro, nitrate
		case q == 1 && (t.isNOxide(a) || pz == 8):
			return 67, hNone // nitrone, imine oxide, N+=O
		case q == 1:
			if pz == 6 && t.amidinium(partner) {
				if t.nitrogensOn(partner) >= 3 {
					return 56, hHNR_p
				}
				return 55, hHNR_p
			}
			return 54, hHNR_p // iminium, azonium
		case pz == 8:
			return 46, hNone // nitroso
		case pz == 16:
			return 48, hNone
		}
		return 9, hHN_C
	}
	// no multiple bond
	switch {
	case q == 1 && t.isNOxide(a):
		return 68, hNone
	case q == 1:
		// a nitrogen of an amidinium or guanidinium ion drawn with the charge on its single bond
		return 34, hHNR_p
	case q == -1:
		return 62, hNone
	}
	// amidinium and guanidinium nitrogens drawn neutral beside the N+=C
	for _, o := range m.HeavyNbrs(a) {
		if t.z(o) == 6 && t.carbonOfCation(o) {
			if t.nitrogensOn(o) >= 3 {
				return 56, hHNR_p
			}
			return 55, hHNR_p
		}
	}
	sulfonyl, carbonyl, vinyl, nn, cyano := false, false, false, false, false
	for _, o := range m.HeavyNbrs(a) {
		switch t.z(o) {
		case 16:
			if t.terminal(o, 8) >= 2 || (t.terminal(o, 8) == 1 && m.Degree(o) == 4) {
				sulfonyl = true
			}
		case 6:
			if t.doubleTo(o, 8) || t.doubleTo(o, 16) {
				carbonyl = true
			} else if t.tripleTo(o, 7) {
				cyano = true
			} else if t.arom[o] || t.doubleTo(o, 6) || t.doubleTo(o, 7) || t.tripleTo(o, 6) || t.doubleTo(o, 15) {
				vinyl = true
			}
		case 7:
			if t.doubleTo(o, 6) || t.doubleTo(o, 7) {
				nn = true
			}
		}
	}
	switch {
	case sulfonyl || cyano:
		return 43, hHNCO
	case carbonyl || nn:
		return 10, hHNCO
	case vinyl:
		return 40, hHNCO
	}
	return 8, hHNR
}

// carbonOfCation reports a carbon double-bonded to a positive nitrogen with another nitrogen on
// it (the centre of an amidinium or guanidinium ion).
func (t *typer) carbonOfCation(c int) bool {
	for _, bi := range t.m.Neighbors(c) {
		o := t.m.Other(bi, c)
		if t.m.Bonds[bi].Order == mol.BondDouble && t.z(o) == 7 && t.charge(o) == 1 {
			return t.amidinium(c)
		}
	}
	return false
}

func (t *typer) oxygen(a int) (int, int) {
	m := t.m
	q, deg := t.charge(a), m.Degree(a)
	heavy := m.HeavyNbrs(a)
	switch {
	case deg == 2 && len(heavy) == 0:
		return 70, hHOH // water
	case q == 1 && deg == 3:
		return 49, hHOp
	case q == 1:
		return 51, hHOeqp
	case t.arom[a]:
		return 59, hNone
	}
	if q == -1 && deg == 1 && len(heavy) == 0 {
		return 35, hHOR // hydroxide
	}
	if q == -1 && deg == 1 {
		p := heavy[0]
		switch t.z(p) {
		case 7:
			if t.charge(p) == 1 {
				return 32, hNone // N-oxide, nitro
			}
			return 35, hNone // on a neutral nitrogen: an oxide anion
		case 16, 15, 17:
			return 32, hNone
		case 6:
			if t.doubleTo(p, 8) || t.doubleTo(p, 16) {
				return 32, hNone // carboxylate
			}
			return 35, hNone // alkoxide, enolate, phenoxide
		}
		return 35, hNone
	}
	double, _, partner := t.multiple(a)
	if double == 1 {
		switch t.z(partner) {
		case 6:
			for _, o := range m.HeavyNbrs(partner) {
				if o != a && t.z(o) == 8 && m.Degree(o) == 1 && t.charge(o) == -1 {
					return 32, hNone // the other oxygen of a carboxylate
				}
			}
			return 7, hNone
		case 7:
			if t.charge(partner) == 1 && t.terminal(partner, 8) >= 2 {
				return 32, hNone // nitro, nitrate
			}
			return 7, hNone // nitroso, N+=O
		case 16:
			if t.terminal(partner, 8)+t.terminal(partner, 7) >= 2 || m.Degree(partner) == 4 {
				return 32, hNone // sulfone, sulfonate, sulfinate
			}
			if t.charge(partner) == 0 && t.terminalAnion(partner) {
				return 32, hNone
			}
			return 7, hNone // sulfoxide
		case 15:
			return 32, hNone
		case 17:
			return 32, hNone
		}
		return 7, hNone
	}
	// divalent oxygen: its hydrogens depend on what it is attached to
	h := hHOR
	for _, o := range heavy {
		switch t.z(o) {
		case 6:
			if t.doubleTo(o, 8) || t.doubleTo(o, 16) {
				h = hHOCO
			} else if h != hHOCO && (t.arom[o] || t.doubleTo(o, 6) || t.doubleTo(o, 7)) {
				h = hHOCC
			}
		case 16:
			h = hHOS
		case 15:
			h = hHOCO
		}
	}
	return 6, h
}

// terminalAnion reports a terminal anionic oxygen on s.
func (t *typer) terminalAnion(s int) bool {
	for _, o := range t.m.HeavyNbrs(s) {
		if t.z(o) == 8 && t.m.Degree(o) == 1 && t.charge(o) == -1 {
			return true
		}
	}
	return false
}

func (t *typer) sulfur(a int) (int, int) {
	m := t.m
	q, deg := t.charge(a), m.Degree(a)
	if t.arom[a] {
		return 44, hNone
	}
	termO := t.terminal(a, 8)
	double, _, partner := t.multiple(a)
	switch {
	case q == -1 && deg == 1:
		return 72, hNone // thiolate, thiocarboxylate S, terminal S on P
	case deg == 1 && double == 1 && t.z(partner) == 15:
		return 72, hNone
	case deg == 1 && double == 1:
		if t.z(partner) == 6 {
			for _, o := range m.HeavyNbrs(partner) {
				if o != a && (t.z(o) == 16 || t.z(o) == 8) && m.Degree(o) == 1 && t.charge(o) == -1 {
					return 72, hNone // thiocarboxylate
				}
			}
		}
		return 16, hNone
	case termO == 2 && deg == 3 && t.terminalAnion(a) && double == 1:
		return 73, hNone // sulfinate
	case termO >= 2 || deg == 4:
		return 18, hNone
	case double == 2 && termO == 1:
		return 74, hNone // sulfinyl C=S=O
	case termO == 1 && deg == 3:
		return 17, hNone
	}
	return 15, hHS
}

func (t *typer) phosphorus(a int) int {
	deg := t.m.Degree(a)
	double, _, partner := t.multiple(a)
	switch {
	case deg >= 4:
		return 25
	case deg == 3 && double == 1 && t.z(partner) == 6:
		return 75
	}
	return 26
}

// other types halogens and the ions MMFF knows.
func (t *typer) other(a int) (int, error) {
	m := t.m
	q, deg := t.charge(a), m.Degree(a)
	switch t.z(a) {
	case 9:
		if q == -1 && deg == 0 {
			return 89, nil
		}
		return 11, nil
	case 17:
		if q == -1 && deg == 0 {
			return 90, nil
		}
		if t.terminal(a, 8) == 4 {
			return 77, nil
		}
		return 12, nil
	case 35:
		if q == -1 && deg == 0 {
			return 91, nil
		}
		return 13, nil
	case 53:
		return 14, nil
	}
	if deg == 0 {
		ions := map[[2]int]int{{3, 1}: 92, {11, 1}: 93, {19, 1}: 94, {30, 2}: 95, {20, 2}: 96, {29, 1}: 97, {29, 2}: 98, {12, 2}: 99, {26, 2}: 87, {26, 3}: 88}
		if ty, ok := ions[[2]int{t.z(a), q}]; ok {
			return ty, nil
		}
	}
	sym := "?"
	if e := mol.ElementByZ(t.z(a)); e != nil {
		sym = e.Symbol
	}
	return 0, &TypeError{Atom: a, Msg: fmt.Sprintf("MMFF94 has no parameters for %s with charge %+d and %d bonds", sym, q, deg)}
}
