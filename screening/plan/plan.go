// Package plan turns a screened monomer into a polymerization plan: catalyst-class ranking,
// living-polymerization amounts, M_n and dispersity, conversion–time, ring–chain equilibria
// (Jacobson–Stockmayer) and the thermal hazard.
package plan

import (
	"fmt"
	"math"
	"ringsieve/screening/thermo"
	"strings"

	"ringsieve/screening/describe"
	"ringsieve/screening/judge"
	"ringsieve/screening/units"
)

// Polymerization planning: catalyst-class ranking, living-polymerization amounts and
// dispersity, conversion–time, ring–chain equilibria and thermal hazard, from the same
// descriptors and thermodynamics as screening.

// Input is everything a plan needs besides the screened monomer.
type Input struct {
	TargetDP          float64 // target number-average degree of polymerization, or 0
	TargetMn          float64 // target M_n in g/mol, or 0
	MonomerMassG      float64 // monomer charged per batch, g (default 1 g)
	MonomerMolarMass  float64 // g/mol; from the structure when 0
	EndGroupMass      *float64
	CatalystMolarMass *float64 // g/mol; class default when nil
	KiOverKp          *float64 // initiation / propagation rate-constant ratio; class default when nil
	KpLmolS           *float64 // propagation rate constant, L/(mol s); no times without it
	TargetConversion  float64  // for the time estimate (default 0.95)
	Solvent           string   // for the adiabatic rise in solution (default toluene)
}

// End groups of a benzylidene initiator quenched with a vinyl ether: PhCH= (C7H6) and =CH2
// (CH2), 90.125 + 14.027 = 104.152 g/mol (romp_facts.md b.1, derived with IUPAC weights).
const DefaultEndGroupMass = 104.152

type classDefault struct {
	molarMass *float64 // g/mol of a representative well-defined initiator of the class
	kiOverKp  *float64
	note      string
}

func fptr(v float64) *float64 { return &v }

// Class defaults, marked as such in every plan. Molar masses are computed with IUPAC 2021
// weights for representative formulas: ruthenium benzylidene with two tricyclohexylphosphines,
// C43H72Cl2P2Ru; its N-heterocyclic-carbene analogue, C46H65Cl2N2PRu; the bis(pyridine) adduct,
// C38H42Cl2N4Ru; a molybdenum imido alkylidene bis(hexafluoro-tert-butoxide), C30H35F12MoNO2.
// k_i/k_p values are orders of magnitude for norbornene-type monomers, from memory.
var classDefaults = map[units.CatalystClass]classDefault{
	units.CatRuPhosphine: {fptr(822.97), fptr(0.1), "first-generation phosphine type: initiation somewhat slower than propagation"},
	units.CatRuNHC:       {fptr(848.98), fptr(0.01), "N-heterocyclic-carbene type: initiation much slower than propagation (broad Đ)"},
	units.CatRuPyridine:  {fptr(726.75), fptr(10), "pyridine adduct: initiation faster than propagation (narrow Đ)"},
	units.CatMoWImido:    {fptr(765.54), fptr(1), "Mo/W imido alkylidene: initiation comparable to propagation"},
	units.CatClassical:   {nil, nil, "ill-defined classical system: not a living polymerization; no amounts or Đ can be planned"},
}

// Solvent data for the adiabatic rise: density (g/L) and specific heat capacity (J/(g K)) at
// about 25 °C, boiling point (°C). Cyclohexane and benzene heat capacities are NIST Chemistry
// WebBook values (romp_facts.md d.2, seen); the other entries are from memory.
type solventData struct {
	Density, Cp, BoilC float64
	Evidence           string
}

var solvents = map[string]solventData{
	"toluene":         {867, 1.71, 110.6, "from memory"},
	"dichloromethane": {1326, 1.19, 39.6, "from memory"},
	"tetrahydrofuran": {889, 1.72, 66, "from memory"},
	"cyclohexane":     {779, 1.854, 80.7, "heat capacity NIST Chemistry WebBook (seen); density and boiling point from memory"},
	"benzene":         {876, 1.737, 80.1, "heat capacity NIST Chemistry WebBook (seen); density and boiling point from memory"},
	"chloroform":      {1489, 0.96, 61.2, "from memory"},
}

// SolventNames lists the solvents the hazard estimate knows.
func SolventNames() []string {
	return []string{"toluene", "dichloromethane", "tetrahydrofuran", "cyclohexane", "benzene", "chloroform"}
}

