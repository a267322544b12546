package plan

import (
	"math"
	"testing"

	"ringsieve/screening"
	"ringsieve/screening/describe"
	"ringsieve/screening/internal/reftest"
	"ringsieve/screening/judge"
	"ringsieve/screening/thermo"
	"ringsieve/screening/units"
)

var near = reftest.Near

// Worked examples of romp_facts.md section (e), recomputed (derived values: exact to the printed
// digits, ±1 in the last digit). Sources of the formulas are named in kinetics.go.

func TestPoissonDispersity(t *testing.T) {
	near(t, "e.1 Poisson Đ, DP 100 (romp_facts e.1, derived)", PoissonDispersity(100), 1.0099, 1e-4)
	near(t, "e.1b DP 50", PoissonDispersity(50), 1.0196, 1e-4)
	near(t, "e.1b DP 200", PoissonDispersity(200), 1.004975, 1e-6)
	near(t, "e.1b DP 1000", PoissonDispersity(1000), 1.000999, 1e-6)
}

func TestGoldModel(t *testing.T) {
	// e.2: r = k_p/k_i = 100, X = 100, p = 1 → Đ 1.1763, unreacted 16.02 %, DP_n 119.07
	g := GoldAt(100, 100, 1)
	near(t, "e.2 Đ (romp_facts e.2, derived)", g.Dispersity, 1.1763, 1e-4)
	near(t, "e.2 unreacted initiator", g.UnreactedInitiator, 0.1602, 1e-4)
	near(t, "e.2 real DP_n", g.DPn, 119.07, 0.01)
	near(t, "e.2 s", g.S, 1.8314, 1e-4)
	// e.2b: (r, X) → Đ, unreacted fraction, DP_n
	cases := []struct{ r, x, d, u, dp float64 }{
		{1, 100, 1.0100, 0, 100}, {10, 50, 1.0555, 0.0027, 50.14}, {10, 100, 1.0199, 0, 100},
		{100, 200, 1.1146, 0.0530, 211.19}, {1000, 100, 1.2841, 0.6174, 261.39}, {1e4, 100, 1.3180, 0.8653, 742.1}, {1e6, 100, 1.3318, 0.9859, 7105},
	}
	for _, c := range cases {
		g := GoldAt(c.r, c.x, 1)
		near(t, "e.2b Đ", g.Dispersity, c.d, 1e-4)
		near(t, "e.2b unreacted", g.UnreactedInitiator, c.u, 1e-4)
		near(t, "e.2b DP_n", g.DPn, c.dp, math.Max(0.01, c.dp*2e-4))
	}
	// e.2c: r → ∞ gives Đ → 4/3; r → 0 recovers Poisson
	near(t, "e.2c limit", GoldAt(1e9, 100, 1).Dispersity, 4.0/3, 2e-3)
	near(t, "r → 0 is Poisson", GoldAt(1e-9, 100, 1).Dispersity, PoissonDispersity(100), 1e-6)
}

