package thermo

import (
	"math"

	"ringsieve/screening/units"
)

// Jacobson–Stockmayer ring–chain equilibrium (Jacobson & Stockmayer, J. Chem. Phys. 1950, 18,
// 1600, DOI 10.1063/1.1747547), Gaussian chain statistics: the molar cyclization constant of the
// x-meric ring is K_x = B·x^(−5/2) with
//
//	B = (3/(2π·C·ν_b·⟨l²⟩))^(3/2) / (2·N_A)     (σ_x = 2x, repeat unit readable both ways),
//
// and the critical concentration (monomer units held in rings) is c_crit = B·Σ_{x ≥ x_min} x^(−3/2).
// These are model values, not measurements (romp_facts.md section c).

// zeta32 is ζ(3/2) = Σ_{x≥1} x^(−3/2).
const zeta32 = 2.612375348685488

// JSConstantMolL returns B in mol/L for skeletal bonds per repeat unit nuB, mean-square bond
// length l2 (Å²) and characteristic ratio c.
func JSConstantMolL(nuB, l2A2, c float64) float64 {
	l2 := l2A2 * 1e-20                                                      // m²
	b := math.Pow(3/(2*math.Pi*c*nuB*l2), 1.5) / (2 * units.AvogadroPerMol) // mol/m³
	return b / 1000
}

// JSCriticalConc returns c_crit = B·Σ_{x ≥ xMin} x^(−3/2) in mol/L of repeat units.
func JSCriticalConc(b float64, xMin int) float64 {
	sum := zeta32
	for x := 1; x < xMin; x++ {
		sum -= math.Pow(float64(x), -1.5)
	}
	return b * sum
}

// MeanSquareBondLength returns ⟨l²⟩ in Å² of a polyalkenamer repeat unit with nuB skeletal
// bonds: one C=C (1.34 Å), two =CH–CH2 (1.50 Å) and the rest CH2–CH2 (1.53 Å) (standard bond
// lengths, from memory; romp_facts.md section c).
func MeanSquareBondLength(nuB int) float64 {
	return (1.34*1.34 + 2*1.50*1.50 + float64(nuB-3)*1.53*1.53) / float64(nuB)
}

// CharacteristicRatio is the chain's characteristic ratio C for a polyalkenamer with nuB skeletal
// bonds per repeat unit (standard values, from memory, romp_facts.md section c): 4.9 for
// cis-1,4-polybutadiene and 5.8 for trans-1,4-polybutadiene (4 bonds), 5.0 for polypentenamer,
// 6.7 (the polyethylene limit) for longer units. transRich selects the trans value where there
// is one: ruthenium classes give trans-rich chains (common practice).
func CharacteristicRatio(nuB int, transRich bool) float64 {
	switch {
	case nuB == 4 && transRich:
		return 5.8
	case nuB == 4:
		return 4.9
	case nuB == 5:
		return 5.0
	}
	return 6.7
}

// Macrocycles: strain-free rings polymerize by the ring–chain equilibrium, driven by entropy.
// The monomer is the x = 1 ring of its own chain, so [M]eq = K_1 = B (Jacobson–Stockmayer, above)
// corrected by what little strain the ring keeps: [M]eq = B·exp(ΔH_p/RT), which is the Dainton–
// Ivin form with ΔS_p° = −R ln(B / 1 mol/L). The larger rings (x ≥ 2, strain-free) hold
// B·(ζ(3/2) − 1) more monomer units, so the critical concentration is
// c_crit = [M]eq + B·(ζ(3/2) − 1): below it no high polymer forms (a floor, not a ceiling).

// MacrocycleRingSize is the smallest ring treated as strain-free (design choice: the strain of
// cyclododecene and larger rings is within the uncertainty of the ring table).
const MacrocycleRingSize = 12

// RingChain is the ring–chain description of a macrocyclic monomer.
type RingChain struct {
	BMolL            float64 // Jacobson–Stockmayer constant B, mol/L
	CriticalConcMolL float64 // c_crit at the temperature given
	CharRatio        float64
}

// MacrocycleEntropy returns ΔS_p° = −R ln(B) (J/(mol K)) and B for a ring of ringSize atoms.
func MacrocycleEntropy(ringSize int, transRich bool) (ds float64, rc RingChain) {
	c := CharacteristicRatio(ringSize, transRich)
	b := JSConstantMolL(float64(ringSize), MeanSquareBondLength(ringSize), c)
	return -units.GasConstant * math.Log(b), RingChain{BMolL: b, CharRatio: c}
}

// MacrocycleCriticalConc returns c_crit (mol/L) at temperature t for a macrocycle with ΔH_p dh
// (kJ/mol) and constant b.
func MacrocycleCriticalConc(dh float64, b float64, t units.TempK) float64 {
	meq := b * math.Exp(dh*1000/(units.GasConstant*float64(t)))
	return meq + b*(zeta32-1)
}
