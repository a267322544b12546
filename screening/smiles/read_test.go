package smiles

import "testing"

func TestOpenSMILESExamples(t *testing.T) {
	cases := []struct {
		smiles, formula, section string
	}{
		{"[CH4]", "CH4", "atoms: bracket atom with hydrogen count (methane)"},
		{"C", "CH4", "atoms: organic subset, implicit hydrogens (methane)"},
		{"[NH4+]", "H4N+", "atoms: charge (ammonium)"},
		{"[OH-]", "HO-", "atoms: charge (hydroxide)"},
		{"[Cu+2]", "Cu+2", "atoms: charge with a number"},
		{"[Cu++]", "Cu+2", "atoms: repeated charge signs (deprecated form)"},
		{"[13CH4]", "CH4", "atoms: isotope (carbon-13 methane)"},
		{"[2H+]", "H+", "atoms: isotope (deuteron)"},
		{"[238U]", "U", "atoms: isotope on a bare element"},
		{"[CH3:1]C", "C2H6", "atoms: atom class"},
		{"*", "*", "atoms: wildcard"},
		{"[Na+].[Cl-]", "ClNa", "disconnected structures: sodium chloride"},
		{"CC", "C2H6", "bonds: implicit single bond (ethane)"},
		{"C=C", "C2H4", "bonds: double bond (ethene)"},
		{"C#N", "CHN", "bonds: triple bond (hydrogen cyanide)"},
		{"[Rh-](Cl)(Cl)(Cl)(Cl)$[Rh-](Cl)(Cl)(Cl)Cl", "Cl8Rh2-2", "bonds: quadruple bond"},
		{"CC(C)C(=O)O", "C4H8O2", "branches: isobutyric acid"},
		{"FC(Br)(Cl)F", "CBrClF2", "branches: several branches on one atom"},
		{"C1CCCCC1", "C6H12", "rings: cyclohexane"},
		{"C%12CCCCC%12", "C6H12", "rings: two-digit ring closure"},
		{"C=1CCCCC1", "C6H10", "rings: bond symbol at the ring opening (cyclohexene)"},
		{"C1CCCCC=1", "C6H10", "rings: bond symbol at the ring closure (cyclohexene)"},
		{"C1.C1", "C2H6", "rings: ring bond across a dot (ethane)"},
		{"c1ccccc1", "C6H6", "aromaticity: benzene"},
		{"c1ccc2ccccc2c1", "C10H8", "aromaticity: naphthalene"},
		{"c1cc[nH]c1", "C4H5N", "aromaticity: pyrrole"},
		{"c1ccncc1", "C5H5N", "aromaticity: pyridine"},
		{"o1cccc1", "C4H4O", "aromaticity: furan"},
		{"F/C=C/F", "C2H2F2", "stereochemistry: trans double bond"},
		{"F/C=C\\F", "C2H2F2", "stereochemistry: cis double bond"},
		{"N[C@@H](C)C(=O)O", "C3H7NO2", "stereochemistry: tetrahedral centre (L-alanine)"},
		{"[C@TH1](F)(Cl)(Br)I", "CBrClFI", "stereochemistry: explicit tetrahedral class"},
		{"[Fe@OH1](F)(Cl)(Br)(I)(N)O", "BrClFFeH3INO", "stereochemistry: octahedral class (read, not used)"},
	}
	for _, c := range cases {
		m, err := Parse(c.smiles)
		if err != nil {
			t.Errorf("%s (%s): %v", c.smiles, c.section, err)
			continue
		}
		if got := m.Formula(); got != c.formula {
			t.Errorf("%s (%s): formula %s, want %s", c.smiles, c.section, got, c.formula)
		}
	}
}
