package thermo

import (
	"bytes"
	"os"
	"reflect"
	"strings"
	"testing"
)

// TestPrecomputedTableFresh: data/precomputed.tsv holds exactly what loading the tables
// computes (every row's keys, every fit row's gas-phase estimate, every measured structure's
// keys) and the class calibrations, so what is loaded from it equals what is computed in full;
// -update rewrites the file (design choice: precomputed values are checked like golden files).
func TestPrecomputedTableFresh(t *testing.T) {
	full, err := loadTable(nil)
	if err != nil {
		t.Fatal(err)
	}
	cal, err := calibrate()
	if err != nil {
		t.Fatal(err)
	}
	fullMeasured, err := loadMeasured(nil)
	if err != nil {
		t.Fatal(err)
	}
	want, err := writePrecomputed(full, fullMeasured, cal)
	if err != nil {
		t.Fatal(err)
	}
	have, _ := dataFS.ReadFile(precomputedFile)
	checkGenerated(t, precomputedFile, have, want, "PrecomputedTableFresh")
	pre := readPrecomputed()
	if pre == nil || len(pre.rows) != len(full.rows) || len(pre.fits) != len(full.fitRows) || len(pre.cal) != len(cal) {
		t.Fatalf("the embedded file was not taken: %v", pre)
	}
	fast, err := loadTable(pre)
	if err != nil {
		t.Fatal(err)
	}
	for i, r := range full.rows {
		if !reflect.DeepEqual(*r, *fast.rows[i]) {
			t.Errorf("row %s: computed %+v, precomputed %+v", r.Name, *r, *fast.rows[i])
		}
	}
	fastMeasured, err := loadMeasured(pre)
	if err != nil {
		t.Fatal(err)
	}
	if len(pre.measures) != len(fullMeasured.rows) || !reflect.DeepEqual(fullMeasured, fastMeasured) {
		t.Errorf("measured keys differ: computed %+v, precomputed %+v", fullMeasured.rows, fastMeasured.rows)
	}
	if !reflect.DeepEqual(cal, pre.cal) {
		t.Errorf("calibrations differ: computed %+v, precomputed %+v", cal, pre.cal)
	}
	if !reflect.DeepEqual(full.fitRows, fast.fitRows) || full.maxAtoms != fast.maxAtoms ||
		full.OffsetH != fast.OffsetH || full.OffsetS != fast.OffsetS || full.OffsetHU != fast.OffsetHU || full.OffsetSU != fast.OffsetSU {
		t.Errorf("fit or offsets differ: computed %v %v %v, precomputed %v %v %v", full.OffsetH, full.OffsetS, full.maxAtoms, fast.OffsetH, fast.OffsetS, fast.maxAtoms)
	}
}

// TestPrecomputedIgnoredWhenInputsDiffer: a file computed from other table files (its inputs
// hash differs), or a malformed one, is not used.
func TestPrecomputedIgnoredWhenInputsDiffer(t *testing.T) {
	have, _ := dataFS.ReadFile(precomputedFile)
	if _, err := parsePrecomputed(have); err != nil {
		t.Fatalf("the embedded file: %v", err)
	}
	lines := strings.Split(string(have), "\n")
	for i, l := range lines {
		if strings.HasPrefix(l, "inputs\t") {
			stale := append([]string(nil), lines...)
			stale[i] = "inputs\t" + strings.Repeat("0", 64)
			if _, err := parsePrecomputed([]byte(strings.Join(stale, "\n"))); err == nil {
				t.Error("a file from other inputs was accepted")
			}
		}
	}
	for _, bad := range []string{"row\tonly three\tfields", "fit\ta\tb\tc\tnot-a-number\t1\tk", "calibration\tnot JSON", "colour\tblue"} {
		if _, err := parsePrecomputed([]byte(string(have) + bad + "\n")); err == nil {
			t.Errorf("malformed record %q accepted", bad)
		}
	}
	if _, err := parsePrecomputed([]byte("# no inputs record\n")); err == nil {
		t.Error("a file without its inputs record was accepted")
	}
}

// checkGenerated compares a generated file as embedded or on disk (have) with what the code
// generates now (want): with -update it rewrites the file and skips the rest of the test (run it
// again to check); otherwise a difference fails the test, naming the test to rerun.
func checkGenerated(t *testing.T, file string, have, want []byte, test string) {
	t.Helper()
	if *update {
		if err := os.WriteFile(file, want, 0o644); err != nil {
			t.Fatal(err)
		}
		t.Skip("rewrote " + file + "; run again to check")
	}
	if !bytes.Equal(have, want) {
		t.Fatalf("%s is stale: rerun `go test ./screening/thermo -run %s -update`", file, test)
	}
}
