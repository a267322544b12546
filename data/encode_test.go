package data

import (
	"encoding/json"
	"testing"

	"ringsieve/screening/batch"
)

// TestEncodeSourceAsJSON: stored item sources are what json.Marshal writes (design choice: the
// SMILES-only shortcut changes no stored byte).
func TestEncodeSourceAsJSON(t *testing.T) {
	for _, s := range []batch.ItemSource{{SMILES: "C1=CC2CCC1C2"}, {SMILES: `C1=C\CCCCCC/1`}, {SMILES: "C<C>&\"C"}, {SMILES: "C\u2028\x01"},
		{SMILES: "bad \xff"}, {}, {MonomerID: "mon_1"}, {SMILES: "C", Molfile: "x"}} {
		want, werr := json.Marshal(s)
		got, gerr := encodeSource(s)
		if string(got) != string(want) || (werr == nil) != (gerr == nil) {
			t.Errorf("%+v: got %s (%v), want %s (%v)", s, got, gerr, want, werr)
		}
	}
}
