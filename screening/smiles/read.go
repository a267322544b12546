// Package smiles reads SMILES strings into molecule graphs, following the OpenSMILES
// specification (opensmiles.org, version 1.0, 2007–2016): organic-subset and bracket atoms
// (isotope, chirality, hydrogen count, charge, atom class), the bond symbols - = # $ : / \, ring
// closures 0–9 and %nn, branches, and dot-separated components. Aromatic (lower-case) atoms are
// kekulized and given implicit hydrogens by the specification's rules. Errors carry the 0-based
// character offset of the problem.
package smiles

import (
	"errors"
	"fmt"
	"strings"

	"ringsieve/screening/mol"
)

// MaxLen bounds one SMILES; longer input is refused, not truncated (design choice: ten times the
// longest monomer we expect).
const MaxLen = 4000

// ErrSMILES is the sentinel for any malformed SMILES; errors.Is(err, ErrSMILES) holds for every
// *Error.
var ErrSMILES = errors.New("invalid SMILES")

// Error reports a malformed SMILES with the 0-based character offset of the problem.
type Error struct {
	Pos int
	Msg string
}

func (e *Error) Error() string {
	return fmt.Sprintf("invalid SMILES at position %d: %s", e.Pos, e.Msg)
}

// Is makes every Error match ErrSMILES.
func (e *Error) Is(target error) bool { return target == ErrSMILES }

// Errorf builds an *Error at position pos.
func Errorf(pos int, format string, args ...any) error {
	return &Error{Pos: pos, Msg: fmt.Sprintf(format, args...)}
}

func smilesErr(pos int, format string, args ...any) error { return Errorf(pos, format, args...) }

// Parse reads one SMILES string into a molecule graph with kekulized bonds, hydrogen counts and
// its index built. Errors are *Error values (errors.Is(err, ErrSMILES)) carrying the offending
// character offset.
func Parse(s string) (*mol.Molecule, error) {
	m := &mol.Molecule{}
	if err := ParseInto(m, s); err != nil {
		return nil, err
	}
	return m, nil
}

// ParseInto is Parse into a molecule whose storage is reused (it is reset first).
func ParseInto(m *mol.Molecule, s string) error {
	if len(s) > MaxLen {
		return smilesErr(MaxLen, "longer than %d characters", MaxLen)
	}
	if strings.TrimSpace(s) == "" {
		return smilesErr(0, "empty SMILES")
	}
	if t := strings.TrimSpace(s); strings.HasPrefix(t, "InChI=") || strings.HasPrefix(t, "1S/") {
		return smilesErr(0, "this is an InChI, not a SMILES: convert it to SMILES first")
	}
	m.Reset()
	// size the atom and bond lists once: at most one atom per letter, at most one bond per atom
	// plus one per ring-closure digit
	if letters, digits := countLettersDigits(s); cap(m.Atoms) < letters {
		m.Atoms = make([]mol.Atom, 0, letters)
		m.Bonds = make([]mol.Bond, 0, letters+digits)
	}
	r := &smilesReader{s: s, m: m}
	if err := r.read(); err != nil {
		if hint := nameHint(s); hint != "" {
			var se *Error
			if errors.As(err, &se) {
				se.Msg += "; " + hint
			}
		}
		return err
	}
	m.Index()
	if a, ok := m.Kekulize(); !ok {
		return smilesErr(m.Atoms[a].Pos, "%s", kekuleHint(m, a))
	}
	m.AssignImplicitHydrogens()
	return nil
}

type ringOpen struct {
	atom  int
	order int
	arom  bool
	dir   byte
	pos   int
}

type smilesReader struct {
	s      string
	i      int
	m      *mol.Molecule
	rings  [100]ringOpen // open ring bonds by number 0–99
	isOpen [100]bool
	nOpen  int
}

