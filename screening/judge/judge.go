// Package judge turns descriptors and thermodynamics into a verdict: the rules (one function
// each, a stable code per reason), the catalyst-class × functional-group tolerance, ΔG_p and
// equilibrium conversion at the conditions, the score, and the cautions.
package judge

import (
	"math"
	"strings"
	"unsafe"

	"ringsieve/screening/describe"
	"ringsieve/screening/internal/numfmt"
	"ringsieve/screening/thermo"
	"ringsieve/screening/units"
)

// EngineVersion identifies the rules, table and formulas that produced a result; stored with
// saved results so a notebook can tell which engine screened a candidate.
const EngineVersion = "ringsieve-engine/2.0.0"

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

// ConditionsOut echoes the conditions used.
type ConditionsOut struct {
	TemperatureC    float64 `json:"temperature_c"`
	TemperatureK    float64 `json:"temperature_k"`
	MonomerConcMolL float64 `json:"monomer_conc_mol_l"`
	Bulk            bool    `json:"bulk"`
	Catalyst        string  `json:"catalyst"`
	ThermoMethod    string  `json:"thermo_method"`
}

// Result is one screening result (contract: Screen result).
type Result struct {
	Verdict     string               `json:"verdict"`
	Score       float64              `json:"score"`
	Reasons     []Reason             `json:"reasons"`
	Thermo      *thermo.Thermo       `json:"thermo"`
	Descriptors describe.Descriptors `json:"descriptors"`
	Cautions    []string             `json:"cautions"`
	// CatalystCompatibility ranks every catalyst class for the monomer's functional groups.
	CatalystCompatibility []Compatibility `json:"catalyst_compatibility"`
	Conditions            ConditionsOut   `json:"conditions"`
	EngineVersion         string          `json:"engine_version"`
}

// Verdicts lists every verdict from best to worst: the one verdict order.
var Verdicts = []string{VerdictPolymerizes, VerdictEquilibrium, VerdictUnfavorable, VerdictBlocked, VerdictNotMonomer}

// VerdictRank orders verdicts from best (0) to worst (Verdicts' order); an unknown verdict ranks
// after all.
func VerdictRank(v string) int {
	for i, x := range Verdicts { // five names: a scan beats a map look-up
		if x == v {
			return i
		}
	}
	return len(Verdicts)
}

// ParseVerdict validates a verdict name. Errors are *units.FieldError values for field.
func ParseVerdict(field, v string) (string, error) {
	if VerdictRank(v) == len(Verdicts) {
		return "", units.FieldErr(field, "unknown verdict %q (one of %s)", v, strings.Join(Verdicts, ", "))
	}
	return v, nil
}

// measuredDSUncertainty is the uncertainty carried with a measured ΔS_p°, J/(mol K) (the spread of
// van 't Hoff entropies between laboratories for cyclopentene, romp_thermo.csv T002 vs T004, is
// 15; half of it, a design choice).
const measuredDSUncertainty = 7.5

// Judge runs the rules and, when there is a ring olefin (e != nil), the thermodynamics at the
// conditions; it sets verdict, score and cautions.
func Judge(d *describe.Descriptors, e *thermo.Estimate, c units.Conditions) Result {
	return JudgeWith(nil, d, e, c)
}

