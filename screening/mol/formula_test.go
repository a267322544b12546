package mol_test

import (
	"strings"
	"testing"

	"ringsieve/screening/smiles"
)

// Hill order (common practice: carbon, then hydrogen, then the rest alphabetically; without
// carbon every element alphabetically, hydrogen included), with the charge appended.
func TestFormulaHillOrder(t *testing.T) {
	for _, c := range []struct{ smiles, want string }{
		{"C1CC=CC1", "C5H8"},
		{"O", "H2O"},
		{"N", "H3N"},
		{"Cl", "ClH"},
		{"[Na+].[Cl-]", "ClNa"},
		{"[NH4+]", "H4N+"},
		{"[O-]S(=O)(=O)[O-]", "O4S-2"},
		{"C[N+](C)(C)C", "C4H12N+"},
		{"BrC1=CC(Cl)=C(S)C(N)=C1O", "C6H5BrClNOS"},
		{"[2H]C([2H])=C", "C2H4"},
		{"C1=CC2CC1C2*", "C6H7*"},
		{"[Fe+2]", "Fe+2"},
		{"[Fe]", "Fe"},
		{"[He]", "He"},
		// counts of one, two and three digits (a C120 alkane: 2n+2 hydrogens, common practice)
		{strings.Repeat("C", 120), "C120H242"},
		// more distinct elements than the formula's first buffer holds
		{"[Li].[Be].[B].[Na].[Mg].[Al].[Si].[P].[S].[Cl].[K].[Ca].[Sc].[Ti].[V].[Cr].[Mn].[Fe].[Co].[Ni].[Cu].[Zn].C", "CH4AlBBeCaClCoCrCuFeKLiMgMnNaNiPSScSiTiVZn"},
	} {
		m, err := smiles.Parse(c.smiles)
		if err != nil {
			t.Fatalf("%s: %v", c.smiles, err)
		}
		if got := m.Formula(); got != c.want {
			t.Errorf("%s: formula %s, want %s", c.smiles, got, c.want)
		}
	}
}

// The formula over a list of atoms counts only those (a component of a salt).
func TestFormulaOfComponent(t *testing.T) {
	m, err := smiles.Parse("C1=CC2CC1C2C[N+](C)(C)C.[Br-]")
	if err != nil {
		t.Fatal(err)
	}
	if got := m.FormulaOf(m.Component(0)); got != "C10H18N+" {
		t.Errorf("cation %s", got)
	}
	if got := m.FormulaOf(m.Component(1)); got != "Br-" {
		t.Errorf("anion %s", got)
	}
}
