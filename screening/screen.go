package screening

import (
	"fmt"
	"math"
	"sort"
	"strconv"
)

// EngineVersion identifies the rules, table and formulas that produced a result; stored with
// saved results so a notebook can tell which engine screened a candidate.
const EngineVersion = "ringsieve-engine/1.0.0"

// Verdicts.
const (
	VerdictPolymerizes = "polymerizes"
	VerdictEquilibrium = "equilibrium_limited"
	VerdictUnfavorable = "unfavorable"
	VerdictBlocked     = "blocked"
	VerdictNotMonomer  = "not_a_monomer"
)

// PolymerizesConversion is the equilibrium conversion at or above which a favoured monomer is
// judged to polymerize (contract: ≥ 0.90).
const PolymerizesConversion = 0.90

// Thermo is the thermodynamic part of a result at the screening conditions.
//
// Formulas (Dainton & Ivin, Q. Rev. Chem. Soc. 1958, 12, 61; ideal dilute solution, ΔS_p°
// referred to 1 mol/L):
//
//	ΔG_p   = ΔH_p − T(ΔS_p° + R ln[M]0)
//	T_c    = ΔH_p / (ΔS_p° + R ln[M]0)        (null when ΔH_p ≥ 0 or the denominator ≥ 0)
//	[M]eq  = exp(ΔH_p/(RT) − ΔS_p°/R)          mol/L
//	X_eq   = max(0, 1 − [M]eq/[M]0)
type Thermo struct {
	DHkJmol       float64  `json:"dh_kj_mol"`
	DSJmolK       float64  `json:"ds_j_mol_k"`
	DGkJmol       float64  `json:"dg_kj_mol"`
	CeilingTempK  *float64 `json:"ceiling_temp_k"`
	EqMonomerMolL float64  `json:"eq_monomer_mol_l"`
	EqConversion  float64  `json:"eq_conversion"`
	DHUncKJmol    float64  `json:"dh_uncertainty_kj_mol"`
	DSUncJmolK    float64  `json:"ds_uncertainty_j_mol_k"`
	DGUncKJmol    float64  `json:"dg_uncertainty_kj_mol"`
	Basis         string   `json:"basis"`
	Source        string   `json:"source,omitempty"`
	TempK         float64  `json:"temperature_k"`
	ConcMolL      float64  `json:"monomer_conc_mol_l"`
	HeatJPerG     *float64 `json:"heat_released_j_g,omitempty"`
	// ParentRingSystem names the strain-table row of the monomer's ring system, if any.
	ParentRingSystem string `json:"parent_ring_system,omitempty"`
	// Unsubstituted: the monomer is that parent itself.
	Unsubstituted bool `json:"unsubstituted_parent,omitempty"`
}

// maxReportedConc caps [M]eq in output (mol/L): beyond it the monomer cannot polymerize at any
// feasible concentration and the exact number has no meaning.
const maxReportedConc = 1e6

// Evaluate applies the thermodynamic formulas at temperature t and initial concentration c.
func Evaluate(dhkJ, dsJ float64, t TempK, c ConcMolL) Thermo {
	T, c0 := float64(t), float64(c)
	dh := dhkJ * 1000
	sEff := dsJ + GasConstant*math.Log(c0)
	th := Thermo{DHkJmol: dhkJ, DSJmolK: dsJ, TempK: T, ConcMolL: c0}
	th.DGkJmol = (dh - T*sEff) / 1000
	if dh < 0 && sEff < 0 {
		tc := dh / sEff
		th.CeilingTempK = &tc
	}
	lnM := dh/(GasConstant*T) - dsJ/GasConstant
	switch {
	case lnM > math.Log(maxReportedConc):
		th.EqMonomerMolL = maxReportedConc
	default:
		th.EqMonomerMolL = math.Exp(lnM)
	}
	th.EqConversion = math.Max(0, 1-th.EqMonomerMolL/c0)
	return th
}

