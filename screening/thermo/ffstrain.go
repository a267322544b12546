package thermo

import (
	"context"
	"errors"
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"ringsieve/screening/canon"
	"ringsieve/screening/describe"
	"ringsieve/screening/forcefield"
	"ringsieve/screening/internal/memo"
	"ringsieve/screening/mol"
	"ringsieve/screening/rings"
)

// Force-field strain differences (issue "Thermodynamics v2"). The ring-opening model reaction is
// the cross-metathesis of the ring olefin with (E)-2-butene:
//
//	ring (C=C) + CH3CH=CHCH3 (E)  →  ring-opened (E,E)-diene  …C(A)=CH–CH3 and …C(B)=CH–CH3
//
// It keeps every bond and atom type on both sides (two C=C and the same sp3 carbons), so the
// force field's steric energies, which are not heats of formation, may be subtracted: ΔE_ro =
// E(diene) − E(ring) − E(butene), each at its lowest conformer found. Absolute ΔE_ro values are
// off by tens of kJ/mol (the polymer is not a diene, the phase is not the gas); the difference
// between a candidate and its parent — the same reaction of the olefin's all-carbon core ring
// (norbornene for an oxanorbornene imide, cis-cyclooctene for a fused cyclooctene) — is what the
// estimate uses: ΔH_p(candidate) = ΔH_p(parent) + [ΔE_ro(candidate) − ΔE_ro(parent)]. The E
// (trans) geometry of the new double bonds stands for the trans-rich chains ruthenium classes give.

// FFCorrection is the force-field part of an estimate.
type FFCorrection struct {
	// DeltakJmol is ΔE_ro(candidate) − ΔE_ro(parent), kJ/mol (negative: the candidate releases
	// more strain than its parent).
	DeltakJmol float64
	// Parent names the parent core; ParentSMILES is its structure.
	Parent       string
	ParentSMILES string
	// CandidatekJmol and ParentkJmol are the two ΔE_ro values, kJ/mol.
	CandidatekJmol, ParentkJmol float64
}

// ffBudget bounds the conformer searches of one strain difference (design choice: a few hundred
// milliseconds for a typical monomer on one core; the searches are cached).
var ffBudget = forcefield.Budget{MaxMinimizations: 60, MaxConformers: 1, MaxAtoms: 160}

// ffDielectric damps the intramolecular electrostatics of the strain calculation (constant
// dielectric 4, a common stand-in for a solvent): in the gas phase, charge–charge terms of polar
// substituents swing ΔE_ro by several kJ/mol between ring and chain conformers, which solution
// screens (design choice; hydrocarbon differences change by under 1 kJ/mol).
const ffDielectric = 4

// ffMemo caches ΔE_ro by structure key (10,000 entries, a design choice).
var ffMemo = memo.New[ffResult](10000)

type ffResult struct {
	dE  float64
	err error
}

// ResetFFCache empties the force-field strain cache (benchmarks of a cold start).
func ResetFFCache() { ffMemo.Reset() }

// ErrFFNotApplicable reports a structure whose ring opening the force field cannot model (not
// covered by MMFF94, too large, or no 3-D structure with its stereo).
var ErrFFNotApplicable = errors.New("force-field strain difference not available")

// kcalToKJ converts kcal/mol to kJ/mol (thermochemical calorie, 4.184 J).
const kcalToKJ = 4.184

// StrainDifference computes the force-field correction of ring olefin o of structure s against
// the all-carbon core of its ring (the parent). Errors wrap ErrFFNotApplicable, or are the
// context's.
func StrainDifference(ctx context.Context, s *describe.Structure, o *describe.Olefin) (*FFCorrection, error) {
	parent, pbond, name, err := coreParent(s, o)
	if err != nil {
		return nil, err
	}
	return strainDifferenceTo(ctx, s, o, parent, pbond, name)
}

