package screening

import (
	"bytes"
	"encoding/csv"
	"os"
	"strconv"
	"testing"
)

// refRow is one row of romp_thermo.csv.
type refRow struct {
	ID, Monomer, SMILES, Quantity string
	Value                         float64
	Unit, Conditions, Source      string
	Evidence, Note                string
}

// readReferenceCSV reads a file of testdata/reference as CSV records (header included).
func readReferenceCSV(t testing.TB, name string) [][]string {
	t.Helper()
	f, err := os.Open("../testdata/reference/" + name)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	return recs
}

func loadThermoRef(t testing.TB) map[string]refRow {
	recs := readReferenceCSV(t, "romp_thermo.csv")
	out := map[string]refRow{}
	for _, r := range recs[1:] {
		v, err := strconv.ParseFloat(r[4], 64)
		if err != nil {
			t.Fatalf("%s: %v", r[0], err)
		}
		out[r[0]] = refRow{ID: r[0], Monomer: r[1], SMILES: r[2], Quantity: r[3], Value: v, Unit: r[5], Conditions: r[6], Source: r[7], Evidence: r[8], Note: r[9]}
	}
	return out
}

// TestReferenceCopyIsCurrent keeps testdata/reference in step with the shared reference set when
// it sits beside the repository (as in CI).
func TestReferenceCopyIsCurrent(t *testing.T) {
	for _, name := range []string{"romp_thermo.csv", "romp_outcomes.csv", "romp_facts.md"} {
		shared, err := os.ReadFile("../../shared/reference/" + name)
		if err != nil {
			t.Skipf("shared reference set not beside the repository (%v); using the committed copy", err)
		}
		local, err := os.ReadFile("../testdata/reference/" + name)
		if err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(shared, local) {
			t.Errorf("testdata/reference/%s differs from ../shared/reference/%s: copy the shared file", name, name)
		}
	}
}