func (r *smilesReader) read() error {
	s := r.s
	prev := -1          // previous atom in the current chain
	var stack []int     // branch stack of atoms
	var branchPos []int // positions of open '('
	pendOrder, pendDir, pendPos := mol.BondUnset, byte(0), -1
	pendArom := false
	expectAtom := true // at start or after '.', '(' an atom or bond must follow
	for r.i < len(s) {
		c := s[r.i]
		switch {
		case c == '(':
			if prev < 0 {
				return smilesErr(r.i, "branch opened before any atom")
			}
			if pendOrder != mol.BondUnset || pendDir != 0 {
				return smilesErr(r.i, "bond symbol before '('")
			}
			stack = append(stack, prev)
			branchPos = append(branchPos, r.i)
			r.i++
			if r.i < len(s) && s[r.i] == ')' {
				return smilesErr(r.i, "empty branch")
			}
			expectAtom = true
		case c == ')':
			if len(stack) == 0 {
				return smilesErr(r.i, "')' without matching '('")
			}
			if pendOrder != mol.BondUnset || pendDir != 0 {
				return smilesErr(pendPos, "bond symbol with no atom after it")
			}
			if expectAtom {
				return smilesErr(r.i, "empty branch")
			}
			prev = stack[len(stack)-1]
			stack = stack[:len(stack)-1]
			branchPos = branchPos[:len(branchPos)-1]
			r.i++
		case c == '.':
			if pendOrder != mol.BondUnset || pendDir != 0 {
				return smilesErr(pendPos, "bond symbol before '.'")
			}
			if prev < 0 || expectAtom {
				return smilesErr(r.i, "'.' with no atom before it")
			}
			if len(stack) > 0 {
				return smilesErr(r.i, "'.' inside a branch")
			}
			prev = -1
			expectAtom = true
			r.i++
		case c == '-' || c == '=' || c == '#' || c == '$' || c == ':' || c == '/' || c == '\\':
			if prev < 0 {
				return smilesErr(r.i, "bond symbol %q with no atom before it", c)
			}
			if pendOrder != mol.BondUnset || pendDir != 0 {
				return smilesErr(r.i, "two bond symbols in a row")
			}
			pendPos = r.i
			switch c {
			case '-':
				pendOrder = mol.BondSingle
			case '=':
				pendOrder = mol.BondDouble
			case '#':
				pendOrder = mol.BondTriple
			case '$':
				pendOrder = mol.BondQuad
			case ':':
				pendOrder = mol.BondSingle
				pendArom = true
			case '/', '\\':
				pendOrder = mol.BondSingle
				pendDir = c
			}
			r.i++
		case c >= '0' && c <= '9' || c == '%':
			if prev < 0 {
				return smilesErr(r.i, "ring-closure digit with no atom before it")
			}
			if expectAtom {
				return smilesErr(r.i, "ring-closure digit where an atom was expected")
			}
			pos := r.i
			num := int(c - '0')
			if c == '%' {
				if r.i+2 >= len(s) || !isDigit(s[r.i+1]) || !isDigit(s[r.i+2]) {
					return smilesErr(r.i, "'%%' must be followed by two digits")
				}
				num = int(s[r.i+1]-'0')*10 + int(s[r.i+2]-'0')
				r.i += 3
			} else {
				r.i++
			}
			if r.isOpen[num] {
				open := r.rings[num]
				r.isOpen[num] = false
				r.nOpen--
				if open.atom == prev {
					return smilesErr(pos, "ring closure %d joins an atom to itself", num)
				}
				if r.m.HasBond(open.atom, prev) {
					return smilesErr(pos, "ring closure %d duplicates an existing bond", num)
				}
				order, arom := pendOrder, pendArom
				if open.order != mol.BondUnset && pendOrder != mol.BondUnset && (open.order != pendOrder || open.arom != pendArom) {
					return smilesErr(pos, "ring closure %d has conflicting bond symbols", num)
				}
				if order == mol.BondUnset {
					order, arom = open.order, open.arom
				}
				b := mol.Bond{A: open.atom, B: prev, Order: order, Aromatic: arom, Pos: pos}
				if pendDir != 0 {
					b.Dir, b.DirFrom = pendDir, prev
					if open.dir != 0 && open.dir == pendDir {
						// "C/1....C/1" means opposite geometric senses at the two ends.
						return smilesErr(pos, "ring closure %d has conflicting '/' '\\' marks", num)
					}
				} else if open.dir != 0 {
					b.Dir, b.DirFrom = open.dir, open.atom
				}
				r.addBond(b)
				r.noteNeighbor(prev, open.atom)
				// the opening atom's neighbour order already holds a placeholder for this closure
				r.fillRingPlaceholder(open.atom, num, prev)
			} else {
				r.rings[num] = ringOpen{atom: prev, order: pendOrder, arom: pendArom, dir: pendDir, pos: pos}
				r.isOpen[num] = true
				r.nOpen++
				// placeholder in the neighbour order, encoded as -(1000+num)
				r.noteNeighbor(prev, -(1000 + num))
			}
			pendOrder, pendDir, pendArom, pendPos = mol.BondUnset, 0, false, -1
		default:
			pos := r.i
			idx := len(r.m.Atoms)
			if err := r.appendAtom(); err != nil {
				return err
			}
			if idx >= mol.MaxAtoms {
				return smilesErr(pos, "more than %d atoms", mol.MaxAtoms)
			}
			r.m.Atoms[idx].Pos = pos
			if prev >= 0 {
				order := pendOrder
				b := mol.Bond{A: prev, B: idx, Order: order, Aromatic: pendArom, Pos: pendPos}
				if pendDir != 0 {
					b.Dir, b.DirFrom = pendDir, prev
				}
				r.addBond(b)
				r.noteNeighbor(prev, idx)
				// the preceding atom comes first in this atom's order
				r.m.Atoms[idx].PrependChiral(prev)
			} else if pendOrder != mol.BondUnset {
				return smilesErr(pendPos, "bond symbol with no atom before it")
			}
			pendOrder, pendDir, pendArom, pendPos = mol.BondUnset, 0, false, -1
			prev = idx
			expectAtom = false
		}
	}
	if pendOrder != mol.BondUnset || pendDir != 0 {
		return smilesErr(pendPos, "bond symbol at the end")
	}
	if len(stack) > 0 {
		return smilesErr(branchPos[len(branchPos)-1], "'(' never closed")
	}
	if r.nOpen > 0 {
		first := -1
		for num, o := range r.rings {
			if r.isOpen[num] && (first < 0 || o.pos < first) {
				first = o.pos
			}
		}
		return smilesErr(first, "ring bond opened here is never closed")
	}
	if expectAtom {
		return smilesErr(len(s), "SMILES ends where an atom was expected")
	}
	return nil
}

