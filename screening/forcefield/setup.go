package forcefield

import (
	"errors"
	"fmt"
	"math"

	"ringsieve/screening/mol"
)

// System is a molecule set up for MMFF94 (or MMFF94s): explicit hydrogens, atom types, partial
// charges and every interaction with its parameters. Coordinates are kept outside, as a flat
// slice x = [x0 y0 z0 x1 y1 z1 ...] in Å, so that one System serves many conformers.
type System struct {
	Mol     *mol.Molecule
	Variant Variant
	Types   []int
	Charges []float64
	// Aromatic marks the atoms MMFF counts aromatic.
	Aromatic []bool

	// dielectric is the constant D of the electrostatic term (1: the gas phase, as published).
	dielectric float64

	bonds  []bondTerm
	angles []angleTerm
	oops   []oopTerm
	tors   []torTerm
	pairs  []pairTerm
}

type bondTerm struct {
	i, j   int
	kb, r0 float64
	bt     int
}

// angleTerm is one angle bend with its stretch–bend coupling (sb false for linear centres).
type angleTerm struct {
	i, j, k    int
	ka, theta0 float64
	linear     bool
	at         int
	sb         bool
	kIJK, kKJI float64
	r0IJ, r0KJ float64
}

type oopTerm struct {
	i, j, k, l int // j central
	koop       float64
}

type torTerm struct {
	i, j, k, l int
	v1, v2, v3 float64
}

// pairTerm is one non-bonded pair (1-4 or farther): buffered 14-7 van der Waals and buffered
// Coulomb.
type pairTerm struct {
	i, j    int
	rStar   float64 // R*_IJ, Å
	rStar7  float64 // R*_IJ⁷
	eps     float64 // ε_IJ, kcal/mol
	qq      float64 // 332.0716 q_i q_j (× 0.75 for 1-4), kcal Å/mol
	oneFour bool
}

// Limits on a molecule the force field sets up (design choices: monomers have a few dozen atoms;
// the bounds keep any input from costing more than a fraction of a second).
const (
	MaxFFAtoms = 400
)

// SetDielectric sets the constant dielectric D of the electrostatic term, E_Q = 332.0716 q_i q_j
// / (D (R + 0.05)) (Halgren, J. Comput. Chem. 1996, 17, 490: D = 1 for the gas phase as
// published; a larger D damps intramolecular electrostatics, a common approximation for a
// solvent). Values below 1 are taken as 1.
func (s *System) SetDielectric(d float64) {
	if d < 1 || math.IsNaN(d) {
		d = 1
	}
	f := s.dielectric / d
	for k := range s.pairs {
		s.pairs[k].qq *= f
	}
	s.dielectric = d
}

// ParamError reports an interaction MMFF94 has no parameter for, even by its empirical rules.
type ParamError struct{ Msg string }

func (e *ParamError) Error() string { return e.Msg }

// Is makes every ParamError match ErrNotCovered.
func (e *ParamError) Is(target error) bool { return target == ErrNotCovered }

// ErrNotCovered matches every structure MMFF94 cannot type or has no parameter for (elements
// such as boron or selenium, metals, unusual hybridizations).
var ErrNotCovered = errors.New("not covered by MMFF94")

// Setup types m (hydrogens are made explicit first when they are implicit), computes the
// partial charges and builds every interaction. Errors: *TypeError for an atom without an MMFF
// type, *ParamError for a missing parameter, and an error when the molecule is too large.
func Setup(m *mol.Molecule, v Variant) (*System, error) {
	p, err := tablesFor(v)
	if err != nil {
		return nil, err
	}
	hasImplicit := false
	for _, a := range m.Atoms {
		if a.HCount > 0 {
			hasImplicit = true
			break
		}
	}
	if hasImplicit {
		m = WithHydrogens(m)
	}
	if len(m.Atoms) > MaxFFAtoms {
		return nil, fmt.Errorf("%d atoms with hydrogens: more than the force field's limit of %d", len(m.Atoms), MaxFFAtoms)
	}
	rs, err := smallRings(m)
	if err != nil {
		return nil, err
	}
	types, arom, err := assignTypes(m, rs)
	if err != nil {
		return nil, err
	}
	for a, t := range types {
		if !p.prop[t].ok {
			return nil, &TypeError{Atom: a, Msg: fmt.Sprintf("type %d has no properties", t)}
		}
	}
	s := &System{Mol: m, Variant: v, Types: types, Aromatic: arom, dielectric: 1}
	b := &builder{s: s, p: p, rs: rs, m: m}
	b.bondTypes()
	if err := b.buildBonds(); err != nil {
		return nil, err
	}
	if err := b.buildAngles(); err != nil {
		return nil, err
	}
	b.buildOOP()
	if err := b.buildTorsions(); err != nil {
		return nil, err
	}
	if err := b.charges(); err != nil {
		return nil, err
	}
	if err := b.buildPairs(); err != nil {
		return nil, err
	}
	return s, nil
}

