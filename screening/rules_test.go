package screening_test

import (
	"errors"
	"math"
	"testing"

	. "ringsieve/screening"
	"ringsieve/screening/describe"
	"ringsieve/screening/internal/reftest"
	"ringsieve/screening/judge"
	"ringsieve/screening/units"
)

func hasReason(r Result, code, effect string) bool {
	for _, rs := range r.Reasons {
		if rs.Code == code && rs.Effect == effect {
			return true
		}
	}
	return false
}

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
		{"no ring olefin", Descriptors{RingSize: 0}, units.CatRuNHC, VerdictNotMonomer, "no_ring_olefin", judge.EffectBlocks, "contract: not_a_monomer"},
		{"six-membered ring", Descriptors{RingSize: 6}, units.CatRuNHC, VerdictUnfavorable, "six_membered_ring", judge.EffectPenalizes, "R028/R029/R034 (general knowledge, from memory); common practice"},
		{"conjugated diene, small ring", Descriptors{RingSize: 5, Conjugated: true}, units.CatRuNHC, VerdictBlocked, "conjugated_diene_in_ring", judge.EffectBlocks, "R028 1,3-cyclohexadiene (from memory); common practice"},
		{"conjugated diene, eight-ring", Descriptors{RingSize: 8, ConjugatedWith: []string{describe.ConjRingOlefin}}, units.CatMoWImido, VerdictPolymerizes, "conjugated_diene_in_ring", judge.EffectPenalizes, "R049 cyclooctatetraene with W alkylidenes (Klavetter et al., J. Am. Chem. Soc. 1988)"},
		{"tetrasubstituted", Descriptors{RingSize: 5, RingSystem: describe.SystemBridged, OlefinSubstitution: 4}, units.CatRuNHC, VerdictBlocked, "tetrasubstituted_olefin", judge.EffectBlocks, "common practice"},
		{"trisubstituted, strained", Descriptors{RingSize: 8, OlefinSubstitution: 3, TransOlefin: true}, units.CatRuNHC, VerdictPolymerizes, "trisubstituted_olefin", judge.EffectPenalizes, "R043 trans-1-butylcyclooctene (Farrell & Beers, ACS Macro Lett. 2017)"},
		{"ewg on olefin", Descriptors{RingSize: 4, OlefinSubstitution: 3, EWGOnOlefin: true}, units.CatRuNHC, VerdictBlocked, "ewg_on_olefin", judge.EffectBlocks, "R008 (Song, Parker, Sampson, J. Am. Chem. Soc. 2009, 131, 3444)"},
		{"ewg on ring", Descriptors{RingSize: 5, EWGOnOlefinRing: true, DHkJmol: &dhNB, DSJmolK: &dsNB}, units.CatRuNHC, VerdictPolymerizes, "ewg_on_olefin_ring", judge.EffectPenalizes, "common practice"},
		{"quaternary allylic ewg, ru", Descriptors{RingSize: 3, QuaternaryAllylicEWG: true}, units.CatRuNHC, VerdictBlocked, "quaternary_allylic_ewg", judge.EffectBlocks, "R003 (Macromolecules 2020, 53, 5833)"},
		{"bulky allylic", Descriptors{RingSize: 5, RingSystem: describe.SystemBridged, BulkyAllylic: true}, units.CatRuNHC, VerdictPolymerizes, "bulky_allylic_substituent", judge.EffectPenalizes, "common practice"},
		{"acid with Mo/W", Descriptors{RingSize: 5, RingSystem: describe.SystemBridged, FunctionalGroups: []string{describe.FGCarboxylicAcid}}, units.CatMoWImido, VerdictBlocked, "catalyst_incompatible_group", judge.EffectBlocks, "R073 (Trnka et al., Acc. Chem. Res. 2001, from memory)"},
		{"acid with Ru", Descriptors{RingSize: 5, RingSystem: describe.SystemBridged, FunctionalGroups: []string{describe.FGCarboxylicAcid}}, units.CatRuPyridine, VerdictPolymerizes, "", "", "R074 (Lin, Shi, Niwayama, RSC Adv. 2023)"},
		{"primary amine with Ru", Descriptors{RingSize: 5, RingSystem: describe.SystemBridged, FunctionalGroups: []string{describe.FGPrimaryAmine}}, units.CatRuNHC, VerdictBlocked, "catalyst_incompatible_group", judge.EffectBlocks, "R094 (amine-tagged ROMP study, seen in abstract)"},
		{"thiol, any class", Descriptors{RingSize: 5, RingSystem: describe.SystemBridged, FunctionalGroups: []string{describe.FGThiol}}, units.CatMoWImido, VerdictBlocked, "catalyst_incompatible_group", judge.EffectBlocks, "R098 (from memory); romp_facts a.3 rule 3"},
		{"aldehyde with Mo/W", Descriptors{RingSize: 5, RingSystem: describe.SystemBridged, FunctionalGroups: []string{describe.FGAldehyde}}, units.CatMoWImido, VerdictBlocked, "catalyst_incompatible_group", judge.EffectBlocks, "R103 (Lee & Register, Macromolecules 2004)"},
		{"ester with classical", Descriptors{RingSize: 5, RingSystem: describe.SystemBridged, FunctionalGroups: []string{describe.FGEster}}, units.CatClassical, VerdictPolymerizes, "catalyst_conditional_group", judge.EffectPenalizes, "R114 (from memory) vs Romer et al. 2014 (seen): conditional, not a block"},
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
			t.Errorf("%s (%s): verdict %s, want %s; reasons %s", c.name, c.evidence, r.Verdict, c.verdict, judge.MainReasons(&r))
		}
		if c.code != "" && !hasReason(r, c.code, c.effect) {
			t.Errorf("%s (%s): no %s reason %s; got %s", c.name, c.evidence, c.effect, c.code, judge.MainReasons(&r))
		}
		if r.Score < 0 || r.Score > 1 || math.IsNaN(r.Score) {
			t.Errorf("%s: score %v out of [0, 1]", c.name, r.Score)
		}
	}
}

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

