package thermo

import (
	"math"

	"ringsieve/screening/describe"
	"ringsieve/screening/units"
)

// Basis values of a thermodynamic estimate.
const (
	BasisRingTable = "ring_table"
	BasisAdditive  = "additive_estimate"
	BasisSupplied  = "supplied"
	BasisStrain    = "strain_estimate"
	BasisMeasured  = "measured"
)

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
	DHkJmol            float64  `json:"dh_kj_mol"`
	DSJmolK            float64  `json:"ds_j_mol_k"`
	DGkJmol            float64  `json:"dg_kj_mol"`
	CeilingTempK       *float64 `json:"ceiling_temp_k"`
	EqMonomerMolL      float64  `json:"eq_monomer_mol_l"`
	EqConversion       float64  `json:"eq_conversion"`
	DHUncertaintyKJmol float64  `json:"dh_uncertainty_kj_mol"`
	DSUncertaintyJmolK float64  `json:"ds_uncertainty_j_mol_k"`
	DGUncertaintyKJmol float64  `json:"dg_uncertainty_kj_mol"`
	Basis              string   `json:"basis"`
	Source             string   `json:"source,omitempty"`
	TemperatureK       float64  `json:"temperature_k"`
	MonomerConcMolL    float64  `json:"monomer_conc_mol_l"`
	HeatReleasedJG     *float64 `json:"heat_released_j_g,omitempty"`
	// ParentRingSystem names the strain-table row of the monomer's ring system, if any.
	ParentRingSystem string `json:"parent_ring_system,omitempty"`
	// UnsubstitutedParent: the monomer is that parent itself.
	UnsubstitutedParent bool `json:"unsubstituted_parent,omitempty"`
	// Estimate is the model's own prediction, made without any measurement of this structure;
	// Measured is this structure's published measurement, when there is one. The numbers above
	// are the measurement's where there is one, else the estimate's (contract v1.1).
	Estimate *EstimateOut `json:"estimate,omitempty"`
	Measured *MeasuredOut `json:"measured,omitempty"`
	// CeilingTempExtrapolated marks a ceiling temperature far outside any measured range
	// (below 200 K or above 500 K): a formal number, not a prediction.
	CeilingTempExtrapolated bool `json:"ceiling_temp_extrapolated"`
	// CriticalConcMolL is the ring–chain critical concentration of a macrocycle (its floor:
	// below it, cyclic oligomers and no high polymer), mol/L; null for other monomers.
	CriticalConcMolL *float64 `json:"critical_conc_mol_l,omitempty"`
}

// EstimateOut is the estimate part of a result (contract v1.1, thermo.estimate).
type EstimateOut struct {
	DHkJmol            float64  `json:"dh_kj_mol"`
	DSJmolK            float64  `json:"ds_j_mol_k"`
	DHUncertaintyKJmol float64  `json:"dh_uncertainty_kj_mol"`
	DSUncertaintyJmolK float64  `json:"ds_uncertainty_j_mol_k"`
	Method             string   `json:"method"`
	ParentRingSystem   string   `json:"parent_ring_system"`
	FFCorrectionKJmol  *float64 `json:"forcefield_correction_kj_mol"`
	// Class is the calibration class and Calibration how its uncertainty was obtained.
	Class       string `json:"class,omitempty"`
	Calibration string `json:"calibration,omitempty"`
}

// MeasuredOut is a published measurement of the exact structure (contract v1.1,
// thermo.measured).
type MeasuredOut struct {
	DHkJmol float64  `json:"dh_kj_mol"`
	DSJmolK *float64 `json:"ds_j_mol_k"`
	Source  string   `json:"source"`
	// Evidence is seen (read in the source) or derived (arithmetic on a seen value); Note says
	// what the value is when it is not a plain van 't Hoff or calorimetric ΔH_p.
	Evidence string `json:"evidence,omitempty"`
	Note     string `json:"note,omitempty"`
}

// Extrapolation limits of a ceiling temperature (K): measured ROMP ceiling temperatures lie
// between about 250 and 450 K (romp_thermo.csv T010–T032); outside 200–500 K a T_c is a formal
// number (design choice).
const (
	ExtrapolatedBelowK = 200
	ExtrapolatedAboveK = 500
)