type builder struct {
	s  *System
	p  *params
	rs *ringSet
	m  *mol.Molecule
	bt []int // MMFF bond-type index per bond
}

// bondTypes sets the MMFF bond-type index: 1 for a formally single, non-aromatic bond between
// two atoms whose types can take part in multiple bonding (sbmb) or are aromatic (the central
// bond of butadiene, the bond between the rings of biphenyl), else 0 (Halgren 1996, I).
func (b *builder) bondTypes() {
	b.bt = make([]int, len(b.m.Bonds))
	for bi, bd := range b.m.Bonds {
		if bd.Order != mol.BondSingle {
			continue
		}
		ti, tj := b.s.Types[bd.A], b.s.Types[bd.B]
		pi, pj := b.p.prop[ti], b.p.prop[tj]
		if b.aromBond(bd.A, bd.B) {
			continue
		}
		if (pi.sbmb || pi.arom) && (pj.sbmb || pj.arom) {
			b.bt[bi] = 1
		}
	}
}

// aromBond reports a bond inside an MMFF-aromatic ring.
func (b *builder) aromBond(i, j int) bool {
	if !b.s.Aromatic[i] || !b.s.Aromatic[j] {
		return false
	}
	for _, r := range b.rs.atomIn[i] {
		ring := b.rs.rings[r]
		if len(ring) != 5 && len(ring) != 6 {
			continue
		}
		for k, x := range ring {
			y := ring[(k+1)%len(ring)]
			if (x == i && y == j) || (x == j && y == i) {
				all := true
				for _, z := range ring {
					if !b.s.Aromatic[z] {
						all = false
					}
				}
				if all {
					return true
				}
			}
		}
	}
	return false
}

func (b *builder) bondType(i, j int) int {
	if bi := b.m.BondBetween(i, j); bi >= 0 {
		return b.bt[bi]
	}
	return 0
}

func (b *builder) buildBonds() error {
	for bi, bd := range b.m.Bonds {
		kb, r0, err := b.bondParams(bd.A, bd.B, b.bt[bi])
		if err != nil {
			return err
		}
		b.s.bonds = append(b.s.bonds, bondTerm{i: bd.A, j: bd.B, kb: kb, r0: r0, bt: b.bt[bi]})
	}
	return nil
}

func (b *builder) bondParams(i, j, bt int) (kb, r0 float64, err error) {
	ti, tj := b.s.Types[i], b.s.Types[j]
	if bp, ok := b.p.bond[key3{bt, min(ti, tj), max(ti, tj)}]; ok {
		return bp.kb, bp.r0, nil
	}
	return b.empiricalBond(i, j, bt)
}

func (b *builder) buildAngles() error {
	m := b.m
	for j := range m.Atoms {
		all := b.allNbrs(j)
		for x := 0; x < len(all); x++ {
			for y := x + 1; y < len(all); y++ {
				i, k := all[x], all[y]
				at := b.angleType(i, j, k)
				ka, th0, err := b.angleParams(i, j, k, at)
				if err != nil {
					return err
				}
				lin := b.p.prop[b.s.Types[j]].lin
				t := angleTerm{i: i, j: j, k: k, ka: ka, theta0: th0, linear: lin, at: at}
				if !lin {
					t.kIJK, t.kKJI = b.stretchBend(i, j, k, at)
					_, t.r0IJ, _ = b.bondParams(i, j, b.bondType(i, j))
					_, t.r0KJ, _ = b.bondParams(k, j, b.bondType(k, j))
					t.sb = t.kIJK != 0 || t.kKJI != 0
				}
				b.s.angles = append(b.s.angles, t)
			}
		}
	}
	return nil
}

// allNbrs lists every neighbour of a (hydrogens included) in bond order.
func (b *builder) allNbrs(a int) []int {
	var out []int
	for _, bi := range b.m.Neighbors(a) {
		out = append(out, b.m.Other(bi, a))
	}
	return out
}

