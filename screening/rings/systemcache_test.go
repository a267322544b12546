package rings

import (
	"testing"

	"ringsieve/screening/internal/reftest"
	"ringsieve/screening/mol"
	"ringsieve/screening/smiles"
)

// TestSystemCacheMatchesSearch: perception that reads its ring systems' searches from the cache
// gives what it gives searching every time, over the reference structures (fused, bridged,
// spiro, aromatic and macrocyclic ones) and the benchmark corpus, each seen first (the cache
// filled) and again (read back), in both orders.
func TestSystemCacheMatchesSearch(t *testing.T) {
	ms := reuseMolecules(t)
	for _, e := range reftest.Corpus(t) {
		if m, err := smiles.Parse(e.SMILES); err == nil {
			ms = append(ms, m)
		}
	}
	systemCache.Reset()
	want := make([]string, len(ms))
	var p Rings
	for i, m := range ms {
		perceiveInto(&p, m, false)
		want[i] = exported(&p)
	}
	hits := 0
	for pass := 0; pass < 2; pass++ {
		for k := range ms {
			i := k
			if pass == 1 {
				i = len(ms) - 1 - k
			}
			PerceiveInto(&p, ms[i])
			if got := exported(&p); got != want[i] {
				t.Fatalf("pass %d, molecule %d: perception with the cache differs:\n%s\nsearching:\n%s", pass, i, got, want[i])
			}
			if pass == 1 {
				hits += countCached(&p, ms[i])
			}
		}
	}
	if hits == 0 {
		t.Fatal("no bond read its search from the cache")
	}
}

// countCached counts the bonds of m whose search the last perception into p read from the cache.
func countCached(p *Rings, m *mol.Molecule) int {
	n := 0
	for bi := range m.Bonds {
		if p.ws.searched[bi].sys != nil {
			n++
		}
	}
	return n
}

// FuzzSystemCacheMatchesSearch: for any structure that parses, perception reading its ring
// systems from the cache (filled by the first perception, read by the second) gives what
// searching gives.
func FuzzSystemCacheMatchesSearch(f *testing.F) {
	f.Add("C1=CC2CCC1C2")
	f.Add("O=C1OC(=O)C2C3C=CC(C3)C12")
	f.Add("C12C3C4C1C5C2C3C45")
	f.Add("C1CC2(CC1)CCC1(CC2)CC1")
	f.Add("c1cc2ccc3cccc4ccc(c1)c2c34")
	f.Fuzz(func(t *testing.T, s string) {
		m, err := smiles.Parse(s)
		if err != nil || len(m.Atoms) > 300 {
			return
		}
		var want, got Rings
		perceiveInto(&want, m, false)
		perceiveInto(&got, m, true)
		perceiveInto(&got, m, true)
		if exported(&got) != exported(&want) {
			t.Fatalf("%s: with the cache\n%s\nsearching:\n%s", s, exported(&got), exported(&want))
		}
	})
}

// TestSystemCacheKeepsBondDirection: a bond's search runs from its first atom to its second, so
// a system whose bond is written the other way round (as a molfile may list it) is a system of
// its own in the cache, not the same one read back with its path reversed.
func TestSystemCacheKeepsBondDirection(t *testing.T) {
	for _, s := range []string{"C1=CC2CCC1C2", "C1CC2CC1C1CCCC21", "O=C1OC(=O)C2C3C=CC(C3)C12", "C12C3C4C1C5C2C3C45"} {
		m, err := smiles.Parse(s)
		if err != nil {
			t.Fatal(err)
		}
		var p Rings
		perceiveInto(&p, m, true) // the system as written, cached
		for bi := range m.Bonds {
			if p.BondRingSize[bi] == 0 {
				continue
			}
			r, _ := smiles.Parse(s)
			r.Bonds[bi].A, r.Bonds[bi].B = r.Bonds[bi].B, r.Bonds[bi].A
			r.Index()
			var want, got Rings
			perceiveInto(&want, r, false)
			perceiveInto(&got, r, true)
			if exported(&got) != exported(&want) {
				t.Fatalf("%s with bond %d reversed: with the cache\n%s\nsearching:\n%s", s, bi, exported(&got), exported(&want))
			}
		}
	}
}
