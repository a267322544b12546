package api

import (
	"bytes"
	"encoding/json"
	"os"
	"strings"
	"testing"

	"ringsieve/screening"
	"ringsieve/screening/batch"
	"ringsieve/screening/units"
)

// TestAppendResultRowMatchesMarshal: a JSON Lines row appended by hand is byte for byte what
// encoding/json writes for it — over every fifth corpus structure, failed and pending rows,
// and ids, states and extra columns with HTML characters, quotes, control and non-ASCII
// characters and invalid UTF-8.
func TestAppendResultRowMatchesMarshal(t *testing.T) {
	odd := []string{"", "a", `<b>&"q"`, "tab\there", "Δ °C", "\u2028", "bad\xffutf8", "x,y", "\x01"}
	c := screening.DefaultConditions()
	c.ThermoMethod = units.ThermoTable
	raw, err := os.ReadFile("../testdata/corpus/candidates.smi")
	if err != nil {
		t.Fatal(err)
	}
	type entry struct{ SMILES, ID string }
	var corpus []entry
	for _, l := range strings.Split(string(raw), "\n") {
		if f := strings.Fields(l); len(f) >= 2 && !strings.HasPrefix(f[0], "#") {
			corpus = append(corpus, entry{f[0], f[1]})
		}
	}
	n := 0
	for i, e := range corpus {
		if i%5 != 0 {
			continue
		}
		row := JobResultRow{Rank: i + 1, ID: e.ID + odd[i%len(odd)], Line: i % 3, State: batch.ItemPending}
		if i%4 != 0 {
			row.Extra = map[string]string{odd[i%len(odd)] + "k": odd[(i+1)%len(odd)], "z": odd[(i+2)%len(odd)], "a": ""}
		}
		if r, err := screening.ScreenSMILES(e.SMILES, c); err == nil && i%7 != 0 {
			b, err := r.AppendJSON(nil)
			if err != nil {
				t.Fatal(err)
			}
			row.State, row.Result = batch.ItemDone, b
		} else if i%7 == 0 {
			row.State = batch.ItemFailed
			row.Error = itemProblem([]byte(`{"code":"invalid_smiles","message":"invalid SMILES at position 3: <x>","position":3}`))
		}
		want, err := json.Marshal(row)
		if err != nil {
			t.Fatal(err)
		}
		if got := appendResultRow(nil, row); !bytes.Equal(got, want) {
			t.Fatalf("row %d:\n%s\nencoding/json:\n%s", i, got, want)
		}
		n++
	}
	if n < 1500 {
		t.Fatalf("only %d rows compared", n)
	}
}
