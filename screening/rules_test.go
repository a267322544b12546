package screening

import (
	"errors"
	"math"
	"testing"
)

func hasReason(r Result, code, effect string) bool {
	for _, rs := range r.Reasons {
		if rs.Code == code && rs.Effect == effect {
			return true
		}
	}
	return false
}

// TestRulesOnDescriptorRecords drives each rule through a descriptor record (what a caller knows
// without a structure). Expectations are facts of the trade, marked common practice, or rows of
// romp_outcomes.csv expressed as descriptors (row id and source named).
func TestRulesOnDescriptorRecords(t *testing.T) {
	dhNB, dsNB := -62.0, -75.0 // contract example values for a norbornene; arithmetic only
	cases := []struct {
		name     string
		d        Descriptors
		cat      CatalystClass
		verdict  string
		code     string
		effect   string
		evidence string
	}{
		{"no ring olefin", Descriptors{RingSize: 0}, CatRuNHC, VerdictNotMonomer, "no_ring_olefin", EffectBlocks, "contract: not_a_monomer"},
		{"six-membered ring", Descriptors{RingSize: 6}, CatRuNHC, VerdictUnfavorable, "six_membered_ring", EffectPenalizes, "R028/R029/R034 (general knowledge, from memory); common practice"},
		{"conjugated diene, small ring", Descriptors{RingSize: 5, Conjugated: true}, CatRuNHC, VerdictBlocked, "conjugated_diene_in_ring", EffectBlocks, "R028 1,3-cyclohexadiene (from memory); common practice"},
		{"conjugated diene, eight-ring", Descriptors{RingSize: 8, ConjugatedWith: []string{ConjRingOlefin}}, CatMoWImido, VerdictPolymerizes, "conjugated_diene_in_ring", EffectPenalizes, "R049 cyclooctatetraene with W alkylidenes (Klavetter et al., J. Am. Chem. Soc. 1988)"},
		{"tetrasubstituted", Descriptors{RingSize: 5, RingSystem: SystemBridged, OlefinSubstitution: 4}, CatRuNHC, VerdictBlocked, "tetrasubstituted_olefin", EffectBlocks, "common practice"},
		{"trisubstituted, strained", Descriptors{RingSize: 8, OlefinSubstitution: 3, TransOlefin: true}, CatRuNHC, VerdictPolymerizes, "trisubstituted_olefin", EffectPenalizes, "R043 trans-1-butylcyclooctene (Farrell & Beers, ACS Macro Lett. 2017)"},
		{"ewg on olefin", Descriptors{RingSize: 4, OlefinSubstitution: 3, EWGOnOlefin: true}, CatRuNHC, VerdictBlocked, "ewg_on_olefin", EffectBlocks, "R008 (Song, Parker, Sampson, J. Am. Chem. Soc. 2009, 131, 3444)"},
		{"ewg on ring", Descriptors{RingSize: 5, EWGOnOlefinRing: true, DHkJmol: &dhNB, DSJmolK: &dsNB}, CatRuNHC, VerdictPolymerizes, "ewg_on_olefin_ring", EffectPenalizes, "common practice"},
		{"quaternary allylic ewg, ru", Descriptors{RingSize: 3, QuaternaryAllylicEWG: true}, CatRuNHC, VerdictBlocked, "quaternary_allylic_ewg", EffectBlocks, "R003 (Macromolecules 2020, 53, 5833)"},
		{"bulky allylic", Descriptors{RingSize: 5, RingSystem: SystemBridged, BulkyAllylic: true}, CatRuNHC, VerdictPolymerizes, "bulky_allylic_substituent", EffectPenalizes, "common practice"},
		{"acid with Mo/W", Descriptors{RingSize: 5, RingSystem: SystemBridged, FunctionalGroups: []string{FGCarboxylicAcid}}, CatMoWImido, VerdictBlocked, "catalyst_incompatible_group", EffectBlocks, "R073 (Trnka et al., Acc. Chem. Res. 2001, from memory)"},
		{"acid with Ru", Descriptors{RingSize: 5, RingSystem: SystemBridged, FunctionalGroups: []string{FGCarboxylicAcid}}, CatRuPyridine, VerdictPolymerizes, "", "", "R074 (Lin, Shi, Niwayama, RSC Adv. 2023)"},
		{"primary amine with Ru", Descriptors{RingSize: 5, RingSystem: SystemBridged, FunctionalGroups: []string{FGPrimaryAmine}}, CatRuNHC, VerdictBlocked, "catalyst_incompatible_group", EffectBlocks, "R094 (amine-tagged ROMP study, seen in abstract)"},
		{"thiol, any class", Descriptors{RingSize: 5, RingSystem: SystemBridged, FunctionalGroups: []string{FGThiol}}, CatMoWImido, VerdictBlocked, "catalyst_incompatible_group", EffectBlocks, "R098 (from memory); romp_facts a.3 rule 3"},
		{"aldehyde with Mo/W", Descriptors{RingSize: 5, RingSystem: SystemBridged, FunctionalGroups: []string{FGAldehyde}}, CatMoWImido, VerdictBlocked, "catalyst_incompatible_group", EffectBlocks, "R103 (Lee & Register, Macromolecules 2004)"},
		{"ester with classical", Descriptors{RingSize: 5, RingSystem: SystemBridged, FunctionalGroups: []string{FGEster}}, CatClassical, VerdictPolymerizes, "catalyst_conditional_group", EffectPenalizes, "R114 (from memory) vs Romer et al. 2014 (seen): conditional, not a block"},
	}
	for _, c := range cases {
		cond := DefaultConditions()
		cond.Conc = 2.0
		cond.Catalyst = c.cat
		r, err := ScreenDescriptors(c.d, cond)
		if err != nil {
			t.Errorf("%s: %v", c.name, err)
			continue
		}
		if r.Verdict != c.verdict {
			t.Errorf("%s (%s): verdict %s, want %s; reasons %s", c.name, c.evidence, r.Verdict, c.verdict, MainReasons(&r))
		}
		if c.code != "" && !hasReason(r, c.code, c.effect) {
			t.Errorf("%s (%s): no %s reason %s; got %s", c.name, c.evidence, c.effect, c.code, MainReasons(&r))
		}
		if r.Score < 0 || r.Score > 1 || math.IsNaN(r.Score) {
			t.Errorf("%s: score %v out of [0, 1]", c.name, r.Score)
		}
	}
}