// ConditionsOut echoes the conditions used.
type ConditionsOut struct {
	TemperatureC    float64 `json:"temperature_c"`
	TemperatureK    float64 `json:"temperature_k"`
	MonomerConcMolL float64 `json:"monomer_conc_mol_l"`
	Bulk            bool    `json:"bulk"`
	Catalyst        string  `json:"catalyst"`
}

// Result is one screening result (contract: Screen result).
type Result struct {
	Verdict     string      `json:"verdict"`
	Score       float64     `json:"score"`
	Reasons     []Reason    `json:"reasons"`
	Thermo      *Thermo     `json:"thermo"`
	Descriptors Descriptors `json:"descriptors"`
	Cautions    []string    `json:"cautions"`
	// CatalystCompatibility ranks every catalyst class for the monomer's functional groups.
	CatalystCompatibility []Compatibility `json:"catalyst_compatibility"`
	Conditions            ConditionsOut   `json:"conditions"`
	EngineVersion         string          `json:"engine_version"`
}

var verdictRank = map[string]int{VerdictPolymerizes: 0, VerdictEquilibrium: 1, VerdictUnfavorable: 2, VerdictBlocked: 3, VerdictNotMonomer: 4}

// VerdictRank orders verdicts from best (0) to worst.
func VerdictRank(v string) int { return verdictRank[v] }

// ScreenSMILES screens a structure. Errors: *SMILESError for malformed SMILES; *FieldError when
// bulk conditions cannot be estimated.
func ScreenSMILES(smiles string, c Conditions) (Result, error) {
	s, err := Describe(smiles)
	if err != nil {
		return Result{}, err
	}
	return ScreenStructure(s, c)
}

// ScreenStructure screens a described structure: every ring olefin is judged and the most
// reactive one is reported, the others listed in descriptors.other_ring_olefins.
func ScreenStructure(s *Structure, c Conditions) (Result, error) {
	base := s.moleculeDescriptors()
	var bulkNote *Reason
	if c.Bulk {
		conc, rel, ok := s.BulkConcentration()
		if !ok {
			return Result{}, fieldErr("conditions.bulk", "cannot estimate the neat density of this monomer; give monomer_conc_mol_l instead")
		}
		c.Conc = conc
		v := float64(conc)
		bulkNote = &Reason{Code: "bulk_concentration_estimate", Effect: EffectNote, Value: &v, Unit: "mol/L",
			Detail: fmt.Sprintf("neat monomer: [M]0 ≈ %.2f mol/L ± %.0f%% from the McGowan volume (liquid molar volume ≈ 1.25 × McGowan volume)", v, 100*rel)}
	}
	if len(s.Olefins) == 0 {
		d := base
		d.RingSize = 0
		d.FunctionalGroups = s.Groups
		r := judge(&d, nil, c)
		r.Reasons[0].Detail += s.whyNoOlefin()
		return r, nil
	}
	type cand struct {
		o *Olefin
		r Result
		e Estimate
	}
	cands := make([]cand, 0, len(s.Olefins))
	for _, o := range s.Olefins {
		e := EstimateOlefin(s, o)
		d := o.D
		d.mergeMolecule(&base)
		r := judge(&d, &e, c)
		cands = append(cands, cand{o, r, e})
	}
	sort.SliceStable(cands, func(i, j int) bool {
		a, b := cands[i].r, cands[j].r
		if verdictRank[a.Verdict] != verdictRank[b.Verdict] {
			return verdictRank[a.Verdict] < verdictRank[b.Verdict]
		}
		if a.Score != b.Score {
			return a.Score > b.Score
		}
		return a.Thermo.DGkJmol < b.Thermo.DGkJmol
	})
	best := cands[0].r
	best.Descriptors.RingOlefins = len(cands)
	for _, x := range cands[1:] {
		best.Descriptors.OtherRingOlefins = append(best.Descriptors.OtherRingOlefins, OlefinSummary{
			RingSize: x.o.D.RingSize, RingSystem: x.o.D.RingSystem, OlefinSubstitution: x.o.D.OlefinSubstitution,
			SkeletonKey: x.o.D.CoreKey, DHkJmol: round(x.e.DHkJmol, 2), Note: "verdict for this olefin alone: " + x.r.Verdict,
		})
	}
	best.Descriptors.RingOlefins += s.Skipped
	if n := len(cands) + s.Skipped; n > 1 {
		det := fmt.Sprintf("%d ring olefins: screened on the most reactive; the others can react later (cross-linking, e.g. the cyclopentene ring of dicyclopentadiene)", n)
		if s.Skipped > 0 {
			det += fmt.Sprintf("; %d were not analysed (more than %d ring olefins)", s.Skipped, MaxOlefinsAnalysed)
		}
		best.Reasons = append(best.Reasons, note("several_ring_olefins", det))
	}
	if bulkNote != nil {
		best.Reasons = append(best.Reasons, *bulkNote)
	}
	if len(s.CounterIons) > 0 {
		best.Reasons = append(best.Reasons, note("counter_ion", "salt: screened the largest organic component; other components: "+joinStrings(s.CounterIons)))
	}
	return best, nil
}

