// Package units holds the validated quantities every screening step shares: temperatures,
// concentrations, enthalpies and entropies (units in the type names), the catalyst classes and
// the reaction conditions built from them, and the field error a constructor reports when a
// value is out of range. It imports nothing of ringsieve.
package units

import (
	"errors"
	"fmt"
	"math"
)

// ErrInvalid is the sentinel for input that is well-formed but out of range or inconsistent;
// errors.Is(err, ErrInvalid) holds for every *FieldError.
var ErrInvalid = errors.New("invalid input")

// ErrTooComplex is the sentinel for a well-formed structure whose screening would need more
// work than the per-structure bound allows (see screening.MaxRingWork).
var ErrTooComplex = errors.New("structure too complex")

// FieldError names the input field that is wrong and why.
type FieldError struct {
	Field string
	Msg   string
}

func (e *FieldError) Error() string { return fmt.Sprintf("%s: %s", e.Field, e.Msg) }

// Is makes every FieldError match ErrInvalid.
func (e *FieldError) Is(target error) bool { return target == ErrInvalid }

// FieldErr builds a *FieldError with a formatted message.
func FieldErr(field, format string, args ...any) error {
	return &FieldError{Field: field, Msg: fmt.Sprintf(format, args...)}
}

// Refield renames the field of a *FieldError (the same error under the caller's name for the
// field); other errors come back unchanged.
func Refield(err error, field string) error {
	var fe *FieldError
	if errors.As(err, &fe) {
		return &FieldError{Field: field, Msg: fe.Msg}
	}
	return err
}

// PrefixField prefixes the field of a *FieldError with the path of the item it concerns
// ("items[3]." + "smiles"); other errors come back unchanged.
func PrefixField(err error, prefix string) error {
	var fe *FieldError
	if errors.As(err, &fe) {
		return &FieldError{Field: prefix + fe.Field, Msg: fe.Msg}
	}
	return err
}

// GasConstant R in J/(mol K) (CODATA 2018 exact value).
const GasConstant = 8.314462618

// ZeroCelsiusK is 0 °C in kelvin.
const ZeroCelsiusK = 273.15

// AvogadroPerMol is N_A in 1/mol (SI exact).
const AvogadroPerMol = 6.02214076e23

// TempK is an absolute temperature in kelvin.
type TempK float64

// MaxTempK bounds temperatures: 1500 K is beyond any metathesis polymerization (design choice:
// a guard against typing errors, not a chemical limit).
const MaxTempK = 1500

// MinTempK bounds temperatures from below: 100 K (−173 °C) is colder than any solvent a
// polymerization is run in stays liquid (design choice: 1e-300 K is a typing error, not a
// condition).
const MinTempK = 100

// NewTempK validates an absolute temperature: finite, from MinTempK to MaxTempK.
func NewTempK(v float64) (TempK, error) {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, FieldErr("temperature", "must be a finite number")
	}
	if v < MinTempK {
		return 0, FieldErr("temperature", "must be at least %d K (got %g K): below any liquid reaction medium", MinTempK, v)
	}
	if v > MaxTempK {
		return 0, FieldErr("temperature", "must be at most %d K (got %g K)", MaxTempK, v)
	}
	return TempK(v), nil
}

// TempFromCelsius converts a Celsius temperature and validates it as NewTempK does.
func TempFromCelsius(c float64) (TempK, error) {
	if math.IsNaN(c) || math.IsInf(c, 0) {
		return 0, FieldErr("temperature_c", "must be a finite number")
	}
	t, err := NewTempK(c + ZeroCelsiusK)
	if err != nil {
		return 0, FieldErr("temperature_c", "%g °C is out of range: must be from -173.15 °C to 1226.85 °C", c)
	}
	return t, nil
}

// Celsius returns the temperature in °C.
func (t TempK) Celsius() float64 { return float64(t) - ZeroCelsiusK }

// ConcMolL is a concentration in mol/L.
type ConcMolL float64

// MaxConcMolL bounds concentrations: denser than any neat liquid monomer (design choice).
const MaxConcMolL = 30

// NewConcMolL validates an initial monomer concentration: finite, above 0 and at most
// MaxConcMolL.
func NewConcMolL(v float64) (ConcMolL, error) {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, FieldErr("monomer_conc_mol_l", "must be a finite number")
	}
	if v <= 0 {
		return 0, FieldErr("monomer_conc_mol_l", "must be above 0 mol/L (got %g)", v)
	}
	if v > MaxConcMolL {
		return 0, FieldErr("monomer_conc_mol_l", "must be at most %d mol/L (got %g)", MaxConcMolL, v)
	}
	return ConcMolL(v), nil
}

// MaxAbsThermo bounds supplied enthalpies (kJ/mol), entropies (J/(mol K)) and strains: ±500 is
// an order of magnitude beyond any ring-opening value (design choice: a guard against typing
// errors).
const MaxAbsThermo = 500

// DeltaHkJmol is a molar enthalpy change in kJ/mol (negative: heat released).
type DeltaHkJmol float64

// NewDeltaHkJmol validates an enthalpy of polymerization: finite and within ±MaxAbsThermo.
func NewDeltaHkJmol(v float64) (DeltaHkJmol, error) {
	if math.IsNaN(v) || math.IsInf(v, 0) || math.Abs(v) > MaxAbsThermo {
		return 0, FieldErr("dh_kj_mol", "must be a finite number within ±500 kJ/mol")
	}
	return DeltaHkJmol(v), nil
}

// DeltaSJmolK is a molar entropy change in J/(mol K).
type DeltaSJmolK float64

// NewDeltaSJmolK validates an entropy of polymerization: finite and within ±MaxAbsThermo.
func NewDeltaSJmolK(v float64) (DeltaSJmolK, error) {
	if math.IsNaN(v) || math.IsInf(v, 0) || math.Abs(v) > MaxAbsThermo {
		return 0, FieldErr("ds_j_mol_k", "must be a finite number within ±500 J/(mol K)")
	}
	return DeltaSJmolK(v), nil
}