// Monomer boiling points (°C) of unsubstituted parents, keyed by ring-table name: cyclopentene
// about 44 and norbornene about 96 and dicyclopentadiene about 170 (romp_facts.md d.3, seen in
// encyclopedia copies or from memory as marked there); the rest from memory.
var parentBoilingC = map[string]float64{
	"cyclopentene": 44, "norbornene": 96, "dicyclopentadiene": 170, "cis-cyclooctene": 145,
	"1,5-cyclooctadiene": 150, "cyclooctatetraene": 142, "norbornadiene": 89, "cycloheptene": 115,
	"2,3-dihydrofuran": 55, "cyclododecene": 232,
}

// Living is the living-polymerization part of a plan.
type Living struct {
	DP                         float64  `json:"dp"`
	MnGmol                     float64  `json:"mn_g_mol"`
	MnFullConversionGmol       float64  `json:"mn_full_conversion_g_mol"`
	MonomerToInitiator         float64  `json:"monomer_to_initiator"`
	EqConversion               float64  `json:"eq_conversion"`
	EndGroupMassGmol           float64  `json:"end_group_mass_g_mol"`
	MonomerMolarMassGmol       float64  `json:"monomer_molar_mass_g_mol"`
	MonomerMassG               float64  `json:"monomer_mass_g"`
	MonomerMmol                float64  `json:"monomer_mmol"`
	CatalystMmol               float64  `json:"catalyst_mmol"`
	CatalystMassMg             *float64 `json:"catalyst_mass_mg"`
	CatalystMolarMassGmol      *float64 `json:"catalyst_molar_mass_g_mol"`
	CatalystMolarMassBasis     string   `json:"catalyst_molar_mass_basis"`
	DispersityPoisson          float64  `json:"dispersity_poisson"`
	DispersitySlowInitiation   *float64 `json:"dispersity_slow_initiation"`
	KiOverKp                   *float64 `json:"ki_over_kp"`
	KiOverKpBasis              string   `json:"ki_over_kp_basis"`
	UnreactedInitiatorFraction *float64 `json:"unreacted_initiator_fraction"`
	DPSlowInitiation           *float64 `json:"dp_slow_initiation"`
	// ChainConversion is the share of monomer in chains at equilibrium: the equilibrium
	// conversion less the monomer units held in cyclic oligomers (Jacobson–Stockmayer).
	ChainConversion float64 `json:"chain_conversion"`
	// MnAllStartedGmol is M_n if every initiator started (living stoichiometry); with slow
	// initiation the ratio [M]0/[I]0 is chosen so that the chains actually started reach dp.
	MnAllStartedGmol float64  `json:"mn_all_started_g_mol"`
	TargetConversion float64  `json:"target_conversion"`
	TimeToTargetS    *float64 `json:"time_to_target_s"`
	ConversionTime   []Point  `json:"conversion_time,omitempty"`
	Basis            string   `json:"basis"`
}

// Point is one (time, conversion) sample.
type Point struct {
	TimeS      float64 `json:"time_s"`
	Conversion float64 `json:"conversion"`
}

// RingChain is the Jacobson–Stockmayer part of a plan (model values).
type RingChain struct {
	Applies                bool     `json:"applies"`
	SkeletalBondsPerUnit   int      `json:"skeletal_bonds_per_unit,omitempty"`
	CharacteristicRatio    float64  `json:"characteristic_ratio,omitempty"`
	MeanSquareBondLengthA2 float64  `json:"mean_square_bond_length_a2,omitempty"`
	JSConstantBMolL        float64  `json:"js_constant_b_mol_l,omitempty"`
	SmallestCyclicX        int      `json:"smallest_cyclic_x,omitempty"`
	CriticalConcUnitsMolL  *float64 `json:"critical_conc_units_mol_l"`
	CriticalConcMolL       *float64 `json:"critical_conc_mol_l"`
	CyclicWeightFraction   *float64 `json:"cyclic_weight_fraction"`
	K2MolL                 float64  `json:"k2_mol_l,omitempty"`
	K3MolL                 float64  `json:"k3_mol_l,omitempty"`
	Basis                  string   `json:"basis"`
	BelowCriticalConc      bool     `json:"below_critical_conc,omitempty"`
	NearCriticalConc       bool     `json:"near_critical_conc,omitempty"`
	RepeatUnitsPerMonomer  int      `json:"repeat_units_per_monomer,omitempty"`
}

