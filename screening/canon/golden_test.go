package canon_test

import (
	"bytes"
	"flag"
	"fmt"
	"os"
	"strings"
	"testing"

	"ringsieve/screening/canon"
	"ringsieve/screening/internal/reftest"
	"ringsieve/screening/rings"
)

var update = flag.Bool("update", false, "rewrite testdata/golden/canon_keys.txt")

// TestKeysGolden pins the canonical keys: for every fifth structure of the committed corpus
// (testdata/corpus/candidates.smi), the whole molecule's skeleton key, structure key and
// canonical order, and the skeleton key of each ring system with and without each of its
// double bonds. The keys are compared with the ring table's and stored in results, so a faster
// canonicalization must write the same strings (design choice: golden file,
// testdata/golden/canon_keys.txt; go test ./screening/canon -run KeysGolden -update rewrites it).
func TestKeysGolden(t *testing.T) {
	var out bytes.Buffer
	for n, e := range reftest.Corpus(t) {
		if n%5 != 0 {
			continue
		}
		s := e.SMILES
		m, r, all := perceived(t, s)
		order, class := canon.Order(m, r, all)
		fmt.Fprintf(&out, "%s\t%s\t%s\t%v\t%v\n", s, canon.SkeletonKey(m, r, all, -1), canon.StructureKey(m, r, all), order, class)
		_, systems := rings.Systems(r.SSSR)
		for _, sys := range systems {
			atoms := rings.Atoms(r.SSSR, sys)
			fmt.Fprintf(&out, "\tsystem\t%s\n", canon.SkeletonKey(m, r, atoms, -1))
			for bi, b := range m.Bonds {
				if b.Order == 2 && r.BondRingSize[bi] > 0 && contains(atoms, b.A) && contains(atoms, b.B) {
					fmt.Fprintf(&out, "\topen %d\t%s\n", bi, canon.SkeletonKey(m, r, atoms, bi))
				}
			}
		}
	}
	path := reftest.Path(t, "golden/canon_keys.txt")
	if *update {
		if err := os.WriteFile(path, out.Bytes(), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(want, out.Bytes()) {
		w, g := strings.Split(string(want), "\n"), strings.Split(out.String(), "\n")
		for i := 0; i < min(len(w), len(g)); i++ {
			if w[i] != g[i] {
				t.Fatalf("line %d:\nwant %s\ngot  %s", i+1, w[i], g[i])
			}
		}
		t.Fatalf("%d lines, want %d", len(g), len(w))
	}
}

func contains(xs []int, x int) bool {
	for _, v := range xs {
		if v == x {
			return true
		}
	}
	return false
}
