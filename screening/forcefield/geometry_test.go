package forcefield

import (
	"context"
	"math"
	"testing"

	"ringsieve/screening/smiles"
)

// TestGeometryAgainstExperiment minimizes small molecules with MMFF94 (the lowest conformer of
// a search) and compares bond lengths, angles and ring puckering with gas-phase experimental
// structures. MMFF94 was fitted to reproduce such structures to about 0.01–0.02 Å and 1–2°;
// the tolerances are 0.025 Å and 2.5° (design choices). Experimental values are vibrationally averaged (r_z, r_g) or equilibrium (r_e)
// structures as their sources state; the differences between those are under 0.01 Å.
func TestGeometryAgainstExperiment(t *testing.T) {
	type check struct {
		what  string
		atoms []int // 2: distance, 3: angle
		want  float64
		src   string
	}
	cases := []struct {
		smiles string
		checks []check
	}{
		{"C=C", []check{
			{"C=C", []int{0, 1}, 1.335, "r_z, J. Chem. Phys. 1966, 44, 906, doi:10.1063/1.1726840"},
			{"C–C–H", []int{1, 0, 2}, 121.7, "J. Chem. Phys. 1966, 44, 906, doi:10.1063/1.1726840"},
		}},
		{"C=CCl", []check{
			{"C=C", []int{0, 1}, 1.3262, "r_e, J. Mol. Spectrosc. 2005, 232, 174"},
			{"C–Cl", []int{1, 2}, 1.7263, "r_e, J. Mol. Spectrosc. 2005, 232, 174"},
			{"C=C–Cl", []int{0, 1, 2}, 122.77, "r_e, J. Mol. Spectrosc. 2005, 232, 174"},
		}},
		{"C#CC#C", []check{
			{"C≡C", []int{0, 1}, 1.2085, "r_e, J. Mol. Spectrosc. 2008, 251, 220"},
			// the central C–C (1.3727 Å, same source) has no MMFF94 parameter; the empirical rule
			// gives 1.54 Å, a limitation of the force field listed in the README
		}},
		{"C1CCC1", []check{
			{"C–C", []int{0, 1}, 1.555, "Structure of Free Polyatomic Molecules – Basic Data (Springer, 1998), as listed by NIST CCCBDB"},
			// puckering: MMFF94 36°, experiment 27.5° (J. Chem. Phys. 1987, 86, 6018); listed in the
			// README as a limitation of the force field, not checked here
		}},
		// norbornane C1CC2CCC1C2: bridgeheads 2 and 5, one-carbon bridge 6
		{"C1CC2CCC1C2", []check{
			{"C1–C7–C4", []int{2, 6, 5}, 93.4, "gas electron diffraction, J. Am. Chem. Soc. 1983, 105, 158"},
			{"C7–C1–C2", []int{6, 2, 1}, 102.0, "J. Am. Chem. Soc. 1983, 105, 158"},
			{"C2–C1–C6", []int{1, 2, 3}, 109.0, "J. Am. Chem. Soc. 1983, 105, 158"},
			{"C1–C7", []int{2, 6}, 1.546, "r_g, J. Am. Chem. Soc. 1983, 105, 158 (±0.024)"},
		}},
	}
	for _, c := range cases {
		m, err := smiles.Parse(c.smiles)
		if err != nil {
			t.Fatal(err)
		}
		res, err := Search(context.Background(), m, SearchOptions{Seed: 3})
		if err != nil {
			t.Fatalf("%s: %v", c.smiles, err)
		}
		x := res.Conformers[0].X
		for _, ch := range c.checks {
			a := ch.atoms
			var got, tol float64
			switch len(a) {
			case 2:
				got, tol = norm(sub(at(x, a[0]), at(x, a[1]))), 0.025
			case 3:
				u, v := sub(at(x, a[0]), at(x, a[1])), sub(at(x, a[2]), at(x, a[1]))
				got, tol = math.Acos(dot(u, v)/(norm(u)*norm(v)))*radToDeg, 2.5
			}
			if math.Abs(got-ch.want) > tol {
				t.Errorf("%s %s: MMFF94 %.3f, experiment %.3f (%s)", c.smiles, ch.what, got, ch.want, ch.src)
			} else {
				t.Logf("%s %s: MMFF94 %.3f, experiment %.3f", c.smiles, ch.what, got, ch.want)
			}
		}
	}
}
