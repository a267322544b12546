package judge

import (
	"fmt"
	"strings"

	"ringsieve/screening/describe"
	"ringsieve/screening/internal/memo"
	"ringsieve/screening/thermo"
	"ringsieve/screening/units"
)

// Reason effects.
const (
	EffectBlocks    = "blocks"
	EffectPenalizes = "penalizes"
	EffectFavors    = "favors"
	EffectNote      = "note"
)

// Reason is one machine-readable finding: a stable snake_case code, its effect on the verdict,
// plain-language detail and, where there is one, the number behind it.
type Reason struct {
	Code   string   `json:"code"`
	Effect string   `json:"effect"`
	Detail string   `json:"detail"`
	Value  *float64 `json:"value,omitempty"`
	Unit   string   `json:"unit,omitempty"`
	Group  string   `json:"group,omitempty"`
	// Penalty is the score deduction of a penalizing reason (0 to 1); not serialized.
	Penalty float64 `json:"-"`
}

// ruleInput is what every structural rule sees.
type ruleInput struct {
	Desc *describe.Descriptors
	Cond units.Conditions
}

// A rule appends the reasons it finds to out and returns it (out unchanged when it does not
// apply). Each rule is one small function with a stable code; add a rule by writing the
// function and listing it in rules.
type rule func(in ruleInput, out []Reason) []Reason

var rules = []rule{
	ruleNoRingOlefin,
	ruleSixMembered,
	ruleConjugatedDiene,
	ruleOlefinSubstitution,
	ruleEWGOnOlefin,
	ruleEWGOnRing,
	ruleQuaternaryAllylicEWG,
	ruleBulkyAllylic,
	ruleCatalystGroups,
	ruleExoEndo,
	ruleCyclicEnolEther,
	ruleTransCyclooctene,
	ruleDisubstitutedCyclopropene,
	ruleTemperatureWindow,
}

func ruleNoRingOlefin(in ruleInput, out []Reason) []Reason {
	if in.Desc.RingSize != 0 {
		return out
	}
	return append(out, Reason{Code: "no_ring_olefin", Effect: EffectBlocks,
		Detail: "no metathesis-active ring C=C: ring-opening metathesis needs a non-aromatic C=C inside a ring"})
}

func ruleSixMembered(in ruleInput, out []Reason) []Reason {
	d := in.Desc
	if d.RingSize != 6 || d.RingSystem != describe.SystemMonocyclic {
		return out
	}
	return append(out, Reason{Code: "six_membered_ring", Effect: EffectPenalizes, Penalty: 0.3,
		Detail: "six-membered monocyclic ring: almost no strain to release (ΔH_p near zero or positive), so no high polymer forms (common practice)"})
}

func ruleConjugatedDiene(in ruleInput, out []Reason) []Reason {
	d := in.Desc
	if !d.ConjugatedWithKind(describe.ConjRingOlefin) {
		return out
	}
	if d.RingSize <= 7 {
		return append(out, Reason{Code: "conjugated_diene_in_ring", Effect: EffectBlocks,
			Detail: "conjugated diene in a small ring: the ring-opened vinyl alkylidene is stabilized and the ring has little strain to release; no homopolymer (common practice)"})
	}
	return append(out, Reason{Code: "conjugated_diene_in_ring", Effect: EffectPenalizes, Penalty: 0.1,
		Detail: "conjugated diene in a medium ring: polymerizes slowly and only with the most active classes (e.g. cyclooctatetraene with Mo/W imido alkylidenes); from memory"})
}

func ruleOlefinSubstitution(in ruleInput, out []Reason) []Reason {
	switch in.Desc.OlefinSubstitution {
	case 4:
		return append(out, Reason{Code: "tetrasubstituted_olefin", Effect: EffectBlocks,
			Detail: "tetrasubstituted ring olefin: too hindered to enter the metallacyclobutane (common practice)"})
	case 3:
		return append(out, Reason{Code: "trisubstituted_olefin", Effect: EffectPenalizes, Penalty: 0.25,
			Detail: "trisubstituted ring olefin: slow and regio-irregular propagation; only strained rings (cyclobutenes, trans- or cis-cyclooctenes, 1,5-cyclooctadienes) give polymer (common practice)"})
	}
	return out
}