// JudgeWith is Judge writing the result's own parts (thermodynamics, reasons, texts) into a
// block taken from bs, which reuses its blocks after bs.Reset; a nil bs gives the result a
// block of its own, as Judge does.
func JudgeWith(bs *Blocks, d *describe.Descriptors, e *thermo.Estimate, c units.Conditions) Result {
	blk := bs.next()
	r := Result{
		Descriptors:           *d,
		EngineVersion:         EngineVersion,
		Conditions:            OutOf(c),
		Reasons:               blk.reasons[:0],
		CatalystCompatibility: CompatibilityFor(d.FunctionalGroups),
	}
	r.Conditions.MonomerConcMolL = round(float64(c.Conc), 4)
	in := ruleInput{Desc: d, Cond: c}
	for _, rl := range rules {
		r.Reasons = rl(in, r.Reasons)
	}
	if d.RingSize == 0 {
		r.Verdict = VerdictNotMonomer
		r.Score = 0
		r.Cautions = cautions(d, nil, c, r.Verdict, blk)
		return r
	}
	// the numbers the verdict uses: the measurement where there is one, else the estimate
	dh, ds, uh, us := e.DHkJmol, e.DSJmolK, e.UH, e.US
	basis, source := e.Basis, e.Source
	if m := e.Measured; m != nil {
		dh, uh = m.DH, m.UDH
		if m.DS != nil {
			ds, us = *m.DS, measuredDSUncertainty
		}
		basis, source = thermo.BasisMeasured, m.Source
	}
	thermo.EvaluateInto(&blk.th, &blk.ceiling, dh, ds, c.Temp, c.Conc)
	th := &blk.th
	th.DHUncertaintyKJmol = round(uh, 2)
	th.DSUncertaintyJmolK = round(us, 2)
	uG := math.Hypot(uh, float64(c.Temp)*us/1000)
	th.DGUncertaintyKJmol = round(uG, 2)
	th.Basis = basis
	th.Source = source
	th.ParentRingSystem, th.UnsubstitutedParent = e.Parent, e.Bare
	if d.MolWeightGmol > 0 && dh < 0 {
		th.HeatReleasedJG = blk.value(round(-dh*1000/d.MolWeightGmol, 1))
	}
	if d.FromStructure {
		blk.est = thermo.EstimateOut{DHkJmol: round(e.DHkJmol, 2), DSJmolK: round(e.DSJmolK, 2),
			DHUncertaintyKJmol: round(e.UH, 2), DSUncertaintyJmolK: round(e.US, 2), Method: e.Method,
			ParentRingSystem: e.ParentSystem, Class: e.Class, Calibration: e.Calibration}
		th.Estimate = &blk.est
		if th.Estimate.Method == "" {
			th.Estimate.Method = thermo.MethodTable
		}
		if th.Estimate.ParentRingSystem == "" {
			th.Estimate.ParentRingSystem = e.Parent
		}
		if e.FFCorrection != nil {
			th.Estimate.FFCorrectionKJmol = blk.value(round(*e.FFCorrection, 2))
		}
	}
	if m := e.Measured; m != nil {
		th.Measured = &thermo.MeasuredOut{DHkJmol: m.DH, DSJmolK: m.DS, Source: m.Source, Evidence: m.Evidence, Note: m.Note}
		r.Reasons = append(r.Reasons, Reason{Code: "measured_value_used", Effect: EffectNote, Value: blk.value(e.DHkJmol - m.DH), Unit: "kJ/mol",
			Detail: blk.join("a published measurement of this structure is used (ΔH_p ", fix(m.DH, 1), " kJ/mol, ", m.Source, "); the model's own estimate, made without it, is ", fix(e.DHkJmol, 1), " kJ/mol")})
		if e.MeasuredNote != "" {
			r.Reasons = append(r.Reasons, Reason{Code: "measured_stereoisomer", Effect: EffectNote, Detail: e.MeasuredNote})
		}
	}
	if th.CeilingTempExtrapolated {
		v := *th.CeilingTempK
		r.Reasons = append(r.Reasons, Reason{Code: "ceiling_temp_extrapolated", Effect: EffectNote, Value: blk.value(v), Unit: "K",
			Detail: blk.join("T_c = ", fix(v, 0), " K lies far outside any measured ceiling temperature (200–500 K): a formal number, read it as \"no ceiling in practice\" or \"never above\"")})
	}
	r.Thermo = th
	r.Reasons = strainReasons(d, e, r.Reasons, blk)
	for i := range e.Notes {
		n := &e.Notes[i]
		rs := Reason{Code: n.Code, Effect: EffectNote, Detail: n.Detail, Unit: n.Unit}
		if n.HasValue {
			rs.Value = blk.value(n.Value)
		}
		r.Reasons = append(r.Reasons, rs)
	}
	// thermodynamic reasons with the numbers
	ringChain := e.Basis == thermo.BasisRingChain && e.Measured == nil
	if ringChain {
		crit := thermo.MacrocycleCriticalConc(dh, e.RingChainB, c.Temp)
		th.CriticalConcMolL = blk.value(crit)
		th.EqConversion = math.Max(0, 1-crit/float64(c.Conc))
		th.CeilingTempK, th.CeilingTempExtrapolated = nil, false
	}
	conv := th.EqConversion
	switch {
	case ringChain && conv <= 0:
		v := *th.CriticalConcMolL
		r.Reasons = append(r.Reasons, Reason{Code: "below_critical_concentration", Effect: EffectPenalizes, Value: blk.value(v), Unit: "mol/L",
			Detail: blk.join(sig(float64(c.Conc), 3), " mol/L is below the ring–chain critical concentration ", sig(v, 3), " mol/L (Jacobson–Stockmayer model estimate): a concentration floor, not a temperature ceiling — cyclic oligomers, no high polymer; raise the concentration")})
	case ringChain:
		v := *th.CriticalConcMolL
		r.Reasons = append(r.Reasons, Reason{Code: "above_critical_concentration", Effect: EffectFavors, Value: blk.value(v), Unit: "mol/L",
			Detail: blk.join("entropy-driven ring–chain equilibrium: ", sig(float64(c.Conc), 3), " mol/L is above the critical concentration ", sig(v, 3), " mol/L, so ", fix(100*conv, 0), "% of the monomer units can go into chains (model estimate)")})
	case th.DGkJmol >= 0:
		var det string
		if th.CeilingTempK != nil {
			det = blk.join("ΔG_p = ", plus(th.DGkJmol, 1), " kJ/mol at ", fix(c.Temp.Celsius(), 1), " °C and ", sig(float64(c.Conc), 3), " mol/L: the monomer is favoured over polymer (ceiling temperature ", fix(*th.CeilingTempK, 0), " K at this concentration)")
		} else {
			det = blk.join("ΔG_p = ", plus(th.DGkJmol, 1), " kJ/mol at ", fix(c.Temp.Celsius(), 1), " °C and ", sig(float64(c.Conc), 3), " mol/L: the monomer is favoured over polymer")
		}
		r.Reasons = append(r.Reasons, Reason{Code: "above_ceiling_temperature", Effect: EffectPenalizes, Value: blk.value(th.DGkJmol), Unit: "kJ/mol", Detail: det})
	case conv < PolymerizesConversion:
		r.Reasons = append(r.Reasons, Reason{Code: "equilibrium_monomer", Effect: EffectPenalizes, Value: blk.value(conv), Unit: "fraction",
			Detail: blk.join("equilibrium conversion ", fix(conv, 2), " ([M]eq = ", sig(th.EqMonomerMolL, 3), " mol/L): raise the concentration or lower the temperature")})
	default:
		r.Reasons = append(r.Reasons, Reason{Code: "favorable_equilibrium", Effect: EffectFavors, Value: blk.value(conv), Unit: "fraction",
			Detail: blk.join("equilibrium conversion ", fix(conv, 3), " at these conditions")})
	}
	if uG > 0 && math.Abs(th.DGkJmol) < uG && !ringChain {
		r.Reasons = append(r.Reasons, Reason{Code: "verdict_near_boundary", Effect: EffectNote, Value: blk.value(uG), Unit: "kJ/mol",
			Detail: blk.join("|ΔG_p| = ", fix(math.Abs(th.DGkJmol), 1), " kJ/mol is within its uncertainty (±", fix(uG, 1), " kJ/mol): the ceiling temperature lies within the uncertainty band of the working temperature; treat the verdict as uncertain")})
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
	if ringChain {
		// the verdict follows the share of monomer that can go into chains, not ΔG_p's sign
		dg = -1
		if conv <= 0 {
			dg = 1
		}
	}
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
	floor := scoreFloor(r.Verdict)
	r.Score = math.Max(floor, r.Score-0.3*math.Min(penalty, 1))
	r.Score = round(r.Score, 4)
	r.Cautions = cautions(d, th, c, r.Verdict, blk)
	return r
}

// judged holds in one allocation what a judged result points to: its thermodynamics, the
// estimate's summary, the reasons' first backing array (room for ten: the committed corpus's
// results have 2 to 10, one in fifty more than 8; a longer list moves to an array of its own),
// the reasons' values, the cautions' array and the texts written for this result. The result keeps the block alive as long as it refers to any
// part of it.
type judged struct {
	th       thermo.Thermo
	est      thermo.EstimateOut
	reasons  [10]Reason
	cautions [6]string
	values   [6]float64
	nValues  int
	ceiling  float64 // the ceiling temperature th points to
	// text holds the texts written for this result (textArr until it is full); see join
	text    []byte
	textArr [textRoom]byte
}

// Blocks lends result blocks to JudgeWith for a caller that is done with each result before it
// judges the next (a streaming worker renders a row and drops the result): after Reset the
// blocks are written again, so a result judged with bs — its thermodynamics, reasons and the
// texts written for it — is valid only until bs.Reset. Reusing warm blocks spares the
// allocation and the first writes into fresh memory (about 7 % of a core's time in the
// offline screen). The zero value is ready; a Blocks is for one goroutine.
type Blocks struct {
	list []*judged
	used int
}

// Reset makes every block lent since the last Reset available again.
func (bs *Blocks) Reset() { bs.used = 0 }

// next returns an empty block: a new one when bs is nil or all of bs's are lent, else the next
// of bs's blocks, emptied.
func (bs *Blocks) next() *judged {
	if bs == nil {
		return newJudged()
	}
	if bs.used == len(bs.list) {
		bs.list = append(bs.list, newJudged())
	}
	blk := bs.list[bs.used]
	bs.used++
	blk.reset()
	return blk
}

// newJudged returns an empty block whose texts start in its own array.
func newJudged() *judged {
	blk := new(judged)
	blk.text = blk.textArr[:0]
	return blk
}

// reset empties a block for reuse. The text buffer keeps its storage (a buffer that outgrew the
// block's array is reused too: the texts in it belonged to results that are no longer read) and
// needs no clearing, as only join's writes are read; th and est are written whole by JudgeWith
// before they are read.
func (b *judged) reset() {
	clear(b.reasons[:])
	clear(b.cautions[:])
	b.nValues, b.ceiling = 0, 0
	b.text = b.text[:0]
}

// textRoom is the room for a result's own texts inside its block: a typical result writes two
// to four reason and caution texts of 50–250 bytes (longer ones move to an array of their own).
const textRoom = 640

// value returns a pointer to v kept in the block while it has room, else to a copy of its own.
func (b *judged) value(v float64) *float64 {
	if b.nValues == len(b.values) {
		p := new(float64) // not &v: that would move every call's v to the heap
		*p = v
		return p
	}
	p := &b.values[b.nValues]
	*p = v
	b.nValues++
	return p
}

// part is a number in a text built by join, written with prec digits ('f': decimals, 'g':
// significant digits, '+': decimals with a sign before a value that is not written negative, as
// fmt's %+.<prec>f).
type part struct {
	v    float64
	prec int
	verb byte
}

// fix, sig and plus are the number parts of a text: v with prec decimals (fmt's %.<prec>f), v
// with prec significant digits (%.<prec>g) and fix with a sign (%+.<prec>f).
func fix(v float64, prec int) part  { return part{v: v, prec: prec, verb: 'f'} }
func sig(v float64, prec int) part  { return part{v: v, prec: prec, verb: 'g'} }
func plus(v float64, prec int) part { return part{v: v, prec: prec, verb: '+'} }

// join writes the texts and number parts (string, fix, sig or plus) one after another into the
// block's text buffer and returns them as one string that shares the buffer: those bytes are
// never written again (later texts go after them, and a buffer that must grow moves to a new
// array, leaving the old one to the strings that point into it), so the string stays as
// immutable as any other. One allocation per result block instead of one per text.
func (b *judged) join(parts ...any) string {
	from := len(b.text)
	for _, p := range parts {
		switch p := p.(type) {
		case string:
			b.text = append(b.text, p...)
		case part:
			switch p.verb {
			case 'g':
				b.text = numfmt.AppendSig(b.text, p.v, p.prec)
			case '+':
				at := len(b.text)
				b.text = numfmt.AppendFixed(b.text, p.v, p.prec)
				if c := b.text[at]; c != '-' && c != '+' { // "+" before what is not written with a sign
					b.text = append(b.text, 0)
					copy(b.text[at+1:], b.text[at:])
					b.text[at] = '+'
				}
			default:
				b.text = numfmt.AppendFixed(b.text, p.v, p.prec)
			}
		default: // a programming error, never input: every caller passes literals of these types
			// (the part itself is not put in the message: that would move every call's parts to
			// the heap)
			panic("judge: join takes strings and number parts (fix, sig, plus) only")
		}
	}
	if len(b.text) == from {
		return ""
	}
	return unsafe.String(&b.text[from], len(b.text)-from)
}

func thermoMethodOrAuto(m units.ThermoMethod) units.ThermoMethod {
	if m == "" {
		return units.ThermoAuto
	}
	return m
}

// scoreFloor is the lowest score of each verdict's band (design choice: the bands do not
// overlap, so sorting by score keeps the verdict order; penalties move a result within its band).
func scoreFloor(verdict string) float64 {
	switch verdict {
	case VerdictBlocked:
		return 0.01
	case VerdictUnfavorable:
		return 0.1
	case VerdictEquilibrium:
		return 0.3
	case VerdictPolymerizes:
		return 0.66
	}
	return 0
}

func sigmoid(x float64) float64 { return 1 / (1 + math.Exp(-x)) }

func round(x float64, digits int) float64 { return describe.Round(x, digits) }

// VolatileMolarMassG is the molar mass below which a monomer gets the volatility caution
// (design choice: cyclopentene 68 and norbornene 94 g/mol are volatile and flammable, a
// 150 g/mol line keeps the caution on the small parents only).
const VolatileMolarMassG = 150

// DefaultHydrocarbonCp is the liquid heat capacity in J/(g K) assumed for a neat monomer: the
// anchor of liquid hydrocarbons (NIST cyclohexane 1.854, benzene 1.737; romp_facts d.2).
const DefaultHydrocarbonCp = 1.8

// Cautions. They are plain, neutral statements; every list ends by deferring to local codes and
// qualified practice (romp_facts.md section d.3 lists the hazards drawn on here).
const CautionDefer = "These are screening estimates, not a hazard assessment: local codes, your site's process-safety review, the supplier's safety data sheets and qualified practice decide."

func cautions(d *describe.Descriptors, th *thermo.Thermo, c units.Conditions, verdict string, blk *judged) []string {
	out := blk.cautions[:0]
	if th != nil && th.DHkJmol < 0 && (verdict == VerdictPolymerizes || verdict == VerdictEquilibrium) {
		q := 0.0
		if th.HeatReleasedJG != nil {
			q = *th.HeatReleasedJG
		}
		switch {
		case c.Bulk && q > 0:
			rise := q * th.EqConversion / DefaultHydrocarbonCp
			out = append(out, blk.join("Bulk polymerization releases about ", fix(q, 0), " J per gram of monomer; with no heat loss the mixture could rise by about ", fix(rise, 0), " K (heat capacity ", fix(DefaultHydrocarbonCp, 1), " J/(g K) assumed). Fast catalysts release most of it within seconds to minutes and gelation stops stirring: treat it as a possible runaway, add monomer or catalyst in portions, and provide cooling."))
		case th.DHkJmol <= -40:
			out = append(out, blk.join("Strongly exothermic ring opening (ΔH_p ≈ ", fix(th.DHkJmol, 0), " kJ/mol): at high concentration or in bulk the heat can outrun cooling. Add catalyst or monomer gradually and watch the temperature."))
		}
	}
	if d.RingSize > 0 && d.MolWeightGmol > 0 && d.MolWeightGmol < VolatileMolarMassG && d.HeavyAtoms > 0 &&
		len(d.CounterIons) == 0 && !d.HasGroup(describe.FGAmmonium) && !d.HasGroup(describe.FGCarboxylate) {
		out = append(out, "Low-molar-mass cyclic olefin: likely volatile and flammable (cyclopentene and norbornene have flash points below 0 °C); keep away from ignition sources, use closed or vented vessels rated for the pressure, and check the safety data sheet.")
	}
	if th != nil && c.Temp > 373.15 {
		out = append(out, "Reaction above 100 °C: check the boiling points of monomer and solvent and the pressure rating of the vessel.")
	}
	switch c.Catalyst {
	case units.CatMoWImido:
		out = append(out, "Molybdenum and tungsten imido alkylidenes are air- and moisture-sensitive: handle in a glovebox or on a Schlenk line; quench with an aldehyde; treat residues as heavy-metal waste.")
	case units.CatClassical:
		out = append(out, "Classical systems use air- and moisture-sensitive metal halides and often pyrophoric alkylaluminium co-catalysts: inert-atmosphere handling and trained staff only; treat residues as heavy-metal waste.")
	default:
		out = append(out, "Ruthenium alkylidenes tolerate air as solids, but degas solutions for long or hot runs; quench with an excess of ethyl vinyl ether (quenching stops the chemistry, it does not remove heat already released; cooling and dilution come first); treat residues as heavy-metal waste.")
	}
	out = append(out, CautionDefer)
	return out
}

// MainReasons lists the codes of the blocking, penalizing and favoring reasons, joined by "; "
// (a group, when the reason names one, in parentheses).
func MainReasons(r *Result) string {
	var stack [128]byte
	return string(AppendMainReasons(stack[:0], r))
}

// AppendMainReasons appends MainReasons to b.
func AppendMainReasons(b []byte, r *Result) []byte {
	n := 0
	for _, effect := range [...]string{EffectBlocks, EffectPenalizes, EffectFavors} {
		for i := range r.Reasons {
			rs := &r.Reasons[i]
			if rs.Effect != effect {
				continue
			}
			if n > 0 {
				b = append(b, "; "...)
			}
			n++
			b = append(b, rs.Code...)
			if rs.Group != "" {
				b = append(b, '(')
				b = append(b, rs.Group...)
				b = append(b, ')')
			}
		}
	}
	return b
}

// MoreReactive orders the results of one monomer's ring olefins: better verdict first, then
// higher score, then lower ΔG_p. Both results must carry thermodynamics.
func MoreReactive(a, b *Result) bool {
	if ra, rb := VerdictRank(a.Verdict), VerdictRank(b.Verdict); ra != rb {
		return ra < rb
	}
	if a.Score != b.Score {
		return a.Score > b.Score
	}
	return a.Thermo.DGkJmol < b.Thermo.DGkJmol
}

// OutOf returns the conditions as shown (temperature in °C rounded to 4 decimals beside the
// exact kelvin value).
func OutOf(c units.Conditions) ConditionsOut {
	return ConditionsOut{TemperatureC: round(c.Temp.Celsius(), 4), TemperatureK: float64(c.Temp),
		MonomerConcMolL: float64(c.Conc), Bulk: c.Bulk, Catalyst: string(c.Catalyst), ThermoMethod: string(thermoMethodOrAuto(c.ThermoMethod))}
}