func TestTheoreticalMn(t *testing.T) {
	// e.3: norbornene C7H10, M = 94.157 g/mol; DP 100; benzylidene start, vinyl-ether quench
	// (M_ends = 104.152) → M_n 9519.85 g/mol
	r, _ := screening.ScreenSMILES("C1=CC2CCC1C2", screening.DefaultConditions())
	near(t, "e.3 M(C7H10)", r.Descriptors.MolWeightGmol, 94.157, 1e-3)
	p, err := Make(r, Input{TargetDP: 100}, screening.DefaultConditions())
	if err != nil {
		t.Fatal(err)
	}
	near(t, "e.3 M_n (romp_facts e.3, derived)", *p.MnGmol, 9519.85, 0.01)
	// the class default k_i/k_p = 0.01 (from memory) leaves initiator unstarted: fewer chains, so
	// less monomer per initiator is charged for DP 100, and the chains started reach it
	if *p.MonomerToInitiator >= 100 || p.Living.DPSlowInitiation == nil {
		t.Fatalf("slow initiation: [M]0/[I]0 %.2f, want below 100", *p.MonomerToInitiator)
	}
	near(t, "started chains reach DP 100 (Gold model)", *p.Living.DPSlowInitiation, 100, 1e-3)
	if p.Living.MnAllStartedGmol >= *p.MnGmol {
		t.Errorf("M_n if all started %.1f should be below the real M_n %.1f", p.Living.MnAllStartedGmol, *p.MnGmol)
	}
	// fast initiation recovers the living stoichiometry: [M]0/[I]0 = DP/X_eq (X_eq ≈ 1)
	fast := 1e6
	pf, _ := Make(r, Input{TargetDP: 100, KiOverKp: &fast}, screening.DefaultConditions())
	near(t, "monomer/initiator with instant initiation", *pf.MonomerToInitiator, 100, 1e-3)
	// by M_n the same plan comes back
	p2, _ := Make(r, Input{TargetMn: 9519.85}, screening.DefaultConditions())
	near(t, "DP from M_n", *p2.DP, 100, 1e-3)
}

func TestTimeToConversion(t *testing.T) {
	// e.4: k_p = 10 L/(mol s), [I]0 = 1.0 mmol/L, instant initiation → 299.57 s to 95 %
	near(t, "e.4 (romp_facts e.4, derived)", TimeToConversion(10, 0, 0.1, 1e-3, 0.95), 299.57, 0.01)
	// e.4b: k_i = 0.1 L/(mol s), [M]0 = 0.1 mol/L → 441.5 s, 17.0 % initiator unreacted at p = 0.95
	near(t, "e.4b slow initiation", TimeToConversion(10, 0.1, 0.1, 1e-3, 0.95), 441.5, 0.1)
	near(t, "e.4b unreacted", GoldAt(100, 100, 0.95).UnreactedInitiator, 0.170, 1e-3)
	// e.4c: k_i = k_p gives the instant-initiation time to 5 digits
	near(t, "e.4c k_i = k_p", TimeToConversion(10, 10, 0.1, 1e-3, 0.95), 299.57, 0.02)
	// reversible propagation, instant initiation: [M](t) − [M]eq decays as exp(−k_p[I]0 t), so
	// p = 0.855 of X_eq = 0.9 is reached at −ln(1 − 0.855/0.9)/(k_p[I]0) = 299.57 s (common
	// practice: first-order approach to equilibrium; the planner calls the Gold integral on the
	// monomer above [M]eq)
	near(t, "approach to [M]eq", TimeToConversion(10, 0, 0.1*0.9, 1e-3, 0.855/0.9), 299.57, 0.01)
}

func TestAdiabaticRise(t *testing.T) {
	// e.5: bulk dicyclopentadiene, q = 350 J/g, c_p = 1.6 J/(g K) (Robertson et al., Nature 2018,
	// 557, 223, rows T170/T172) → 218.75 K; from 20 °C, 238.75 °C; with α0 = 0.01, 236.56 °C
	rise := 350.0 / 1.6
	near(t, "e.5 ΔT_ad", rise, 218.75, 1e-9)
	near(t, "e.5 T_max", 20+rise, 238.75, 1e-9)
	near(t, "e.5 T_max with α0", 20+(1-0.01)*350/1.6, 236.56, 0.01)
	// e.5b (molar form, arithmetic check with from-memory inputs): norbornene 1.0 mol/L in
	// toluene, −ΔH_p = 62 kJ/mol, ρ = 870 g/L, c_p = 1.7 J/(g K) → 41.92 K
	dh := -62.0
	d := describe.Descriptors{RingSize: 5, RingSystem: describe.SystemBridged, DHkJmol: &dh}
	r, _ := screening.ScreenDescriptors(d, screening.DefaultConditions())
	solvents["e5b"] = solventData{Density: 870, Cp: 1.7, BoilC: 111}
	defer delete(solvents, "e5b")
	p, err := Make(r, Input{TargetDP: 100, MonomerMolarMass: 94.157, Solvent: "e5b"}, screening.DefaultConditions())
	if err != nil {
		t.Fatal(err)
	}
	near(t, "e.5b ΔT_ad (arithmetic check)", p.AdiabaticRiseK/r.Thermo.EqConversion, 41.92, 0.01)
	// e.5c mass form: 20 wt % norbornene, q = 658.47 J/g, c_p 1.7 → 77.47 K
	near(t, "e.5c ΔT_ad (arithmetic check)", 0.20*62000/94.157/1.7, 77.47, 0.01)
}