// Hazard is the thermal part of a plan.
type Hazard struct {
	HeatReleasedJG       float64  `json:"heat_released_j_g"`
	HeatPerBatchKJ       float64  `json:"heat_per_batch_kj"`
	AdiabaticRiseK       float64  `json:"adiabatic_rise_k"`
	StartTemperatureC    float64  `json:"start_temperature_c"`
	MaxTemperatureC      float64  `json:"max_temperature_c"`
	Medium               string   `json:"medium"`
	HeatCapacityJgK      float64  `json:"heat_capacity_j_g_k"`
	DensityGL            *float64 `json:"density_g_l,omitempty"`
	MonomerBoilingPointC *float64 `json:"monomer_boiling_point_c"`
	SolventBoilingPointC *float64 `json:"solvent_boiling_point_c,omitempty"`
	Grade                string   `json:"grade"`
	Basis                string   `json:"basis"`
	MonomerMassFraction  *float64 `json:"monomer_mass_fraction,omitempty"`
	ConversionApplied    float64  `json:"conversion_applied"`
	// SolventVolumeML is the volume of solution that holds the batch at [M]0 (mL; null in bulk)
	// and HeatSink names what takes up the heat in the adiabatic bound.
	SolventVolumeML *float64 `json:"solvent_volume_ml"`
	HeatSink        string   `json:"heat_sink"`
}

// Plan is the planning result. The contract's fixed names (catalyst_compatibility, dp,
// mn_g_mol, monomer_to_initiator, dispersity_poisson, dispersity_slow_initiation,
// critical_conc_mol_l, adiabatic_rise_k, cautions) are top-level; the details follow.
type Plan struct {
	CatalystCompatibility    []judge.Compatibility `json:"catalyst_compatibility"`
	DP                       *float64              `json:"dp"`
	MnGmol                   *float64              `json:"mn_g_mol"`
	MonomerToInitiator       *float64              `json:"monomer_to_initiator"`
	DispersityPoisson        *float64              `json:"dispersity_poisson"`
	DispersitySlowInitiation *float64              `json:"dispersity_slow_initiation"`
	CriticalConcMolL         *float64              `json:"critical_conc_mol_l"`
	AdiabaticRiseK           float64               `json:"adiabatic_rise_k"`
	Cautions                 []string              `json:"cautions"`
	Living                   *Living               `json:"living"`
	RingChain                RingChain             `json:"ring_chain"`
	Hazard                   Hazard                `json:"hazard"`
	Reasons                  []judge.Reason        `json:"reasons"`
	Notes                    []string              `json:"notes"`
	Screen                   judge.Result          `json:"screen"`
}

