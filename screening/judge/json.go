package judge

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"unicode/utf8"

	"ringsieve/screening/describe"
	"ringsieve/screening/thermo"
)

// AppendJSON appends the JSON of r to b, byte for byte what encoding/json's Marshal writes for
// it (the members in field order, omitempty honoured, numbers in the shortest form that reads
// back exactly with an exponent below 1e-6 and from 1e21, strings with <, > and & escaped),
// written field by field instead of by reflection: responses and downloads spend a third of
// their time encoding results. TestAppendJSONEveryField holds the two equal on a result with
// every field set, and TestAppendJSONMatchesMarshal over the corpus. Errors: a NaN
// or infinite number (which encoding/json refuses too).
func (r *Result) AppendJSON(b []byte) ([]byte, error) {
	w := jsonWriter{b: b}
	w.open()
	w.str("verdict", r.Verdict)
	w.num("score", r.Score)
	w.key("reasons")
	if r.Reasons == nil {
		w.null()
	} else {
		w.b = append(w.b, '[')
		for i := range r.Reasons {
			if i > 0 {
				w.b = append(w.b, ',')
			}
			w.reason(&r.Reasons[i])
		}
		w.b = append(w.b, ']')
	}
	w.key("thermo")
	if r.Thermo == nil {
		w.null()
	} else {
		w.thermo(r.Thermo)
	}
	w.key("descriptors")
	w.descriptors(&r.Descriptors)
	w.strList("cautions", r.Cautions, false)
	w.key("catalyst_compatibility")
	if r.CatalystCompatibility == nil {
		w.null()
	} else {
		w.b = append(w.b, '[')
		for i := range r.CatalystCompatibility {
			if i > 0 {
				w.b = append(w.b, ',')
			}
			c := &r.CatalystCompatibility[i]
			w.open()
			w.str("catalyst", string(c.Catalyst))
			w.str("status", c.Status)
			w.strList("groups", c.Groups, false)
			w.strOmit("remedy", c.Remedy)
			w.close()
		}
		w.b = append(w.b, ']')
	}
	w.key("conditions")
	w.open()
	w.num("temperature_c", r.Conditions.TemperatureC)
	w.num("temperature_k", r.Conditions.TemperatureK)
	w.num("monomer_conc_mol_l", r.Conditions.MonomerConcMolL)
	w.boolean("bulk", r.Conditions.Bulk)
	w.str("catalyst", r.Conditions.Catalyst)
	w.str("thermo_method", r.Conditions.ThermoMethod)
	w.close()
	w.str("engine_version", r.EngineVersion)
	w.close()
	if w.err != nil {
		return b, w.err
	}
	return w.b, nil
}

func (w *jsonWriter) reason(x *Reason) {
	w.open()
	w.str("code", x.Code)
	w.str("effect", x.Effect)
	w.str("detail", x.Detail)
	w.numPtrOmit("value", x.Value)
	w.strOmit("unit", x.Unit)
	w.strOmit("group", x.Group)
	w.close()
}

func (w *jsonWriter) thermo(t *thermo.Thermo) {
	w.open()
	w.num("dh_kj_mol", t.DHkJmol)
	w.num("ds_j_mol_k", t.DSJmolK)
	w.num("dg_kj_mol", t.DGkJmol)
	w.numPtr("ceiling_temp_k", t.CeilingTempK)
	w.num("eq_monomer_mol_l", t.EqMonomerMolL)
	w.num("eq_conversion", t.EqConversion)
	w.num("dh_uncertainty_kj_mol", t.DHUncertaintyKJmol)
	w.num("ds_uncertainty_j_mol_k", t.DSUncertaintyJmolK)
	w.num("dg_uncertainty_kj_mol", t.DGUncertaintyKJmol)
	w.str("basis", t.Basis)
	w.strOmit("source", t.Source)
	w.num("temperature_k", t.TemperatureK)
	w.num("monomer_conc_mol_l", t.MonomerConcMolL)
	w.numPtrOmit("heat_released_j_g", t.HeatReleasedJG)
	w.strOmit("parent_ring_system", t.ParentRingSystem)
	w.boolOmit("unsubstituted_parent", t.UnsubstitutedParent)
	if e := t.Estimate; e != nil {
		w.key("estimate")
		w.open()
		w.num("dh_kj_mol", e.DHkJmol)
		w.num("ds_j_mol_k", e.DSJmolK)
		w.num("dh_uncertainty_kj_mol", e.DHUncertaintyKJmol)
		w.num("ds_uncertainty_j_mol_k", e.DSUncertaintyJmolK)
		w.str("method", e.Method)
		w.str("parent_ring_system", e.ParentRingSystem)
		w.numPtr("forcefield_correction_kj_mol", e.FFCorrectionKJmol)
		w.strOmit("class", e.Class)
		w.strOmit("calibration", e.Calibration)
		w.close()
	}
	if m := t.Measured; m != nil {
		w.key("measured")
		w.open()
		w.num("dh_kj_mol", m.DHkJmol)
		w.numPtr("ds_j_mol_k", m.DSJmolK)
		w.str("source", m.Source)
		w.strOmit("evidence", m.Evidence)
		w.strOmit("note", m.Note)
		w.close()
	}
	w.boolean("ceiling_temp_extrapolated", t.CeilingTempExtrapolated)
	w.numPtrOmit("critical_conc_mol_l", t.CriticalConcMolL)
	w.close()
}

