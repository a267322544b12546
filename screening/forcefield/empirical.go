package forcefield

import (
	"math"
	"ringsieve/screening/mol"
	"strconv"
)

func itoa(i int) string { return strconv.Itoa(i) }

// Empirical rules for parameters missing from the tables (Halgren, J. Comput. Chem. 1996, 17,
// 490, "empirical rules"; 616, for the extended parameterization).

// covalent radii (Å) and electronegativities (Pauling scale) of the bond-length rule, by
// atomic number (from the MMFF94 empirical-rule table, from memory).
var covRad = map[int][2]float64{
	1: {0.33, 2.20}, 6: {0.77, 2.50}, 7: {0.73, 3.07}, 8: {0.72, 3.50}, 9: {0.74, 4.12},
	14: {1.15, 1.74}, 15: {1.09, 2.06}, 16: {1.03, 2.44}, 17: {0.99, 2.83}, 35: {1.14, 2.74}, 53: {1.33, 2.21},
}

// empiricalBond estimates r0 by the Schomaker–Stevenson form r0 = r_I + r_J − c|χ_I − χ_J|^1.4
// (c = 0.085 Å, 0.050 Å with hydrogen; MMFF V, Halgren, J. Comput. Chem. 1996, 17, 616,
// eq. 18, applied without the bond-order and hybridization corrections, as the MMFF94
// validation suite requires) and kb by Badger's rule kb = kb_ref (r0_ref/r0)⁶ from the
// reference bond of the two elements in mmffbndk.par (eq. 19).
func (b *builder) empiricalBond(i, j, bt int) (kb, r0 float64, err error) {
	zi, zj := b.m.Atoms[i].Z, b.m.Atoms[j].Z
	ri, okI := covRad[zi]
	rj, okJ := covRad[zj]
	if !okI || !okJ {
		return 0, 0, &ParamError{Msg: "no bond-stretch parameter or empirical rule for elements " + itoa(zi) + "–" + itoa(zj)}
	}
	c := 0.085
	if zi == 1 || zj == 1 {
		c = 0.050
	}
	r0 = ri[0] + rj[0] - c*math.Pow(math.Abs(ri[1]-rj[1]), 1.4)
	ref, ok := b.p.bndk[[2]int{min(zi, zj), max(zi, zj)}]
	if !ok {
		return 0, 0, &ParamError{Msg: "no reference bond for elements " + itoa(zi) + "–" + itoa(zj)}
	}
	kb = ref.kb * math.Pow(ref.r0/r0, 6)
	return kb, r0, nil
}

// angle-rule element parameters Z and C (from memory of the MMFF94 empirical-rule table)
var angleZ = map[int]float64{1: 1.395, 6: 2.494, 7: 2.711, 8: 3.045, 9: 2.847, 14: 2.350, 15: 2.350, 16: 2.980, 17: 2.909, 35: 3.017, 53: 3.086}
var angleC = map[int]float64{6: 1.016, 7: 1.113, 8: 1.337, 14: 0.811, 15: 1.068, 16: 1.249, 17: 1.078, 33: 0.825}

// empiricalAngle estimates ka = β Z_I C_J Z_K / ((r0_IJ + r0_JK) θ0² e^{2D}) with D = (r0_IJ −
// r0_JK)²/(r0_IJ + r0_JK)² and β = 1.75 (× 0.85 in a four-membered ring, × 0.05 in a
// three-membered one), θ0 in radians.
func (b *builder) empiricalAngle(i, j, k, at int, theta0 float64) (ka, th0 float64, err error) {
	zi, zj, zk := b.m.Atoms[i].Z, b.m.Atoms[j].Z, b.m.Atoms[k].Z
	Zi, ok1 := angleZ[zi]
	Cj, ok2 := angleC[zj]
	Zk, ok3 := angleZ[zk]
	if !ok1 || !ok2 || !ok3 || theta0 == 0 {
		return 0, 0, &ParamError{Msg: "no angle-bend parameter for atom types " + itoa(b.s.Types[i]) + "-" + itoa(b.s.Types[j]) + "-" + itoa(b.s.Types[k])}
	}
	_, rij, err := b.bondParams(i, j, b.bondType(i, j))
	if err != nil {
		return 0, 0, err
	}
	_, rjk, err := b.bondParams(j, k, b.bondType(j, k))
	if err != nil {
		return 0, 0, err
	}
	beta := 1.75
	switch at {
	case 4, 7, 8:
		beta *= 0.85
	case 3, 5, 6:
		beta *= 0.05
	}
	d := (rij - rjk) * (rij - rjk) / ((rij + rjk) * (rij + rjk))
	t := theta0 * math.Pi / 180
	ka = beta * Zi * Cj * Zk / ((rij + rjk) * t * t * math.Exp(2*d))
	return ka, theta0, nil
}