func TestNearBoundaryReason(t *testing.T) {
	c := DefaultConditions()
	c.Conc = 1.0
	tk, _ := units.TempFromCelsius(29.5) // near T_c = 302.70 K at 1 mol/L (T020, Tuba et al. 2013 pair used by the table anchor)
	c.Temp = tk
	r, _ := ScreenSMILES("C1=CCCC1", c)
	if !hasReason(r, "verdict_near_boundary", judge.EffectNote) {
		t.Errorf("no boundary note at %.2f K (T_c %v)", float64(tk), *r.Thermo.CeilingTempK)
	}
}

func TestCyclopenteneSuppliedDescriptors(t *testing.T) {
	dh, ds := -18.4096, -62.3416
	rec := func() Descriptors { return Descriptors{RingSize: 5, DHkJmol: &dh, DSJmolK: &ds} }
	at := func(tc, conc float64) Result {
		c := DefaultConditions()
		tk, _ := units.TempFromCelsius(tc)
		c.Temp, c.Conc = tk, ConcMolL(conc)
		r, err := ScreenDescriptors(rec(), c)
		if err != nil {
			t.Fatal(err)
		}
		return r
	}
	r := at(25, 1.0)
	reftest.Near(t, "T_c at 1.0 mol/L (T010: 295.30 K)", *r.Thermo.CeilingTempK, 295.30, 0.01)
	reftest.Near(t, "[M]eq at 25 °C (T014: 1.0742 mol/L)", r.Thermo.EqMonomerMolL, 1.0742, 1e-4)
	if r.Verdict != VerdictUnfavorable {
		t.Errorf("1.0 mol/L, 25 °C: verdict %s, want unfavorable (ΔG_p = %+.3f kJ/mol)", r.Verdict, r.Thermo.DGkJmol)
	}
	if r.Thermo.Basis != "supplied" {
		t.Errorf("basis %s, want supplied", r.Thermo.Basis)
	}
	r = at(0, 5.0)
	if r.Verdict == VerdictUnfavorable || r.Verdict == VerdictBlocked || r.Verdict == VerdictNotMonomer {
		t.Errorf("5.0 mol/L, 0 °C: verdict %s; T_c at 5.0 mol/L is 376.01 K (T012), so it must be favoured", r.Verdict)
	}
	reftest.Near(t, "T_c at 5.0 mol/L (T012: 376.01 K)", *r.Thermo.CeilingTempK, 376.01, 0.01)
}

// TestMeasuredBesideEstimate screens every measured structure of romp_thermo.csv (T001–T008):
// the result reports the preferred measurement as thermo.measured with its source and uses it
// for the top-level numbers, and reports beside it the estimate made without any measurement of
// the structure, which must lie within twice its stated uncertainty of every measured row.
func TestMeasuredBesideEstimate(t *testing.T) {
	ref := reftest.Thermo(t)
	for _, id := range []string{"T001", "T002", "T003", "T004", "T005", "T006", "T007", "T008"} {
		row := ref[id]
		r, err := ScreenSMILES(row.SMILES, DefaultConditions())
		if err != nil {
			t.Fatalf("%s %s: %v", id, row.SMILES, err)
		}
		th := r.Thermo
		if th.Basis != "measured" || th.Measured == nil || th.Estimate == nil {
			t.Fatalf("%s (%s): basis %s, measured %v, estimate %v", id, row.Monomer, th.Basis, th.Measured, th.Estimate)
		}
		if th.DHkJmol != th.Measured.DHkJmol || th.Measured.Source == "" {
			t.Errorf("%s: top-level ΔH_p %.2f is not the measurement %.2f", id, th.DHkJmol, th.Measured.DHkJmol)
		}
		est := th.Estimate
		if est.DHkJmol == th.Measured.DHkJmol {
			t.Errorf("%s: the estimate equals the measurement (%.2f): not left out", id, est.DHkJmol)
		}
		switch row.Quantity {
		case "dH_p":
			if d := math.Abs(est.DHkJmol - row.Value); d > 2*est.DHUncertaintyKJmol {
				t.Errorf("%s %s ΔH_p: estimate %.2f ± %.2f, measured %.2f (%s)", id, row.Monomer, est.DHkJmol, est.DHUncertaintyKJmol, row.Value, row.Source)
			}
		case "dS_p":
			if d := math.Abs(est.DSJmolK - row.Value); d > 2*est.DSUncertaintyJmolK {
				t.Errorf("%s %s ΔS_p: estimate %.2f ± %.2f, measured %.2f (%s)", id, row.Monomer, est.DSJmolK, est.DSUncertaintyJmolK, row.Value, row.Source)
			}
		}
	}
}