// Make builds a plan for a screened monomer. Errors are *units.FieldError values.
func Make(r judge.Result, in Input, c units.Conditions) (Plan, error) {
	p := Plan{Screen: r, Cautions: []string{}, Reasons: []judge.Reason{}, Notes: []string{}}
	p.CatalystCompatibility = judge.CompatibilityFor(r.Descriptors.FunctionalGroups)
	if r.Thermo == nil {
		p.Notes = append(p.Notes, "no ring olefin: nothing to plan")
		p.Cautions = append(p.Cautions, judge.CautionDefer)
		return p, nil
	}
	if in.TargetDP < 0 || in.TargetMn < 0 || math.IsNaN(in.TargetDP) || math.IsNaN(in.TargetMn) || math.IsInf(in.TargetDP, 0) || math.IsInf(in.TargetMn, 0) {
		return p, units.FieldErr("target", "must be positive")
	}
	if (in.TargetDP > 0) == (in.TargetMn > 0) {
		return p, units.FieldErr("target", "give exactly one of dp or mn_g_mol")
	}
	if in.TargetDP > 1e6 || in.TargetMn > 1e9 {
		return p, units.FieldErr("target", "too large for a living polymerization plan")
	}
	mm := in.MonomerMolarMass
	if mm <= 0 {
		mm = r.Descriptors.MolWeightGmol
		// amounts are weighed as the whole record (salt with counter-ions, hydrate)
		if rec := r.Descriptors.RecordMolWeightGmol; rec > mm {
			p.Notes = append(p.Notes, fmt.Sprintf("amounts use the molar mass of the record as weighed, %s %.3f g/mol (the screened component %s is %.3f g/mol)",
				r.Descriptors.RecordFormula, rec, r.Descriptors.Formula, mm))
			mm = rec
		}
	}
	if mm <= 0 {
		return p, units.FieldErr("monomer_molar_mass_g_mol", "needed for a descriptor record (no structure to compute it from)")
	}
	if in.MonomerMassG <= 0 {
		in.MonomerMassG = 1
	}
	if in.TargetConversion <= 0 {
		in.TargetConversion = 0.95
	}
	if in.TargetConversion >= 1 {
		return p, units.FieldErr("target_conversion", "must be below 1")
	}
	if in.Solvent == "" {
		in.Solvent = "toluene"
	}
	sol, ok := solvents[in.Solvent]
	if !ok {
		return p, units.FieldErr("solvent", "unknown solvent %q (one of %s)", in.Solvent, strings.Join(SolventNames(), ", "))
	}
	th := r.Thermo
	xeq := th.EqConversion
	p.RingChain = ringChain(r, c)
	p.CriticalConcMolL = p.RingChain.CriticalConcMolL
	// monomer units held in cyclic oligomers do not go into chains
	xChain := xeq
	if rc := p.RingChain; rc.Applies && rc.CriticalConcUnitsMolL != nil {
		unitsConc := float64(c.Conc) * float64(rc.RepeatUnitsPerMonomer)
		xChain = math.Max(0, xeq-*rc.CriticalConcUnitsMolL/unitsConc)
	}
	// living polymerization
	def := classDefaults[c.Catalyst]
	if c.Catalyst != units.CatClassical && xChain > 0 {
		l := &Living{EqConversion: xeq, ChainConversion: xChain, MonomerMolarMassGmol: mm, MonomerMassG: in.MonomerMassG, TargetConversion: in.TargetConversion,
			Basis: "DP_n = X_chain·[M]0/[I]0 over the chains started (X_chain: equilibrium conversion less the units in cyclic oligomers); with slow initiation (Gold) [M]0/[I]0 is solved so that the started chains reach DP_n; M_n = DP_n·M + end groups"}
		l.EndGroupMassGmol = DefaultEndGroupMass
		if in.EndGroupMass != nil {
			l.EndGroupMassGmol = *in.EndGroupMass
		}
		if in.TargetDP > 0 {
			l.DP = in.TargetDP
		} else {
			l.DP = (in.TargetMn - l.EndGroupMassGmol) / mm
			if l.DP < 1 {
				return p, units.FieldErr("target.mn_g_mol", "below one repeat unit plus end groups (%.1f g/mol)", mm+l.EndGroupMassGmol)
			}
		}
		l.MonomerToInitiator = l.DP / xChain
		l.MnGmol = l.DP*mm + l.EndGroupMassGmol
		l.MnAllStartedGmol = l.MnGmol
		l.MonomerMmol = in.MonomerMassG / mm * 1000
		l.CatalystMmol = l.MonomerMmol / l.MonomerToInitiator
		l.CatalystMolarMassGmol, l.CatalystMolarMassBasis = def.molarMass, "class default (representative initiator; give catalyst_molar_mass_g_mol for yours)"
		if in.CatalystMolarMass != nil {
			l.CatalystMolarMassGmol, l.CatalystMolarMassBasis = in.CatalystMolarMass, "supplied"
		}
		if l.CatalystMolarMassGmol != nil {
			mg := l.CatalystMmol * *l.CatalystMolarMassGmol
			l.CatalystMassMg = &mg
		}
		l.DispersityPoisson = PoissonDispersity(l.DP)
		l.KiOverKp, l.KiOverKpBasis = def.kiOverKp, "class default, from memory: "+def.note
		if in.KiOverKp != nil {
			l.KiOverKp, l.KiOverKpBasis = in.KiOverKp, "supplied"
		}
		if l.KiOverKp != nil {
			// fewer chains start than initiators are charged: charge less monomer per initiator
			// so that the chains started reach the target DP_n
			ratio := SlowInitiationRatio(1 / *l.KiOverKp, l.DP, xChain)
			naive := l.MonomerToInitiator
			l.MonomerToInitiator = ratio
			g := GoldAt(1 / *l.KiOverKp, ratio, xChain)
			l.DispersitySlowInitiation, l.UnreactedInitiatorFraction, l.DPSlowInitiation = &g.Dispersity, &g.UnreactedInitiator, &g.DPn
			l.MnAllStartedGmol = ratio*xChain*mm + l.EndGroupMassGmol
			if naive/ratio > 1.05 {
				p.Notes = append(p.Notes, fmt.Sprintf("slow initiation (k_i/k_p = %.3g): %.0f%% of the initiator never starts, so [M]0/[I]0 is %.1f instead of %.1f to reach DP %.0f; M_n %.0f g/mol (%.0f g/mol if every initiator started)",
					*l.KiOverKp, 100*g.UnreactedInitiator, ratio, naive, l.DP, l.MnGmol, l.MnAllStartedGmol))
			}
		}
		l.MnFullConversionGmol = l.MonomerToInitiator*mm + l.EndGroupMassGmol
		l.MonomerMmol = in.MonomerMassG / mm * 1000
		l.CatalystMmol = l.MonomerMmol / l.MonomerToInitiator
		if l.CatalystMolarMassGmol != nil {
			mg := l.CatalystMmol * *l.CatalystMolarMassGmol
			l.CatalystMassMg = &mg
		}
		target := math.Min(in.TargetConversion, 0.999*xeq)
		if in.KpLmolS != nil {
			i0 := float64(c.Conc) / l.MonomerToInitiator
			ki := 0.0
			if l.KiOverKp != nil {
				ki = *l.KiOverKp * *in.KpLmolS
			}
			// reversible propagation: the rate is k_p[P*]([M] − [M]eq), the Gold model run on the
			// monomer above equilibrium, [M]0·X_eq, to the conversion target/X_eq of it
			t := TimeToConversion(*in.KpLmolS, ki, float64(c.Conc)*xeq, i0, target/xeq)
			if !math.IsInf(t, 0) {
				l.TimeToTargetS = &t
				for k := 1; k <= 20; k++ {
					pk := target * float64(k) / 20
					l.ConversionTime = append(l.ConversionTime, Point{TimeS: TimeToConversion(*in.KpLmolS, ki, float64(c.Conc)*xeq, i0, pk/xeq), Conversion: pk})
				}
			}
			if target < in.TargetConversion {
				p.Notes = append(p.Notes, fmt.Sprintf("the target conversion %.2f is above the equilibrium conversion %.3f: the time given is to %.3f", in.TargetConversion, xeq, target))
			}
		} else {
			p.Notes = append(p.Notes, "give kp_l_mol_s (propagation rate constant) to get the conversion–time curve and the time to the target conversion")
		}
		p.Living = l
		p.DP, p.MnGmol, p.MonomerToInitiator = &l.DP, &l.MnGmol, &l.MonomerToInitiator
		p.DispersityPoisson, p.DispersitySlowInitiation = &l.DispersityPoisson, l.DispersitySlowInitiation
		if r.Descriptors.ExoEndo == "endo" || r.Descriptors.ExoEndo == "exo,endo" {
			p.Notes = append(p.Notes, "endo substituents propagate more slowly than exo (more than tenfold for dicyclopentadiene, Rule & Moore, Macromolecules 2002, 35, 7878): expect longer times and, with slow-initiating classes, broader Đ")
		}
		if xeq < judge.PolymerizesConversion {
			p.Notes = append(p.Notes, "equilibrium-limited monomer: chain transfer to polymer drives Đ toward 2 at long times (from memory); quench soon after reaching the target")
		}
	} else if c.Catalyst == units.CatClassical {
		p.Notes = append(p.Notes, def.note)
	} else {
		p.Notes = append(p.Notes, "no polymer at these conditions (equilibrium conversion 0): no living plan")
	}
	if p.RingChain.BelowCriticalConc {
		v := *p.RingChain.CriticalConcMolL
		p.Reasons = append(p.Reasons, judge.Reason{Code: "below_critical_concentration", Effect: judge.EffectBlocks, Value: &v, Unit: "mol/L",
			Detail: fmt.Sprintf("%.3g mol/L is below the critical concentration %.3g mol/L (Jacobson–Stockmayer model estimate): cyclic oligomers, not high polymer", float64(c.Conc), v)})
	} else if p.RingChain.NearCriticalConc {
		v := *p.RingChain.CriticalConcMolL
		p.Reasons = append(p.Reasons, judge.Reason{Code: "near_critical_concentration", Effect: judge.EffectPenalizes, Value: &v, Unit: "mol/L",
			Detail: fmt.Sprintf("%.3g mol/L is within 1.5× the critical concentration %.3g mol/L: a large cyclic fraction (model estimate)", float64(c.Conc), v)})
	}
	p.Hazard = hazard(r, in, c, sol, mm)
	p.AdiabaticRiseK = p.Hazard.AdiabaticRiseK
	p.Cautions = hazardCautions(r, p.Hazard, c, in.Solvent)
	return p, nil
}