func TestJacobsonStockmayer(t *testing.T) {
	// e.6: polyoctenamer, ν_b = 8, ⟨l²⟩ = 2.2500 Å², C = 6.7 → B 0.2068, c_crit(x ≥ 2) 0.3335 mol/L
	// (model values, romp_facts.md e.6)
	near(t, "⟨l²⟩ for ν_b 8", MeanSquareBondLength(8), 2.2500, 1e-4)
	b := JSConstantMolL(8, 2.25, 6.7)
	near(t, "e.6 B (model value)", b, 0.2068, 1e-4)
	near(t, "e.6 c_crit", JSCriticalConc(b, 2), 0.3335, 1e-4)
	// e.6b: C4H6 units from 1,5-cyclooctadiene, ν_b 4, ⟨l²⟩ 2.1591, C 4.9, x_min 3 → B 0.9950, c_crit 1.2525
	near(t, "⟨l²⟩ for ν_b 4", MeanSquareBondLength(4), 2.1591, 1e-4)
	b = JSConstantMolL(4, 2.1591, 4.9)
	near(t, "e.6b B (model value)", b, 0.9950, 1e-4)
	near(t, "e.6b c_crit", JSCriticalConc(b, 3), 1.2525, 1e-4)
	// through the planner: cis-cyclooctene at 1.0 mol/L → cyclic weight fraction 33.3 % (e.6)
	r, _ := screening.ScreenSMILES(`C1=C\CCCCCC/1`, screening.DefaultConditions())
	p, err := Make(r, Input{TargetDP: 100}, screening.DefaultConditions())
	if err != nil {
		t.Fatal(err)
	}
	if !p.RingChain.Applies || p.CriticalConcMolL == nil {
		t.Fatal("ring–chain not applied to cyclooctene")
	}
	near(t, "e.6 cyclic fraction at 1.0 mol/L", *p.RingChain.CyclicWeightFraction, 0.3335, 1e-3)
	// the units in cyclics are not in chains: chain conversion = X_eq − c_crit/[M]0 (e.6 model)
	if p.Living == nil {
		t.Fatal("no living plan for cyclooctene")
	}
	near(t, "chain conversion", p.Living.ChainConversion, r.Thermo.EqConversion-0.3335, 1e-3)
	// COD in C4H6 units: a ruthenium class makes trans-rich chains, C = 5.8 (romp_facts.md c,
	// row C4H6 with C 5.8: c_crit(x ≥ 3) 0.9726); a Mo/W class, cis-rich, C = 4.9 (1.2525)
	r, _ = screening.ScreenSMILES(`C1=C\CC/C=C\CC/1`, screening.DefaultConditions())
	p, _ = Make(r, Input{TargetDP: 100}, screening.DefaultConditions())
	near(t, "c_crit through the planner, ruthenium (units)", *p.RingChain.CriticalConcUnitsMolL, 0.9726, 1e-3)
	mo := screening.DefaultConditions()
	mo.Catalyst = units.CatMoWImido
	r, _ = screening.ScreenSMILES(`C1=C\CC/C=C\CC/1`, mo)
	p, _ = Make(r, Input{TargetDP: 100}, mo)
	near(t, "e.6b c_crit through the planner, Mo/W (units)", *p.RingChain.CriticalConcUnitsMolL, 1.2525, 1e-3)
	// strained norbornene: cyclics negligible, null
	r, _ = screening.ScreenSMILES("C1=CC2CCC1C2", screening.DefaultConditions())
	p, _ = Make(r, Input{TargetDP: 100}, screening.DefaultConditions())
	if p.CriticalConcMolL != nil {
		t.Errorf("norbornene got a critical concentration")
	}
	// below the critical concentration a blocking reason
	c := screening.DefaultConditions()
	c.Conc = 0.2
	r, _ = screening.ScreenSMILES(`C1=C\CCCCCC/1`, c)
	p, _ = Make(r, Input{TargetDP: 100}, c)
	if len(p.Reasons) == 0 || p.Reasons[0].Code != "below_critical_concentration" {
		t.Errorf("0.2 mol/L cyclooctene: reasons %v", p.Reasons)
	}
}