// strainDifferenceTo is StrainDifference against a given parent (its olefin bond pbond).
func strainDifferenceTo(ctx context.Context, s *describe.Structure, o *describe.Olefin, parent *mol.Molecule, pbond int, name string) (*FFCorrection, error) {
	cand, bond, err := mainComponent(s.Mol, s.Main, o.Bond)
	if err != nil {
		return nil, err
	}
	dc, err := ringOpeningEnergy(ctx, cand, bond)
	if err != nil {
		return nil, err
	}
	dp, err := ringOpeningEnergy(ctx, parent, pbond)
	if err != nil {
		return nil, err
	}
	return &FFCorrection{DeltakJmol: dc - dp, Parent: name, ParentSMILES: writeSimple(parent),
		CandidatekJmol: dc, ParentkJmol: dp}, nil
}

// ringOpeningEnergy returns ΔE_ro of ring olefin bond bi of m in kJ/mol (without the constant
// (E)-2-butene term, which cancels in every difference), cached by structure.
func ringOpeningEnergy(ctx context.Context, m *mol.Molecule, bi int) (float64, error) {
	cm, cbi, key := canonicalForm(m, bi)
	if key != "" {
		if r, ok := ffMemo.Get(key); ok {
			return r.dE, r.err
		}
	}
	dE, err := computeRingOpening(ctx, cm, cbi)
	if key != "" && ctx.Err() == nil { // a cancelled computation is not an answer
		ffMemo.Put(key, ffResult{dE, err})
	}
	return dE, err
}

// canonicalForm returns the molecule the force field computes for ring olefin bond bi of m, that
// bond in it, and the cache key of the pair, so that the answer depends on the structure and not
// on how it was written (the conformer search starts from an atom order). Without stereo marks
// the molecule is renumbered in canonical order and the olefin is the first bond of its
// symmetry class; with stereo marks (which name written neighbours) the written numbering
// stands and is part of the key. A molecule too large for a canonical order is not cached
// (empty key).
func canonicalForm(m *mol.Molecule, bi int) (*mol.Molecule, int, string) {
	if hasStereoMarks(m) {
		return m, bi, structureKey(m) + "|" + strconv.Itoa(bi)
	}
	order, class := canon.Order(m, rings.Perceive(m), seq(len(m.Atoms)))
	if class == nil {
		return m, bi, ""
	}
	pos := make([]int, len(m.Atoms))
	cm := &mol.Molecule{Atoms: make([]mol.Atom, 0, len(m.Atoms))}
	for k, a := range order {
		pos[a] = k
		at := m.Atoms[a]
		at.Chiral, at.NChiral = 0, 0
		cm.Atoms = append(cm.Atoms, at)
	}
	for _, b := range m.Bonds {
		nb := b
		nb.A, nb.B = min(pos[b.A], pos[b.B]), max(pos[b.A], pos[b.B])
		nb.Dir = 0
		cm.Bonds = append(cm.Bonds, nb)
	}
	sort.Slice(cm.Bonds, func(i, j int) bool {
		x, y := cm.Bonds[i], cm.Bonds[j]
		return x.A < y.A || (x.A == y.A && x.B < y.B)
	})
	cm.Index()
	pair := func(a, b int) [2]int { return [2]int{min(class[a], class[b]), max(class[a], class[b])} }
	want := pair(pos[m.Bonds[bi].A], pos[m.Bonds[bi].B])
	cbi := -1
	for j, b := range cm.Bonds {
		if b.Order == m.Bonds[bi].Order && pair(b.A, b.B) == want {
			cbi = j
			break
		}
	}
	return cm, cbi, structureKey(m) + "|" + strconv.Itoa(want[0]) + "-" + strconv.Itoa(want[1])
}

