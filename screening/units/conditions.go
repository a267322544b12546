package units

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
	return "", FieldErr("catalyst", "unknown catalyst class %q (one of ru-phosphine, ru-nhc, ru-pyridine, mo-w-imido, classical)", s)
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

// ThermoMethod selects how ΔH_p is estimated (contract v1.1, conditions.thermo_method).
type ThermoMethod string

// Thermodynamics methods: auto adds the force-field difference from the parent ring system
// wherever the structure differs from that parent; table is the fast ring-table tier alone;
// forcefield always adds the force-field difference.
const (
	ThermoAuto       ThermoMethod = "auto"
	ThermoTable      ThermoMethod = "table"
	ThermoForceField ThermoMethod = "forcefield"
)

// ParseThermoMethod validates a method name ("" is auto).
func ParseThermoMethod(s string) (ThermoMethod, error) {
	switch ThermoMethod(s) {
	case "", ThermoAuto:
		return ThermoAuto, nil
	case ThermoTable, ThermoForceField:
		return ThermoMethod(s), nil
	}
	return "", FieldErr("thermo_method", "unknown thermodynamics method %q (auto, table or forcefield)", s)
}

// Conditions are the reaction conditions of one screening.
type Conditions struct {
	Temp     TempK
	Conc     ConcMolL // initial monomer concentration; for Bulk, the estimated neat concentration
	Bulk     bool     // neat monomer: Conc comes from an estimated liquid density
	Catalyst CatalystClass
	// ThermoMethod is how ΔH_p is estimated (ThermoAuto when empty).
	ThermoMethod ThermoMethod
}

// DefaultConditions are the contract's defaults: 25 °C, 1.0 mol/L, ru-nhc, thermodynamics auto.
func DefaultConditions() Conditions {
	return Conditions{Temp: TempK(25 + ZeroCelsiusK), Conc: 1.0, Catalyst: CatRuNHC, ThermoMethod: ThermoAuto}
}
