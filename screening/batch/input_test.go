package batch

import (
	"encoding/json"
	"math"
	"os"
	"reflect"
	"strconv"
	"strings"
	"testing"
	"unicode"

	"ringsieve/screening/internal/reftest"
	"ringsieve/screening/molfile"
)

func TestSDFAgainstRDKit(t *testing.T) {
	f, err := os.Open(reftest.Path(t, "reference/rdkit_structures.sdf"))
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
	b := reftest.ReadFile(t, "reference/rdkit_structures.sdf")
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
		m, _, err := molfile.Parse(it.Molfile)
		if err != nil {
			t.Errorf("%s: %v", it.ID, err)
			continue
		}
		formula := get("FORMULA")
		if got := m.Formula(); got != formula {
			t.Errorf("%s (%s): formula %s, RDKit %s", it.ID, get("SMILES"), got, formula)
		}
		mw, _ := strconv.ParseFloat(get("MW"), 64)
		if got := m.MolWeight(); math.Abs(got-mw) > reftest.MassTolerance(formula) {
			t.Errorf("%s: average mass %.4f, RDKit %.4f", it.ID, got, mw)
		}
		em, _ := strconv.ParseFloat(get("EXACT_MASS"), 64)
		if got := m.MonoisotopicMass(); math.Abs(got-em) > 2e-4 {
			t.Errorf("%s: monoisotopic mass %.6f, RDKit %.6f", it.ID, got, em)
		}
	}
}

// TestDecodeItemSourceAsJSON: the stored-source reader gives what json.Unmarshal gives, for
// sources as the store writes them (json.Marshal of an ItemSource) and for odd stored text
// (design choice: the fast path is a speed-up only).
func TestDecodeItemSourceAsJSON(t *testing.T) {
	var srcs []string
	for _, s := range []ItemSource{{SMILES: "C1=CC2CCC1C2"}, {SMILES: `C1=C\CCCCCC/1`}, {SMILES: "C<C>&C"}, {SMILES: "C\u2028C"},
		{SMILES: "C\x01C"}, {SMILES: "bad \xff utf-8"}, {MonomerID: "mon_1"}, {Molfile: "\n  x\n\n  0  0\nM  END"},
		{SMILES: "C1=CCCC1", MonomerID: "mon_2"}} {
		b, err := json.Marshal(s)
		if err != nil {
			t.Fatal(err)
		}
		srcs = append(srcs, string(b))
	}
	srcs = append(srcs, `{"smiles":"C\u00e9C"}`, `{"smiles":""}`, `{"smiles":"a"b"}`, `{"smiles":"\xffC"}`, `{"smiles":"C"} `, `{}`,
		`{"smiles":"F/C=C\\F"}`, `{"smiles":"C\"C"}`, `{"smiles":"C\\"}`, `{"smiles":"C\"}`, `{"smiles":"C\nC"}`, `{"smiles":"C\\\\C"}`,
		`{"smiles":"C\/C"}`, `{"smiles":"\\"}`, `{"smiles":"C\\\"}`, `{"smiles":"C\"}"}`)
	for _, src := range srcs {
		var want ItemSource
		werr := json.Unmarshal([]byte(src), &want)
		got, gerr := DecodeItemSource(src)
		if (werr == nil) != (gerr == nil) || (werr == nil && !reflect.DeepEqual(got, want)) {
			t.Errorf("%q: got %+v (%v), json.Unmarshal %+v (%v)", src, got, gerr, want, werr)
		}
	}
}

// splitLineReference is the reading of one SMILES line by strings.Fields: the first field is
// the SMILES, the others joined by one space the id (the line number when there are none).
func splitLineReference(line string, n int) (smi, id string) {
	f := strings.Fields(line)
	id = strconv.Itoa(n)
	if len(f) > 1 {
		id = strings.Join(f[1:], " ")
	}
	return f[0], id
}

// TestReadSMILESLines: ids after any run of whitespace (tabs, several spaces, Unicode spaces),
// ids of several words joined by one space, the line number when there is no id; blank and
// comment lines skipped (the reading is compared with splitLineReference as well).
func TestReadSMILESLines(t *testing.T) {
	content := "C1=CCCC1 cp-1\n\n# a comment\n  C1=CC2CCC1C2\tnb  run 4 \r\nC1=CCCCCCC1\u00a0coe\nC1=CC=CC1\n"
	in, err := ReadInput(strings.NewReader(content), FormatSMILES, "", 100)
	if err != nil {
		t.Fatal(err)
	}
	want := []InputItem{
		{ID: "cp-1", SMILES: "C1=CCCC1", Line: 1},
		{ID: "nb run 4", SMILES: "C1=CC2CCC1C2", Line: 4},
		{ID: "coe", SMILES: "C1=CCCCCCC1", Line: 5},
		{ID: "6", SMILES: "C1=CC=CC1", Line: 6},
	}
	if len(in.Items) != len(want) {
		t.Fatalf("%d items: %+v", len(in.Items), in.Items)
	}
	lines := strings.Split(content, "\n")
	for i, w := range want {
		got := in.Items[i]
		if got.ID != w.ID || got.SMILES != w.SMILES || got.Line != w.Line {
			t.Errorf("item %d: %+v, want %+v", i, got, w)
		}
		smi, id := splitLineReference(lines[got.Line-1], got.Line)
		if got.ID != id || got.SMILES != smi {
			t.Errorf("item %d: %q %q, strings.Fields reads %q %q", i, got.SMILES, got.ID, smi, id)
		}
	}
}

// TestIndexSpace: the ASCII shortcut finds what strings.IndexFunc(s, unicode.IsSpace) finds, for
// every byte value at the start, middle and end and for non-ASCII spaces and letters.
func TestIndexSpace(t *testing.T) {
	var cases []string
	for c := range 256 {
		b := string([]byte{byte(c)})
		r := string(rune(c))
		cases = append(cases, b, "C1=CC"+b+"x", r, "CC"+r+"id", "é"+r)
	}
	cases = append(cases, "", "CC", "CC\u2003id", "CC\u00a0id", "C\u0085C", "Ccé é", "CC\u3000")
	for _, s := range cases {
		if got, want := indexSpace(s), strings.IndexFunc(s, unicode.IsSpace); got != want {
			t.Errorf("indexSpace(%q) = %d, want %d", s, got, want)
		}
	}
}