func computeRingOpening(ctx context.Context, m *mol.Molecule, bi int) (float64, error) {
	opt := forcefield.SearchOptions{Seed: 11, Budget: ffBudget, Dielectric: ffDielectric}
	open, st, err := openedModel(m, bi)
	if err != nil {
		return 0, err
	}
	ring, err := forcefield.Search(ctx, m, opt)
	if err != nil {
		return 0, ffErr(ctx, "ring", err)
	}
	chainOpt := opt
	chainOpt.Stereo = &st
	// the opened model also starts from the ring's lowest conformer cut open in place, so that
	// substituents keep the shape they have in the ring and their energy cancels
	chainOpt.Start = openInPlace(ring.System.Mol, ring.Conformers[0].X, m, bi, st)
	chain, err := forcefield.Search(ctx, open, chainOpt)
	if err != nil {
		return 0, ffErr(ctx, "ring-opened model", err)
	}
	return (chain.Conformers[0].EnergyKcalMol - ring.Conformers[0].EnergyKcalMol) * kcalToKJ, nil
}

// openInPlace gives starting coordinates for the opened model of bond bi from a conformer x of
// the ring molecule (ringH, hydrogens explicit): every atom of the ring molecule keeps its place
// (hydrogens are appended in the same parent order in both), and each new =CH–CH3 end is placed
// outward from its olefin carbon, roughly E along the chain. Minimization does the rest.
func openInPlace(ringH *mol.Molecule, x []float64, m *mol.Molecule, bi int, st forcefield.Stereo) []float64 {
	n := len(m.Atoms) // heavy atoms of m come first in both molecules
	nH := len(ringH.Atoms) - n
	// opened model with hydrogens: m's atoms, 4 new carbons, m's hydrogens, then 1+3+1+3 new ones
	total := n + 4 + nH + 8
	out := make([]float64, 3*total)
	copy(out[:3*n], x[:3*n])
	copy(out[3*(n+4):3*(n+4+nH)], x[3*n:3*(n+nH)])
	pos := func(i int) [3]float64 { return [3]float64{x[3*i], x[3*i+1], x[3*i+2]} }
	set := func(i int, p [3]float64) { out[3*i], out[3*i+1], out[3*i+2] = p[0], p[1], p[2] }
	add := func(p, q [3]float64, s float64) [3]float64 {
		return [3]float64{p[0] + s*q[0], p[1] + s*q[1], p[2] + s*q[2]}
	}
	unit := func(p [3]float64) [3]float64 {
		l := math.Sqrt(p[0]*p[0] + p[1]*p[1] + p[2]*p[2])
		if l == 0 {
			return [3]float64{1, 0, 0}
		}
		return [3]float64{p[0] / l, p[1] / l, p[2] / l}
	}
	diff := func(p, q [3]float64) [3]float64 { return [3]float64{p[0] - q[0], p[1] - q[1], p[2] - q[2]} }
	a, b := m.Bonds[bi].A, m.Bonds[bi].B
	nextA, nextB, _ := forcefield.RingNeighbours(m, bi)
	h := n + 4 + nH // first new hydrogen
	for k, end := range [2][3]int{{a, b, nextA}, {b, a, nextB}} {
		c1, c2 := n+2*k, n+2*k+1
		u := unit(diff(pos(end[0]), pos(end[1])))
		w := unit(diff(pos(end[0]), pos(end[2])))
		p1 := add(pos(end[0]), u, 1.34)
		p2 := add(p1, unit(add(u, w, 1)), 1.50)
		set(c1, p1)
		set(c2, p2)
		set(h, add(p1, unit(diff(u, w)), 1.09))
		h++
		for _, d := range [3][3]float64{{1, 0.3, 0}, {-0.5, 0.9, 0.2}, {-0.5, -0.9, -0.2}} {
			set(h, add(p2, unit(add(d, u, 0.5)), 1.09))
			h++
		}
	}
	return out
}

func ffErr(ctx context.Context, what string, err error) error {
	if ctx.Err() != nil {
		return ctx.Err()
	}
	return fmt.Errorf("%s: %v: %w", what, err, ErrFFNotApplicable)
}

