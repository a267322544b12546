package judge

import (
	"fmt"
	"sync"

	"ringsieve/screening/describe"
	"ringsieve/screening/units"
)

// Temperature windows. Each catalyst class works below a temperature where it decomposes faster
// than it propagates; Diels–Alder adducts (oxanorbornenes from furans, norbornenes from
// cyclopentadiene) fall apart when hot; a neat monomer below its melting point is a solid, not
// "bulk".

// classWindowC is the upper working temperature of each class, °C (common practice, from
// memory: the first-generation phosphine type decomposes within hours near 60 °C, the
// N-heterocyclic-carbene type is used to about 100 °C, the fast-initiating pyridine type to about
// 60 °C, Mo/W imido alkylidenes to about 100 °C, classical systems to about 150 °C).
var classWindowC = map[units.CatalystClass]float64{
	units.CatRuPhosphine: 60, units.CatRuNHC: 100, units.CatRuPyridine: 60,
	units.CatMoWImido: 100, units.CatClassical: 150,
}

// windowBlockAboveC: this far above the window the catalyst does not survive at all (design choice).
const windowBlockAboveC = 80

// retro-Diels–Alder onsets, °C (from memory): endo furan–maleimide-type oxanorbornene adducts
// revert near 60–90 °C, exo ones near 90–120 °C; cyclopentadiene adducts (norbornenes,
// dicyclopentadiene) near 150–170 °C.
const (
	rdaOxaEndoC = 60
	rdaOxaExoC  = 90
	rdaNorbornC = 150
)

// parentMeltingC gives melting points of neat parent monomers, °C (from memory; standard
// handbook values): a bulk polymerization below it starts from a solid.
var parentMeltingC = map[string]float64{
	"C1=CC2CCC1C2": 45, "C1=CC2C(C1)C1C=CC2C1": 32, "C1=CCCC1": -135, "C1=CCCCCCC1": -16,
	"C1=CCCC=CCC1": -69, "C1=CC2C=CC1C2": -19, "C1=CCC1": -120,
}

// coreKeys are the canonical keys of the Diels–Alder cores and of the parents above, computed
// once from their SMILES.
var coreKeys = sync.OnceValue(func() map[string]string {
	out := map[string]string{}
	for name, smi := range map[string]string{"oxanorbornene": "C1=CC2CCC1O2", "norbornene": "C1=CC2CCC1C2"} {
		if s, err := describe.Describe(smi); err == nil && len(s.Olefins) > 0 {
			out[s.Olefins[0].Desc.CoreKey] = name
		}
	}
	for smi := range parentMeltingC {
		if s, err := describe.Describe(smi); err == nil && len(s.Olefins) > 0 {
			out["mp:"+s.Olefins[0].Desc.SkeletonKey] = smi
		}
	}
	return out
})

func ruleTemperatureWindow(in ruleInput, out []Reason) []Reason {
	d, c := in.Desc, in.Cond
	if d.RingSize == 0 {
		return out
	}
	tc := c.Temp.Celsius()
	if top, ok := classWindowC[c.Catalyst]; ok && tc > top {
		v := tc
		r := Reason{Code: "above_catalyst_window", Effect: EffectPenalizes, Penalty: 0.3, Value: &v, Unit: "°C",
			Detail: fmt.Sprintf("%.0f °C is above the working range of the %s (about %.0f °C, common practice): it decomposes faster than it propagates", tc, c.Catalyst.Describe(), top)}
		if tc > top+windowBlockAboveC {
			r.Effect, r.Penalty = EffectBlocks, 0
			r.Detail = fmt.Sprintf("%.0f °C is far above the working range of the %s (about %.0f °C): the catalyst does not survive", tc, c.Catalyst.Describe(), top)
		}
		out = append(out, r)
	}
	if d.RingSystem == describe.SystemBridged {
		switch coreKeys()[d.CoreKey] {
		case "oxanorbornene":
			onset := float64(rdaOxaEndoC)
			if d.ExoEndo == "exo" {
				onset = rdaOxaExoC
			}
			if tc > onset {
				v := tc
				out = append(out, Reason{Code: "retro_diels_alder", Effect: EffectPenalizes, Penalty: 0.3, Value: &v, Unit: "°C",
					Detail: fmt.Sprintf("oxanorbornene (a furan Diels–Alder adduct) above about %.0f °C: retro-Diels–Alder returns furan and dienophile (from memory; endo adducts revert from 60–90 °C, exo from 90–120 °C)", onset)})
			}
		case "norbornene":
			if tc > rdaNorbornC && d.HeavyAtoms > 7 {
				v := tc
				out = append(out, Reason{Code: "retro_diels_alder", Effect: EffectPenalizes, Penalty: 0.2, Value: &v, Unit: "°C",
					Detail: "substituted norbornene (a cyclopentadiene Diels–Alder adduct) above about 150 °C: retro-Diels–Alder releases cyclopentadiene (from memory; dicyclopentadiene cracks at 150–170 °C)"})
			}
		}
	}
	if c.Bulk && d.FromStructure {
		if smi, ok := coreKeys()["mp:"+d.SkeletonKey]; ok && d.HeavyAtoms == heavyOf(smi) {
			if mp := parentMeltingC[smi]; tc < mp {
				v := mp
				out = append(out, Reason{Code: "monomer_solid_at_temperature", Effect: EffectPenalizes, Penalty: 0.2, Value: &v, Unit: "°C",
					Detail: fmt.Sprintf("the neat monomer melts near %.0f °C (from memory): at %.0f °C it is a solid, not a bulk liquid — melt it or polymerize in solution", mp, tc)})
			}
		}
	}
	return out
}

func heavyOf(smi string) int {
	n := 0
	for _, ch := range smi {
		if ch == 'C' || ch == 'O' || ch == 'N' {
			n++
		}
	}
	return n
}