func isDigit(c byte) bool { return c >= '0' && c <= '9' }

// noteNeighbor records neighbour n in the chirality order of atom a (only chiral atoms need it).
func (r *smilesReader) noteNeighbor(a, n int) { r.m.Atoms[a].AppendChiral(n) }

func (r *smilesReader) fillRingPlaceholder(atom, num, partner int) {
	a := &r.m.Atoms[atom]
	for i := 0; i < a.NChiral && i < 4; i++ {
		if a.ChiralOrder[i] == -(1000 + num) {
			a.ChiralOrder[i] = partner
			return
		}
	}
}

func (r *smilesReader) addBond(b mol.Bond) {
	if b.Order == mol.BondUnset {
		// implicit bond: aromatic between two aromatic atoms, else single
		if r.m.Atoms[b.A].Aromatic && r.m.Atoms[b.B].Aromatic {
			b.Aromatic = true
		}
		b.Order = mol.BondSingle
	}
	if b.Aromatic && !(r.m.Atoms[b.A].Aromatic && r.m.Atoms[b.B].Aromatic) {
		// ':' between non-aromatic atoms is read as a plain single bond
		b.Aromatic = false
	}
	r.m.Bonds = append(r.m.Bonds, b)
}

// appendAtom reads the atom at r.i and appends it to the molecule (the organic subset written
// in place: an atom is 120 bytes, and most atoms are C, N or O without brackets); on error it
// appends nothing.
func (r *smilesReader) appendAtom() error {
	s := r.s
	c := s[r.i]
	z2, lower := 0, uint8(0) // a two-letter symbol's Z; the Z of an aromatic one-letter atom
	if r.i+1 < len(s) {
		z2 = organicTwoZ(c, s[r.i+1])
	}
	if c >= 'a' && c <= 'z' {
		if z := organicZ[c-'a'+'A']; z != 9 && z != 53 { // no aromatic f or i
			lower = z
		}
	}
	z, arom, n := 0, false, 1
	switch {
	case c == '[':
		a, err := r.readBracket()
		if err != nil {
			return err
		}
		r.m.Atoms = append(r.m.Atoms, a)
		return nil
	case c == '*':
	case z2 != 0:
		z, n = z2, 2
	case organicZ[c] != 0:
		z = int(organicZ[c])
	case lower != 0:
		z, arom = int(lower), true
	case c == ']':
		return smilesErr(r.i, "']' without '['")
	case c > 127:
		return smilesErr(r.i, "non-ASCII character")
	default:
		return smilesErr(r.i, "unexpected character %q", c)
	}
	r.i += n
	r.m.Atoms = append(r.m.Atoms, mol.Atom{Z: z, Aromatic: arom})
	return nil
}

