package describe

import (
	"math"
	"strings"
	"unsafe"

	"ringsieve/screening/internal/memo"
	"ringsieve/screening/mol"
	"ringsieve/screening/units"
)

// MoleculeDescriptors returns the descriptors of the screened component as a whole: SMILES,
// formula, masses (rounded as reported), heavy atoms, rings, aromatic atoms and counter-ions.
func (s *Structure) MoleculeDescriptors() Descriptors {
	return s.MoleculeDescriptorsIn(nil)
}

// MoleculeDescriptorsIn is MoleculeDescriptors with the formulas written into *text (their
// strings share its bytes, which are never written again while the descriptors are read: a full
// buffer moves to a new array) rather than looked up in the shared formula cache — for a caller
// that reuses *text once it is done with the descriptors (a streaming worker). nil: the cache.
func (s *Structure) MoleculeDescriptorsIn(text *[]byte) Descriptors {
	m := s.Mol
	arom := 0
	for _, a := range s.Main {
		if s.Rings.AromaticAtom[a] {
			arom++
		}
	}
	heavy := 0
	for _, a := range s.Main {
		if m.Atoms[a].Z != 1 {
			heavy++
		}
	}
	nr := 0
	if m.NumComponents() == 1 {
		nr = len(s.Rings.SSSR)
	} else {
		in := make([]bool, len(m.Atoms))
		for _, a := range s.Main {
			in[a] = true
		}
		for _, r := range s.Rings.SSSR {
			if in[r.Atoms[0]] {
				nr++
			}
		}
	}
	formula, weight := formulaIn(text, m, s.Main), m.MolWeightOf(s.Main)
	recordFormula, recordWeight := formula, weight
	if len(s.Main) != len(m.Atoms) { // counter-ions or other components: the record differs
		recordFormula, recordWeight = formulaIn(text, m, nil), m.MolWeight()
	}
	return Descriptors{
		FromStructure:       true,
		SMILES:              s.MainSMILES,
		Formula:             formula,
		MolWeightGmol:       Round(weight, 3),
		MonoisotopicMass:    Round(m.MonoMassOf(s.Main), 5),
		HeavyAtoms:          heavy,
		RingCount:           nr,
		AromaticAtoms:       arom,
		CounterIons:         s.CounterIons,
		RecordFormula:       recordFormula,
		RecordMolWeightGmol: Round(recordWeight, 3),
	}
}

// MergeMolecule copies the whole-molecule descriptors of b into d.
func (d *Descriptors) MergeMolecule(b *Descriptors) {
	d.SMILES, d.Formula, d.MolWeightGmol, d.MonoisotopicMass = b.SMILES, b.Formula, b.MolWeightGmol, b.MonoisotopicMass
	d.HeavyAtoms, d.RingCount, d.AromaticAtoms, d.CounterIons = b.HeavyAtoms, b.RingCount, b.AromaticAtoms, b.CounterIons
	d.RecordFormula, d.RecordMolWeightGmol = b.RecordFormula, b.RecordMolWeightGmol
}

var pow10 = [...]float64{1, 10, 100, 1e3, 1e4, 1e5, 1e6}

// Round rounds x to digits decimals (0 to 6).
func Round(x float64, digits int) float64 {
	p := pow10[digits]
	return math.Round(x*p) / p
}

// WhyNoOlefin explains, for a structure without a ring olefin, what it has instead (": its C=C
// bonds are acyclic ..."), or "" when there is nothing to say.
func (s *Structure) WhyNoOlefin() string {
	m, p := s.Mol, s.Rings
	acyclicCC, alkyne, ringAny, arom := false, false, false, false
	for bi, b := range m.Bonds {
		if m.Atoms[b.A].Z == 6 && m.Atoms[b.B].Z == 6 {
			if b.Order == mol.BondDouble && !p.AromaticBond[bi] && p.BondRingSize[bi] == 0 {
				acyclicCC = true
			}
			if b.Order == mol.BondTriple {
				alkyne = true
			}
		}
		if p.BondRingSize[bi] > 0 {
			ringAny = true
		}
		if p.AromaticBond[bi] {
			arom = true
		}
	}
	var parts []string
	if acyclicCC {
		parts = append(parts, "its C=C bonds are acyclic (acyclic diene metathesis or ring-closing metathesis, not ring opening)")
	}
	if alkyne {
		parts = append(parts, "it has a C≡C (alkyne metathesis or polymerization, not ring-opening olefin metathesis)")
	}
	if arom {
		parts = append(parts, "its rings are aromatic")
	} else if ringAny {
		parts = append(parts, "its rings are saturated")
	}
	if len(parts) == 0 {
		return ""
	}
	return ": " + strings.Join(parts, "; ")
}

// McGowan characteristic volumes, cm³/mol per atom, less 6.56 per bond (Abraham & McGowan,
// Chromatographia 1987, 23, 243; atom values from memory).
var mcgowan = map[int]float64{1: 8.71, 6: 16.35, 7: 14.39, 8: 12.43, 9: 10.48, 14: 26.83, 15: 24.87, 16: 22.91, 17: 20.95, 35: 26.21, 53: 34.53, 5: 18.32}

// Liquid molar volume ≈ LiquidVolumeFactor × McGowan volume. The factor 1.25 (±0.10) is the
// ratio for cyclopentene (1.34), cis-cyclooctene (1.20) and dicyclopentadiene (1.22), computed
// from liquid densities 0.771, 0.846 and 0.98 g/mL (from memory).
const (
	LiquidVolumeFactor = 1.25
	liquidVolumeRelUnc = 0.08
)

// BulkConcentration estimates the neat-liquid concentration (mol/L) of the screened component
// from its McGowan volume and returns it with its relative uncertainty. ok is false when an
// element has no McGowan value.
func (s *Structure) BulkConcentration() (conc units.ConcMolL, relUnc float64, ok bool) {
	m := s.Mol
	in := map[int]bool{}
	for _, a := range s.Main {
		in[a] = true
	}
	v := 0.0
	bonds := 0
	for _, a := range s.Main {
		x, found := mcgowan[m.Atoms[a].Z]
		if !found {
			return 0, 0, false
		}
		v += x + float64(m.Atoms[a].HCount)*mcgowan[1]
		bonds += m.Atoms[a].HCount
	}
	for _, b := range m.Bonds {
		if in[b.A] {
			bonds++
		}
	}
	v -= 6.56 * float64(bonds)
	if v <= 0 {
		return 0, 0, false
	}
	molarVolume := LiquidVolumeFactor * v // mL/mol
	return units.ConcMolL(1000 / molarVolume), liquidVolumeRelUnc, true
}

// formulas holds the formula texts handed out, so that every structure with one formula shares
// its string (design choice: 65,536 formulas, then the cache starts afresh).
var formulas = memo.New[string](1 << 16)

// formulaOf is m.FormulaOf(atoms) as a shared string: a formula seen before costs no
// allocation.
func formulaOf(m *mol.Molecule, atoms []int) string {
	var stack [64]byte
	return formulas.DoBytes(m.AppendFormulaOf(stack[:0], atoms), func(k string) string { return k })
}

// formulaIn is m.FormulaOf(atoms) written into *text (see MoleculeDescriptorsIn), or formulaOf
// when text is nil.
func formulaIn(text *[]byte, m *mol.Molecule, atoms []int) string {
	if text == nil {
		return formulaOf(m, atoms)
	}
	from := len(*text)
	*text = m.AppendFormulaOf(*text, atoms)
	if len(*text) == from {
		return ""
	}
	return unsafe.String(&(*text)[from], len(*text)-from)
}
