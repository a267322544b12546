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
	defer func() { useSystemCache = true }()
	want := make([]string, len(ms))
	useSystemCache = false
	var p Rings
	for i, m := range ms {
		PerceiveInto(&p, m)
		want[i] = exported(&p)
	}
	useSystemCache = true
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
