package thermo

import (
	"os"
	"strings"
	"testing"

	"ringsieve/screening/canon"
	"ringsieve/screening/describe"
	"ringsieve/screening/rings"
	"ringsieve/screening/smiles"
)

// TestConstitutionKeyInPlace: the constitution key computed on the screened component in place
// (the structure's own numbering and ring perception, other components present) equals the key
// of that component taken out as a molecule of its own and perceived again — over every fifth
// structure of the corpus, every measured structure, and salts, mixtures, isotopes and stereo.
func TestConstitutionKeyInPlace(t *testing.T) {
	raw, err := os.ReadFile("../../testdata/corpus/candidates.smi")
	if err != nil {
		t.Fatal(err)
	}
	var list []string
	for i, l := range strings.Split(string(raw), "\n") {
		if f := strings.Fields(l); i%5 == 0 && len(f) >= 1 && !strings.HasPrefix(f[0], "#") {
			list = append(list, f[0])
		}
	}
	for _, r := range measuredData().rows {
		list = append(list, r.SMILES)
	}
	list = append(list, "[Na+].[O-]C(=O)C1CC2C=CC1C2", "CCO.C1=CC2CC1C=C2", "[2H]C1=CC2CCC1C2",
		"C[N+](C)(C)CC1CC2C=CC1C2.[Cl-]", "F/C=C/C1CC2C=CC1C2", "O=C1C=CC(=O)N1c1ccccc1", "C1=CC[C@H]2C[C@@H]12")
	n := 0
	for _, smi := range list {
		m, err := smiles.Parse(smi)
		if err != nil {
			t.Fatalf("%s: %v", smi, err)
		}
		s, err := describe.DescribeMolecule(m, smi)
		if err != nil {
			continue // not a candidate (no ring olefin): no key is asked for
		}
		n++
		sub, _ := subMolecule(s.Mol, s.Main, false)
		if got, want := ConstitutionKey(s), canon.StructureKey(sub, rings.Perceive(sub), seq(len(sub.Atoms))); got != want {
			t.Errorf("%s: key in place %s, taken out %s", smi, got, want)
		}
	}
	if n < 2000 {
		t.Fatalf("only %d structures compared", n)
	}
}