// TestScoreOrdersVerdicts: every polymerizes result outranks every equilibrium_limited one, and
// so on down (the score bands do not overlap).
func TestScoreOrdersVerdicts(t *testing.T) {
	smis := []string{"C1=CC2CCC1C2", "C1=CCCC1", "C1=CCCCC1", "NCC1CC2C=CC1C2", "c1ccccc1", "C1=C/CCCCCC/1", "O=C1C=CCC1", "C1=COCC1", "CC1=CCCCCCC1", "C1=CC2C(C1)C1C=CC2C1"}
	band := map[string][2]float64{}
	for _, smi := range smis {
		r, err := ScreenSMILES(smi, DefaultConditions())
		if err != nil {
			t.Fatal(err)
		}
		b, ok := band[r.Verdict]
		if !ok {
			b = [2]float64{r.Score, r.Score}
		}
		band[r.Verdict] = [2]float64{math.Min(b[0], r.Score), math.Max(b[1], r.Score)}
	}
	order := []string{VerdictPolymerizes, VerdictEquilibrium, VerdictUnfavorable, VerdictBlocked, VerdictNotMonomer}
	for i := 0; i < len(order); i++ {
		for j := i + 1; j < len(order); j++ {
			a, okA := band[order[i]]
			b, okB := band[order[j]]
			if okA && okB && a[0] <= b[1] {
				t.Errorf("%s scores %v overlap %s scores %v", order[i], a, order[j], b)
			}
		}
	}
}