// ScreenDescriptors screens a caller's descriptor record.
func ScreenDescriptors(d Descriptors, c Conditions) (Result, error) {
	if err := d.Validate(); err != nil {
		return Result{}, err
	}
	if c.Bulk {
		return Result{}, fieldErr("conditions.bulk", "bulk needs a structure (smiles) to estimate the neat density; give monomer_conc_mol_l for a descriptor record")
	}
	if d.RingSize == 0 {
		return judge(&d, nil, c), nil
	}
	e := EstimateRecord(&d)
	return judge(&d, &e, c), nil
}

func (s *Structure) moleculeDescriptors() Descriptors {
	m := s.Mol
	arom := 0
	for _, a := range s.Main {
		if s.P.AromaticAtom[a] {
			arom++
		}
	}
	heavy := 0
	for _, a := range s.Main {
		if m.Atoms[a].Z != 1 {
			heavy++
		}
	}
	rings := 0
	if len(m.components) == 1 {
		rings = len(s.P.SSSR)
	} else {
		in := make([]bool, len(m.Atoms))
		for _, a := range s.Main {
			in[a] = true
		}
		for _, r := range s.P.SSSR {
			if in[r.Atoms[0]] {
				rings++
			}
		}
	}
	return Descriptors{
		FromStructure:    true,
		SMILES:           s.MainSMILES,
		Formula:          m.formulaOf(s.Main),
		MolWeightGmol:    round(m.molWeightOf(s.Main), 3),
		MonoisotopicMass: round(m.monoMassOf(s.Main), 5),
		HeavyAtoms:       heavy,
		RingCount:        rings,
		AromaticAtoms:    arom,
		CounterIons:      s.CounterIons,
	}
}

func (d *Descriptors) mergeMolecule(b *Descriptors) {
	d.SMILES, d.Formula, d.MolWeightGmol, d.MonoisotopicMass = b.SMILES, b.Formula, b.MolWeightGmol, b.MonoisotopicMass
	d.HeavyAtoms, d.RingCount, d.AromaticAtoms, d.CounterIons = b.HeavyAtoms, b.RingCount, b.AromaticAtoms, b.CounterIons
}

