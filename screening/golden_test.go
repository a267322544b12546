package screening_test

import (
	"bytes"
	"encoding/json"
	"flag"
	"os"
	"testing"

	. "ringsieve/screening"
	"ringsieve/screening/batch"
	"ringsieve/screening/internal/reftest"
)

var update = flag.Bool("update", false, "rewrite golden files under testdata/golden")

// demoInput reads the demo lab's candidate list (testdata/demo/membrane_candidates.csv).
func demoInput(tb testing.TB) *batch.Input {
	tb.Helper()
	f, err := os.Open(reftest.Path(tb, "demo/membrane_candidates.csv"))
	if err != nil {
		tb.Fatal(err)
	}
	defer f.Close()
	in, err := batch.ReadInput(f, batch.FormatCSV, "", 0)
	if err != nil || len(in.Errors) > 0 || len(in.Items) == 0 {
		tb.Fatalf("demo file: %v %v", err, in.Errors)
	}
	return in
}

// TestGoldenDemoScreen screens the demo list of a fictional membrane lab (testdata/demo) and
// compares the full results with testdata/golden/demo_screen.json. Run with -update after an
// intended change and review the diff; the golden file pins behaviour, not published values.
func TestGoldenDemoScreen(t *testing.T) {
	in := demoInput(t)
	type row struct {
		ID     string `json:"id"`
		Result Result `json:"result"`
	}
	var rows []row
	for _, it := range in.Items {
		r, err := batch.ScreenItem(it, DefaultConditions())
		if err != nil {
			t.Fatalf("%s: %v", it.ID, err)
		}
		rows = append(rows, row{it.ID, r})
	}
	got, _ := json.MarshalIndent(rows, "", "  ")
	got = append(got, '\n')
	path := reftest.Path(t, "golden/demo_screen.json")
	if *update {
		if err := os.WriteFile(path, got, 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test ./screening -run Golden -update)", err)
	}
	if !bytes.Equal(got, want) {
		t.Errorf("demo screening differs from %s; run with -update if the change is intended and review the diff", path)
	}
}
