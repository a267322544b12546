package batch

import (
	"encoding/json"
	"reflect"
	"strings"
	"testing"

	"ringsieve/screening"
)

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
		lines := strings.Split(content, "\n")
		for _, it := range in.Items {
			if in.Format == FormatSMILES && it.Line-1 < len(lines) {
				smi, id := splitLineReference(lines[it.Line-1], it.Line)
				if it.SMILES != smi || it.ID != id {
					t.Errorf("line %d: %q %q, strings.Fields reads %q %q", it.Line, it.SMILES, it.ID, smi, id)
				}
			}
			ScreenItem(it, screening.DefaultConditions())
		}
	})
}

// FuzzDecodeItemSource: any stored text is read as json.Unmarshal reads it, or refused as it
// refuses it.
func FuzzDecodeItemSource(f *testing.F) {
	for _, s := range []string{`{"smiles":"C1=CCCC1"}`, `{"smiles":"F/C=C\\F"}`, `{"smiles":"C\"}`, `{"smiles":"C\u00e9"}`, `{"monomer_id":"m"}`} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, src string) {
		var want ItemSource
		werr := json.Unmarshal([]byte(src), &want)
		got, gerr := DecodeItemSource(src)
		if (werr == nil) != (gerr == nil) || (werr == nil && !reflect.DeepEqual(got, want)) {
			t.Fatalf("%q: got %+v (%v), json.Unmarshal %+v (%v)", src, got, gerr, want, werr)
		}
	})
}
