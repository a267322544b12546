package screening

import (
	"errors"
	"fmt"
	"strings"
)

// SMILES reading follows the OpenSMILES specification (opensmiles.org, version 1.0, 2007–2016):
// organic-subset and bracket atoms (isotope, chirality, hydrogen count, charge, atom class),
// the bond symbols - = # $ : / \, ring closures 0–9 and %nn, branches, and dot-separated
// components. Aromatic (lower-case) atoms are kekulized and given implicit hydrogens by the
// specification's rules.

// Limits on what one SMILES may hold; longer input is refused, not truncated.
const (
	MaxSMILESLen = 4000
	MaxAtoms     = 1000
)

// ErrSMILES is the sentinel for any malformed SMILES; errors.Is(err, ErrSMILES) holds for every
// *SMILESError.
var ErrSMILES = errors.New("invalid SMILES")

// SMILESError reports a malformed SMILES with the 0-based character offset of the problem.
type SMILESError struct {
	Pos int
	Msg string
}

func (e *SMILESError) Error() string {
	return fmt.Sprintf("invalid SMILES at position %d: %s", e.Pos, e.Msg)
}

// Is makes every SMILESError match ErrSMILES.
func (e *SMILESError) Is(target error) bool { return target == ErrSMILES }

func smilesErr(pos int, format string, args ...any) error {
	return &SMILESError{Pos: pos, Msg: fmt.Sprintf(format, args...)}
}

// Bond orders. Aromatic bonds are kekulized to 1 or 2 after reading; BondAromatic is kept as a
// flag on the bond.
const (
	bondUnset  = 0
	bondSingle = 1
	bondDouble = 2
	bondTriple = 3
	bondQuad   = 4
)

// Atom is one atom of a molecule graph.
type Atom struct {
	Z        int
	Aromatic bool // written lower-case or perceived aromatic
	Isotope  int
	Charge   int
	HCount   int  // hydrogens on the atom (explicit in brackets, else implicit)
	Bracket  bool // written in brackets: no implicit hydrogens added
	Chiral   int  // 0 none, 1 '@' (anticlockwise), 2 '@@' (clockwise); other classes kept as 0
	Class    int
	Pos      int // character offset in the SMILES
	// nbrOrder lists neighbour atom indices in SMILES order for chirality; -1 marks the
	// bracket hydrogen.
	nbrOrder []int
	written  bool // aromatic as written (before perception)
}

// Bond is one bond of a molecule graph.
type Bond struct {
	A, B     int
	Order    int  // 1, 2, 3, 4 after kekulization
	Aromatic bool // written as aromatic or between two aromatic atoms
	// Dir is the directional mark ('/' or '\\') and DirFrom the atom written before it, used for
	// double-bond geometry; Dir is 0 when the bond carries no mark.
	Dir     byte
	DirFrom int
	Pos     int
}

// Molecule is a molecular graph read from SMILES.
type Molecule struct {
	Atoms []Atom
	Bonds []Bond
	adj   [][]int // bond indices per atom
	heavy [][]int // non-hydrogen neighbours per atom, built on first use
	// Components lists atom indices per dot-separated (or disconnected) component.
	components [][]int
}

// Other returns the atom at the far end of bond bi from atom a.
func (m *Molecule) Other(bi, a int) int {
	b := &m.Bonds[bi]
	if b.A == a {
		return b.B
	}
	return b.A
}

// Neighbors returns the bond indices at atom a.
func (m *Molecule) Neighbors(a int) []int { return m.adj[a] }

// HeavyDegree returns the number of non-hydrogen neighbours of atom a.
func (m *Molecule) HeavyDegree(a int) int {
	n := 0
	for _, bi := range m.adj[a] {
		if m.Atoms[m.Other(bi, a)].Z != 1 {
			n++
		}
	}
	return n
}

// bondBetween returns the bond index joining a and b, or -1.
func (m *Molecule) bondBetween(a, b int) int {
	for _, bi := range m.adj[a] {
		if m.Other(bi, a) == b {
			return bi
		}
	}
	return -1
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
	m      *Molecule
	rings  [100]ringOpen // open ring bonds by number 0–99
	isOpen [100]bool
	nOpen  int
}

// ParseSMILES reads one SMILES string into a molecule graph with kekulized bonds and hydrogen
// counts. Errors are *SMILESError values (errors.Is(err, ErrSMILES)) carrying the offending
// character offset.
func ParseSMILES(s string) (*Molecule, error) {
	if len(s) > MaxSMILESLen {
		return nil, smilesErr(MaxSMILESLen, "longer than %d characters", MaxSMILESLen)
	}
	if strings.TrimSpace(s) == "" {
		return nil, smilesErr(0, "empty SMILES")
	}
	r := &smilesReader{s: s, m: &Molecule{Atoms: make([]Atom, 0, len(s)/2+1), Bonds: make([]Bond, 0, len(s)/2+2)}}
	if err := r.read(); err != nil {
		return nil, err
	}
	m := r.m
	m.buildAdjacency()
	if err := m.kekulize(); err != nil {
		return nil, err
	}
	if err := m.assignHydrogens(); err != nil {
		return nil, err
	}
	m.findComponents()
	return m, nil
}

