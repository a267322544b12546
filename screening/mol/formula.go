package mol

import (
	"sort"
	"strconv"
)

// Formula returns the molecular formula in Hill order (C, H, then alphabetical; alphabetical
// throughout when there is no carbon) with the net charge appended as +, -, +2, ... Explicit
// hydrogen atoms and isotopes count as their element.
func (m *Molecule) Formula() string { return m.FormulaOf(nil) }

// FormulaOf is Formula over the atoms listed (nil: all).
func (m *Molecule) FormulaOf(atoms []int) string {
	return string(m.AppendFormulaOf(make([]byte, 0, 32), atoms))
}

// AppendFormulaOf appends FormulaOf(atoms) to sb and returns the extended slice (a caller that
// looks the formula up builds it on its stack).
func (m *Molecule) AppendFormulaOf(sb []byte, atoms []int) []byte {
	var counts [NumElements + 1]int32 // index 0: wildcard atoms
	var zs [16]uint8                  // the elements present other than C and H, in order of first sight
	present := zs[:0]
	charge := 0
	count := func(a *Atom) {
		if a.Z >= 0 && a.Z <= NumElements {
			if counts[a.Z] == 0 && a.Z > 1 && a.Z != 6 {
				present = append(present, uint8(a.Z))
			}
			counts[a.Z]++
		}
		counts[1] += int32(a.HCount)
		charge += a.Charge
	}
	if atoms == nil {
		for i := range m.Atoms {
			count(&m.Atoms[i])
		}
	} else {
		for _, i := range atoms {
			count(&m.Atoms[i])
		}
	}
	// Hill order: C and H first when there is carbon, else H among the others alphabetically
	if counts[6] == 0 && counts[1] > 0 {
		present = append(present, 1)
	}
	// alphabetical by symbol: an insertion sort (a formula has a handful of elements)
	for i := 1; i < len(present); i++ {
		for j := i; j > 0 && alphabeticalRank[present[j]] < alphabeticalRank[present[j-1]]; j-- {
			present[j], present[j-1] = present[j-1], present[j]
		}
	}
	write := func(sym string, n int32) {
		switch {
		case n == 0:
			return
		case n == 1:
			sb = append(sb, sym...)
		case n < 100: // the common counts, written in place
			sb = append(sb, sym...)
			if n >= 10 {
				sb = append(sb, byte('0'+n/10))
			}
			sb = append(sb, byte('0'+n%10))
		default:
			sb = append(sb, sym...)
			sb = strconv.AppendInt(sb, int64(n), 10)
		}
	}
	if counts[6] > 0 {
		write("C", counts[6])
		write("H", counts[1])
	}
	for _, z := range present {
		write(elements[z-1].Symbol, counts[z])
	}
	write("*", counts[0])
	switch {
	case charge == 1:
		sb = append(sb, '+')
	case charge == -1:
		sb = append(sb, '-')
	case charge > 1:
		sb = append(sb, '+')
		sb = strconv.AppendInt(sb, int64(charge), 10)
	case charge < -1:
		sb = strconv.AppendInt(sb, int64(charge), 10)
	}
	return sb
}

// alphabeticalRank is each atomic number's place in the alphabetical order of the element
// symbols (Hill order after carbon and hydrogen).
var alphabeticalRank = func() [NumElements + 1]uint8 {
	z := make([]int, len(elements))
	for i := range z {
		z[i] = i + 1
	}
	sort.Slice(z, func(a, b int) bool { return elements[z[a]-1].Symbol < elements[z[b]-1].Symbol })
	var rank [NumElements + 1]uint8
	for i, x := range z {
		rank[x] = uint8(i)
	}
	return rank
}()

// MolWeight returns the average molar mass in g/mol (IUPAC 2021 standard atomic weights; an
// isotope label uses that isotope's mass).
func (m *Molecule) MolWeight() float64 { return m.MolWeightOf(nil) }

// MolWeightOf is MolWeight over the atoms listed (nil: all).
func (m *Molecule) MolWeightOf(atoms []int) float64 {
	h := ElementByZ(1).WeightG
	w := 0.0
	m.eachAtom(atoms, func(a *Atom) { w += AtomMass(a.Z, a.Isotope) + float64(a.HCount)*h })
	return w
}

// eachAtom calls fn for the atoms listed, or for every atom when atoms is nil.
func (m *Molecule) eachAtom(atoms []int, fn func(*Atom)) {
	if atoms == nil {
		for i := range m.Atoms {
			fn(&m.Atoms[i])
		}
		return
	}
	for _, i := range atoms {
		fn(&m.Atoms[i])
	}
}

// ElectronMassU is the electron mass in u (CODATA 2018).
const ElectronMassU = 5.48579909065e-4

// MonoisotopicMass returns the mass in u of the molecule built from the most abundant isotope of
// each element (labelled atoms keep their isotope); an ion's mass is corrected by the mass of the
// electrons it lacks or carries.
func (m *Molecule) MonoisotopicMass() float64 { return m.MonoMassOf(nil) }

// MonoMassOf is MonoisotopicMass over the atoms listed (nil: all).
func (m *Molecule) MonoMassOf(atoms []int) float64 {
	h := ElementByZ(1).MonoMass
	w := 0.0
	charge := 0
	m.eachAtom(atoms, func(a *Atom) {
		w += AtomMonoMass(a.Z, a.Isotope) + float64(a.HCount)*h
		charge += a.Charge
	})
	return w - float64(charge)*ElectronMassU
}