// openedModel builds the ring-opened (E,E)-diene of ring olefin bond bi and the stereo the force
// field must honour in it: m's own elements, and both new double bonds E along the chain.
func openedModel(m *mol.Molecule, bi int) (*mol.Molecule, forcefield.Stereo, error) {
	nextA, nextB, ok := forcefield.RingNeighbours(m, bi)
	if !ok {
		return nil, forcefield.Stereo{}, fmt.Errorf("bond %d is in no ring: %w", bi, ErrFFNotApplicable)
	}
	a, b := m.Bonds[bi].A, m.Bonds[bi].B
	out := &mol.Molecule{Atoms: append([]mol.Atom(nil), m.Atoms...)}
	for k, bd := range m.Bonds {
		if k != bi {
			out.Bonds = append(out.Bonds, bd)
		}
	}
	add := func(z, h int) int {
		out.Atoms = append(out.Atoms, mol.Atom{Z: z, HCount: h, Bracket: true})
		return len(out.Atoms) - 1
	}
	c1, c2 := add(6, 1), add(6, 3)
	c3, c4 := add(6, 1), add(6, 3)
	out.Bonds = append(out.Bonds,
		mol.Bond{A: a, B: c1, Order: mol.BondDouble}, mol.Bond{A: c1, B: c2, Order: mol.BondSingle},
		mol.Bond{A: b, B: c3, Order: mol.BondDouble}, mol.Bond{A: c3, B: c4, Order: mol.BondSingle})
	out.Index()
	st := forcefield.StereoFromGraph(forcefield.WithHydrogens(out))
	st.Olefins = append(st.Olefins,
		forcefield.OlefinGeometry{X: nextA, A: a, B: c1, Y: c2, Trans: true, Written: true},
		forcefield.OlefinGeometry{X: nextB, A: b, B: c3, Y: c4, Trans: true, Written: true})
	return out, st, nil
}

// mainComponent copies the atoms of the screened component (stereo kept) and maps bond bi.
func mainComponent(m *mol.Molecule, main []int, bi int) (*mol.Molecule, int, error) {
	if len(main) == len(m.Atoms) {
		return m, bi, nil
	}
	sub, idx := subMolecule(m, main, true)
	nb := sub.BondBetween(idx[m.Bonds[bi].A], idx[m.Bonds[bi].B])
	if nb < 0 {
		return nil, 0, fmt.Errorf("olefin outside the main component: %w", ErrFFNotApplicable)
	}
	return sub, nb, nil
}

// subMolecule copies the given atoms and the bonds among them; with keepStereo the chirality
// orders and bond marks are carried over (a centre that loses a neighbour loses its tag).
func subMolecule(m *mol.Molecule, atoms []int, keepStereo bool) (*mol.Molecule, map[int]int) {
	idx := make(map[int]int, len(atoms))
	sub := &mol.Molecule{}
	for _, a := range atoms {
		idx[a] = len(sub.Atoms)
		sub.Atoms = append(sub.Atoms, m.Atoms[a])
	}
	for _, b := range m.Bonds {
		x, okx := idx[b.A]
		y, oky := idx[b.B]
		if !okx || !oky {
			continue
		}
		nb := b
		nb.A, nb.B = x, y
		if keepStereo && b.Dir != 0 {
			nb.DirFrom = idx[b.DirFrom]
		} else {
			nb.Dir = 0
		}
		sub.Bonds = append(sub.Bonds, nb)
	}
	for i := range sub.Atoms {
		at := &sub.Atoms[i]
		if !keepStereo || at.Chiral == 0 {
			at.Chiral, at.NChiral = 0, 0
			continue
		}
		ok := at.NChiral == 4
		for k := 0; k < at.NChiral && k < 4; k++ {
			if at.ChiralOrder[k] == -1 {
				continue
			}
			if n, in := idx[at.ChiralOrder[k]]; in {
				at.ChiralOrder[k] = n
			} else {
				ok = false
			}
		}
		if !ok {
			at.Chiral, at.NChiral = 0, 0
		}
	}
	sub.Index()
	return sub, idx
}