// organicZ maps the one-letter symbols of the organic subset (B, C, N, O, P, S, F, I) to their
// atomic numbers; 0 elsewhere. Their lower-case forms, but for f and i, are the aromatic atoms.
var organicZ = [256]uint8{'B': 5, 'C': 6, 'N': 7, 'O': 8, 'P': 15, 'S': 16, 'F': 9, 'I': 53}

// organicTwoZ is the atomic number of the two-letter organic-subset symbol c1 c2 (Cl, Br), or 0.
func organicTwoZ(c1, c2 byte) int {
	switch {
	case c1 == 'C' && c2 == 'l':
		return 17
	case c1 == 'B' && c2 == 'r':
		return 35
	}
	return 0
}

var aromaticBracket = map[string]int{"b": 5, "c": 6, "n": 7, "o": 8, "p": 15, "s": 16, "se": 34, "as": 33, "te": 52, "si": 14, "ge": 32, "sb": 51}

func (r *smilesReader) readBracket() (mol.Atom, error) {
	s := r.s
	start := r.i
	end := strings.IndexByte(s[start:], ']')
	if end < 0 {
		return mol.Atom{}, smilesErr(start, "'[' never closed")
	}
	end += start
	r.i = start + 1
	a := mol.Atom{Bracket: true}
	// isotope
	iso := 0
	for r.i < end && isDigit(s[r.i]) {
		iso = iso*10 + int(s[r.i]-'0')
		if iso > 999 {
			return a, smilesErr(r.i, "isotope too large")
		}
		r.i++
	}
	a.Isotope = iso
	// symbol
	if r.i >= end {
		return a, smilesErr(r.i, "bracket atom without an element symbol")
	}
	symPos := r.i
	switch {
	case s[r.i] == '*':
		a.Z = 0
		r.i++
	case s[r.i] >= 'a' && s[r.i] <= 'z':
		if r.i+1 < end {
			if z, ok := aromaticBracket[s[r.i:r.i+2]]; ok {
				a.Z, a.Aromatic = z, true
				r.i += 2
				break
			}
		}
		z, ok := aromaticBracket[s[r.i:r.i+1]]
		if !ok {
			return a, smilesErr(r.i, "unknown aromatic symbol %q", s[r.i])
		}
		a.Z, a.Aromatic = z, true
		r.i++
	case s[r.i] >= 'A' && s[r.i] <= 'Z':
		sym := s[r.i : r.i+1]
		if r.i+1 < end && s[r.i+1] >= 'a' && s[r.i+1] <= 'z' {
			if mol.ElementBySymbol(s[r.i:r.i+2]) != nil {
				sym = s[r.i : r.i+2]
			}
		}
		e := mol.ElementBySymbol(sym)
		if e == nil {
			return a, smilesErr(symPos, "unknown element %q", sym)
		}
		a.Z = e.Z
		r.i += len(sym)
	default:
		return a, smilesErr(r.i, "expected an element symbol")
	}
	// chirality
	if r.i < end && s[r.i] == '@' {
		r.i++
		a.Chiral = 1
		if r.i < end && s[r.i] == '@' {
			a.Chiral = 2
			r.i++
		} else if r.i+1 < end && isUpper(s[r.i]) && isUpper(s[r.i+1]) {
			// @TH1, @AL2, @SP3, @TB12, @OH27: read and keep only TH1/TH2 as @/@@
			cls := s[r.i : r.i+2]
			r.i += 2
			n := 0
			d := 0
			for r.i < end && isDigit(s[r.i]) && d < 2 {
				n = n*10 + int(s[r.i]-'0')
				r.i++
				d++
			}
			switch {
			case cls == "TH" && n == 1:
				a.Chiral = 1
			case cls == "TH" && n == 2:
				a.Chiral = 2
			case cls == "TH" || cls == "AL" || cls == "SP" || cls == "TB" || cls == "OH":
				if d == 0 {
					return a, smilesErr(r.i, "chirality class %s needs a number", cls)
				}
				a.Chiral = 0
			default:
				return a, smilesErr(r.i-2-d, "unknown chirality class %q", cls)
			}
		}
	}
	// hydrogens
	if r.i < end && s[r.i] == 'H' {
		r.i++
		h := 1
		if r.i < end && isDigit(s[r.i]) {
			h = int(s[r.i] - '0')
			r.i++
		}
		a.HCount = h
	}
	// charge
	if r.i < end && (s[r.i] == '+' || s[r.i] == '-') {
		sign := 1
		if s[r.i] == '-' {
			sign = -1
		}
		ch := s[r.i]
		r.i++
		n := 1
		if r.i < end && isDigit(s[r.i]) {
			n = int(s[r.i] - '0')
			r.i++
			if r.i < end && isDigit(s[r.i]) {
				n = n*10 + int(s[r.i]-'0')
				r.i++
			}
		} else {
			for r.i < end && s[r.i] == ch {
				n++
				r.i++
			}
		}
		if n > 15 {
			return a, smilesErr(r.i, "charge out of range")
		}
		a.Charge = sign * n
	}
	// atom class
	if r.i < end && s[r.i] == ':' {
		r.i++
		if r.i >= end || !isDigit(s[r.i]) {
			return a, smilesErr(r.i, "atom class needs a number")
		}
		n := 0
		for r.i < end && isDigit(s[r.i]) {
			if n > 1e8 {
				return a, smilesErr(r.i, "atom class too large")
			}
			n = n*10 + int(s[r.i]-'0')
			r.i++
		}
		a.Class = n
	}
	if r.i != end {
		return a, smilesErr(r.i, "unexpected %q inside brackets", s[r.i])
	}
	r.i = end + 1
	if a.Z == 1 && a.HCount > 0 {
		return a, smilesErr(start, "a hydrogen atom cannot carry hydrogens")
	}
	if a.HCount > 0 {
		a.AppendChiral(-1)
	}
	return a, nil
}

