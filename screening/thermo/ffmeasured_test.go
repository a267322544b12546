package thermo

import (
	"context"
	"flag"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"ringsieve/screening/describe"
)

var update = flag.Bool("update", false, "rewrite the generated data files (data/ff_measured.csv, data/precomputed.tsv) and the calibration golden file")

// TestFFMeasuredIsCurrent recomputes the force-field strain difference of every measured
// structure (data/measured.csv) against its parent and compares it with data/ff_measured.csv,
// which the calibration reads; -update rewrites the file.
func TestFFMeasuredIsCurrent(t *testing.T) {
	if testing.Short() {
		t.Skip("force-field searches")
	}
	var b strings.Builder
	b.WriteString("# Force-field strain differences of the measured structures against their parents (kJ/mol), written by\n")
	b.WriteString("# go test ./screening/thermo -run FFMeasured -update (MMFF94, dielectric 4, the search of ffstrain.go).\n")
	b.WriteString("id,smiles,parent,ff_delta_kj_mol\n")
	have, err := FFMeasuredData()
	if err != nil {
		t.Fatal(err)
	}
	for _, m := range Measurements() {
		s, err := describe.Describe(m.SMILES)
		if err != nil {
			t.Fatal(err)
		}
		ff, err := StrainDifference(context.Background(), s, firstOlefin(s))
		if err != nil {
			t.Fatalf("%s: %v", m.ID, err)
		}
		fmt.Fprintf(&b, "%s,%s,%s,%.2f\n", m.ID, m.SMILES, ff.Parent, ff.DeltakJmol)
		if h, ok := have[m.ID]; !*update && (!ok || math.Abs(h.DeltakJmol-ff.DeltakJmol) > 0.05) {
			t.Errorf("%s %s: force-field difference %.2f kJ/mol, file has %.2f (run with -update)", m.ID, m.SMILES, ff.DeltakJmol, h.DeltakJmol)
		}
	}
	if *update {
		if err := os.WriteFile(filepath.Join("data", "ff_measured.csv"), []byte(b.String()), 0o644); err != nil {
			t.Fatal(err)
		}
	}
}