func TestCyclopenteneNeatCeiling(t *testing.T) {
	// e.7: neat cyclopentene [M]0 = 11.318 mol/L → T_c 436.59 K (Ofstead & Calderon pair) and
	// 409.41 K (Tuba et al. pair); ideal-dilute extrapolation, illustrative
	near(t, "e.7 Ofstead & Calderon pair", *thermo.Evaluate(-18.4096, -62.3416, 298.15, 11.318).CeilingTempK, 436.59, 0.01)
	near(t, "e.7 Tuba pair", *thermo.Evaluate(-23.4304, -77.4040, 298.15, 11.318).CeilingTempK, 409.41, 0.01)
}

// TestCompatibilityClassicRows: the matrix's classic rows (romp_facts.md a.2/a.3, from memory
// unless noted): protic groups rule out Mo/W and classical systems, thiols and primary amines
// poison every class, aldehydes react with Mo/W, esters are tolerated by ruthenium.
func TestCompatibilityClassicRows(t *testing.T) {
	cases := []struct {
		group string
		cat   units.CatalystClass
		want  string
	}{
		{describe.FGCarboxylicAcid, units.CatMoWImido, judge.TolPoisons}, {describe.FGCarboxylicAcid, units.CatRuNHC, judge.TolTolerated}, {describe.FGAlcohol, units.CatClassical, judge.TolPoisons},
		{describe.FGThiol, units.CatRuPyridine, judge.TolPoisons}, {describe.FGPrimaryAmine, units.CatRuNHC, judge.TolPoisons}, {describe.FGAldehyde, units.CatMoWImido, judge.TolReacts},
		{describe.FGEster, units.CatRuPhosphine, judge.TolTolerated}, {describe.FGVinylEther, units.CatRuNHC, judge.TolReacts}, {describe.FGTertiaryAmine, units.CatRuNHC, judge.TolSlows},
	}
	for _, c := range cases {
		if got, _ := judge.Tolerance(c.cat, c.group); got != c.want {
			t.Errorf("%s with %s: %s, want %s", c.group, c.cat, got, c.want)
		}
	}
	ranked := judge.CompatibilityFor([]string{describe.FGCarboxylicAcid})
	if ranked[0].Catalyst.IsRuthenium() == false || ranked[len(ranked)-1].Status != judge.TolPoisons {
		t.Errorf("acid ranking: %+v", ranked)
	}
}

func TestPlanValidation(t *testing.T) {
	r, _ := screening.ScreenSMILES("C1=CC2CCC1C2", screening.DefaultConditions())
	for _, in := range []Input{{}, {TargetDP: 10, TargetMn: 1000}, {TargetDP: -5}, {TargetMn: 50}, {TargetDP: 10, TargetConversion: 1.2}, {TargetDP: 10, Solvent: "ether"}} {
		if _, err := Make(r, in, screening.DefaultConditions()); err == nil {
			t.Errorf("%+v accepted", in)
		}
	}
}