// maxReportedConc caps [M]eq in output (mol/L): beyond it the monomer cannot polymerize at any
// feasible concentration and the exact number has no meaning (design choice).
const maxReportedConc = 1e6

// Evaluate applies the thermodynamic formulas at temperature t and initial concentration c.
func Evaluate(dhkJ, dsJ float64, t units.TempK, c units.ConcMolL) Thermo {
	var th Thermo
	EvaluateInto(&th, nil, dhkJ, dsJ, t, c)
	return th
}

// EvaluateInto is Evaluate into *th, keeping a ceiling temperature in *ceiling (th.CeilingTempK
// then points to it; nil: a value of its own), so that a caller holding both in one block
// allocates nothing. Everything th held before is overwritten.
func EvaluateInto(th *Thermo, ceiling *float64, dhkJ, dsJ float64, t units.TempK, c units.ConcMolL) {
	T, c0 := float64(t), float64(c)
	dh := dhkJ * 1000
	sEff := dsJ + units.GasConstant*math.Log(c0)
	*th = Thermo{DHkJmol: dhkJ, DSJmolK: dsJ, TemperatureK: T, MonomerConcMolL: c0}
	th.DGkJmol = (dh - T*sEff) / 1000
	if dh < 0 && sEff < 0 {
		if ceiling == nil {
			ceiling = new(float64)
		}
		tc := dh / sEff
		*ceiling = tc
		th.CeilingTempK = ceiling
		th.CeilingTempExtrapolated = tc < ExtrapolatedBelowK || tc > ExtrapolatedAboveK
	}
	lnM := dh/(units.GasConstant*T) - dsJ/units.GasConstant
	switch {
	case lnM > math.Log(maxReportedConc):
		th.EqMonomerMolL = maxReportedConc
	default:
		th.EqMonomerMolL = math.Exp(lnM)
	}
	th.EqConversion = math.Max(0, 1-th.EqMonomerMolL/c0)
}

// SweepPoint is one temperature of a sweep.
type SweepPoint struct {
	TemperatureC  float64 `json:"temperature_c"`
	TemperatureK  float64 `json:"temperature_k"`
	DGkJmol       float64 `json:"dg_kj_mol"`
	EqMonomerMolL float64 `json:"eq_monomer_mol_l"`
	EqConversion  float64 `json:"eq_conversion"`
}

// MaxSweepPoints bounds a sweep (design choice).
const MaxSweepPoints = 2001

// Sweep evaluates ΔG_p, [M]eq and equilibrium conversion from fromC to toC (°C) in steps of stepC
// at concentration c. Errors are *units.FieldError values.
func Sweep(dhkJ, dsJ float64, c units.ConcMolL, fromC, toC, stepC float64) ([]SweepPoint, error) {
	for name, v := range map[string]float64{"sweep.from_c": fromC, "sweep.to_c": toC, "sweep.step_c": stepC} {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, units.FieldErr(name, "must be a finite number")
		}
	}
	if stepC <= 0 {
		return nil, units.FieldErr("sweep.step_c", "must be above 0")
	}
	if toC < fromC {
		return nil, units.FieldErr("sweep.to_c", "must not be below from_c")
	}
	if _, err := units.TempFromCelsius(fromC); err != nil {
		return nil, units.FieldErr("sweep.from_c", "%v", err)
	}
	if _, err := units.TempFromCelsius(toC); err != nil {
		return nil, units.FieldErr("sweep.to_c", "%v", err)
	}
	n := int(math.Floor((toC-fromC)/stepC+1e-9)) + 1
	if n > MaxSweepPoints {
		return nil, units.FieldErr("sweep.step_c", "too many points (%d > %d)", n, MaxSweepPoints)
	}
	pts := make([]SweepPoint, 0, n)
	for i := 0; i < n; i++ {
		tc := fromC + float64(i)*stepC
		t := units.TempK(tc + units.ZeroCelsiusK)
		th := Evaluate(dhkJ, dsJ, t, c)
		pts = append(pts, SweepPoint{TemperatureC: describe.Round(tc, 6), TemperatureK: float64(t), DGkJmol: th.DGkJmol, EqMonomerMolL: th.EqMonomerMolL, EqConversion: th.EqConversion})
	}
	return pts, nil
}
