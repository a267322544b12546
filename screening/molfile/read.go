package molfile

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"ringsieve/screening/mol"
	"ringsieve/screening/units"
)

// Package molfile reads and writes MDL molfiles V2000 (the connection-table format of the
// published CTfile specification): header block (name line, program line, comment), counts line,
// atom block, bond block and the property block (M  CHG, M  ISO, M  RAD, M  END). Coordinates are
// kept; stereo flags and atom parity are read past. Implicit hydrogens follow each element's
// default valence at its charge.

// Error reports a malformed molfile with the 1-based line within the record.
type Error struct {
	Line int
	Msg  string
}

func (e *Error) Error() string { return fmt.Sprintf("molfile line %d: %s", e.Line, e.Msg) }

// Is makes every Error match units.ErrInvalid.
func (e *Error) Is(target error) bool { return target == units.ErrInvalid }

func mfErr(line int, format string, args ...any) error {
	return &Error{Line: line, Msg: fmt.Sprintf(format, args...)}
}

func field(s string, from, to int) string {
	if from >= len(s) {
		return ""
	}
	if to > len(s) {
		to = len(s)
	}
	return strings.TrimSpace(s[from:to])
}

// Record is one molfile read: the molecule, its name line and the coordinates of each atom as
// written (Å; HasCoords is false when a coordinate field could not be read as a number).
type Record struct {
	Name      string
	Mol       *mol.Molecule
	Coords    [][3]float64
	HasCoords bool
}

// Parse reads one V2000 molfile and returns the molecule and its name line.
func Parse(text string) (*mol.Molecule, string, error) {
	r, err := ParseRecord(text)
	if err != nil {
		name := ""
		if r != nil {
			name = r.Name
		}
		return nil, name, err
	}
	return r.Mol, r.Name, nil
}

// ParseRecord reads one V2000 molfile with its coordinates. On an error the record holds the
// name line when it could be read.
func ParseRecord(text string) (*Record, error) {
	m, name, coords, hasCoords, err := parseText(text)
	if err != nil {
		return &Record{Name: name}, err
	}
	return &Record{Name: name, Mol: m, Coords: coords, HasCoords: hasCoords}, nil
}