func (w *jsonWriter) descriptors(d *describe.Descriptors) {
	w.open()
	w.int("ring_size", d.RingSize)
	w.strOmit("ring_system", d.RingSystem)
	w.intOmit("olefin_substitution", d.OlefinSubstitution)
	w.numPtrOmit("strain_kj_mol", d.StrainkJmol)
	w.numPtrOmit("dh_kj_mol", d.DHkJmol)
	w.numPtrOmit("ds_j_mol_k", d.DSJmolK)
	w.boolean("conjugated", d.Conjugated)
	w.strList("conjugated_with", d.ConjugatedWith, true)
	w.boolean("ewg_on_olefin_ring", d.EWGOnOlefinRing)
	w.boolean("ewg_on_olefin", d.EWGOnOlefin)
	w.int("allylic_substituents", d.AllylicSubstituents)
	w.boolOmit("bulky_allylic", d.BulkyAllylic)
	w.boolOmit("quaternary_allylic_ewg", d.QuaternaryAllylicEWG)
	w.intOmit("homoallylic_substituents", d.HomoallylicSubstituents)
	w.intOmit("gem_disubstituted", d.GemDisubstituted)
	w.boolean("trans_olefin", d.TransOlefin)
	w.boolOmit("trans_ring_fusion", d.TransRingFusion)
	w.strOmit("exo_endo", d.ExoEndo)
	w.strList("functional_groups", d.FunctionalGroups, true)
	w.strOmit("smiles", d.SMILES)
	w.strOmit("formula", d.Formula)
	w.numOmit("mol_weight_g_mol", d.MolWeightGmol)
	w.strOmit("record_formula", d.RecordFormula)
	w.numOmit("record_mol_weight_g_mol", d.RecordMolWeightGmol)
	w.numOmit("monoisotopic_mass", d.MonoisotopicMass)
	w.intOmit("heavy_atoms", d.HeavyAtoms)
	w.intOmit("ring_count", d.RingCount)
	w.intOmit("aromatic_atoms", d.AromaticAtoms)
	w.intOmit("ring_system_rings", d.RingSystemRings)
	w.strOmit("skeleton_key", d.SkeletonKey)
	w.strOmit("core_key", d.CoreKey)
	w.intOmit("equivalent_ring_olefins", d.EquivalentRingOlefins)
	w.intOmit("ring_olefins", d.RingOlefins)
	if len(d.OtherRingOlefins) > 0 {
		w.key("other_ring_olefins")
		w.b = append(w.b, '[')
		for i := range d.OtherRingOlefins {
			if i > 0 {
				w.b = append(w.b, ',')
			}
			o := &d.OtherRingOlefins[i]
			w.open()
			w.int("ring_size", o.RingSize)
			w.str("ring_system", o.RingSystem)
			w.int("olefin_substitution", o.OlefinSubstitution)
			w.strOmit("skeleton_key", o.SkeletonKey)
			w.num("dh_kj_mol", o.DHkJmol)
			w.strOmit("note", o.Note)
			w.intOmit("count", o.Count)
			w.close()
		}
		w.b = append(w.b, ']')
	}
	w.strList("counter_ions", d.CounterIons, true)
	w.boolOmit("from_structure", d.FromStructure)
	w.close()
}

// jsonWriter appends JSON objects member by member; first is true right after a '{'.
type jsonWriter struct {
	b     []byte
	first bool
	err   error
}

func (w *jsonWriter) open() { w.b = append(w.b, '{'); w.first = true }

func (w *jsonWriter) close() { w.b = append(w.b, '}'); w.first = false }

// key writes the separator and the member name (names are plain ASCII: no escaping).
func (w *jsonWriter) key(name string) {
	if !w.first {
		w.b = append(w.b, ',')
	}
	w.first = false
	w.b = append(w.b, '"')
	w.b = append(w.b, name...)
	w.b = append(w.b, '"', ':')
}

func (w *jsonWriter) null() { w.b = append(w.b, "null"...) }

func (w *jsonWriter) str(name, v string) { w.key(name); w.b = AppendJSONString(w.b, v) }

func (w *jsonWriter) strOmit(name, v string) {
	if v != "" {
		w.str(name, v)
	}
}