func (s *Structure) whyNoOlefin() string {
	m, p := s.Mol, s.P
	acyclicCC, alkyne, ringAny, arom := false, false, false, false
	for bi, b := range m.Bonds {
		if m.Atoms[b.A].Z == 6 && m.Atoms[b.B].Z == 6 {
			if b.Order == bondDouble && !p.AromaticBond[bi] && p.BondRingSize[bi] == 0 {
				acyclicCC = true
			}
			if b.Order == bondTriple {
				alkyne = true
			}
		}
		if p.BondRingSize[bi] > 0 {
			ringAny = true
		}
		if p.AromaticBond[bi] {
			arom = true
		}
	}
	var parts []string
	if acyclicCC {
		parts = append(parts, "its C=C bonds are acyclic (acyclic diene metathesis or ring-closing metathesis, not ring opening)")
	}
	if alkyne {
		parts = append(parts, "it has a C≡C (alkyne metathesis or polymerization, not ring-opening olefin metathesis)")
	}
	if arom {
		parts = append(parts, "its rings are aromatic")
	} else if ringAny {
		parts = append(parts, "its rings are saturated")
	}
	if len(parts) == 0 {
		return ""
	}
	return ": " + joinStrings(parts)
}

func joinStrings(x []string) string {
	out := ""
	for i, s := range x {
		if i > 0 {
			out += "; "
		}
		out += s
	}
	return out
}

var pow10 = [...]float64{1, 10, 100, 1e3, 1e4, 1e5, 1e6}

func round(x float64, digits int) float64 {
	p := pow10[digits]
	return math.Round(x*p) / p
}

// judge runs the rules and, when there is a ring olefin, the thermodynamics; it sets verdict,
// score and cautions.
func judge(d *Descriptors, e *Estimate, c Conditions) Result {
	r := Result{
		Descriptors:   *d,
		EngineVersion: EngineVersion,
		Conditions: ConditionsOut{TemperatureC: round(c.Temp.Celsius(), 4), TemperatureK: float64(c.Temp),
			MonomerConcMolL: round(float64(c.Conc), 4), Bulk: c.Bulk, Catalyst: string(c.Catalyst)},
		Reasons:               make([]Reason, 0, 8),
		CatalystCompatibility: CompatibilityFor(d.FunctionalGroups),
	}
	in := ruleInput{D: d, Cond: c}
	for _, rl := range rules {
		r.Reasons = append(r.Reasons, rl(in)...)
	}
	if d.RingSize == 0 {
		r.Verdict = VerdictNotMonomer
		r.Score = 0
		r.Cautions = cautions(d, nil, c, r.Verdict)
		return r
	}
	th := Evaluate(e.DHkJmol, e.DSJmolK, c.Temp, c.Conc)
	th.DHUncKJmol = round(e.UH, 2)
	th.DSUncJmolK = round(e.US, 2)
	uG := math.Hypot(e.UH, float64(c.Temp)*e.US/1000)
	th.DGUncKJmol = round(uG, 2)
	th.Basis = e.Basis
	th.Source = e.Source
	th.ParentRingSystem, th.Unsubstituted = e.Parent, e.Bare
	if d.MolWeightGmol > 0 && e.DHkJmol < 0 {
		q := -e.DHkJmol * 1000 / d.MolWeightGmol
		q = round(q, 1)
		th.HeatJPerG = &q
	}
	r.Thermo = &th
	r.Reasons = append(r.Reasons, strainReasons(d, *e)...)
	r.Reasons = append(r.Reasons, e.Notes...)
	// thermodynamic reasons with the numbers
	conv := th.EqConversion
	switch {
	case th.DGkJmol >= 0:
		v := th.DGkJmol
		det := fmt.Sprintf("ΔG_p = %+.1f kJ/mol at %.1f °C and %.3g mol/L: the monomer is favoured over polymer", th.DGkJmol, c.Temp.Celsius(), float64(c.Conc))
		if th.CeilingTempK != nil {
			det += fmt.Sprintf(" (ceiling temperature %.0f K at this concentration)", *th.CeilingTempK)
		}
		r.Reasons = append(r.Reasons, Reason{Code: "above_ceiling_temperature", Effect: EffectPenalizes, Value: &v, Unit: "kJ/mol", Detail: det})
	case conv < PolymerizesConversion:
		v := conv
		r.Reasons = append(r.Reasons, Reason{Code: "equilibrium_monomer", Effect: EffectPenalizes, Value: &v, Unit: "fraction",
			Detail: fmt.Sprintf("equilibrium conversion %.2f ([M]eq = %.3g mol/L): raise the concentration or lower the temperature", conv, th.EqMonomerMolL)})
	default:
		v := conv
		r.Reasons = append(r.Reasons, Reason{Code: "favorable_equilibrium", Effect: EffectFavors, Value: &v, Unit: "fraction",
			Detail: "equilibrium conversion " + strconv.FormatFloat(conv, 'f', 3, 64) + " at these conditions"})
	}
	if uG > 0 && math.Abs(th.DGkJmol) < uG {
		v := uG
		r.Reasons = append(r.Reasons, Reason{Code: "verdict_near_boundary", Effect: EffectNote, Value: &v, Unit: "kJ/mol",
			Detail: fmt.Sprintf("|ΔG_p| = %.1f kJ/mol is within its uncertainty (±%.1f kJ/mol): the ceiling temperature lies within the uncertainty band of the working temperature; treat the verdict as uncertain", math.Abs(th.DGkJmol), uG)})
	}
	// verdict
	blocked := false
	penalty := 0.0
	for _, rs := range r.Reasons {
		if rs.Effect == EffectBlocks {
			blocked = true
		}
		penalty += rs.Penalty
	}
	dg := th.DGkJmol
	switch {
	case blocked:
		r.Verdict = VerdictBlocked
		r.Score = 0.02 + 0.06*sigmoid(-dg/20)
	case dg >= 0:
		r.Verdict = VerdictUnfavorable
		r.Score = 0.10 + 0.15*math.Exp(-dg/5)
	case conv < PolymerizesConversion:
		r.Verdict = VerdictEquilibrium
		r.Score = 0.35 + 0.3*conv/PolymerizesConversion
	default:
		r.Verdict = VerdictPolymerizes
		r.Score = 0.70 + 0.30*sigmoid(-dg/15)
	}
	// penalties lower the score within the verdict's band
	floor := map[string]float64{VerdictBlocked: 0.01, VerdictUnfavorable: 0.1, VerdictEquilibrium: 0.3, VerdictPolymerizes: 0.66}[r.Verdict]
	r.Score = math.Max(floor, r.Score-0.3*math.Min(penalty, 1))
	r.Score = round(r.Score, 4)
	r.Cautions = cautions(d, &th, c, r.Verdict)
	return r
}

