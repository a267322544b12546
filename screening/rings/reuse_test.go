package rings

import (
	"cmp"
	"fmt"
	"reflect"
	"slices"
	"testing"

	"ringsieve/screening/mol"
	"ringsieve/screening/smiles"
)

// reuseMolecules parses the RDKit reference structures (fused, bridged, spiro, aromatic,
// macrocyclic and acyclic ones).
func reuseMolecules(t *testing.T) []*mol.Molecule {
	var ms []*mol.Molecule
	for _, r := range loadRDKitRefs(t) {
		if m, err := smiles.Parse(r.SMILES); err == nil {
			ms = append(ms, m)
		}
	}
	if len(ms) < 2000 {
		t.Fatalf("only %d structures", len(ms))
	}
	return ms
}

// exported is what a caller sees of a perception.
func exported(p *Rings) string {
	return fmt.Sprint(p.BondRingSize, p.AtomRingSize, p.SSSR, p.AromaticAtom, p.AromaticBond)
}

// TestPerceiveIntoMatchesPerceive: one Rings reused from molecule to molecule (large after small,
// small after large) gives what a fresh perception gives every time.
func TestPerceiveIntoMatchesPerceive(t *testing.T) {
	ms := reuseMolecules(t)
	var p Rings
	for pass := 0; pass < 2; pass++ {
		for i := range ms {
			m := ms[i]
			if pass == 1 {
				m = ms[len(ms)-1-i]
			}
			PerceiveInto(&p, m)
			if got, want := exported(&p), exported(Perceive(m)); got != want {
				t.Fatalf("reused perception of molecule %d differs:\n%s\nfresh:\n%s", i, got, want)
			}
		}
	}
	if fresh := Perceive(ms[0]); fresh.ws != nil {
		t.Error("Perceive keeps its scratch")
	}
	if !reflect.DeepEqual(Perceive(ms[0]).SSSR, Perceive(ms[0]).SSSR) {
		t.Error("two perceptions of one molecule differ")
	}
}

// TestPerceiveIntoAllocatesNothing: perceiving one molecule after another into the same Rings
// allocates nothing once its storage has grown to the largest of them — except for molecules of
// more than 64 bonds (bond sets hashed in a map) and cycle spaces the per-bond rings do not span
// (the Horton-type search), neither of which a typical monomer has.
func TestPerceiveIntoAllocatesNothing(t *testing.T) {
	var typical []*mol.Molecule
	for _, m := range reuseMolecules(t) {
		if len(m.Bonds) <= 64 {
			typical = append(typical, m)
		}
	}
	var p Rings
	for _, m := range typical {
		PerceiveInto(&p, m)
	}
	allocs := testing.AllocsPerRun(2, func() {
		for _, m := range typical {
			PerceiveInto(&p, m)
		}
	})
	t.Logf("%.0f allocations over %d perceptions", allocs, len(typical))
	if allocs > float64(len(typical))/100 {
		t.Errorf("%.0f allocations over %d perceptions into a reused Rings", allocs, len(typical))
	}
}

// FuzzPerceiveInto: perceiving a structure into a Rings that last held another gives what a
// fresh perception gives (no state carried over), for any pair of SMILES that parse.
func FuzzPerceiveInto(f *testing.F) {
	f.Add("C1=CC2CCC1C2", "c1ccc2ccccc2c1")
	f.Add("C1CC2CC1C1CCCC21", "C1=CCCC1")
	f.Add("C12C3C4C1C5C2C3C45", "C1CCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCC1")
	f.Add("c1cc2ccc3cccc4ccc(c1)c2c34", "[nH]1cccc1")
	f.Fuzz(func(t *testing.T, first, second string) {
		a, err := smiles.Parse(first)
		if err != nil || len(a.Atoms) > 300 {
			return
		}
		b, err := smiles.Parse(second)
		if err != nil || len(b.Atoms) > 300 {
			return
		}
		var p Rings
		PerceiveInto(&p, a)
		PerceiveInto(&p, b)
		if got, want := exported(&p), exported(Perceive(b)); got != want {
			t.Fatalf("%s after %s:\n%s\nfresh:\n%s", second, first, got, want)
		}
	})
}

// TestHortonCandidatesCompleteTheBasis: two cage graphs whose shortest rings through each bond
// do not span the cycle space, so the Horton-type search runs (found by trying cages); the rings
// it adds complete an independent set of cyclomatic-number size (bonds − atoms + components,
// common practice), freshly and into a reused Rings alike.
func TestHortonCandidatesCompleteTheBasis(t *testing.T) {
	var p Rings
	other, err := smiles.Parse("C1=CC2CCC1C2")
	if err != nil {
		t.Fatal(err)
	}
	for _, s := range []string{"C12C3C4C5C1C6C2C7C3C8C4C5C678", "C12C3C4C5C6C1C7C2C3C4C5C67"} {
		m, err := smiles.Parse(s)
		if err != nil {
			t.Fatal(err)
		}
		PerceiveInto(&p, other) // something else first
		PerceiveInto(&p, m)
		fresh := Perceive(m)
		if exported(&p) != exported(fresh) {
			t.Errorf("%s: reused and fresh perceptions differ", s)
		}
		if len(fresh.SSSR) != m.Cyclomatic() {
			t.Fatalf("%s: %d rings, cyclomatic number %d", s, len(fresh.SSSR), m.Cyclomatic())
		}
		// independence over GF(2): Gaussian elimination on the rings' bond sets
		var rows []uint64
		for _, r := range fresh.SSSR {
			var v uint64
			for _, b := range r.Bonds {
				v ^= 1 << uint(b)
			}
			for _, row := range rows {
				if v^row < v {
					v ^= row
				}
			}
			if v == 0 {
				t.Fatalf("%s: ring %v depends on the others", s, r.Atoms)
			}
			rows = append(rows, v)
			slices.SortFunc(rows, func(a, b uint64) int { return cmp.Compare(b, a) })
		}
	}
}
