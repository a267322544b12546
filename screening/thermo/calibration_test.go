package thermo

import (
	"fmt"
	"os"
	"strings"
	"testing"

	"ringsieve/screening/internal/reftest"
)

// CalibrationTable renders the per-class leave-one-out calibration as the README shows it.
func CalibrationTable(cs []ClassCalibration) string {
	var b strings.Builder
	b.WriteString("| class | measurements (structures) | leave-one-out MAE, table → force field (kJ/mol) | inside ±1σ, table → force field | auto uses | status |\n")
	b.WriteString("|---|---|---|---|---|---|\n")
	for _, c := range cs {
		uses := "table"
		if c.FFEnabled {
			uses = "force field"
		}
		status := "calibrated"
		if !c.Calibrated {
			status = "uncalibrated (fewer than two measured structures): σ widened"
		}
		fmt.Fprintf(&b, "| %s | %d (%d) | %.1f → %.1f | %.0f%% → %.0f%% | %s | %s |\n",
			c.Class, c.N, c.Structures, c.MAETable, c.MAEFF, 100*c.InsideTable, 100*c.InsideFF, uses, status)
	}
	return b.String()
}

// TestCalibrationTable recomputes the leave-one-out calibration from the committed data
// (data/measured.csv: published values with their sources, romp_thermo.csv rows T001–T008 and
// T171; data/ff_measured.csv: the force field's differences, checked by TestFFMeasuredIsCurrent)
// and compares it with testdata/golden/calibration.md, which the README quotes; -update rewrites
// the golden file.
func TestCalibrationTable(t *testing.T) {
	cs, err := Calibrations()
	if err != nil {
		t.Fatal(err)
	}
	got := CalibrationTable(cs)
	path := reftest.Path(t, "golden/calibration.md")
	if *update {
		if err := os.WriteFile(path, []byte(got), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if string(want) != got {
		t.Errorf("calibration changed (run with -update and copy into the README):\n%s", got)
	}
	readme, err := os.ReadFile(reftest.Path(t, "../README.md"))
	if err == nil && !strings.Contains(string(readme), got) {
		t.Errorf("README.md does not show the current calibration table:\n%s", got)
	}
	for _, c := range cs {
		for _, r := range c.Rows {
			t.Logf("%s %s: measured %.1f, table %.1f ± %.1f, force field %.1f ± %.1f (difference %+.1f)", c.Class, r.ID, r.Measured, r.Table, r.UTable, r.FF, r.UFF, r.FFDelta)
		}
	}
}