func (r *smilesReader) read() error {
	s := r.s
	prev := -1          // previous atom in the current chain
	var stack []int     // branch stack of atoms
	var branchPos []int // positions of open '('
	pendOrder, pendDir, pendPos := bondUnset, byte(0), -1
	pendArom := false
	expectAtom := true // at start or after '.', '(' an atom or bond must follow
	for r.i < len(s) {
		c := s[r.i]
		switch {
		case c == '(':
			if prev < 0 {
				return smilesErr(r.i, "branch opened before any atom")
			}
			if pendOrder != bondUnset || pendDir != 0 {
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
			if pendOrder != bondUnset || pendDir != 0 {
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
			if pendOrder != bondUnset || pendDir != 0 {
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
			if pendOrder != bondUnset || pendDir != 0 {
				return smilesErr(r.i, "two bond symbols in a row")
			}
			pendPos = r.i
			switch c {
			case '-':
				pendOrder = bondSingle
			case '=':
				pendOrder = bondDouble
			case '#':
				pendOrder = bondTriple
			case '$':
				pendOrder = bondQuad
			case ':':
				pendOrder = bondSingle
				pendArom = true
			case '/', '\\':
				pendOrder = bondSingle
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
				if r.m.bondBetweenSlow(open.atom, prev) {
					return smilesErr(pos, "ring closure %d duplicates an existing bond", num)
				}
				order, arom := pendOrder, pendArom
				if open.order != bondUnset && pendOrder != bondUnset && (open.order != pendOrder || open.arom != pendArom) {
					return smilesErr(pos, "ring closure %d has conflicting bond symbols", num)
				}
				if order == bondUnset {
					order, arom = open.order, open.arom
				}
				b := Bond{A: open.atom, B: prev, Order: order, Aromatic: arom, Pos: pos}
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
			pendOrder, pendDir, pendArom, pendPos = bondUnset, 0, false, -1
		default:
			pos := r.i
			a, err := r.readAtom()
			if err != nil {
				return err
			}
			if len(r.m.Atoms) >= MaxAtoms {
				return smilesErr(pos, "more than %d atoms", MaxAtoms)
			}
			a.Pos = pos
			idx := len(r.m.Atoms)
			r.m.Atoms = append(r.m.Atoms, a)
			if prev >= 0 {
				order := pendOrder
				b := Bond{A: prev, B: idx, Order: order, Aromatic: pendArom, Pos: pendPos}
				if pendDir != 0 {
					b.Dir, b.DirFrom = pendDir, prev
				}
				r.addBond(b)
				r.noteNeighbor(prev, idx)
				// the preceding atom comes first in this atom's order
				if r.m.Atoms[idx].Chiral != 0 {
					r.m.Atoms[idx].nbrOrder = append([]int{prev}, r.m.Atoms[idx].nbrOrder...)
				}
			} else if pendOrder != bondUnset {
				return smilesErr(pendPos, "bond symbol with no atom before it")
			}
			pendOrder, pendDir, pendArom, pendPos = bondUnset, 0, false, -1
			prev = idx
			expectAtom = false
		}
	}
	if pendOrder != bondUnset || pendDir != 0 {
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
func (r *smilesReader) noteNeighbor(a, n int) {
	if r.m.Atoms[a].Chiral != 0 {
		r.m.Atoms[a].nbrOrder = append(r.m.Atoms[a].nbrOrder, n)
	}
}

func (r *smilesReader) fillRingPlaceholder(atom, num, partner int) {
	order := r.m.Atoms[atom].nbrOrder
	for i, v := range order {
		if v == -(1000 + num) {
			order[i] = partner
			return
		}
	}
}

func (m *Molecule) bondBetweenSlow(a, b int) bool {
	for _, bd := range m.Bonds {
		if (bd.A == a && bd.B == b) || (bd.A == b && bd.B == a) {
			return true
		}
	}
	return false
}

func (r *smilesReader) addBond(b Bond) {
	if b.Order == bondUnset {
		// implicit bond: aromatic between two aromatic atoms, else single
		if r.m.Atoms[b.A].written && r.m.Atoms[b.B].written {
			b.Aromatic = true
		}
		b.Order = bondSingle
	}
	if b.Aromatic && !(r.m.Atoms[b.A].written && r.m.Atoms[b.B].written) {
		// ':' between non-aromatic atoms is read as a plain single bond
		b.Aromatic = false
	}
	r.m.Bonds = append(r.m.Bonds, b)
}

var organicTwo = map[string]bool{"Cl": true, "Br": true}

func (r *smilesReader) readAtom() (Atom, error) {
	s := r.s
	c := s[r.i]
	if c == '[' {
		return r.readBracket()
	}
	if c == '*' {
		r.i++
		return Atom{Z: 0}, nil
	}
	if r.i+1 < len(s) && organicTwo[s[r.i:r.i+2]] {
		sym := s[r.i : r.i+2]
		r.i += 2
		return Atom{Z: elementBySymbol[sym].Z}, nil
	}
	switch c {
	case 'B', 'C', 'N', 'O', 'P', 'S', 'F', 'I':
		r.i++
		return Atom{Z: elementBySymbol[string(c)].Z}, nil
	case 'b', 'c', 'n', 'o', 'p', 's':
		r.i++
		return Atom{Z: elementBySymbol[strings.ToUpper(string(c))].Z, Aromatic: true, written: true}, nil
	}
	if c == ']' {
		return Atom{}, smilesErr(r.i, "']' without '['")
	}
	if c > 127 {
		return Atom{}, smilesErr(r.i, "non-ASCII character")
	}
	return Atom{}, smilesErr(r.i, "unexpected character %q", c)
}

var aromaticBracket = map[string]int{"b": 5, "c": 6, "n": 7, "o": 8, "p": 15, "s": 16, "se": 34, "as": 33, "te": 52, "si": 14, "ge": 32, "sb": 51}

func (r *smilesReader) readBracket() (Atom, error) {
	s := r.s
	start := r.i
	end := strings.IndexByte(s[start:], ']')
	if end < 0 {
		return Atom{}, smilesErr(start, "'[' never closed")
	}
	end += start
	r.i = start + 1
	a := Atom{Bracket: true}
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
				a.Z, a.Aromatic, a.written = z, true, true
				r.i += 2
				break
			}
		}
		z, ok := aromaticBracket[s[r.i:r.i+1]]
		if !ok {
			return a, smilesErr(r.i, "unknown aromatic symbol %q", s[r.i])
		}
		a.Z, a.Aromatic, a.written = z, true, true
		r.i++
	case s[r.i] >= 'A' && s[r.i] <= 'Z':
		sym := s[r.i : r.i+1]
		if r.i+1 < end && s[r.i+1] >= 'a' && s[r.i+1] <= 'z' {
			if _, ok := elementBySymbol[s[r.i:r.i+2]]; ok {
				sym = s[r.i : r.i+2]
			}
		}
		e, ok := elementBySymbol[sym]
		if !ok {
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
	if a.Chiral != 0 && a.HCount > 0 {
		a.nbrOrder = append(a.nbrOrder, -1)
	}
	return a, nil
}

func isUpper(c byte) bool { return c >= 'A' && c <= 'Z' }

func (m *Molecule) buildAdjacency() {
	// one backing array for every atom's bond list
	deg := make([]int, len(m.Atoms)+1)
	for _, b := range m.Bonds {
		deg[b.A]++
		deg[b.B]++
	}
	back := make([]int, 2*len(m.Bonds))
	m.adj = make([][]int, len(m.Atoms))
	off := 0
	for i := range m.Atoms {
		m.adj[i] = back[off : off : off+deg[i]]
		off += deg[i]
	}
	for i, b := range m.Bonds {
		m.adj[b.A] = append(m.adj[b.A], i)
		m.adj[b.B] = append(m.adj[b.B], i)
	}
	// The preceding atom must be first in each atom's chirality order; ring-closure bonds keep
	// the place of their digit. readAtom prepends the preceding atom, so nothing else to do.
}

func (m *Molecule) findComponents() {
	seen := make([]bool, len(m.Atoms))
	m.components = m.components[:0]
	// every component is a slice of one backing array, in breadth-first order
	back := make([]int, 0, len(m.Atoms))
	for i := range m.Atoms {
		if seen[i] {
			continue
		}
		start := len(back)
		back = append(back, i)
		seen[i] = true
		for k := start; k < len(back); k++ {
			for _, bi := range m.adj[back[k]] {
				o := m.Other(bi, back[k])
				if !seen[o] {
					seen[o] = true
					back = append(back, o)
				}
			}
		}
		m.components = append(m.components, back[start:len(back):len(back)])
	}
}

// bondOrderSum is the sum of bond orders at atom a (kekulized orders).
func (m *Molecule) bondOrderSum(a int) int {
	s := 0
	for _, bi := range m.adj[a] {
		s += m.Bonds[bi].Order
	}
	return s
}

// assignHydrogens gives organic-subset atoms their implicit hydrogens: the smallest default
// valence at or above the bonded valence, minus that valence (OpenSMILES 3.1.5).
func (m *Molecule) assignHydrogens() error {
	for i := range m.Atoms {
		a := &m.Atoms[i]
		if a.Bracket || a.Z == 0 {
			continue
		}
		e := elementByZ(a.Z)
		v := m.bondOrderSum(i)
		h := 0
		found := false
		for _, dv := range e.Valences {
			if dv >= v {
				h = dv - v
				found = true
				break
			}
		}
		if !found {
			h = 0 // hypervalent beyond the defaults: no implicit hydrogens
		}
		a.HCount = h
	}
	return nil
}
