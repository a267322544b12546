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

// TestPackerWritesSourcesAsJSON: an item packed with its source written in place holds the
// same bytes as one packed from json.Marshal's encoding of that source.
func TestPackerWritesSourcesAsJSON(t *testing.T) {
	for _, s := range []batch.ItemSource{{SMILES: "C1=CC2CCC1C2"}, {SMILES: `C1=C\CCCCCC/1`}, {SMILES: `F/C=C\F`}, {SMILES: `C"C`},
		{SMILES: "C<C>&C"}, {SMILES: "C\u2028"}, {SMILES: "C\x01C"}, {SMILES: "CC\x7f"}, {SMILES: "bad \xff"}, {SMILES: "Cé"},
		{MonomerID: "mon_1"}, {SMILES: "C", Molfile: "x"}} {
		var direct, viaJSON itemPacker
		it := JobInput{ItemID: "id 1", Line: 7, Source: s, Extra: []string{"a"}}
		if err := direct.add(it); err != nil {
			t.Fatal(err)
		}
		src, err := json.Marshal(s)
		if err != nil {
			t.Fatal(err)
		}
		viaJSON.addEncoded(it.ItemID, it.Line, src, it.Extra)
		if string(direct.buf) != string(viaJSON.buf) {
			t.Errorf("%q: packed %q, want %q", s.SMILES, direct.buf, viaJSON.buf)
		}
	}
}

// FuzzStoredSourceAsJSON: for any SMILES text, the stored source is json.Marshal's encoding,
// and reading it back gives what json.Unmarshal gives (both fast paths are speed-ups only).
func FuzzStoredSourceAsJSON(f *testing.F) {
	for _, s := range []string{"C1=CC2CCC1C2", `F/C=C\F`, `C"C`, "C<C", "\x00", "é", `\\`, `\"`} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, smi string) {
		s := batch.ItemSource{SMILES: smi}
		want, werr := json.Marshal(s)
		got, gerr := encodeSource(s)
		if string(got) != string(want) || (werr == nil) != (gerr == nil) {
			t.Fatalf("%q: stored %s (%v), json.Marshal %s (%v)", smi, got, gerr, want, werr)
		}
		var back batch.ItemSource
		uerr := json.Unmarshal(want, &back)
		dec, derr := batch.DecodeItemSource(string(got))
		if (uerr == nil) != (derr == nil) || dec.SMILES != back.SMILES {
			t.Fatalf("%q: read back %q (%v), json.Unmarshal %q (%v)", smi, dec.SMILES, derr, back.SMILES, uerr)
		}
	})
}
