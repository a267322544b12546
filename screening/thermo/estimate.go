package thermo

import (
	"fmt"
	"math"
	"strings"
	"sync"

	"ringsieve/screening/describe"
)

// Note is a finding of the estimate (a table miss, a correction applied) with the number behind
// it where there is one; the verdict step reports notes as reasons with effect "note".
type Note struct {
	Code   string
	Detail string
	// Value, in Unit, when HasValue (held in the note itself: a note costs no allocation)
	Value    float64
	HasValue bool
	Unit     string
}

// Estimate is ΔH_p and ΔS_p° (1 mol/L standard state) of one monomer with their basis and
// standard uncertainties.
type Estimate struct {
	DHkJmol float64
	DSJmolK float64
	UH      float64 // kJ/mol
	US      float64 // J/(mol K)
	Basis   string
	Source  string
	Notes   []Note
	// Parent names the strain-table row of the whole ring system, when there is one; Bare says
	// the monomer is that parent without substituents.
	Parent string
	Bare   bool
	// Method is table or forcefield; Class the calibration class; ParentSystem the parent core
	// the force-field difference is taken from; FFCorrection that difference (kJ/mol) when
	// applied; Calibration says whether the class's uncertainty comes from a leave-one-out fit
	// ("calibrated on n measurements") or is a widened default ("uncalibrated").
	Method       string
	Class        string
	ParentSystem string
	FFCorrection *float64
	Calibration  string
	// Measured is this structure's published measurement, when there is one (set by the
	// caller, not used by the estimate).
	Measured     *Measurement
	MeasuredNote string
	// RingChainB is the Jacobson–Stockmayer constant (mol/L) of a macrocycle described by the
	// ring–chain equilibrium (basis ring_chain_equilibrium), else 0.
	RingChainB float64

	parentRow *RingRow
}

// Substituent corrections on the ring-opening enthalpy and entropy (kJ/mol, J/(mol K)), each with
// the uncertainty it adds. Evidence is stated per constant.
const (
	// Homoallylic substituent on a five-membered ring: the measured difference between
	// cyclopent-3-en-1-ol (−25.94 kJ/mol, −79.08 J/(mol K); Tuba et al., Macromolecules 2014, 47,
	// 8190, T005/T006) and cyclopentene (−23.43, −77.40; Tuba et al., Polym. Chem. 2013, 4, 3959,
	// T003/T004), same laboratory and catalyst class.
	corrHomoallylicH, corrHomoallylicUH = -2.51, 2.5
	corrHomoallylicS, corrHomoallylicUS = -1.67, 5.0
	// Trisubstituted ring olefin: the substituent stays on the chain olefin and lowers the
	// strain released (from memory: 1-methylcyclopentene gives no high polymer while
	// cyclopentene does; 1-methylcyclooctene polymerizes with a lower ceiling than cyclooctene).
	corrTrisubH, corrTrisubUH     = 6.0, 5.0
	corrTetrasubH, corrTetrasubUH = 12.0, 8.0
	// Gem-disubstituted ring sp3 carbon (Thorpe–Ingold effect favours the ring): from memory.
	corrGemH, corrGemUH = 4.0, 4.0
	// Allylic substituent on a monocyclic ring: from memory.
	corrAllylicH, corrAllylicUH = 2.0, 3.0
	// Trans ring fusion on the olefin's ring: a trans-fused small ring stiffens the ring that
	// opens and the fused ring survives in the chain, so ring opening releases less strain (fused
	// cyclooctenes made to depolymerize: ΔH_p near −9 kJ/mol against −23 for cyclooctene, Nature
	// Chem. 2021, 13, 743, from memory; the force field gives +14 kJ/mol for the trans-fused
	// cyclobutane and +3 for the cis-fused one).
	corrTransFusionH, corrTransFusionUH = 12.0, 8.0
)

func note(code, detail string) Note { return Note{Code: code, Detail: detail} }

func noteValue(code, detail string, v float64, unit string) Note {
	return Note{Code: code, Detail: detail, Value: v, HasValue: true, Unit: unit}
}

// EstimateOlefin estimates the thermodynamics of opening ring olefin o of structure s with the
// ring table, measurements included (EstimateFor is the leave-self-out estimate with a method).
func EstimateOlefin(s *describe.Structure, o *describe.Olefin) Estimate {
	return estimateTable(s, o, "", nil)
}

// applyCorrections adds the substituent corrections for the record's features.
func applyCorrections(e *Estimate, d *describe.Descriptors) { applyCorrectionsExcluding(e, d, "") }

// homoallylicFrom are the constitutions the homoallylic correction is derived from (cyclopentene
// and cyclopent-3-en-1-ol); a leave-self-out estimate of either does without it.
var homoallylicFrom = sync.OnceValue(func() map[string]bool {
	return map[string]bool{keyOfSMILES("C1=CCCC1"): true, keyOfSMILES("OC1CC=CC1"): true}
})