func ruleEWGOnOlefin(in ruleInput, out []Reason) []Reason {
	if !in.Desc.EWGOnOlefin {
		return out
	}
	return append(out, Reason{Code: "ewg_on_olefin", Effect: EffectBlocks,
		Detail: "electron-withdrawing group directly on the ring olefin: the ring-opened alkylidene is electron-poor and does not add another monomer (e.g. cyclobutene-1-carboxylates give single addition only: Song, Parker, Sampson, J. Am. Chem. Soc. 2009, 131, 3444)"})
}

func ruleEWGOnRing(in ruleInput, out []Reason) []Reason {
	d := in.Desc
	if !d.EWGOnOlefinRing || d.EWGOnOlefin || d.RingSystem != describe.SystemMonocyclic || d.RingSize > 7 {
		return out
	}
	return append(out, Reason{Code: "ewg_on_olefin_ring", Effect: EffectPenalizes, Penalty: 0.15,
		Detail: "electron-withdrawing group on the olefin's own small ring: lowers olefin reactivity (common practice)"})
}

func ruleQuaternaryAllylicEWG(in ruleInput, out []Reason) []Reason {
	if !in.Desc.QuaternaryAllylicEWG {
		return out
	}
	if in.Cond.Catalyst.IsRuthenium() {
		return append(out, Reason{Code: "quaternary_allylic_ewg", Effect: EffectBlocks,
			Detail: "fully substituted allylic carbon carrying a carbonyl: the ring-opened ruthenium alkylidene is too crowded to add another monomer (single addition; Macromolecules 2020, 53, 5833)"})
	}
	return append(out, Reason{Code: "quaternary_allylic_ewg", Effect: EffectPenalizes, Penalty: 0.25,
		Detail: "fully substituted allylic carbon carrying a carbonyl: crowded propagating alkylidene"})
}

func ruleBulkyAllylic(in ruleInput, out []Reason) []Reason {
	d := in.Desc
	if !d.BulkyAllylic || d.QuaternaryAllylicEWG {
		return out
	}
	return append(out, Reason{Code: "bulky_allylic_substituent", Effect: EffectPenalizes, Penalty: 0.1,
		Detail: "bulky substituent next to the ring olefin: slower propagation (common practice)"})
}

// groupDetail caches the text of a group × class finding (the texts are static).
var groupDetail = memo.New[string](1000)

func ruleCatalystGroups(in ruleInput, out []Reason) []Reason {
	for _, g := range in.Desc.FunctionalGroups {
		code, remedy := Tolerance(in.Cond.Catalyst, g)
		if code == TolTolerated {
			continue
		}
		var stack [96]byte
		key := append(append(append(stack[:0], g...), '|'), in.Cond.Catalyst...)
		detail := groupDetail.DoBytes(key, func(string) string {
			detail := fmt.Sprintf("%s with %s: %s", strings.ReplaceAll(g, "_", " "), in.Cond.Catalyst, code)
			if remedy != "" {
				detail += "; " + remedy
			}
			return detail
		})
		switch {
		case blocksHomopolymer(code, g):
			out = append(out, Reason{Code: "catalyst_incompatible_group", Effect: EffectBlocks, Group: g, Detail: detail})
		case code == TolSlows || code == TolReacts:
			out = append(out, Reason{Code: "catalyst_slowing_group", Effect: EffectPenalizes, Penalty: 0.05, Group: g, Detail: detail})
		case code == TolConditional:
			out = append(out, Reason{Code: "catalyst_conditional_group", Effect: EffectPenalizes, Penalty: 0.03, Group: g, Detail: detail})
		}
	}
	return out
}

func ruleExoEndo(in ruleInput, out []Reason) []Reason {
	switch in.Desc.ExoEndo {
	case "exo":
		return append(out, Reason{Code: "exo_substituents", Effect: EffectNote,
			Detail: "exo substituents on the bridged bicycle: faster propagation than the endo isomer (rate note, not thermodynamics; e.g. exo- vs endo-dicyclopentadiene differ by more than tenfold, Rule & Moore, Macromolecules 2002, 35, 7878)"})
	case "endo", "exo,endo":
		return append(out, Reason{Code: "endo_substituents", Effect: EffectNote,
			Detail: "endo substituent(s) on the bridged bicycle: slower propagation than exo and broader dispersity with slow-initiating catalysts (rate note, not thermodynamics)"})
	}
	return out
}