// coreParent builds the parent of olefin o: the atoms of its core (its ring plus the rings
// bridged to it), every heteroatom made carbon, every substituent and fused ring removed, all
// hydrogens implicit and no stereo beyond the ring olefin's cis geometry. It returns the parent,
// its olefin bond and its name (the strain-table row when there is one, else its key).
func coreParent(s *describe.Structure, o *describe.Olefin) (*mol.Molecule, int, string, error) {
	p, pb, err := coreParentMolecule(s, o)
	if err != nil {
		return nil, 0, "", err
	}
	return p, pb, parentNameFor(p), nil
}

// parentNameFor is the table's name for the parent core p, else its structure key (computed
// only then).
func parentNameFor(p *mol.Molecule) string {
	if row, ok := Table().byKey[canon.SkeletonKey(p, rings.Perceive(p), seq(len(p.Atoms)), -1)]; ok {
		return row.Name
	}
	return structureKey(p)
}

// coreParentMolecule builds the all-carbon parent of o's core (see coreParent) and returns it
// with the olefin's bond in it.
func coreParentMolecule(s *describe.Structure, o *describe.Olefin) (*mol.Molecule, int, error) {
	m := s.Mol
	n := len(o.CoreAtoms)
	p := &mol.Molecule{Atoms: make([]mol.Atom, n), Bonds: make([]mol.Bond, 0, n+n/2+1)}
	idx := make([]int32, len(m.Atoms)) // local number + 1 of each core atom; 0: not in the core
	for i, a := range o.CoreAtoms {
		idx[a] = int32(i) + 1
		p.Atoms[i] = mol.Atom{Z: 6}
	}
	for bi, b := range m.Bonds {
		x, y := idx[b.A], idx[b.B]
		if x == 0 || y == 0 {
			continue
		}
		order := mol.BondSingle
		if bi == o.Bond || (b.Order == mol.BondDouble && !s.Rings.AromaticBond[bi]) {
			order = b.Order
		}
		p.Bonds = append(p.Bonds, mol.Bond{A: int(x - 1), B: int(y - 1), Order: order})
	}
	sortLocalBonds(p.Bonds) // the parent is cached by the core's written signature
	p.Index()
	p.AssignImplicitHydrogens()
	pb := -1
	if idx[o.A] > 0 && idx[o.B] > 0 {
		pb = p.BondBetween(int(idx[o.A]-1), int(idx[o.B]-1))
	}
	if pb < 0 {
		return nil, 0, fmt.Errorf("olefin not in its core: %w", ErrFFNotApplicable)
	}
	return p, pb, nil
}

// structureKey is the canonical constitution key of m, followed by its stereo as written when it
// has any (so that exo and endo isomers are cached apart).
func structureKey(m *mol.Molecule) string {
	k := canon.StructureKey(m, rings.Perceive(m), seq(len(m.Atoms)))
	var st []string
	for i, a := range m.Atoms {
		if a.Chiral != 0 {
			st = append(st, fmt.Sprintf("%d@%d%v", i, a.Chiral, a.ChiralOrder[:min(a.NChiral, 4)]))
		}
	}
	for i, b := range m.Bonds {
		if b.Dir != 0 {
			st = append(st, fmt.Sprintf("b%d%c%d", i, b.Dir, b.DirFrom))
		}
	}
	if len(st) == 0 {
		return k
	}
	return k + "|" + strings.Join(st, ",")
}

// writeSimple writes a hydrogen-implicit, stereo-free molecule as a SMILES-like key for reports.
func writeSimple(m *mol.Molecule) string {
	return canon.SkeletonKey(m, rings.Perceive(m), seq(len(m.Atoms)), -1)
}
