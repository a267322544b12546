package mol

// Element data used by the SMILES reader and the mass calculations.
//
// Average atomic weights are the IUPAC abridged standard atomic weights (five significant figures;
// conventional values for elements with an interval): Prohaska et al., "Standard atomic weights of
// the elements 2021 (IUPAC Technical Report)", Pure Appl. Chem. 2022, 94, 573–600,
// DOI 10.1515/pac-2019-0603. Elements with no stable isotope carry the mass number of their
// longest-lived isotope, as the IUPAC table prints it in brackets.
//
// Monoisotopic masses are those of the most abundant isotope from the 2020 Atomic Mass Evaluation:
// Wang et al., Chinese Phys. C 2021, 45, 030003, DOI 10.1088/1674-1137/abddaf (values from memory,
// to at least six decimals for H, C, N, O, F, P, S, Cl, Br, I, B, Si, Se).

// Element is one row of the element table.
type Element struct {
	Z        int
	Symbol   string
	WeightG  float64 // average atomic weight, g/mol
	MonoMass float64 // mass of the most abundant isotope, u
	// Valences are the default valences used for implicit hydrogens of organic-subset atoms
	// (OpenSMILES specification, section 3.1.5); nil for elements outside the subset.
	Valences []int
}

// NumElements is the number of rows of the element table (Z = 1 … 92).
const NumElements = 92

var elements = [NumElements]Element{
	{1, "H", 1.008, 1.00782503223, nil},
	{2, "He", 4.0026, 4.00260325413, nil},
	{3, "Li", 6.94, 7.0160034366, nil},
	{4, "Be", 9.0122, 9.012183065, nil},
	{5, "B", 10.81, 11.00930536, []int{3}},
	{6, "C", 12.011, 12.0, []int{4}},
	{7, "N", 14.007, 14.00307400443, []int{3, 5}},
	{8, "O", 15.999, 15.99491461957, []int{2}},
	{9, "F", 18.998, 18.99840316273, []int{1}},
	{10, "Ne", 20.180, 19.9924401762, nil},
	{11, "Na", 22.990, 22.989769282, nil},
	{12, "Mg", 24.305, 23.985041697, nil},
	{13, "Al", 26.982, 26.98153853, nil},
	{14, "Si", 28.085, 27.97692653465, nil},
	{15, "P", 30.974, 30.97376199842, []int{3, 5}},
	{16, "S", 32.06, 31.9720711744, []int{2, 4, 6}},
	{17, "Cl", 35.45, 34.968852682, []int{1}},
	{18, "Ar", 39.95, 39.9623831237, nil},
	{19, "K", 39.098, 38.9637064864, nil},
	{20, "Ca", 40.078, 39.962590863, nil},
	{21, "Sc", 44.956, 44.95590828, nil},
	{22, "Ti", 47.867, 47.94794198, nil},
	{23, "V", 50.942, 50.94395704, nil},
	{24, "Cr", 51.996, 51.94050623, nil},
	{25, "Mn", 54.938, 54.93804391, nil},
	{26, "Fe", 55.845, 55.93493633, nil},
	{27, "Co", 58.933, 58.93319429, nil},
	{28, "Ni", 58.693, 57.93534241, nil},
	{29, "Cu", 63.546, 62.92959772, nil},
	{30, "Zn", 65.38, 63.92914201, nil},
	{31, "Ga", 69.723, 68.9255735, nil},
	{32, "Ge", 72.630, 73.921177761, nil},
	{33, "As", 74.922, 74.92159457, nil},
	{34, "Se", 78.971, 79.9165218, nil},
	{35, "Br", 79.904, 78.9183376, []int{1}},
	{36, "Kr", 83.798, 83.9114977282, nil},
	{37, "Rb", 85.468, 84.9117897379, nil},
	{38, "Sr", 87.62, 87.9056125, nil},
	{39, "Y", 88.906, 88.9058403, nil},
	{40, "Zr", 91.224, 89.9046977, nil},
	{41, "Nb", 92.906, 92.906373, nil},
	{42, "Mo", 95.95, 97.90540482, nil},
	{43, "Tc", 98, 97.9072124, nil},
	{44, "Ru", 101.07, 101.9043441, nil},
	{45, "Rh", 102.91, 102.905498, nil},
	{46, "Pd", 106.42, 105.9034804, nil},
	{47, "Ag", 107.87, 106.9050916, nil},
	{48, "Cd", 112.41, 113.90336509, nil},
	{49, "In", 114.82, 114.903878776, nil},
	{50, "Sn", 118.71, 119.90220163, nil},
	{51, "Sb", 121.76, 120.903812, nil},
	{52, "Te", 127.60, 129.906222748, nil},
	{53, "I", 126.90, 126.9044719, []int{1}},
	{54, "Xe", 131.29, 131.9041550856, nil},
	{55, "Cs", 132.91, 132.905451961, nil},
	{56, "Ba", 137.33, 137.905247, nil},
	{57, "La", 138.91, 138.9063563, nil},
	{58, "Ce", 140.12, 139.9054431, nil},
	{59, "Pr", 140.91, 140.9076576, nil},
	{60, "Nd", 144.24, 141.907729, nil},
	{61, "Pm", 145, 144.9127559, nil},
	{62, "Sm", 150.36, 151.9197397, nil},
	{63, "Eu", 151.96, 152.921238, nil},
	{64, "Gd", 157.25, 157.9241123, nil},
	{65, "Tb", 158.93, 158.9253547, nil},
	{66, "Dy", 162.50, 163.9291819, nil},
	{67, "Ho", 164.93, 164.9303288, nil},
	{68, "Er", 167.26, 165.9302995, nil},
	{69, "Tm", 168.93, 168.9342179, nil},
	{70, "Yb", 173.05, 173.9388664, nil},
	{71, "Lu", 174.97, 174.9407752, nil},
	{72, "Hf", 178.49, 179.946557, nil},
	{73, "Ta", 180.95, 180.9479958, nil},
	{74, "W", 183.84, 183.95093092, nil},
	{75, "Re", 186.21, 186.9557501, nil},
	{76, "Os", 190.23, 191.961477, nil},
	{77, "Ir", 192.22, 192.9629216, nil},
	{78, "Pt", 195.08, 194.9647917, nil},
	{79, "Au", 196.97, 196.96656879, nil},
	{80, "Hg", 200.59, 201.9706434, nil},
	{81, "Tl", 204.38, 204.9744278, nil},
	{82, "Pb", 207.2, 207.9766525, nil},
	{83, "Bi", 208.98, 208.9803991, nil},
	{84, "Po", 209, 208.9824308, nil},
	{85, "At", 210, 209.9871479, nil},
	{86, "Rn", 222, 222.0175782, nil},
	{87, "Fr", 223, 223.019736, nil},
	{88, "Ra", 226, 226.0254103, nil},
	{89, "Ac", 227, 227.0277523, nil},
	{90, "Th", 232.04, 232.0380558, nil},
	{91, "Pa", 231.04, 231.0358842, nil},
	{92, "U", 238.03, 238.0507884, nil},
}

