// Package reftest reads the committed reference files of testdata/ for the tests of every
// package (published check values with their sources, and the RDKit-generated references).
package reftest

import (
	"encoding/csv"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// Root returns the repository root (the folder holding go.mod), found upward from the test's
// working directory.
func Root(t testing.TB) string {
	t.Helper()
	dir, err := os.Getwd()
	if err != nil {
		t.Fatal(err)
	}
	for {
		if _, err := os.Stat(filepath.Join(dir, "go.mod")); err == nil {
			return dir
		}
		parent := filepath.Dir(dir)
		if parent == dir {
			t.Fatal("go.mod not found above the test's folder")
		}
		dir = parent
	}
}

// Path returns the path of a file under the repository's testdata folder.
func Path(t testing.TB, rel string) string { return filepath.Join(Root(t), "testdata", rel) }

// ReadFile reads a file under testdata.
func ReadFile(t testing.TB, rel string) []byte {
	t.Helper()
	b, err := os.ReadFile(Path(t, rel))
	if err != nil {
		t.Fatal(err)
	}
	return b
}

// CSV reads a file of testdata/reference as CSV records (header included).
func CSV(t testing.TB, name string) [][]string {
	t.Helper()
	f, err := os.Open(Path(t, "reference/"+name))
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

// ThermoRow is one row of romp_thermo.csv.
type ThermoRow struct {
	ID, Monomer, SMILES, Quantity string
	Value                         float64
	Unit, Conditions, Source      string
	Evidence, Note                string
}

// Thermo reads romp_thermo.csv by row id.
func Thermo(t testing.TB) map[string]ThermoRow {
	t.Helper()
	recs := CSV(t, "romp_thermo.csv")
	out := map[string]ThermoRow{}
	for _, r := range recs[1:] {
		v, err := strconv.ParseFloat(r[4], 64)
		if err != nil {
			t.Fatalf("%s: %v", r[0], err)
		}
		out[r[0]] = ThermoRow{ID: r[0], Monomer: r[1], SMILES: r[2], Quantity: r[3], Value: v, Unit: r[5], Conditions: r[6], Source: r[7], Evidence: r[8], Note: r[9]}
	}
	return out
}

// Near fails the test when got is farther than tol from want.
func Near(t testing.TB, what string, got, want, tol float64) {
	t.Helper()
	if !(got-want <= tol && want-got <= tol) {
		t.Errorf("%s = %.6g, want %.6g ± %.3g", what, got, want, tol)
	}
}

// MassTolerance: average masses: RDKit's element table predates the IUPAC 2021 abridged values ringsieve uses
// (e.g. S 32.067 vs 32.06, Cl 35.453 vs 35.45, B 10.812 vs 10.81, Si 28.086 vs 28.085), so the
// tolerance allows 0.008 g/mol per atom of those elements plus rounding.
func MassTolerance(formula string) float64 {
	tol := 0.002
	for _, el := range []string{"S", "Cl", "B", "Si", "Br", "P", "Na", "K", "I"} {
		n := CountElement(formula, el)
		tol += 0.008 * float64(n)
	}
	return tol
}

// CountElement returns how many atoms of element el a Hill formula holds (a trailing charge such
// as "+" or "-2" is ignored).
func CountElement(formula, el string) int {
	total := 0
	for _, m := range formulaTerm.FindAllStringSubmatch(formula, -1) {
		if m[1] != el {
			continue
		}
		n := 1
		if m[2] != "" {
			n, _ = strconv.Atoi(m[2])
		}
		total += n
	}
	return total
}

var formulaTerm = regexp.MustCompile(`([A-Z][a-z]?)([0-9]*)`)

// CorpusEntry is one line of the committed corpus of generated candidate monomers.
type CorpusEntry struct{ SMILES, ID string }

// Corpus reads testdata/corpus/candidates.smi (SMILES and id per line; blank lines and
// comments skipped).
func Corpus(t testing.TB) []CorpusEntry {
	t.Helper()
	var out []CorpusEntry
	for _, l := range strings.Split(string(ReadFile(t, "corpus/candidates.smi")), "\n") {
		f := strings.Fields(l)
		if len(f) == 0 || strings.HasPrefix(f[0], "#") {
			continue
		}
		e := CorpusEntry{SMILES: f[0]}
		if len(f) > 1 {
			e.ID = f[1]
		}
		out = append(out, e)
	}
	return out
}
