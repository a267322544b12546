package molfile

import (
	"strings"
	"testing"

	"ringsieve/screening/mol"
	"ringsieve/screening/smiles"
)

// TestWriteRoundTrip writes molecules (charges, isotopes, aromatic rings, explicit hydrogens)
// and reads them back: same formula, charges, isotopes and bonds.
func TestWriteRoundTrip(t *testing.T) {
	for _, smi := range []string{
		"C1=CC2CCC1C2", "c1ccccc1C(=O)[O-].[Na+]", "[13CH3]C[N+](C)(C)C", "O=C1C=CC(=O)O1",
		"[2H]C([2H])([2H])Cl", "c1cc[nH]c1", "N#CC1C2C=CC(O2)C1C#N", "[O-][N+](=O)c1ccccc1",
	} {
		m, err := smiles.Parse(smi)
		if err != nil {
			t.Fatal(err)
		}
		coords := make([]float64, 3*len(m.Atoms))
		for i := range coords {
			coords[i] = float64(i) * 0.37
		}
		var b strings.Builder
		if err := Write(&b, m, Written{Title: "round trip\nline", Coords: coords, ThreeD: true}); err != nil {
			t.Fatal(err)
		}
		r, err := ParseRecord(b.String())
		if err != nil {
			t.Fatalf("%s: %v\n%s", smi, err, b.String())
		}
		if r.Name != "round trip line" {
			t.Errorf("%s: title %q", smi, r.Name)
		}
		if got, want := r.Mol.Formula(), m.Formula(); got != want {
			t.Errorf("%s: formula %s, want %s\n%s", smi, got, want, b.String())
		}
		if len(r.Mol.Bonds) != len(m.Bonds) {
			t.Errorf("%s: %d bonds, want %d", smi, len(r.Mol.Bonds), len(m.Bonds))
		}
		for i, a := range m.Atoms {
			ra := r.Mol.Atoms[i]
			if ra.Charge != a.Charge || ra.Isotope != a.Isotope || ra.Z != a.Z {
				t.Errorf("%s: atom %d read back as Z%d %+d iso %d", smi, i, ra.Z, ra.Charge, ra.Isotope)
			}
			for k := 0; k < 3; k++ {
				if d := r.Coords[i][k] - coords[3*i+k]; d > 1e-4 || d < -1e-4 {
					t.Errorf("%s: coordinate %d.%d %.4f, want %.4f", smi, i, k, r.Coords[i][k], coords[3*i+k])
				}
			}
		}
		for bi, bd := range m.Bonds {
			if rb := r.Mol.Bonds[bi]; rb.A != bd.A || rb.B != bd.B || rb.Order != bd.Order {
				t.Errorf("%s: bond %d read back as %d-%d order %d", smi, bi, rb.A, rb.B, rb.Order)
			}
		}
	}
	big := &mol.Molecule{Atoms: make([]mol.Atom, 1000)}
	if err := Write(&strings.Builder{}, big, Written{}); err == nil {
		t.Error("1000 atoms written without an error")
	}
}
