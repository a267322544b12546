package screening_test

import (
	"errors"
	"strings"
	"testing"

	. "ringsieve/screening"
	"ringsieve/screening/units"
)

// TestCatalystPoisons: groups a class cannot take one per monomer unit block it (common
// practice): an isocyanide (used to quench ruthenium ROMP) blocks every class and is not read as
// an ammonium salt and a nitrile; a sulfonic acid blocks Mo/W imido classes; a free phosphine
// blocks the ruthenium classes.
func TestCatalystPoisons(t *testing.T) {
	cases := []struct {
		smiles  string
		group   string
		blocked []units.CatalystClass
		not     []string
	}{
		{"[C-]#[N+]CC1CC2C=CC1C2", "isocyanide", []units.CatalystClass{units.CatRuNHC, units.CatRuPyridine, units.CatMoWImido}, []string{"ammonium_salt", "nitrile"}},
		{"OS(=O)(=O)CC1CC2C=CC1C2", "sulfonic_acid", []units.CatalystClass{units.CatMoWImido, units.CatClassical}, []string{"sulfone"}},
		{"CP(C)CC1CC2C=CC1C2", "phosphine", []units.CatalystClass{units.CatRuPhosphine, units.CatRuNHC, units.CatRuPyridine}, nil},
	}
	for _, c := range cases {
		for _, cat := range c.blocked {
			cond := DefaultConditions()
			cond.Catalyst, cond.ThermoMethod = cat, units.ThermoTable
			r, err := ScreenSMILES(c.smiles, cond)
			if err != nil {
				t.Fatal(err)
			}
			if r.Verdict != VerdictBlocked {
				t.Errorf("%s with %s: %s, want blocked", c.smiles, cat, r.Verdict)
			}
			if !r.Descriptors.HasGroup(c.group) {
				t.Errorf("%s: groups %v, want %s", c.smiles, r.Descriptors.FunctionalGroups, c.group)
			}
			for _, g := range c.not {
				if r.Descriptors.HasGroup(g) {
					t.Errorf("%s: misread as %s", c.smiles, g)
				}
			}
		}
	}
}

// TestTemperatureWindows: 300 °C is far beyond any ruthenium class's working range (about
// 100 °C for the N-heterocyclic-carbene type, common practice) — blocked; an endo furan–
// maleimide oxanorbornene at 80 °C risks retro-Diels–Alder (60–90 °C, from memory); neat
// norbornene at 20 °C is a solid (mp about 45 °C, from memory).
func TestTemperatureWindows(t *testing.T) {
	at := func(smi string, tc float64, bulk bool) Result {
		c := DefaultConditions()
		c.ThermoMethod = units.ThermoTable
		tk, _ := units.TempFromCelsius(tc)
		c.Temp, c.Bulk = tk, bulk
		r, err := ScreenSMILES(smi, c)
		if err != nil {
			t.Fatal(err)
		}
		return r
	}
	if r := at("C1=CC2CCC1C2", 300, false); r.Verdict != VerdictBlocked || !hasReason(r, "above_catalyst_window", "blocks") {
		t.Errorf("300 °C with ru-nhc: %s %v", r.Verdict, r.Reasons)
	}
	if r := at("C1=CC2CCC1C2", 120, false); !hasReason(r, "above_catalyst_window", "penalizes") {
		t.Errorf("120 °C with ru-nhc: no window penalty")
	}
	if r := at("O=C1N(C)C(=O)[C@H]2[C@H]3C=C[C@H](O3)[C@H]12", 80, false); !hasReason(r, "retro_diels_alder", "penalizes") {
		t.Errorf("oxanorbornene imide at 80 °C: no retro-Diels–Alder reason")
	}
	if r := at("O=C1N(C)C(=O)[C@H]2[C@H]3C=C[C@H](O3)[C@H]12", 25, false); hasReason(r, "retro_diels_alder", "penalizes") {
		t.Errorf("oxanorbornene imide at 25 °C: retro-Diels–Alder flagged")
	}
	if r := at("C1=CC2CCC1C2", 20, true); !hasReason(r, "monomer_solid_at_temperature", "penalizes") {
		t.Errorf("bulk norbornene at 20 °C: not flagged as a solid")
	}
	if _, err := units.NewTempK(1e-300); !errors.Is(err, units.ErrInvalid) {
		t.Errorf("1e-300 K accepted")
	}
}

// TestImpossibleAndOddStructures: a bridgehead double bond in norbornene's skeleton breaks
// Bredt's rule and is refused (common practice); [2.2]paracyclophane-1,9-diene is strongly
// strained and polymerizes (Angew. Chem. 2006, from memory) — not "low ring strain".
func TestImpossibleAndOddStructures(t *testing.T) {
	if _, err := ScreenSMILES("C1CC2=CCC1C2", DefaultConditions()); err == nil || !strings.Contains(err.Error(), "Bredt") {
		t.Errorf("anti-Bredt olefin: %v", err)
	}
	r, err := ScreenSMILES("C1=Cc2ccc(cc2)C=Cc2ccc1cc2", DefaultConditions())
	if err != nil {
		t.Fatal(err)
	}
	if r.Verdict != VerdictPolymerizes || r.Thermo.DHkJmol > -40 || hasReason(r, "low_ring_strain", "penalizes") {
		t.Errorf("paracyclophane diene: %s, ΔH_p %.1f, reasons %v", r.Verdict, r.Thermo.DHkJmol, r.Reasons)
	}
}

// TestCautionsWhereTheyApply: the volatile-cyclic-olefin caution is for volatile ring olefins,
// not for cyclohexane, benzene, an alkyne or an ammonium salt; the record's formula is that of
// the whole salt.
func TestCautionsWhereTheyApply(t *testing.T) {
	for _, smi := range []string{"C1CCCCC1", "c1ccccc1", "CC#CC", "[NH3+]CC1CC2C=CC1C2.[Cl-]"} {
		c := DefaultConditions()
		c.ThermoMethod = units.ThermoTable
		r, err := ScreenSMILES(smi, c)
		if err != nil {
			t.Fatal(err)
		}
		for _, x := range r.Cautions {
			if strings.Contains(x, "volatile") {
				t.Errorf("%s: %q", smi, x)
			}
		}
	}
	r, _ := ScreenSMILES("[NH3+]CC1CC2C=CC1C2.[Cl-]", DefaultConditions())
	if r.Descriptors.RecordFormula != "C8H14ClN" || r.Descriptors.RecordMolWeightGmol <= r.Descriptors.MolWeightGmol {
		t.Errorf("record %s %.3f, component %s %.3f", r.Descriptors.RecordFormula, r.Descriptors.RecordMolWeightGmol, r.Descriptors.Formula, r.Descriptors.MolWeightGmol)
	}
}

// TestInputHints: an odd all-carbon aromatic ring, a name and an InChI get messages that say
// what is wrong.
func TestInputHints(t *testing.T) {
	for smi, want := range map[string]string{
		"c1cccc1":    "explicit bonds",
		"norbornene": "looks like a name",
		"InChI=1S/C7H10/c1-2-7-4-3-6(1)5-7/h1-2,6-7H,3-5H2": "InChI",
	} {
		_, err := ScreenSMILES(smi, DefaultConditions())
		if err == nil || !strings.Contains(err.Error(), want) {
			t.Errorf("%s: %v, want a message with %q", smi, err, want)
		}
	}
}