// torsionElement holds the empirical-rule torsion constants U, V and W of an element (MMFF V,
// Halgren, J. Comput. Chem. 1996, 17, 616, the torsion rules); elements not listed have zeros.
var torsionElement = map[int][3]float64{
	6: {2.0, 2.12, 0}, 7: {2.0, 1.5, 0}, 8: {2.0, 0.2, 2.0},
	14: {1.25, 1.22, 0}, 15: {1.25, 2.40, 0}, 16: {1.25, 0.49, 8.0},
}

// empiricalTorsion estimates V1, V2, V3 for a torsion about the bond J–K missing from the tables
// by MMFF's empirical rules (MMFF V, Halgren, J. Comput. Chem. 1996, 17, 616, rules a–h), which
// depend only on the two central atoms: no barrier about a linear centre; a twofold barrier
// β π √(U_J U_K) about aromatic and double bonds and about single bonds between conjugated
// centres; a threefold barrier √(V_J V_K)/N_JK (N_JK = (crd_J − 1)(crd_K − 1)) about saturated
// centres; and −√(W_J W_K) twofold between divalent oxygen and sulfur.
func (b *builder) empiricalTorsion(j, k int) torParam {
	pj, pk := b.p.prop[b.s.Types[j]], b.p.prop[b.s.Types[k]]
	zj, zk := b.m.Atoms[j].Z, b.m.Atoms[k].Z
	ej, ek := torsionElement[zj], torsionElement[zk]
	u := math.Sqrt(ej[0] * ek[0])
	v3 := math.Sqrt(ej[1]*ek[1]) / float64((pj.crd-1)*(pk.crd-1))
	order := b.m.Bonds[b.m.BondBetween(j, k)].Order
	arom := b.aromBond(j, k)
	// conjugation-blocked: a three-connected centre of valence 4 or 34 or with multiple bonds, or a
	// two-connected one of valence 3 or with multiple bonds, next to a saturated one
	blocked := func(p typeProp) bool {
		return (p.crd == 3 && (p.val == 4 || p.val == 34 || p.mltb != 0)) || (p.crd == 2 && (p.val == 3 || p.mltb != 0))
	}
	// π of a lone-pair centre J next to a multiply bonded centre K
	piLonePair := func(mltbLP int) float64 {
		switch {
		case mltbLP == 1:
			return 0.5
		case periodRow(zj) == 2 && periodRow(zk) == 2:
			return 0.3
		}
		return 0.15
	}
	switch {
	case pj.lin || pk.lin: // (a)
		return torParam{}
	case pj.arom && pk.arom && arom: // (b)
		beta, pi := 6.0, 0.3
		if (pj.val == 3 && pk.val == 4) || (pj.val == 4 && pk.val == 3) {
			beta = 3
		}
		if pj.pilp == 0 && pk.pilp == 0 {
			pi = 0.5
		}
		return torParam{v2: beta * pi * u}
	case order == mol.BondDouble && !arom: // (c)
		pi := 0.4
		if pj.mltb == 2 && pk.mltb == 2 {
			pi = 1
		}
		return torParam{v2: 6 * pi * u}
	case pj.crd == 4 && pk.crd == 4: // (d)
		return torParam{v3: v3}
	case pj.crd == 4: // (e)
		if blocked(pk) {
			return torParam{}
		}
		return torParam{v3: v3}
	case pk.crd == 4: // (f)
		if blocked(pj) {
			return torParam{}
		}
		return torParam{v3: v3}
	case (order == mol.BondSingle && !arom && pj.mltb != 0 && pk.mltb != 0) ||
		(pj.mltb != 0 && pk.pilp != 0) || (pj.pilp != 0 && pk.mltb != 0): // (g)
		switch {
		case pj.pilp != 0 && pk.pilp != 0:
			return torParam{}
		case pj.pilp != 0 && pk.mltb != 0:
			return torParam{v2: 6 * piLonePair(pj.mltb) * u}
		case pk.pilp != 0 && pj.mltb != 0:
			return torParam{v2: 6 * piLonePair(pk.mltb) * u}
		case (pj.mltb == 1 || pk.mltb == 1) && (zj != 6 || zk != 6):
			return torParam{v2: 6 * 0.4 * u}
		}
		return torParam{v2: 6 * 0.15 * u}
	case (zj == 8 || zj == 16) && (zk == 8 || zk == 16): // (h)
		return torParam{v2: -math.Sqrt(ej[2] * ek[2])}
	}
	return torParam{v3: v3}
}
