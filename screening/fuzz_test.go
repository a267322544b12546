package screening_test

import (
	"encoding/json"
	"errors"
	"testing"

	. "ringsieve/screening"
)

// FuzzScreenSMILES: any input string either screens or fails with a SMILES error carrying a
// position inside (or at the end of) the input; it never panics. Work per structure is bounded by
// operation counts inside the steps (kekulization, ring search and canonical-key budgets), not by
// a clock; its JSON from Result.AppendJSON equals encoding/json's. The seed corpus is in
// testdata/fuzz/FuzzScreenSMILES. Run: go test ./screening -run '^$' -fuzz FuzzScreenSMILES.
func FuzzScreenSMILES(f *testing.F) {
	for _, s := range []string{"C1=CC2CCC1C2", "c1ccccc1", "[13CH3:2][C@@H](F)/C=C\\Cl", "C%12CC%12", "[Na+].[O-]C(=O)C1CC2C=CC1C2",
		"O=C1C=CC(=O)O1", "C1=CC2C(C1)C1C=CC2C1", "c1cc[nH]c1", "C1=C/CCCCCC/1", "[Fe@OH1](F)(Cl)(Br)(I)(N)O", "((", "C1.C1", "*", "[2H]"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		r, err := ScreenSMILES(s, DefaultConditions())
		if err != nil {
			var se *SMILESError
			var fe *FieldError
			switch {
			case errors.As(err, &se):
				if se.Pos < 0 || se.Pos > len(s) {
					t.Fatalf("%q: position %d outside the input", s, se.Pos)
				}
			case errors.As(err, &fe):
			case errors.Is(err, ErrTooComplex):
			default:
				t.Fatalf("%q: unexpected error type %T: %v", s, err, err)
			}
			return
		}
		if r.Score < 0 || r.Score > 1 {
			t.Fatalf("%q: score %v", s, r.Score)
		}
		if r.Verdict == "" || (r.Verdict != VerdictNotMonomer && r.Thermo == nil) {
			t.Fatalf("%q: verdict %q, thermo %v", s, r.Verdict, r.Thermo)
		}
		// the hand-written encoder writes what encoding/json writes, whatever the input
		want, werr := json.Marshal(r)
		got, gerr := r.AppendJSON(nil)
		if (werr == nil) != (gerr == nil) || (werr == nil && string(got) != string(want)) {
			t.Fatalf("%q: AppendJSON %s (%v), encoding/json %s (%v)", s, got, gerr, want, werr)
		}
	})
}