func ruleCyclicEnolEther(in ruleInput, out []Reason) []Reason {
	d := in.Desc
	if !d.HasGroup(describe.FGCyclicEnolEther) || !in.Cond.Catalyst.IsRuthenium() {
		return out
	}
	return append(out, Reason{Code: "cyclic_enol_ether", Effect: EffectNote,
		Detail: "cyclic enol ether: the ruthenium Fischer carbene formed still ring-opens this ring (Feist & Xia, J. Am. Chem. Soc. 2020, 142, 1186), unlike acyclic vinyl ethers which end chains"})
}

// ruleDisubstitutedCyclopropene: 3,3-disubstituted cyclopropenes add once to ruthenium
// alkylidenes when a substituent on the ring carbon conjugates or crowds it (Elling & Xia, J. Am.
// Chem. Soc. 2015, 137, 9922, abstract seen: single additions, used for alternating ROMP; the
// ester case is blocked by quaternary_allylic_ewg), while a CH2 spacer restores propagation
// (Macromolecules 2020, 53, 5833, romp_outcomes.csv R004, seen). So the other 3,3-disubstituted
// ones are penalized, not blocked, with ruthenium; Mo/W imido classes polymerize them.
func ruleDisubstitutedCyclopropene(in ruleInput, out []Reason) []Reason {
	d := in.Desc
	if d.RingSize != 3 || d.GemDisubstituted == 0 || !in.Cond.Catalyst.IsRuthenium() || d.QuaternaryAllylicEWG {
		return out
	}
	return append(out, Reason{Code: "cyclopropene_single_addition_risk", Effect: EffectPenalizes, Penalty: 0.2,
		Detail: "3,3-disubstituted cyclopropene with ruthenium: single addition when a ring-carbon substituent conjugates or crowds the alkylidene (J. Am. Chem. Soc. 2015, 137, 9922); alkyl substituents with a CH2 spacer still propagate (Macromolecules 2020, 53, 5833); a Mo/W imido class homopolymerizes them"})
}

func ruleTransCyclooctene(in ruleInput, out []Reason) []Reason {
	d := in.Desc
	if !d.TransOlefin {
		return out
	}
	return append(out, Reason{Code: "trans_ring_olefin", Effect: EffectFavors,
		Detail: "trans olefin in a medium ring: large extra strain, very fast living ring opening"})
}

// strainReasons appends the reason that turns the estimate's ΔH_p into a favor, note or penalty,
// with the number, to out.
func strainReasons(d *describe.Descriptors, e *thermo.Estimate, out []Reason, blk *judged) []Reason {
	dh := e.DHkJmol
	if e.Measured != nil {
		dh = e.Measured.DH
	}
	v := blk.value(dh)
	switch {
	case e.Basis == thermo.BasisRingChain:
		return append(out, Reason{Code: "strain_free_macrocycle", Effect: EffectNote, Value: v, Unit: "kJ/mol",
			Detail: blk.join("strain-free macrocycle (ΔH_p ≈ ", fix(dh, 0), " kJ/mol): entropy, not strain, drives its ring opening")})
	case dh <= -40 && d.RingSystem == describe.SystemBridged:
		return append(out, Reason{Code: "bridged_bicyclic_strain", Effect: EffectFavors, Value: v, Unit: "kJ/mol",
			Detail: blk.join("strained bridged bicyclic ring: ΔH_p ≈ ", fix(dh, 0), " kJ/mol drives polymerization")})
	case dh <= -40:
		return append(out, Reason{Code: "high_ring_strain", Effect: EffectFavors, Value: v, Unit: "kJ/mol",
			Detail: blk.join("high ring strain: ΔH_p ≈ ", fix(dh, 0), " kJ/mol")})
	case dh <= -15:
		return append(out, Reason{Code: "moderate_ring_strain", Effect: EffectNote, Value: v, Unit: "kJ/mol",
			Detail: blk.join("moderate ring strain: ΔH_p ≈ ", fix(dh, 0), " kJ/mol; the ceiling temperature and concentration matter")})
	default:
		return append(out, Reason{Code: "low_ring_strain", Effect: EffectPenalizes, Penalty: 0.1, Value: v, Unit: "kJ/mol",
			Detail: blk.join("little ring strain: ΔH_p ≈ ", fix(dh, 0), " kJ/mol")})
	}
}