// angleType is MMFF's angle-type index: the sum of the bond-type indices of the two bonds (0 … 2),
// or 3 for an angle in a three-membered ring (5, 6 with one or two BT 1 bonds), 4 for a
// four-membered ring (7, 8 likewise).
func (b *builder) angleType(i, j, k int) int {
	sum := b.bondType(i, j) + b.bondType(j, k)
	switch {
	case b.m.BondBetween(i, k) >= 0:
		if sum == 0 {
			return 3
		}
		return 4 + sum
	case b.rs.sameRing(4, i, j, k):
		if sum == 0 {
			return 4
		}
		return 6 + sum
	}
	return sum
}

// angleParams finds ka and θ0: the exact types, then the outer atoms stepped down through the
// equivalence levels of mmffdef.par; the wildcard row gives θ0 alone, and ka then comes from the
// empirical rule.
func (b *builder) angleParams(i, j, k, at int) (ka, theta0 float64, err error) {
	ti, tj, tk := b.s.Types[i], b.s.Types[j], b.s.Types[k]
	eq := &b.p.equiv
	for _, lv := range [][2]int{{1, 1}, {2, 2}, {3, 3}} {
		a, c := eq[ti][lv[0]], eq[tk][lv[1]]
		if ap, ok := b.p.angle[key4{at, min(a, c), tj, max(a, c)}]; ok && ap.ka > 0 {
			return ap.ka, ap.theta0, nil
		}
	}
	// the wildcard row: θ0 only
	th0 := 0.0
	if ap, ok := b.p.angle[key4{at, 0, tj, 0}]; ok {
		th0 = ap.theta0
	} else if ap, ok := b.p.angle[key4{0, 0, tj, 0}]; ok {
		th0 = ap.theta0
	}
	return b.empiricalAngle(i, j, k, at, th0)
}

// stretchBend finds the stretch–bend constants: the table by stretch–bend type and exact atom
// types (either orientation), else the defaults by periodic-table rows (mmffdfsb.par).
func (b *builder) stretchBend(i, j, k, at int) (kIJK, kKJI float64) {
	ti, tj, tk := b.s.Types[i], b.s.Types[j], b.s.Types[k]
	btIJ, btJK := b.bondType(i, j), b.bondType(j, k)
	sbt := sbType(at, btIJ, btJK)
	if sp, ok := b.p.stbn[key4{sbt, ti, tj, tk}]; ok {
		return sp.kIJK, sp.kKJI
	}
	rsbt := sbType(at, btJK, btIJ)
	if sp, ok := b.p.stbn[key4{rsbt, tk, tj, ti}]; ok {
		return sp.kKJI, sp.kIJK
	}
	ri, rj, rk := periodRow(b.m.Atoms[i].Z), periodRow(b.m.Atoms[j].Z), periodRow(b.m.Atoms[k].Z)
	if sp, ok := b.p.dfsb[key3{ri, rj, rk}]; ok {
		return sp.kIJK, sp.kKJI
	}
	if sp, ok := b.p.dfsb[key3{rk, rj, ri}]; ok {
		return sp.kKJI, sp.kIJK
	}
	return 0, 0
}

// sbType maps an angle type and the two bond types to the stretch–bend type index.
func sbType(at, btIJ, btJK int) int {
	switch at {
	case 1:
		if btIJ == 1 {
			return 1
		}
		return 2
	case 2:
		return 3
	case 3:
		return 5
	case 4:
		return 4
	case 5:
		if btIJ == 1 {
			return 6
		}
		return 7
	case 6:
		return 8
	case 7:
		if btIJ == 1 {
			return 9
		}
		return 10
	case 8:
		return 11
	}
	return 0
}

// periodRow is the row of the periodic table used by the default stretch–bend table: 0 for H, 1
// for Li–Ne, 2 for Na–Ar, 3 for K–Kr, 4 for Rb–Xe.
func periodRow(z int) int {
	switch {
	case z <= 2:
		return 0
	case z <= 10:
		return 1
	case z <= 18:
		return 2
	case z <= 36:
		return 3
	}
	return 4
}