// ringChain applies Jacobson–Stockmayer statistics to low-strain monocyclic monomers (five- or
// larger rings with ΔH_p above −40 kJ/mol); strained and bridged monomers give negligible
// cyclics and get null.
func ringChain(r judge.Result, c units.Conditions) RingChain {
	d := r.Descriptors
	rc := RingChain{Basis: "Jacobson–Stockmayer model (J. Chem. Phys. 1950, 18, 1600), Gaussian chains, ring symmetry 2x: model values, not measurements, " +
		"upper bounds for the smallest rings. Chain statistics: bond lengths C=C 1.34, =CH–CH2 1.50, CH2–CH2 1.53 Å; characteristic ratio 5.8 " +
		"(trans-1,4-polybutadiene) for 4-bond units with ruthenium classes (trans-rich chains), 4.9 (cis) with the others, 5.0 for 5-bond units, 6.7 (polyethylene limit) for longer units (all from memory, romp_facts.md section c)"}
	if d.RingSystem == describe.SystemBridged || d.RingSize < 5 || r.Thermo.DHkJmol < -40 {
		rc.Basis = "not applied: ring strain makes cyclic oligomers negligible"
		return rc
	}
	k := 1 + d.EquivalentRingOlefins
	for _, o := range d.OtherRingOlefins {
		k += max(o.Count, 1)
	}
	if k < 1 || d.RingSize%k != 0 {
		k = 1
	}
	nuB := d.RingSize / k
	if nuB < 4 {
		nuB, k = d.RingSize, 1
	}
	// ruthenium classes give trans-rich chains (common practice): trans value where there is one
	cc := thermo.CharacteristicRatio(nuB, c.Catalyst.IsRuthenium())
	rc.Applies = true
	rc.SkeletalBondsPerUnit, rc.CharacteristicRatio, rc.RepeatUnitsPerMonomer = nuB, cc, k
	rc.MeanSquareBondLengthA2 = MeanSquareBondLength(nuB)
	rc.JSConstantBMolL = JSConstantMolL(float64(nuB), rc.MeanSquareBondLengthA2, cc)
	rc.SmallestCyclicX = k + 1
	rc.K2MolL = rc.JSConstantBMolL * math.Pow(2, -2.5)
	rc.K3MolL = rc.JSConstantBMolL * math.Pow(3, -2.5)
	crit := JSCriticalConc(rc.JSConstantBMolL, rc.SmallestCyclicX)
	critMonomer := crit / float64(k)
	rc.CriticalConcUnitsMolL, rc.CriticalConcMolL = &crit, &critMonomer
	units := float64(c.Conc) * float64(k)
	if units <= crit {
		rc.BelowCriticalConc = true
		one := 1.0
		rc.CyclicWeightFraction = &one
	} else {
		f := crit / units
		rc.CyclicWeightFraction = &f
		rc.NearCriticalConc = units < 1.5*crit
	}
	return rc
}