// strList writes a list of strings: null when nil, or nothing when omit and empty.
func (w *jsonWriter) strList(name string, v []string, omit bool) {
	if omit && len(v) == 0 {
		return
	}
	w.key(name)
	if v == nil {
		w.null()
		return
	}
	w.b = append(w.b, '[')
	for i, s := range v {
		if i > 0 {
			w.b = append(w.b, ',')
		}
		w.b = AppendJSONString(w.b, s)
	}
	w.b = append(w.b, ']')
}

func (w *jsonWriter) int(name string, v int) { w.key(name); w.b = strconv.AppendInt(w.b, int64(v), 10) }

func (w *jsonWriter) intOmit(name string, v int) {
	if v != 0 {
		w.int(name, v)
	}
}

func (w *jsonWriter) boolean(name string, v bool) { w.key(name); w.b = strconv.AppendBool(w.b, v) }

func (w *jsonWriter) boolOmit(name string, v bool) {
	if v {
		w.boolean(name, v)
	}
}

func (w *jsonWriter) num(name string, v float64) { w.key(name); w.float(v) }

// numOmit leaves out zero (negative zero too, as encoding/json's omitempty does).
func (w *jsonWriter) numOmit(name string, v float64) {
	if v != 0 {
		w.num(name, v)
	}
}

func (w *jsonWriter) numPtr(name string, v *float64) {
	w.key(name)
	if v == nil {
		w.null()
		return
	}
	w.float(*v)
}

func (w *jsonWriter) numPtrOmit(name string, v *float64) {
	if v != nil {
		w.numPtr(name, v)
	}
}

// errNotFinite is a NaN or an infinity, which JSON cannot carry.
var errNotFinite = errors.New("json: a number is NaN or infinite")

// float writes a number as ECMAScript's Number-to-String does (the JSON form of encoding/json):
// the shortest decimal that reads back to the same float64, in plain notation from 1e-6 up to
// 1e21 and in exponent notation outside, the exponent without a plus sign or leading zeros.
func (w *jsonWriter) float(v float64) {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		if w.err == nil {
			w.err = fmt.Errorf("%w: %v", errNotFinite, v)
		}
		w.b = append(w.b, '0')
		return
	}
	if a := math.Abs(v); a == 0 || (a >= 1e-6 && a < 1e21) {
		w.b = strconv.AppendFloat(w.b, v, 'f', -1, 64)
		return
	}
	start := len(w.b)
	w.b = strconv.AppendFloat(w.b, v, 'e', -1, 64)
	// strconv writes at least two exponent digits ("e-07", "e+21"): JSON's form has "e-7"
	// and "e+21"
	n := len(w.b)
	if e := n - 4; e > start && w.b[e] == 'e' && w.b[e+2] == '0' {
		w.b[e+2] = w.b[e+3]
		w.b = w.b[:n-1]
	}
}

// jsonEscape classifies ASCII bytes: 0 copied as is, 1 written as \u00XX, or the letter of a
// short escape (\" \\ \b \f \n \r \t). <, > and & are escaped as encoding/json does by default,
// so that a result can sit inside HTML.
var jsonEscape = func() (t [utf8.RuneSelf]byte) {
	for c := 0; c < 0x20; c++ {
		t[c] = 1
	}
	t['<'], t['>'], t['&'] = 1, 1, 1
	t['"'], t['\\'] = '"', '\\'
	t['\b'], t['\f'], t['\n'], t['\r'], t['\t'] = 'b', 'f', 'n', 'r', 't'
	return t
}()

const hexDigits = "0123456789abcdef"

// AppendJSONString appends s as a JSON string, byte for byte as encoding/json writes it: HTML
// characters escaped, invalid UTF-8 bytes become U+FFFD, and the line and paragraph separators
// U+2028 and U+2029 are escaped (JavaScript cannot hold them raw).
func AppendJSONString(b []byte, s string) []byte {
	b = append(b, '"')
	done := 0 // s[:done] is written
	for i := 0; i < len(s); {
		c := s[i]
		if c < utf8.RuneSelf {
			e := jsonEscape[c]
			if e == 0 {
				i++
				continue
			}
			b = append(b, s[done:i]...)
			if e == 1 {
				b = append(b, '\\', 'u', '0', '0', hexDigits[c>>4], hexDigits[c&0xF])
			} else {
				b = append(b, '\\', e)
			}
			i++
			done = i
			continue
		}
		r, size := utf8.DecodeRuneInString(s[i:])
		switch {
		case r == utf8.RuneError && size == 1:
			b = append(b, s[done:i]...)
			b = append(b, `\ufffd`...)
		case r == '\u2028' || r == '\u2029':
			b = append(b, s[done:i]...)
			b = append(b, '\\', 'u', '2', '0', '2', hexDigits[r&0xF])
		default:
			i += size
			continue
		}
		i += size
		done = i
	}
	b = append(b, s[done:]...)
	return append(b, '"')
}