// applyCorrectionsExcluding adds the substituent corrections, leaving out those derived from
// the measurements of constitution excl.
func applyCorrectionsExcluding(e *Estimate, d *describe.Descriptors, excl string) {
	add := func(code, detail string, dh, udh, ds, uds float64) {
		e.DHkJmol += dh
		e.DSJmolK += ds
		e.UH = math.Hypot(e.UH, udh)
		e.US = math.Hypot(e.US, uds)
		e.Notes = append(e.Notes, noteValue(code, detail, dh, "kJ/mol"))
	}
	switch d.OlefinSubstitution {
	case 3:
		add("correction_trisubstituted", "trisubstituted ring olefin: ΔH_p less negative (from memory)", corrTrisubH, corrTrisubUH, 0, 0)
	case 4:
		add("correction_tetrasubstituted", "tetrasubstituted ring olefin: ΔH_p less negative (from memory)", corrTetrasubH, corrTetrasubUH, 0, 0)
	}
	if d.GemDisubstituted > 0 {
		n := float64(min(d.GemDisubstituted, 2))
		add("correction_gem_disubstitution", "gem-disubstituted ring carbon (Thorpe–Ingold effect favours the ring; from memory)", n*corrGemH, n*corrGemUH, 0, 0)
	}
	mono := d.RingSystem == describe.SystemMonocyclic || d.RingSystem == describe.SystemSpiro || d.RingSystem == describe.SystemFused
	if mono && d.AllylicSubstituents > 0 && d.RingSize <= 8 {
		n := float64(min(d.AllylicSubstituents, 2))
		add("correction_allylic", "allylic substituent on the olefin's ring (from memory)", n*corrAllylicH, n*corrAllylicUH, 0, 0)
	}
	if mono && d.HomoallylicSubstituents > 0 && d.RingSize == 5 && !homoallylicFrom()[excl] {
		add("correction_homoallylic", "homoallylic substituent on a five-membered ring (cyclopent-3-en-1-ol vs cyclopentene, Tuba et al. 2014 vs 2013)", corrHomoallylicH, corrHomoallylicUH, corrHomoallylicS, corrHomoallylicUS)
	}
	if d.TransRingFusion {
		add("correction_trans_fusion", "trans ring fusion on the olefin's ring: less strain released on opening (from memory; the force field gives the same sign)", corrTransFusionH, corrTransFusionUH, 0, 0)
	}
}

// parentSMILES gives the parent ring olefin used for a descriptor record without thermodynamics.
func parentSMILES(d *describe.Descriptors) (string, string) {
	n := d.RingSize
	switch d.RingSystem {
	case describe.SystemBridged:
		switch n {
		case 5:
			return "C1=CC2CCC1C2", "norbornene"
		case 6:
			return "C1=CC2CCC1CC2", "bicyclo[2.2.2]oct-2-ene"
		}
	}
	if n > 12 {
		n = 12
	}
	if n == 8 && d.TransOlefin {
		return "C1=C/CCCCCC/1", "trans-cyclooctene"
	}
	return "C1=C" + strings.Repeat("C", n-2) + "1", fmt.Sprintf("cycloalkene C%d", n)
}

// EstimateRecord estimates the thermodynamics of a descriptor record: supplied ΔH (and ΔS) win;
// else a supplied strain gives ΔH_p = −strain + δH; else the parent ring of the record's size and
// system from the strain table. ΔS_p° not supplied comes from the parent ring.
func EstimateRecord(d *describe.Descriptors) Estimate {
	smi, name := parentSMILES(d)
	var parent Estimate
	if s, err := describe.Describe(smi); err == nil && len(s.Olefins) > 0 {
		parent = EstimateOlefin(s, s.Olefins[0])
	}
	dhOff, udhOff, _, _ := Offsets()
	e := parent
	e.Notes = nil
	switch {
	case d.DHkJmol != nil:
		e.DHkJmol, e.UH, e.Basis = *d.DHkJmol, 0, BasisSupplied
		e.Source = "supplied by the caller"
		if d.DSJmolK != nil {
			e.DSJmolK, e.US = *d.DSJmolK, 0
		} else {
			e.Notes = append(e.Notes, note("entropy_from_parent", "ΔS_p° not supplied: taken from the parent ring "+name))
		}
		return e
	case d.StrainkJmol != nil:
		e.DHkJmol = -*d.StrainkJmol + dhOff
		e.UH = math.Hypot(8, udhOff)
		e.Basis = BasisStrain
		e.Source = "ΔH_p = −(supplied strain released) + condensed-phase offset; ΔS_p° from the parent ring " + name
		e.Notes = append(e.Notes, note("strain_estimate", "supplied strain taken as the strain released on ring opening (conventional strain scale, ±8 kJ/mol for the scale difference)"))
	default:
		e.Notes = append(e.Notes, note("parent_ring_assumed", "no ΔH, ΔS or strain supplied: values of the parent ring "+name+" from the strain table, corrected for the record's substituents"))
		e.UH = math.Hypot(e.UH, 5)
	}
	applyCorrections(&e, d)
	return e
}