// isotopeMasses are exact masses (u) of isotopes a caller may label explicitly, keyed by
// Z*1000 + mass number (AME2020, from memory). Other labels fall back to the mass number.
var isotopeMasses = map[int]float64{
	1001: 1.00782503223, 1002: 2.01410177812, 1003: 3.0160492779,
	6012: 12.0, 6013: 13.00335483507, 6014: 14.0032419884,
	7014: 14.00307400443, 7015: 15.00010889888,
	8016: 15.99491461957, 8017: 16.99913175650, 8018: 17.99915961286,
	9018: 18.0009380, 9019: 18.99840316273,
	15031: 30.97376199842, 15032: 31.97390764,
	16032: 31.9720711744, 16033: 32.9714589098, 16034: 33.967867004, 16035: 34.96903231,
	17035: 34.968852682, 17037: 36.965902602,
	35079: 78.9183376, 35081: 80.9162897,
	53123: 122.9055898, 53125: 124.9046294, 53127: 126.9044719, 53131: 130.9061263,
}

var elementBySymbol = func() map[string]*Element {
	m := make(map[string]*Element, len(elements))
	for i := range elements {
		m[elements[i].Symbol] = &elements[i]
	}
	return m
}()

// ElementBySymbol returns the element with this symbol ("C", "Cl"), or nil.
func ElementBySymbol(sym string) *Element { return elementBySymbol[sym] }

// ElementByZ returns the element with atomic number z, or nil outside 1 … NumElements.
func ElementByZ(z int) *Element {
	if z >= 1 && z <= NumElements {
		return &elements[z-1]
	}
	return nil
}

// AtomMass returns the mass used for an atom in the average molecular weight: the isotope's mass
// when the atom is labelled, else the element's standard atomic weight.
func AtomMass(z, isotope int) float64 {
	if isotope > 0 {
		if m, ok := isotopeMasses[z*1000+isotope]; ok {
			return m
		}
		return float64(isotope)
	}
	if e := ElementByZ(z); e != nil {
		return e.WeightG
	}
	return 0
}

// AtomMonoMass returns the monoisotopic mass of an atom: the labelled isotope's mass, else the
// most abundant isotope's.
func AtomMonoMass(z, isotope int) float64 {
	if isotope > 0 {
		return AtomMass(z, isotope)
	}
	if e := ElementByZ(z); e != nil {
		return e.MonoMass
	}
	return 0
}