// Hazard grades by adiabatic rise (design choices: 100 K takes most solvents past their boiling
// point and is a runaway concern; 30 K is a noticeable exotherm that calls for gradual addition).
const (
	gradeHighK     = 100
	gradeModerateK = 30
)

func hazard(r judge.Result, in Input, c units.Conditions, sol solventData, mm float64) Hazard {
	th := r.Thermo
	h := Hazard{StartTemperatureC: c.Temp.Celsius(), ConversionApplied: th.EqConversion,
		Basis: "adiabatic upper bound (no heat loss, constant heat capacity): ΔT_ad = X·q/c_p in bulk, X·[M]0·(−ΔH_p)/(ρ·c_p) in solution"}
	q := math.Max(0, -th.DHkJmol*1000/mm) // J/g
	h.HeatReleasedJG = q * th.EqConversion
	h.HeatPerBatchKJ = h.HeatReleasedJG * in.MonomerMassG / 1000
	if c.Bulk {
		h.Medium, h.HeatCapacityJgK = "bulk monomer", judge.DefaultHydrocarbonCp
		h.AdiabaticRiseK = th.EqConversion * q / h.HeatCapacityJgK
	} else {
		h.Medium, h.HeatCapacityJgK = in.Solvent, sol.Cp
		rho := sol.Density
		h.DensityGL = &rho
		h.AdiabaticRiseK = th.EqConversion * float64(c.Conc) * math.Max(0, -th.DHkJmol*1000) / (rho * sol.Cp)
		w := float64(c.Conc) * mm / rho
		h.MonomerMassFraction = &w
		bp := sol.BoilC
		h.SolventBoilingPointC = &bp
	}
	h.MaxTemperatureC = h.StartTemperatureC + h.AdiabaticRiseK
	if c.Bulk {
		h.HeatSink = "the monomer and polymer themselves (no solvent)"
	} else {
		v := in.MonomerMassG / mm / float64(c.Conc) * 1e3 // mL of solution (mol / (mol/L) = L)
		h.SolventVolumeML = &v
		h.HeatSink = fmt.Sprintf("about %.0f mL of %s solution (its heat capacity); the vessel and any cooling are not counted", v, in.Solvent)
	}
	if bp, ok := parentBoilingC[th.ParentRingSystem]; ok && th.UnsubstitutedParent {
		h.MonomerBoilingPointC = &bp
	}
	switch {
	case h.AdiabaticRiseK >= gradeHighK:
		h.Grade = "high"
	case h.AdiabaticRiseK >= gradeModerateK:
		h.Grade = "moderate"
	default:
		h.Grade = "low"
	}
	return h
}

