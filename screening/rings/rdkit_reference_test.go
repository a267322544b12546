package rings

import (
	"bufio"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"strings"
	"testing"

	"ringsieve/screening/internal/reftest"
	"ringsieve/screening/smiles"
)

// rdkitRef is one line of testdata/reference/rdkit_reference.jsonl, written by
// testdata/gen/gen_structures.py with the general-purpose toolkit RDKit (Debian python3-rdkit);
// it is the outside check of ringsieve's structure facts.
type rdkitRef struct {
	SMILES        string         `json:"smiles"`
	Formula       string         `json:"formula"`
	MolWeight     float64        `json:"mol_weight"`
	Monoisotopic  float64        `json:"monoisotopic_mass"`
	Rings         int            `json:"rings"` // RDKit's symmetrized ring count
	SSSR          int            `json:"sssr"`
	Cyclomatic    int            `json:"cyclomatic"`
	AromaticAtoms int            `json:"aromatic_atoms"`
	Atoms         int            `json:"atoms"`
	BondRingSize  map[string]int `json:"bond_ring_size"`
}

func loadRDKitRefs(t testing.TB) []rdkitRef {
	f, err := os.Open(reftest.Path(t, "reference/rdkit_reference.jsonl"))
	if err != nil {
		t.Fatalf("reference file missing (regenerate with testdata/gen/gen_structures.py): %v", err)
	}
	defer f.Close()
	var out []rdkitRef
	sc := bufio.NewScanner(f)
	sc.Buffer(make([]byte, 1<<20), 1<<20)
	first := true
	for sc.Scan() {
		if first {
			first = false // header line: generator and RDKit version
			continue
		}
		var r rdkitRef
		if err := json.Unmarshal(sc.Bytes(), &r); err != nil {
			t.Fatal(err)
		}
		out = append(out, r)
	}
	return out
}

func TestAgainstRDKitReference(t *testing.T) {
	refs := loadRDKitRefs(t)
	if len(refs) < 2000 {
		t.Fatalf("only %d reference structures; the check needs at least 2000", len(refs))
	}
	var fails []string
	bonds, symm := 0, 0
	for _, r := range refs {
		m, err := smiles.Parse(r.SMILES)
		if err != nil {
			fails = append(fails, fmt.Sprintf("%s: parse: %v", r.SMILES, err))
			continue
		}
		p := Perceive(m)
		if got := m.Formula(); got != r.Formula {
			fails = append(fails, fmt.Sprintf("%s: formula %s, RDKit %s", r.SMILES, got, r.Formula))
		}
		if got := m.MolWeight(); math.Abs(got-r.MolWeight) > reftest.MassTolerance(r.Formula) {
			fails = append(fails, fmt.Sprintf("%s: average mass %.5f, RDKit %.5f", r.SMILES, got, r.MolWeight))
		}
		if got := m.MonoisotopicMass(); math.Abs(got-r.Monoisotopic) > 2e-4 {
			fails = append(fails, fmt.Sprintf("%s: monoisotopic mass %.6f, RDKit %.6f", r.SMILES, got, r.Monoisotopic))
		}
		// ringsieve's SSSR has as many rings as RDKit's molecule has independent cycles
		// (bonds - atoms + fragments). RDKit's own ring counts add symmetry-equivalent rings in
		// some bridged systems (e.g. both five-membered rings of a bicyclo[2.1.1]hexene), so
		// they are counted here, not compared.
		if got := len(p.SSSR); got != r.Cyclomatic {
			fails = append(fails, fmt.Sprintf("%s: %d rings, RDKit cycle rank %d", r.SMILES, got, r.Cyclomatic))
		}
		if r.Rings != r.Cyclomatic || r.SSSR != r.Cyclomatic {
			symm++
		}
		arom := 0
		for _, a := range p.AromaticAtom {
			if a {
				arom++
			}
		}
		if arom != r.AromaticAtoms {
			fails = append(fails, fmt.Sprintf("%s: %d aromatic atoms, RDKit %d", r.SMILES, arom, r.AromaticAtoms))
		}
		for bi, b := range m.Bonds {
			i, j := b.A, b.B
			if i > j {
				i, j = j, i
			}
			want, ok := r.BondRingSize[fmt.Sprintf("%d-%d", i, j)]
			if !ok {
				fails = append(fails, fmt.Sprintf("%s: bond %d-%d not in the RDKit molecule", r.SMILES, i, j))
				continue
			}
			bonds++
			if p.BondRingSize[bi] != want {
				fails = append(fails, fmt.Sprintf("%s: bond %d-%d smallest ring %d, RDKit %d", r.SMILES, i, j, p.BondRingSize[bi], want))
			}
		}
	}
	t.Logf("compared %d structures and %d bonds with RDKit (%d structures where RDKit's ring count exceeds the cycle rank)", len(refs), bonds, symm)
	if len(fails) > 0 {
		n := len(fails)
		if n > 40 {
			fails = fails[:40]
		}
		t.Errorf("%d disagreements with RDKit:\n%s", n, strings.Join(fails, "\n"))
	}
}
