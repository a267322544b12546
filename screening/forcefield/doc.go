// Package forcefield is MMFF94 and MMFF94s in Go: atom typing with MMFF's own aromaticity,
// partial charges from bond-charge increments, the seven energy terms with analytic gradients,
// 3-D structures from the molecular graph that honour its stereo elements, minimization, and a
// conformer search. It is pure computation on the molecule graph of screening/mol.
package forcefield
