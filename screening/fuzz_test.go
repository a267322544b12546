package screening

import (
	"errors"
	"fmt"
	"strings"
	"testing"
	"time"
)

// FuzzScreenSMILES: any input string either screens or fails with a SMILES error carrying a
// position inside (or at the end of) the input; it never panics or hangs. The seed corpus is in
// testdata/fuzz/FuzzScreenSMILES. Run: go test ./screening -run '^$' -fuzz FuzzScreenSMILES.
func FuzzScreenSMILES(f *testing.F) {
	for _, s := range []string{"C1=CC2CCC1C2", "c1ccccc1", "[13CH3:2][C@@H](F)/C=C\\Cl", "C%12CC%12", "[Na+].[O-]C(=O)C1CC2C=CC1C2",
		"O=C1C=CC(=O)O1", "C1=CC2C(C1)C1C=CC2C1", "c1cc[nH]c1", "C1=C/CCCCCC/1", "[Fe@OH1](F)(Cl)(Br)(I)(N)O", "((", "C1.C1", "*", "[2H]"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		tm := time.AfterFunc(3*time.Second, func() { panic(fmt.Sprintf("slow input %q", s)) })
		defer tm.Stop()
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
	})
}

// FuzzReadInput: file inputs of any content are read or refused without panics.
func FuzzReadInput(f *testing.F) {
	f.Add("id,smiles\na,C1=CCCC1\n", "")
	f.Add("C1=CC2CCC1C2 nb\n", "smiles")
	f.Add("x\n\n\n  1  0  0  0  0  0  0  0  0  0999 V2000\n    0.0 0.0 0.0 C   0  0\nM  END\n$$$$\n", "sdf")
	f.Fuzz(func(t *testing.T, content, format string) {
		if format != "" && format != FormatCSV && format != FormatSMILES && format != FormatSDF {
			format = ""
		}
		in, err := ReadInput(strings.NewReader(content), format, "", 1000)
		if err != nil || in == nil {
			return
		}
		for _, it := range in.Items {
			ScreenItem(it, DefaultConditions())
		}
	})
}