// buildOOP adds an out-of-plane term for every three-connected atom with a parameter (the exact
// types, then the outer atoms stepped down together).
func (b *builder) buildOOP() {
	for j := range b.m.Atoms {
		nb := b.allNbrs(j)
		if len(nb) != 3 {
			continue
		}
		tj := b.s.Types[j]
		koop, ok := 0.0, false
		eq := &b.p.equiv
		for _, lv := range []int{1, 2, 3, 4} {
			t := [3]int{eq[b.s.Types[nb[0]]][lv], eq[b.s.Types[nb[1]]][lv], eq[b.s.Types[nb[2]]][lv]}
			if koop, ok = b.p.oop[oopKey(t[0], tj, t[1], t[2])]; ok {
				break
			}
		}
		if !ok || koop == 0 {
			continue
		}
		b.s.oops = append(b.s.oops, oopTerm{i: nb[0], j: j, k: nb[1], l: nb[2], koop: koop})
	}
}

// torsionTypes returns MMFF's torsion-type index and the fallback used when no parameter exists
// under it (Halgren, J. Comput. Chem. 1996, 17, 587, the torsion section). The base type is the
// bond type of the central bond, raised to 2 when that bond is a plain single bond between two
// atoms of bond type 0 and an outer bond has bond type 1. A torsion closing a four-membered ring
// (I bonded to L, and neither I–K nor J–L bonded, which would be two fused three-membered rings)
// has type 4; one in a five-membered ring (I and L share a neighbour) with a saturated carbon
// (type 1) among its atoms has type 5; in both cases the base type is the fallback.
func (b *builder) torsionTypes(i, j, k, l int) (primary, fallback int) {
	base := b.bondType(j, k)
	if base == 0 && b.m.Bonds[b.m.BondBetween(j, k)].Order == mol.BondSingle && !b.aromBond(j, k) &&
		(b.bondType(i, j) == 1 || b.bondType(k, l) == 1) {
		base = 2
	}
	switch b.torsionRing(i, j, k, l) {
	case 4:
		if b.m.BondBetween(i, k) < 0 && b.m.BondBetween(j, l) < 0 {
			return 4, base
		}
	case 5:
		for _, x := range [4]int{i, j, k, l} {
			if b.s.Types[x] == 1 {
				return 5, base
			}
		}
	}
	return base, 0
}

// torsionRing is 4 when the torsion's end atoms are bonded, 5 when they share a neighbour other
// than J and K, else 0.
func (b *builder) torsionRing(i, j, k, l int) int {
	if b.m.BondBetween(i, l) >= 0 {
		return 4
	}
	for _, x := range b.allNbrs(i) {
		if x == j || x == k {
			continue
		}
		for _, y := range b.allNbrs(l) {
			if y == x && y != k && y != j {
				return 5
			}
		}
	}
	return 0
}

// torsionCentre reports whether an atom may be the centre (J or K) of a torsion term: not linear
// in MMFF's sense, not sp (a triple bond, or two double bonds and no other neighbour), and with at most four
// neighbours (no torsion terms about hypervalent centres).
func (b *builder) torsionCentre(x int) bool {
	if b.p.prop[b.s.Types[x]].lin || len(b.allNbrs(x)) > 4 || len(b.allNbrs(x)) < 2 {
		return false
	}
	doubles := 0
	for _, y := range b.allNbrs(x) {
		switch b.m.Bonds[b.m.BondBetween(x, y)].Order {
		case mol.BondTriple:
			return false
		case mol.BondDouble:
			doubles++
		}
	}
	return doubles < 2 || len(b.allNbrs(x)) > 2
}

func (b *builder) buildTorsions() error {
	m := b.m
	for _, bd := range m.Bonds {
		j, k := bd.A, bd.B
		if !b.torsionCentre(j) || !b.torsionCentre(k) {
			continue
		}
		for _, i := range b.allNbrs(j) {
			if i == k {
				continue
			}
			for _, l := range b.allNbrs(k) {
				if l == j || l == i {
					continue
				}
				tp, err := b.torsionParams(i, j, k, l)
				if err != nil {
					return err
				}
				if tp.v1 == 0 && tp.v2 == 0 && tp.v3 == 0 {
					continue
				}
				b.s.tors = append(b.s.tors, torTerm{i: i, j: j, k: k, l: l, v1: tp.v1, v2: tp.v2, v3: tp.v3})
			}
		}
	}
	return nil
}

// torsionSteps is the order in which torsion parameters are sought, as indices into the outer
// atoms' equivalence levels (0: the type itself; 2: the level-3 default type of mmffdef.par; 4:
// the wildcard): the exact types, then one end at its level-3 type with the other as a wildcard
// ("half-default"), then both wildcards. The central types are never stepped down (Halgren,
// J. Comput. Chem. 1996, 17, 587, the five-stage search with levels 1 and 2 identical).
var torsionSteps = [4][2]int{{0, 0}, {2, 4}, {4, 2}, {4, 4}}

