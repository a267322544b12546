package data

import (
	"bytes"
	"errors"
	"slices"
	"testing"

	"ringsieve/screening/batch"
)

// packSamples are items as uploads give them: SMILES only, a molfile, a stored monomer,
// descriptors, extra CSV columns (empty, with separators and non-ASCII text), input lines.
var packSamples = []JobInput{
	{ItemID: "m-1", Line: 2, Source: batch.ItemSource{SMILES: "C1=CC2CCC1C2"}},
	{ItemID: "", Line: 0, Source: batch.ItemSource{SMILES: `O=C1OC(=O)C2C3C=CC(C3)C12`}, Extra: []string{"", "a,b", "Δ 5 °C"}},
	{ItemID: "mol", Line: 40, Source: batch.ItemSource{Molfile: "\n  demo\n\n  0  0  0  0  0  0  0  0  0  0999 V2000\nM  END\n"}},
	{ItemID: "stored", Source: batch.ItemSource{MonomerID: "mon_7"}, Extra: []string{"x"}},
}

// TestPackedItemsRoundTrip: what a load packs, a worker and a download read back unchanged.
func TestPackedItemsRoundTrip(t *testing.T) {
	var p itemPacker
	for _, it := range packSamples {
		if err := p.add(it); err != nil {
			t.Fatal(err)
		}
	}
	first := p.take(3)
	rest := p.take(1)
	if len(p.buf) != 0 || len(p.ends) != 0 || p.taken != 0 {
		t.Fatalf("packer keeps %d bytes, %d items after taking all", len(p.buf), len(p.ends))
	}
	got, err := unpackItems(first, 3)
	if err != nil {
		t.Fatal(err)
	}
	more, err := unpackItems(rest, 1)
	if err != nil {
		t.Fatal(err)
	}
	got = append(got, more...)
	for i, want := range packSamples {
		g := got[i]
		src, err := batch.DecodeItemSource(string(g.source))
		if err != nil {
			t.Fatal(err)
		}
		wantExtra := want.Extra
		if wantExtra == nil {
			wantExtra = []string{}
		}
		if string(g.id) != want.ItemID || g.line != want.Line || !slices.Equal(g.extra, wantExtra) || g.extra == nil ||
			src.SMILES != want.Source.SMILES || src.Molfile != want.Source.Molfile || src.MonomerID != want.Source.MonomerID {
			t.Errorf("item %d read back as %+v (source %+v), want %+v", i, g, src, want)
		}
	}
	if _, err := unpackItems(first, 4); !errors.Is(err, errBadPack) {
		t.Errorf("three items read as four: %v", err)
	}
	if _, err := unpackItems(first, 2); !errors.Is(err, errBadPack) {
		t.Errorf("three items read as two: %v", err)
	}
}

// TestPackedResultsRoundTrip: outcomes appended to a chunk's results come back with their
// places, and the ones stored before stay.
func TestPackedResultsRoundTrip(t *testing.T) {
	outs := []batch.Outcome{
		{Seq: 2, Verdict: "polymerizes", Result: batch.RecomputeMark(), Summary: "polymerizes\x1f0.9"},
		{Seq: 0, Failed: true, Result: []byte(`{"code":"invalid_smiles"}`)},
		{Seq: 3, Verdict: "blocked", Result: []byte{0, 1, 2, 255}, Summary: ""},
	}
	b := newResults(0)
	for _, o := range outs {
		b = appendOutcome(b, o.Seq, o)
	}
	got, err := unpackResults(b, 4)
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != len(outs) {
		t.Fatalf("%d outcomes read back, want %d", len(got), len(outs))
	}
	for i, o := range outs {
		g := got[i]
		if g.seq != o.Seq || string(g.verdict) != o.Verdict || g.failed != o.Failed || !bytes.Equal(g.result, o.Result) || string(g.summary) != o.Summary {
			t.Errorf("outcome %d read back as %+v, want %+v", i, g, o)
		}
	}
	if _, err := unpackResults(b, 3); !errors.Is(err, errBadPack) {
		t.Errorf("an outcome past the chunk's end was accepted: %v", err)
	}
	if got, err := unpackResults(nil, 4); err != nil || got != nil {
		t.Errorf("no results column: %v %v", got, err)
	}
}

// FuzzUnpackChunk: a damaged packed chunk is an error, never a panic or a huge allocation.
func FuzzUnpackChunk(f *testing.F) {
	var p itemPacker
	for _, it := range packSamples {
		p.add(it)
	}
	f.Add(p.take(len(packSamples)), 4)
	f.Add(appendOutcome(newResults(0), 1, batch.Outcome{Verdict: "v", Result: []byte("{}"), Summary: "s"}), 2)
	f.Add([]byte{'i', 1, 0xff, 0xff, 0xff, 0xff, 0x0f}, 1)
	f.Fuzz(func(t *testing.T, b []byte, n int) {
		n = min(max(n, 0), 1<<12)
		if items, err := unpackItems(b, n); err == nil && len(items) != n {
			t.Fatalf("%d items for %d", len(items), n)
		}
		if outs, err := unpackResults(b, n); err == nil {
			for _, o := range outs {
				if o.seq < 0 || o.seq >= n {
					t.Fatalf("outcome place %d in a chunk of %d", o.seq, n)
				}
			}
		}
	})
}