func hazardCautions(r judge.Result, h Hazard, c units.Conditions, solvent string) []string {
	var out []string
	switch h.Grade {
	case "high":
		out = append(out, fmt.Sprintf("Runaway risk: the adiabatic temperature rise is about %.0f K (to about %.0f °C). Fast catalysts release most of the heat within seconds to minutes, and gelation stops stirring: dose monomer or catalyst in portions, dilute, and provide cooling sized for the heat (%.0f J per gram of monomer).", h.AdiabaticRiseK, h.MaxTemperatureC, h.HeatReleasedJG))
	case "moderate":
		out = append(out, fmt.Sprintf("Noticeable exotherm: adiabatic rise about %.0f K (to about %.0f °C); add the catalyst gradually and watch the temperature.", h.AdiabaticRiseK, h.MaxTemperatureC))
	}
	if h.MonomerBoilingPointC != nil && h.MaxTemperatureC > *h.MonomerBoilingPointC {
		out = append(out, fmt.Sprintf("The maximum temperature exceeds the monomer's boiling point (about %.0f °C): a closed vessel can pressurize; use a vented or pressure-rated vessel.", *h.MonomerBoilingPointC))
	}
	if h.SolventBoilingPointC != nil && h.MaxTemperatureC > *h.SolventBoilingPointC {
		out = append(out, fmt.Sprintf("The maximum temperature exceeds the boiling point of %s (about %.0f °C): solvent boil-up and pressure build-up are possible.", solvent, *h.SolventBoilingPointC))
	}
	if r.Descriptors.RingOlefins > 1 {
		out = append(out, "A second ring olefin can cross-link later in a separate exotherm; hot dicyclopentadiene cracks to volatile, flammable cyclopentadiene.")
	}
	out = append(out, "A quench stops the chemistry but not the heat already released: cool and dilute first.")
	// the screening cautions (flammability, catalyst handling, deferral) close the list; the
	// screen's general exotherm and bulk warnings give way to the plan's graded ones, and no
	// caution is repeated
	seen := map[string]bool{}
	for _, x := range out {
		seen[x] = true
	}
	for _, x := range r.Cautions {
		if strings.HasPrefix(x, "Strongly exothermic ring opening") || strings.HasPrefix(x, "Bulk polymerization releases") {
			continue
		}
		if strings.Contains(x, "quenching stops the chemistry") {
			x = strings.Replace(x, " (quenching stops the chemistry, it does not remove heat already released; cooling and dilution come first)", "", 1)
		}
		if !seen[x] {
			seen[x] = true
			out = append(out, x)
		}
	}
	return out
}
