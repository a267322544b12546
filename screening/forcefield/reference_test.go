package forcefield

import (
	"bufio"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"sort"
	"strings"
	"testing"

	"ringsieve/screening/internal/reftest"
	"ringsieve/screening/molfile"
)

// mmffRef is one line of testdata/reference/rdkit_mmff.jsonl (testdata/gen/gen_mmff.py, RDKit
// from Debian python3-rdkit): the outside check of typing, charges and energies.
type mmffRef struct {
	ID       string             `json:"id"`
	SMILES   string             `json:"smiles"`
	Molblock string             `json:"molblock"`
	Types    []int              `json:"types"`
	Charges  []float64          `json:"charges"`
	MMFF94   map[string]float64 `json:"mmff94"`
	MMFF94s  map[string]float64 `json:"mmff94s"`
}

func loadMMFFRefs(t testing.TB) []mmffRef {
	f, err := os.Open(reftest.Path(t, "reference/rdkit_mmff.jsonl"))
	if err != nil {
		t.Fatalf("reference file missing (regenerate with testdata/gen/gen_mmff.py): %v", err)
	}
	defer f.Close()
	var out []mmffRef
	sc := bufio.NewScanner(f)
	sc.Buffer(make([]byte, 1<<20), 1<<22)
	first := true
	for sc.Scan() {
		if first {
			first = false
			continue
		}
		var r mmffRef
		if err := json.Unmarshal(sc.Bytes(), &r); err != nil {
			t.Fatal(err)
		}
		out = append(out, r)
	}
	return out
}

var termNames = []string{"bond", "angle", "stretch_bend", "out_of_plane", "torsion", "van_der_waals", "electrostatic"}

func termsMap(t Terms) map[string]float64 {
	return map[string]float64{"bond": t.Bond, "angle": t.Angle, "stretch_bend": t.StretchBend, "out_of_plane": t.OutOfPlane,
		"torsion": t.Torsion, "van_der_waals": t.VanDerWaals, "electrostatic": t.Electrostatic, "total": t.Total()}
}

// energyAgrees is the tolerance: 0.01 kcal/mol or 1e-4 relative.
func energyAgrees(got, want float64) bool {
	return math.Abs(got-want) <= math.Max(0.01, 1e-4*math.Abs(want))
}

// TestAgainstRDKitMMFF compares atom types (≥ 99.5 % of atoms identical), and each of the seven
// terms and the total of MMFF94 and MMFF94s at the reference geometry (≥ 99 % of structures
// within 0.01 kcal/mol or 1e-4 relative), with the RDKit reference set; the rest is listed.
func TestAgainstRDKitMMFF(t *testing.T) {
	refs := loadMMFFRefs(t)
	if len(refs) < 1000 {
		t.Fatalf("%d reference structures; the check needs at least 1000", len(refs))
	}
	atoms, typeOK := 0, 0
	structOK := map[Variant]int{}
	var typeMiss, energyMiss []string
	missByTerm := map[string]int{}
	for _, r := range refs {
		rec, err := molfile.ParseRecord(r.Molblock)
		if err != nil {
			energyMiss = append(energyMiss, fmt.Sprintf("%s %s: read: %v", r.ID, r.SMILES, err))
			continue
		}
		x := make([]float64, 0, 3*len(rec.Coords))
		for _, c := range rec.Coords {
			x = append(x, c[0], c[1], c[2])
		}
		for _, v := range []Variant{MMFF94, MMFF94s} {
			s, err := Setup(rec.Mol, v)
			if err != nil {
				energyMiss = append(energyMiss, fmt.Sprintf("%s %s (%s): %v", r.ID, r.SMILES, v, err))
				continue
			}
			if v == MMFF94 {
				var bad []string
				for a, ty := range s.Types {
					atoms++
					if a < len(r.Types) && ty == r.Types[a] {
						typeOK++
					} else if a < len(r.Types) {
						bad = append(bad, fmt.Sprintf("%s%d:%d≠%d", symbol(s, a), a, ty, r.Types[a]))
					}
				}
				if len(bad) > 0 {
					typeMiss = append(typeMiss, fmt.Sprintf("%s %s: %s", r.ID, r.SMILES, strings.Join(bad, " ")))
				}
			}
			want := r.MMFF94
			if v == MMFF94s {
				want = r.MMFF94s
			}
			got := termsMap(s.Terms(x))
			ok := true
			var diffs []string
			for _, name := range append(termNames, "total") {
				if !energyAgrees(got[name], want[name]) {
					ok = false
					missByTerm[name]++
					diffs = append(diffs, fmt.Sprintf("%s %.4f≠%.4f", name, got[name], want[name]))
				}
			}
			if ok {
				structOK[v]++
			} else {
				energyMiss = append(energyMiss, fmt.Sprintf("%s %s (%s): %s", r.ID, r.SMILES, v, strings.Join(diffs, ", ")))
			}
		}
	}
	typeShare := float64(typeOK) / float64(atoms)
	t.Logf("atom types: %d of %d atoms identical (%.3f%%)", typeOK, atoms, 100*typeShare)
	for _, v := range []Variant{MMFF94, MMFF94s} {
		t.Logf("%s: %d of %d structures agree in every term and the total", v, structOK[v], len(refs))
	}
	var keys []string
	for k := range missByTerm {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		t.Logf("term %s off in %d structure evaluations", k, missByTerm[k])
	}
	show := func(what string, xs []string) {
		if len(xs) == 0 {
			return
		}
		n := min(len(xs), 60)
		t.Logf("%s (%d):\n%s", what, len(xs), strings.Join(xs[:n], "\n"))
	}
	show("type disagreements", typeMiss)
	show("energy disagreements", energyMiss)
	if typeShare < 0.995 {
		t.Errorf("atom types agree for %.3f%% of atoms, want ≥ 99.5%%", 100*typeShare)
	}
	for _, v := range []Variant{MMFF94, MMFF94s} {
		if share := float64(structOK[v]) / float64(len(refs)); share < 0.99 {
			t.Errorf("%s energies agree for %.2f%% of structures, want ≥ 99%%", v, 100*share)
		}
	}
}

func symbol(s *System, a int) string {
	switch s.Mol.Atoms[a].Z {
	case 1:
		return "H"
	case 6:
		return "C"
	case 7:
		return "N"
	case 8:
		return "O"
	case 16:
		return "S"
	case 15:
		return "P"
	}
	return fmt.Sprint(s.Mol.Atoms[a].Z, ":")
}