func sigmoid(x float64) float64 { return 1 / (1 + math.Exp(-x)) }

// Cautions. They are plain, neutral statements; every list ends by deferring to local codes and
// qualified practice (romp_facts.md section d.3 lists the hazards drawn on here).
const cautionDefer = "These are screening estimates, not a hazard assessment: local codes, your site's process-safety review, the supplier's safety data sheets and qualified practice decide."

func cautions(d *Descriptors, th *Thermo, c Conditions, verdict string) []string {
	out := make([]string, 0, 6)
	if th != nil && th.DHkJmol < 0 && (verdict == VerdictPolymerizes || verdict == VerdictEquilibrium) {
		q := 0.0
		if th.HeatJPerG != nil {
			q = *th.HeatJPerG
		}
		switch {
		case c.Bulk && q > 0:
			rise := q * th.EqConversion / defaultHydrocarbonC
			out = append(out, fmt.Sprintf("Bulk polymerization releases about %.0f J per gram of monomer; with no heat loss the mixture could rise by about %.0f K (heat capacity %.1f J/(g K) assumed). Fast catalysts release most of it within seconds to minutes and gelation stops stirring: treat it as a possible runaway, add monomer or catalyst in portions, and provide cooling.", q, rise, defaultHydrocarbonC))
		case th.DHkJmol <= -40:
			out = append(out, "Strongly exothermic ring opening (ΔH_p ≈ "+f0(th.DHkJmol)+" kJ/mol): at high concentration or in bulk the heat can outrun cooling. Add catalyst or monomer gradually and watch the temperature.")
		}
	}
	if d.MolWeightGmol > 0 && d.MolWeightGmol < 150 && d.HeavyAtoms > 0 {
		out = append(out, "Low-molar-mass cyclic olefin: likely volatile and flammable (cyclopentene and norbornene have flash points below 0 °C); keep away from ignition sources, use closed or vented vessels rated for the pressure, and check the safety data sheet.")
	}
	if th != nil && c.Temp > 373.15 {
		out = append(out, "Reaction above 100 °C: check the boiling points of monomer and solvent and the pressure rating of the vessel.")
	}
	switch c.Catalyst {
	case CatMoWImido:
		out = append(out, "Molybdenum and tungsten imido alkylidenes are air- and moisture-sensitive: handle in a glovebox or on a Schlenk line; quench with an aldehyde; treat residues as heavy-metal waste.")
	case CatClassical:
		out = append(out, "Classical systems use air- and moisture-sensitive metal halides and often pyrophoric alkylaluminium co-catalysts: inert-atmosphere handling and trained staff only; treat residues as heavy-metal waste.")
	default:
		out = append(out, "Ruthenium alkylidenes tolerate air as solids, but degas solutions for long or hot runs; quench with an excess of ethyl vinyl ether (quenching stops the chemistry, it does not remove heat already released; cooling and dilution come first); treat residues as heavy-metal waste.")
	}
	out = append(out, cautionDefer)
	return out
}