func isUpper(c byte) bool { return c >= 'A' && c <= 'Z' }

// kekuleHint explains a failed Kekulé assignment at atom a: for an all-carbon aromatic ring the
// likely cause (an odd ring, a missing charge), else the hydrogen on an aromatic nitrogen.
func kekuleHint(m *mol.Molecule, a int) string {
	hetero := false
	for i := range m.Atoms {
		if m.Atoms[i].Aromatic && m.Atoms[i].Z != 6 {
			hetero = true
		}
	}
	if !hetero {
		return "aromatic system cannot be kekulized: the lower-case carbons here cannot take alternating single and double bonds " +
			"(an odd ring such as c1cccc1, or a ring that needs a charge or an sp3 carbon); write the ring with explicit bonds " +
			"(cyclopentadiene C1=CC=CC1) or give the charge ([cH-]1cccc1)"
	}
	return "aromatic system cannot be kekulized (check hydrogens on aromatic nitrogen, e.g. [nH] in pyrrole c1cc[nH]c1, and charges)"
}

// nameHint recognizes a chemical name typed into a SMILES field (words of lower-case letters
// that SMILES cannot hold) and says so; "" when the text does not look like a name.
func nameHint(s string) string {
	t := strings.TrimSpace(s)
	if strings.ContainsAny(t, "[]=#@/\\%") {
		return ""
	}
	run, longest := 0, 0
	for _, ch := range t {
		if ch >= 'a' && ch <= 'z' {
			run++
			longest = max(longest, run)
		} else {
			run = 0
		}
	}
	if longest >= 4 || strings.Contains(t, " ") {
		return "this looks like a name, not a SMILES: give the structure as SMILES (e.g. norbornene is C1=CC2CCC1C2)"
	}
	return ""
}

// countLettersDigits counts the ASCII letters and digits of s.
func countLettersDigits(s string) (letters, digits int) {
	for i := 0; i < len(s); i++ {
		switch c := s[i]; {
		case c >= 'A' && c <= 'Z', c >= 'a' && c <= 'z':
			letters++
		case c >= '0' && c <= '9':
			digits++
		}
	}
	return letters, digits
}