func TestRecordValidation(t *testing.T) {
	bad := []Descriptors{
		{RingSize: 2}, {RingSize: 70}, {RingSize: 5, RingSystem: "cage"}, {RingSize: 5, OlefinSubstitution: 5},
		{RingSize: 5, FunctionalGroups: []string{"unobtainium"}}, {RingSize: 5, ConjugatedWith: []string{"x"}},
		{RingSize: 5, DSJmolK: ptr(-60)}, {RingSize: 5, DHkJmol: ptr(math.Inf(1))}, {RingSize: 5, StrainkJmol: ptr(-3)},
	}
	for _, d := range bad {
		_, err := ScreenDescriptors(d, DefaultConditions())
		if !errors.Is(err, ErrInvalid) {
			t.Errorf("%+v: error %v, want ErrInvalid", d, err)
		}
	}
}

func ptr(v float64) *float64 { return &v }

func TestConditionConstructors(t *testing.T) {
	for _, v := range []float64{0, -1, math.NaN(), math.Inf(1), 2000} {
		if _, err := NewTempK(v); !errors.Is(err, ErrInvalid) {
			t.Errorf("NewTempK(%v) accepted", v)
		}
	}
	for _, v := range []float64{0, -0.5, math.NaN(), math.Inf(-1), 31} {
		if _, err := NewConcMolL(v); !errors.Is(err, ErrInvalid) {
			t.Errorf("NewConcMolL(%v) accepted", v)
		}
	}
	if _, err := TempFromCelsius(-273.15); err == nil {
		t.Error("0 K accepted")
	}
	if tk, err := TempFromCelsius(25); err != nil || math.Abs(float64(tk)-298.15) > 1e-12 {
		t.Errorf("25 °C = %v K (%v)", tk, err)
	}
	if _, err := ParseCatalystClass("platinum-oxo"); err == nil {
		t.Error("unknown catalyst accepted")
	}
}

// TestBulkConcentration: neat cyclopentene from the McGowan-volume estimate is within its stated
// 8 % of 11.318 mol/L (romp_facts.md e.7: 0.771 g/mL / 68.119 g/mol; density from memory).
func TestBulkConcentration(t *testing.T) {
	s, _ := Describe("C1=CCCC1")
	c, rel, ok := s.BulkConcentration()
	if !ok {
		t.Fatal("no estimate")
	}
	if math.Abs(float64(c)-11.318)/11.318 > rel+0.01 {
		t.Errorf("neat cyclopentene %.2f mol/L, reference 11.318 ± %.0f%%", float64(c), 100*rel)
	}
}

// TestNearBoundaryReason: cyclopentene at its ceiling temperature gets the boundary note.
func TestNearBoundaryReason(t *testing.T) {
	c := DefaultConditions()
	c.Conc = 1.0
	tk, _ := TempFromCelsius(29.5) // near T_c = 302.70 K at 1 mol/L (T020, Tuba et al. 2013 pair used by the table anchor)
	c.Temp = tk
	r, _ := ScreenSMILES("C1=CCCC1", c)
	if !hasReason(r, "verdict_near_boundary", EffectNote) {
		t.Errorf("no boundary note at %.2f K (T_c %v)", float64(tk), *r.Thermo.CeilingTempK)
	}
}

func TestSweep(t *testing.T) {
	// T001/T002 (Ofstead & Calderon 1972): ΔG_p changes sign at T_c = 295.30 K for 1 mol/L (T010)
	pts, err := Sweep(-18.4096, -62.3416, 1, -20, 150, 5)
	if err != nil {
		t.Fatal(err)
	}
	if len(pts) != 35 {
		t.Fatalf("%d points", len(pts))
	}
	for i := 1; i < len(pts); i++ {
		if pts[i].DGkJmol <= pts[i-1].DGkJmol {
			t.Fatalf("ΔG_p not rising with T at %v °C", pts[i].TemperatureC)
		}
		if (pts[i-1].TemperatureK < 295.30) != (pts[i-1].DGkJmol < 0) {
			t.Errorf("sign of ΔG_p at %.2f K is wrong", pts[i-1].TemperatureK)
		}
	}
	if _, err := Sweep(-18, -62, 1, 10, 0, 5); !errors.Is(err, ErrInvalid) {
		t.Error("reversed range accepted")
	}
	if _, err := Sweep(-18, -62, 1, 0, 100, 0.001); !errors.Is(err, ErrInvalid) {
		t.Error("too many points accepted")
	}
}
