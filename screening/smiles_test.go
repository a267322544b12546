package screening

import (
	"errors"
	"testing"
)

// Examples from the OpenSMILES specification (opensmiles.org), grouped by the specification's
// sections on atoms, bonds, branches, rings, disconnected structures, aromaticity and
// stereochemistry (section titles from memory). Expected formulas are the molecules the
// specification names for each example.
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
		m, err := ParseSMILES(c.smiles)
		if err != nil {
			t.Errorf("%s (%s): %v", c.smiles, c.section, err)
			continue
		}
		if got := m.Formula(); got != c.formula {
			t.Errorf("%s (%s): formula %s, want %s", c.smiles, c.section, got, c.formula)
		}
	}
}

// TestDoubleBondGeometry checks '/' '\' reading on ring olefins (common practice: C1=C\CCCCCC/1
// is cis-cyclooctene, C1=C/CCCCCC/1 trans; romp_thermo.csv rows T050/T051 use these SMILES).
func TestDoubleBondGeometry(t *testing.T) {
	cases := []struct {
		smiles string
		trans  bool
	}{
		{`C1=C\CCCCCC/1`, false},
		{`C1=C/CCCCCC/1`, true},
		{`C/1=C/CCCCCC1`, false},
		{`C\1=C/CCCCCC1`, true},
		{`CCCC/C1=C\CCCCCC1`, true}, // R043 trans-1-butylcyclooctene (Farrell & Beers, ACS Macro Lett. 2017)
		{`C/C1=C/CCCCCC1`, false},   // R044 cis-1-methylcyclooctene (from memory in the reference)
		{`C1=CCCCCCC1`, false},      // unspecified: read as cis
	}
	for _, c := range cases {
		s, err := Describe(c.smiles)
		if err != nil {
			t.Fatal(err)
		}
		if got := s.Olefins[0].D.TransOlefin; got != c.trans {
			t.Errorf("%s: trans = %v, want %v", c.smiles, got, c.trans)
		}
	}
}

func TestSMILESErrorPositions(t *testing.T) {
	cases := []struct {
		smiles string
		pos    int
	}{
		{"", 0},
		{"C1CC", 1},
		{"C(C", 1},
		{"CC)", 2},
		{"C==C", 2},
		{"[Xx]", 1},
		{"C1CCCC2", 1}, // the first ring bond left open
		{"c1cccc1", 0},
		{"C(C)(C)(C)(C)C", 0},
		{"C%1", 1},
		{"(C)", 0},
		{"C.", 2},
		{"C-", 1},
		{"[C", 0},
		{"C]", 1},
		{"C()C", 2},
		{"C1CC1C1", 6},
		{"C=1CCCCC#1", 9},
		{"[CH4+20]", 7},
		{"Cé", 1},
		{"OO=O", 1}, // the oxygen with three bonds
	}
	for _, c := range cases {
		_, err := Describe(c.smiles)
		var se *SMILESError
		if !errors.As(err, &se) {
			t.Errorf("%q: error %v, want a SMILES error", c.smiles, err)
			continue
		}
		if !errors.Is(err, ErrSMILES) {
			t.Errorf("%q: error does not match ErrSMILES", c.smiles)
		}
		if se.Pos != c.pos {
			t.Errorf("%q: position %d (%s), want %d", c.smiles, se.Pos, se.Msg, c.pos)
		}
	}
}

func TestElementTableOrder(t *testing.T) {
	for i, e := range elements {
		if e.Z != i+1 {
			t.Fatalf("elements[%d] is %s with Z %d", i, e.Symbol, e.Z)
		}
	}
}