func parseText(text string) (*mol.Molecule, string, [][3]float64, bool, error) {
	var coords [][3]float64
	hasCoords := true
	lines := strings.Split(strings.ReplaceAll(text, "\r\n", "\n"), "\n")
	if len(lines) < 4 {
		return nil, "", nil, false, mfErr(len(lines), "too short for a molfile (no counts line)")
	}
	name := strings.TrimSpace(lines[0])
	counts := lines[3]
	if strings.Contains(counts, "V3000") {
		return nil, name, nil, false, mfErr(4, "V3000 molfiles are not supported; save as V2000")
	}
	na, err1 := strconv.Atoi(field(counts, 0, 3))
	nb, err2 := strconv.Atoi(field(counts, 3, 6))
	if err1 != nil || err2 != nil || na < 0 || nb < 0 {
		return nil, name, nil, false, mfErr(4, "counts line must start with the atom and bond counts")
	}
	if na > mol.MaxAtoms {
		return nil, name, nil, false, mfErr(4, "more than %d atoms", mol.MaxAtoms)
	}
	if na == 0 {
		return nil, name, nil, false, mfErr(4, "the counts line announces no atoms: there is no structure to read")
	}
	if len(lines) < 4+na+nb {
		return nil, name, nil, false, mfErr(len(lines), "record ends before the %d atoms and %d bonds the counts line announces", na, nb)
	}
	m := &mol.Molecule{}
	coords = make([][3]float64, na)
	chargeCode := map[int]int{0: 0, 1: 3, 2: 2, 3: 1, 5: -1, 6: -2, 7: -3}
	for i := 0; i < na; i++ {
		ln := lines[4+i]
		sym := field(ln, 31, 34)
		if sym == "" {
			return nil, name, nil, false, mfErr(5+i, "atom line without an element symbol")
		}
		a := mol.Atom{Pos: i}
		for k := 0; k < 3; k++ {
			v, err := strconv.ParseFloat(field(ln, 10*k, 10*k+10), 64)
			if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
				hasCoords = false
				continue
			}
			coords[i][k] = v
		}
		if sym == "*" || sym == "R" || sym == "A" || sym == "Q" || strings.HasPrefix(sym, "R#") {
			a.Z = 0
		} else {
			e := mol.ElementBySymbol(sym)
			if e == nil {
				if sym == "D" {
					e, a.Isotope = mol.ElementBySymbol("H"), 2
				} else if sym == "T" {
					e, a.Isotope = mol.ElementBySymbol("H"), 3
				} else {
					return nil, name, nil, false, mfErr(5+i, "unknown element %q", sym)
				}
			}
			a.Z = e.Z
		}
		if cc := field(ln, 36, 39); cc != "" {
			v, err := strconv.Atoi(cc)
			if err != nil {
				return nil, name, nil, false, mfErr(5+i, "charge field is not a number")
			}
			ch, ok := chargeCode[v]
			if !ok && v != 4 {
				return nil, name, nil, false, mfErr(5+i, "charge code %d is not defined", v)
			}
			a.Charge = ch
		}
		m.Atoms = append(m.Atoms, a)
	}
	for i := 0; i < nb; i++ {
		ln := lines[4+na+i]
		x, e1 := strconv.Atoi(field(ln, 0, 3))
		y, e2 := strconv.Atoi(field(ln, 3, 6))
		t, e3 := strconv.Atoi(field(ln, 6, 9))
		if e1 != nil || e2 != nil || e3 != nil {
			return nil, name, nil, false, mfErr(5+na+i, "bond line must give two atom numbers and a bond type")
		}
		if x < 1 || y < 1 || x > na || y > na || x == y {
			return nil, name, nil, false, mfErr(5+na+i, "bond joins atom numbers outside 1..%d", na)
		}
		b := mol.Bond{A: x - 1, B: y - 1, Pos: i}
		switch t {
		case 1, 2, 3:
			b.Order = t
		case 4:
			b.Order, b.Aromatic = 1, true
			m.Atoms[x-1].Aromatic, m.Atoms[y-1].Aromatic = true, true
		default:
			return nil, name, nil, false, mfErr(5+na+i, "bond type %d is not supported (1, 2, 3 or 4)", t)
		}
		if m.HasBond(b.A, b.B) {
			return nil, name, nil, false, mfErr(5+na+i, "duplicate bond %d-%d", x, y)
		}
		m.Bonds = append(m.Bonds, b)
	}
	// property block: M  CHG and M  ISO replace the atom-block values; M  RAD marks radicals
	chgSeen := false
	radical := make([]int, na) // unpaired-electron count removed from the hydrogens
	for k := 4 + na + nb; k < len(lines); k++ {
		ln := lines[k]
		if strings.HasPrefix(ln, "M  END") {
			break
		}
		isCHG, isISO, isRAD := strings.HasPrefix(ln, "M  CHG"), strings.HasPrefix(ln, "M  ISO"), strings.HasPrefix(ln, "M  RAD")
		if !isCHG && !isISO && !isRAD {
			continue
		}
		f := strings.Fields(ln[6:])
		if len(f) < 1 {
			return nil, name, nil, false, mfErr(k+1, "property line without an entry count")
		}
		n, err := strconv.Atoi(f[0])
		if err != nil || len(f) < 1+2*n {
			return nil, name, nil, false, mfErr(k+1, "property line entries do not match its count")
		}
		if isCHG && !chgSeen {
			for i := range m.Atoms {
				m.Atoms[i].Charge = 0 // M  CHG supersedes the atom block
			}
			chgSeen = true
		}
		for j := 0; j < n; j++ {
			ai, e1 := strconv.Atoi(f[1+2*j])
			v, e2 := strconv.Atoi(f[2+2*j])
			if e1 != nil || e2 != nil || ai < 1 || ai > na {
				return nil, name, nil, false, mfErr(k+1, "property entry %d names no atom", j+1)
			}
			if isRAD {
				// 1 singlet and 3 triplet: two electrons; 2 doublet: one
				switch v {
				case 1, 3:
					radical[ai-1] = 2
				case 2:
					radical[ai-1] = 1
				default:
					return nil, name, nil, false, mfErr(k+1, "radical code %d is not defined", v)
				}
			} else if isCHG {
				if v < -15 || v > 15 {
					return nil, name, nil, false, mfErr(k+1, "charge out of range")
				}
				m.Atoms[ai-1].Charge = v
			} else {
				if v < 1 || v > 999 {
					return nil, name, nil, false, mfErr(k+1, "isotope out of range")
				}
				m.Atoms[ai-1].Isotope = v
			}
		}
	}
	m.Index()
	// charged or isotopic atoms get their hydrogens from the charge-adjusted valence
	for i := range m.Atoms {
		a := &m.Atoms[i]
		if a.Charge != 0 || a.Z == 1 || (a.Z != 0 && mol.ElementByZ(a.Z).Valences == nil) {
			a.Bracket = true
		}
	}
	if _, ok := m.Kekulize(); !ok {
		// Aromatic bond types leave a two-connected aromatic nitrogen ambiguous (pyridine- or
		// pyrrole-type). Retry with such nitrogens, one more at a time, read as N–H.
		if !kekulizeWithPyrroleN(m) {
			return nil, name, nil, false, mfErr(5, "aromatic bonds cannot be kekulized")
		}
	}
	m.AssignImplicitHydrogens()
	for i := range m.Atoms {
		a := &m.Atoms[i]
		if a.Bracket && a.Charge != 0 {
			a.HCount = chargedHydrogens(a.Z, a.Charge, m.BondOrderSum(i))
		}
		if radical[i] > 0 {
			a.HCount -= radical[i]
			if a.HCount < 0 {
				a.HCount = 0
			}
			a.Bracket = true
		}
	}
	return m, name, coords, hasCoords, nil
}

// chargedHydrogens gives the implicit hydrogens of a charged atom: N+, P+ valence 4; O+, S+ 3;
// N− 2; O− 1; C± 3; others none.
func chargedHydrogens(z, charge, bonded int) int {
	v := 0
	switch z {
	case 7, 15:
		v = 3 + charge
	case 8, 16:
		v = 2 + charge
	case 6:
		v = 4 - mol.Abs(charge)
	case 5:
		v = 3 - charge
	default:
		return 0
	}
	if h := v - bonded; h > 0 {
		return h
	}
	return 0
}

// kekulizeWithPyrroleN retries kekulization reading two-connected neutral aromatic nitrogens as
// N–H (pyrrole type), adding them one at a time in atom order, at most eight.
func kekulizeWithPyrroleN(m *mol.Molecule) bool {
	var cands []int
	for i, a := range m.Atoms {
		if a.Aromatic && a.Z == 7 && a.Charge == 0 && !a.Bracket && m.Degree(i) == 2 {
			cands = append(cands, i)
		}
	}
	if len(cands) > 8 {
		cands = cands[:8]
	}
	for _, i := range cands {
		m.Atoms[i].Bracket, m.Atoms[i].HCount = true, 1
		for bi := range m.Bonds {
			if m.Bonds[bi].Aromatic {
				m.Bonds[bi].Order = mol.BondSingle
			}
		}
		if _, ok := m.Kekulize(); ok {
			return true
		}
	}
	return false
}
