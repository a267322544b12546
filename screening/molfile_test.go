package screening

import (
	"math"
	"os"
	"strconv"
	"strings"
	"testing"
)

// TestSDFAgainstRDKit reads testdata/reference/rdkit_structures.sdf, written by RDKit (Debian
// python3-rdkit) with testdata/gen/gen_sdf.py from our own generated structures (half in Kekulé
// form, half with aromatic bond type 4), and compares formula and masses with the RDKit values
// stored in each record's data fields; ids come from the <ID> data field.
func TestSDFAgainstRDKit(t *testing.T) {
	f, err := os.Open("../testdata/reference/rdkit_structures.sdf")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	in, err := ReadInput(f, FormatSDF, "ID", 0)
	if err != nil {
		t.Fatal(err)
	}
	if len(in.Errors) > 0 {
		t.Fatalf("unreadable records: %v", in.Errors)
	}
	if len(in.Items) < 200 {
		t.Fatalf("%d records", len(in.Items))
	}
	// the data fields are not kept on items: read them again from the file
	b, _ := os.ReadFile("../testdata/reference/rdkit_structures.sdf")
	records := strings.Split(string(b), "$$$$")
	for i, it := range in.Items {
		rec := records[i]
		get := func(name string) string {
			k := strings.Index(rec, "<"+name+">")
			if k < 0 {
				t.Fatalf("record %d lacks <%s>", i, name)
			}
			lines := strings.SplitN(rec[k:], "\n", 3) // header line, value line, rest
			return strings.TrimSpace(lines[1])
		}
		if it.ID != get("ID") || !strings.HasPrefix(it.ID, "S") {
			t.Fatalf("record %d: id %q, want %q", i, it.ID, get("ID"))
		}
		m, _, err := ParseMolfile(it.Molfile)
		if err != nil {
			t.Errorf("%s: %v", it.ID, err)
			continue
		}
		formula := get("FORMULA")
		if got := m.Formula(); got != formula {
			t.Errorf("%s (%s): formula %s, RDKit %s", it.ID, get("SMILES"), got, formula)
		}
		mw, _ := strconv.ParseFloat(get("MW"), 64)
		if got := m.MolWeight(); math.Abs(got-mw) > massTolerance(formula) {
			t.Errorf("%s: average mass %.4f, RDKit %.4f", it.ID, got, mw)
		}
		em, _ := strconv.ParseFloat(get("EXACT_MASS"), 64)
		if got := m.MonoisotopicMass(); math.Abs(got-em) > 2e-4 {
			t.Errorf("%s: monoisotopic mass %.6f, RDKit %.6f", it.ID, got, em)
		}
	}
}

func TestMolfileErrorsByLine(t *testing.T) {
	cases := []struct {
		text string
		line int
	}{
		{"x\n\n\n  2  1  0  0  0  0  0  0  0  0999 V2000\n    0.0 0.0 0.0 C\n", 6},
		{"x\n\n\n  1  0  0  0  0  0  0  0  0  0999 V2000\n    0.0000    0.0000    0.0000 Xx  0  0\nM  END\n", 5},
		{"x\n\n\n  2  1  0  0  0  0  0  0  0  0999 V2000\n    0.0000    0.0000    0.0000 C   0  0\n    0.0000    0.0000    0.0000 C   0  0\n  1  3  1  0\nM  END\n", 7},
		{"x\n\n\n  0  0  0  0  0  0  0  0  0  0999 V3000\nM  END\n", 4},
	}
	for _, c := range cases {
		_, _, err := ParseMolfile(c.text)
		me, ok := err.(*MolfileError)
		if !ok || me.Line != c.line {
			t.Errorf("%q: %v, want line %d", c.text, err, c.line)
		}
	}
}
