package screening

import (
	"errors"
	"fmt"
	"math"
)

// ErrInvalid is the sentinel for input that is well-formed but out of range or inconsistent;
// errors.Is(err, ErrInvalid) holds for every *FieldError.
var ErrInvalid = errors.New("invalid input")

// FieldError names the input field that is wrong and why.
type FieldError struct {
	Field string
	Msg   string
}

func (e *FieldError) Error() string { return fmt.Sprintf("%s: %s", e.Field, e.Msg) }

// Is makes every FieldError match ErrInvalid.
func (e *FieldError) Is(target error) bool { return target == ErrInvalid }

func fieldErr(field, format string, args ...any) error {
	return &FieldError{Field: field, Msg: fmt.Sprintf(format, args...)}
}

// GasConstant R in J/(mol K) (CODATA 2018 exact value).
const GasConstant = 8.314462618

// ZeroCelsiusK is 0 °C in kelvin.
const ZeroCelsiusK = 273.15

// TempK is an absolute temperature in kelvin.
type TempK float64

// NewTempK validates an absolute temperature: finite, above 0 K and at most 1500 K (beyond any
// metathesis polymerization).
func NewTempK(v float64) (TempK, error) {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, fieldErr("temperature", "must be a finite number")
	}
	if v <= 0 {
		return 0, fieldErr("temperature", "must be above 0 K (got %g K)", v)
	}
	if v > 1500 {
		return 0, fieldErr("temperature", "must be at most 1500 K (got %g K)", v)
	}
	return TempK(v), nil
}

// TempFromCelsius converts a Celsius temperature and validates it as NewTempK does.
func TempFromCelsius(c float64) (TempK, error) {
	if math.IsNaN(c) || math.IsInf(c, 0) {
		return 0, fieldErr("temperature_c", "must be a finite number")
	}
	t, err := NewTempK(c + ZeroCelsiusK)
	if err != nil {
		return 0, fieldErr("temperature_c", "%g °C is out of range: must be above -273.15 °C and at most 1226.85 °C", c)
	}
	return t, nil
}

// Celsius returns the temperature in °C.
func (t TempK) Celsius() float64 { return float64(t) - ZeroCelsiusK }

// ConcMolL is a concentration in mol/L.
type ConcMolL float64

// NewConcMolL validates an initial monomer concentration: finite, above 0 and at most 30 mol/L
// (denser than any neat liquid monomer).
func NewConcMolL(v float64) (ConcMolL, error) {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, fieldErr("monomer_conc_mol_l", "must be a finite number")
	}
	if v <= 0 {
		return 0, fieldErr("monomer_conc_mol_l", "must be above 0 mol/L (got %g)", v)
	}
	if v > 30 {
		return 0, fieldErr("monomer_conc_mol_l", "must be at most 30 mol/L (got %g)", v)
	}
	return ConcMolL(v), nil
}

// DeltaHkJmol is a molar enthalpy change in kJ/mol (negative: heat released).
type DeltaHkJmol float64

// NewDeltaHkJmol validates an enthalpy of polymerization: finite and within ±500 kJ/mol.
func NewDeltaHkJmol(v float64) (DeltaHkJmol, error) {
	if math.IsNaN(v) || math.IsInf(v, 0) || math.Abs(v) > 500 {
		return 0, fieldErr("dh_kj_mol", "must be a finite number within ±500 kJ/mol")
	}
	return DeltaHkJmol(v), nil
}

// DeltaSJmolK is a molar entropy change in J/(mol K).
type DeltaSJmolK float64

// NewDeltaSJmolK validates an entropy of polymerization: finite and within ±500 J/(mol K).
func NewDeltaSJmolK(v float64) (DeltaSJmolK, error) {
	if math.IsNaN(v) || math.IsInf(v, 0) || math.Abs(v) > 500 {
		return 0, fieldErr("ds_j_mol_k", "must be a finite number within ±500 J/(mol K)")
	}
	return DeltaSJmolK(v), nil
}

// CatalystClass is one of the metathesis catalyst classes of the contract.
type CatalystClass string

// Catalyst classes.
const (
	CatRuPhosphine CatalystClass = "ru-phosphine" // first-generation phosphine ruthenium type
	CatRuNHC       CatalystClass = "ru-nhc"       // ruthenium N-heterocyclic-carbene alkylidene, second-generation type
	CatRuPyridine  CatalystClass = "ru-pyridine"  // fast-initiating ruthenium pyridine adduct type
	CatMoWImido    CatalystClass = "mo-w-imido"   // molybdenum or tungsten imido alkylidene type
	CatClassical   CatalystClass = "classical"    // ill-defined W/Mo/Re halide with main-group alkyl co-catalyst
)

// CatalystClasses lists every class, in the order the contract gives them.
var CatalystClasses = []CatalystClass{CatRuPhosphine, CatRuNHC, CatRuPyridine, CatMoWImido, CatClassical}

// ParseCatalystClass validates a class name.
func ParseCatalystClass(s string) (CatalystClass, error) {
	for _, c := range CatalystClasses {
		if string(c) == s {
			return c, nil
		}
	}
	return "", fieldErr("catalyst", "unknown catalyst class %q (one of ru-phosphine, ru-nhc, ru-pyridine, mo-w-imido, classical)", s)
}

// IsRuthenium reports the ruthenium classes.
func (c CatalystClass) IsRuthenium() bool {
	return c == CatRuPhosphine || c == CatRuNHC || c == CatRuPyridine
}

// Describe returns a plain description of the class.
func (c CatalystClass) Describe() string {
	switch c {
	case CatRuPhosphine:
		return "ruthenium benzylidene with two phosphines (first-generation type)"
	case CatRuNHC:
		return "ruthenium N-heterocyclic-carbene alkylidene (second-generation type)"
	case CatRuPyridine:
		return "fast-initiating ruthenium N-heterocyclic-carbene bis(pyridine) adduct"
	case CatMoWImido:
		return "molybdenum or tungsten imido alkylidene"
	case CatClassical:
		return "ill-defined W/Mo/Re halide with a main-group alkyl co-catalyst"
	}
	return string(c)
}

// Conditions are the reaction conditions of one screening.
type Conditions struct {
	Temp     TempK
	Conc     ConcMolL // initial monomer concentration; for Bulk, the estimated neat concentration
	Bulk     bool     // neat monomer: Conc comes from an estimated liquid density
	Catalyst CatalystClass
}

// Default conditions of the contract: 25 °C, 1.0 mol/L, ru-nhc.
func DefaultConditions() Conditions {
	return Conditions{Temp: TempK(25 + ZeroCelsiusK), Conc: 1.0, Catalyst: CatRuNHC}
}