// lookupTorsion searches the table under one torsion type; the step index is returned with the
// parameters (-1 when none was found).
func (b *builder) lookupTorsion(tt, ti, tj, tk, tl int) (torParam, int) {
	eq := &b.p.equiv
	for s, lv := range torsionSteps {
		if tp, ok := b.p.tor[torKey(tt, eq[ti][lv[0]], tj, tk, eq[tl][lv[1]])]; ok {
			return tp, s
		}
	}
	return torParam{}, -1
}

// torsionParams finds V1, V2, V3 under the torsion's type, then under its fallback type (also
// when a type-5 torsion matched only with both ends as wildcards), and finally by the empirical
// rule.
func (b *builder) torsionParams(i, j, k, l int) (torParam, error) {
	ti, tj, tk, tl := b.s.Types[i], b.s.Types[j], b.s.Types[k], b.s.Types[l]
	tt, fb := b.torsionTypes(i, j, k, l)
	tp, step := b.lookupTorsion(tt, ti, tj, tk, tl)
	if step < 0 || (step == len(torsionSteps)-1 && tt == 5 && fb != 0) {
		if tp2, step2 := b.lookupTorsion(fb, ti, tj, tk, tl); step2 >= 0 {
			return tp2, nil
		}
	}
	if step >= 0 {
		return tp, nil
	}
	return b.empiricalTorsion(j, k), nil
}

// buildPairs lists the non-bonded pairs (separated by three bonds or more) with their van der
// Waals and electrostatic parameters.
func (b *builder) buildPairs() error {
	n := len(b.m.Atoms)
	// topological distance up to 3 by breadth-first search from each atom
	dist := make([]int8, n)
	for i := 0; i < n; i++ {
		for k := range dist {
			dist[k] = -1
		}
		dist[i] = 0
		frontier := []int{i}
		for d := 1; d <= 3; d++ {
			var next []int
			for _, x := range frontier {
				for _, y := range b.allNbrs(x) {
					if dist[y] < 0 {
						dist[y] = int8(d)
						next = append(next, y)
					}
				}
			}
			frontier = next
		}
		for j := i + 1; j < n; j++ {
			if dist[j] >= 0 && dist[j] < 3 {
				continue
			}
			pt := pairTerm{i: i, j: j, oneFour: dist[j] == 3}
			pt.rStar, pt.eps = b.vdwPair(b.s.Types[i], b.s.Types[j])
			pt.rStar7 = math.Pow(pt.rStar, 7)
			qq := 332.0716 * b.s.Charges[i] * b.s.Charges[j]
			if pt.oneFour {
				qq *= 0.75
			}
			pt.qq = qq
			b.s.pairs = append(b.s.pairs, pt)
		}
	}
	return nil
}

// vdwPair combines the van der Waals parameters of two types (Halgren 1996, I; J. Am. Chem.
// Soc. 1992, 114, 7827): R*_II = A_I α_I^¼; R*_IJ = ½(R*_II + R*_JJ)(1 + B(1 − exp(−β γ²)))
// with γ = (R*_II − R*_JJ)/(R*_II + R*_JJ), B = 0.2 (0 when either is a donor), β = 12;
// ε_IJ = 181.16 G_I G_J α_I α_J / ((α_I/N_I)^½ + (α_J/N_J)^½) / R*_IJ⁶; a donor–acceptor pair
// has R*_IJ × 0.8 and ε_IJ × 0.5.
func (b *builder) vdwPair(ti, tj int) (rStar, eps float64) {
	vi, vj := b.p.vdw[ti], b.p.vdw[tj]
	ri := vi.a * math.Pow(vi.alpha, 0.25)
	rj := vj.a * math.Pow(vj.alpha, 0.25)
	gamma := (ri - rj) / (ri + rj)
	bb := 0.2
	if vi.da == 'D' || vj.da == 'D' {
		bb = 0
	}
	rStar = 0.5 * (ri + rj) * (1 + bb*(1-math.Exp(-12*gamma*gamma)))
	eps = 181.16 * vi.g * vj.g * vi.alpha * vj.alpha / (math.Sqrt(vi.alpha/vi.n) + math.Sqrt(vj.alpha/vj.n)) / math.Pow(rStar, 6)
	if (vi.da == 'D' && vj.da == 'A') || (vi.da == 'A' && vj.da == 'D') {
		rStar *= 0.8
		eps *= 0.5
	}
	return rStar, eps
}