// SweepPoint is one temperature of a sweep.
type SweepPoint struct {
	TemperatureC  float64 `json:"temperature_c"`
	TemperatureK  float64 `json:"temperature_k"`
	DGkJmol       float64 `json:"dg_kj_mol"`
	EqMonomerMolL float64 `json:"eq_monomer_mol_l"`
	EqConversion  float64 `json:"eq_conversion"`
}

// MaxSweepPoints bounds a sweep.
const MaxSweepPoints = 2001

// Sweep evaluates ΔG_p, [M]eq and equilibrium conversion from fromC to toC (°C) in steps of stepC
// at concentration c. Errors are *FieldError values.
func Sweep(dhkJ, dsJ float64, c ConcMolL, fromC, toC, stepC float64) ([]SweepPoint, error) {
	for name, v := range map[string]float64{"sweep.from_c": fromC, "sweep.to_c": toC, "sweep.step_c": stepC} {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, fieldErr(name, "must be a finite number")
		}
	}
	if stepC <= 0 {
		return nil, fieldErr("sweep.step_c", "must be above 0")
	}
	if toC < fromC {
		return nil, fieldErr("sweep.to_c", "must not be below from_c")
	}
	if _, err := TempFromCelsius(fromC); err != nil {
		return nil, fieldErr("sweep.from_c", "%v", err)
	}
	if _, err := TempFromCelsius(toC); err != nil {
		return nil, fieldErr("sweep.to_c", "%v", err)
	}
	n := int(math.Floor((toC-fromC)/stepC+1e-9)) + 1
	if n > MaxSweepPoints {
		return nil, fieldErr("sweep.step_c", "too many points (%d > %d)", n, MaxSweepPoints)
	}
	pts := make([]SweepPoint, 0, n)
	for i := 0; i < n; i++ {
		tc := fromC + float64(i)*stepC
		t := TempK(tc + ZeroCelsiusK)
		th := Evaluate(dhkJ, dsJ, t, c)
		pts = append(pts, SweepPoint{TemperatureC: round(tc, 6), TemperatureK: float64(t), DGkJmol: th.DGkJmol, EqMonomerMolL: th.EqMonomerMolL, EqConversion: th.EqConversion})
	}
	return pts, nil
}
