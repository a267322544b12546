package describe

import (
	"cmp"
	"errors"
	"fmt"
	"slices"
	"sort"
	"strings"
	"sync"

	"ringsieve/screening/canon"
	"ringsieve/screening/internal/memo"
	"ringsieve/screening/mol"
	"ringsieve/screening/rings"
	"ringsieve/screening/smiles"
	"ringsieve/screening/units"
)

// Structure is a parsed, perceived monomer with one analysis per ring C=C.
type Structure struct {
	Mol         *mol.Molecule
	Rings       *rings.Rings
	Main        []int // atoms of the screened component
	MainSMILES  string
	CounterIons []string // formulas of the other components (a shared list: read, never change)
	Groups      []string // functional-group inventory of the main component
	Olefins     []*Olefin
	Skipped     int     // ring olefins beyond MaxOlefinsAnalysed, not analysed
	ringSystem  []int   // per SSSR ring: index of its ring system
	systems     [][]int // SSSR ring indices per ring system
	sysAtoms    [][]int // sorted atoms per ring system, computed on first use

	derivedMu sync.Mutex
	derived   []derivedValue // see Derived

	// first backing arrays of the lists above and the first olefin analysed, allocated with
	// the structure (most monomers have one or two ring systems and one ring olefin)
	olefinArr   [2]*Olefin
	firstOlefin Olefin
	sysAtomsArr [2][]int
	derivedArr  [2]derivedValue
	systemsArr  [2][]int
	// storage kept when a workspace's structure is described again (see keep)
	ints         intArena
	spareOlefins []*Olefin // olefins after the first, lent again from the start
	nSpare       int
}

// keep returns the storage of s that a structure described into the same place reuses: the
// lists' arena and the olefins after the first. The lists and olefins of the structure
// described before are written again, as the workspace's contract allows (DescribeInto).
func (s *Structure) keep() (intArena, []*Olefin) {
	a := s.ints
	a.used = 0
	return a, s.spareOlefins
}

// nextOlefin returns storage for an olefin after the first: a spare one when s has one.
func (s *Structure) nextOlefin() *Olefin {
	if s.nSpare == len(s.spareOlefins) {
		s.spareOlefins = append(s.spareOlefins, new(Olefin))
	}
	o := s.spareOlefins[s.nSpare]
	s.nSpare++
	return o
}

// intArena hands out int lists from one growing array (the screened component's atoms, ring
// systems, their atoms, the olefins' cores and smallest rings). When the array is full the
// arena moves to a larger one and leaves the full one to the lists that point into it, so a
// list handed out is never written by a later one; a structure described into the same
// workspace starts from the front of the largest array (keep).
type intArena struct {
	used int
	buf  []int
}

// room returns an empty slice with capacity n from the arena.
func (a *intArena) room(n int) []int {
	if a.used+n > len(a.buf) {
		a.buf, a.used = make([]int, max(2*len(a.buf), n, 128)), 0
	}
	s := a.buf[a.used : a.used : a.used+n]
	a.used += n
	return s
}

type derivedValue struct{ name, value string }

// Derived returns the value a later step derives from the whole structure under name,
// computing it with fn on first use (later steps ask for the same key for the structure and for
// each of its olefins; it is computed once per structure). Safe for concurrent use.
func (s *Structure) Derived(name string, fn func() string) string {
	s.derivedMu.Lock()
	defer s.derivedMu.Unlock()
	for _, d := range s.derived {
		if d.name == name {
			return d.value
		}
	}
	v := fn()
	s.derived = append(s.derived, derivedValue{name, v})
	return v
}

// Olefin is one ring C=C (both atoms carbon, in a ring, not aromatic) and what governs its ROMP.
type Olefin struct {
	Bond, A, B  int
	SystemRings []int // SSSR ring indices of the whole ring system
	SystemAtoms []int
	CoreRings   []int // rings holding the olefin plus those bridged to them
	CoreAtoms   []int
	SmallRing   []int // atoms of the smallest ring holding the olefin
	Desc        Descriptors
	Signature   string // written signature of the ring system (cache key)
	// CoreSignature is the written signature of the core when it is smaller than the ring
	// system, else "" (the core's key and parent are cached under it)
	CoreSignature string
}

// Describe reads a SMILES and derives everything ROMP screening needs from it. Errors are
// *smiles.Error values with the character offset.
func Describe(text string) (*Structure, error) {
	return DescribeInto(&Workspace{}, text)
}

// Workspace is the storage a caller that describes many structures reuses from one to the next
// (one per worker): the molecule read, its ring perception and the structure described, none
// allocated again once grown to the largest structure seen.
type Workspace struct {
	Mol   mol.Molecule
	Rings rings.Rings
	s     Structure
}

// DescribeInto is Describe into w. The Structure is w's own and refers to w's molecule and
// rings, so w may be reused only once the Structure and everything taken from it are no longer
// used.
func DescribeInto(w *Workspace, text string) (*Structure, error) {
	m := &w.Mol
	if err := smiles.ParseInto(m, text); err != nil {
		return nil, err
	}
	s, err := describeMoleculeInto(&w.s, m, &w.Rings, text)
	if err != nil {
		// declared inside the branch: errors.As takes its address, which would move it to
		// the heap on every call
		var ve *ValenceError
		if errors.As(err, &ve) {
			return nil, smiles.Errorf(m.Atoms[ve.Atom].Pos, "%s", ve.Msg)
		}
		return nil, err
	}
	return s, nil
}

// ValenceError reports an atom with more bonds than its valence allows (pentavalent carbon and
// the like are typing errors, not monomers). Atom is the atom's index.
type ValenceError struct {
	Atom int
	Msg  string
}

func (e *ValenceError) Error() string { return e.Msg }

// Is makes every ValenceError match units.ErrInvalid.
func (e *ValenceError) Is(target error) bool { return target == units.ErrInvalid }

// DescribeMolecule analyses a molecule already read (from SMILES or a molfile); text is the
// SMILES it came from, or "" when there is none. The molecule is not changed. Errors are
// *ValenceError values, or one matching units.ErrInvalid for a molecule without atoms.
func DescribeMolecule(m *mol.Molecule, text string) (*Structure, error) {
	return describeMolecule(m, nil, text)
}

// describeMolecule is DescribeMolecule perceiving rings into p (nil: a new perception).
func describeMolecule(m *mol.Molecule, p *rings.Rings, text string) (*Structure, error) {
	return describeMoleculeInto(new(Structure), m, p, text)
}

// describeMoleculeInto is describeMolecule into s, whose earlier contents are dropped.
func describeMoleculeInto(s *Structure, m *mol.Molecule, p *rings.Rings, text string) (*Structure, error) {
	if len(m.Atoms) == 0 {
		return nil, fmt.Errorf("the structure has no atoms: %w", units.ErrInvalid)
	}
	if err := checkValence(m); err != nil {
		return nil, err
	}
	if p == nil {
		p = rings.Perceive(m)
	} else {
		rings.PerceiveInto(p, m)
	}
	ints, spare := s.keep()
	*s = Structure{Mol: m, Rings: p, ints: ints, spareOlefins: spare}
	s.Olefins, s.derived = s.olefinArr[:0], s.derivedArr[:0]
	s.pickMain(text)
	nr := len(p.SSSR)
	s.ringSystem, s.systems = rings.SystemsIn(p.SSSR, s.ints.room(4 * nr)[:4*nr], s.systemsArr[:0])
	s.Groups = FunctionalGroups(m, p, s.Main)
	inMain := make([]bool, len(m.Atoms))
	for _, a := range s.Main {
		inMain[a] = true
	}
	var ringOlefins []int
	for bi, b := range m.Bonds {
		if !inMain[b.A] || b.Order != mol.BondDouble || p.AromaticBond[bi] || p.BondRingSize[bi] == 0 {
			continue
		}
		if m.Atoms[b.A].Z != 6 || m.Atoms[b.B].Z != 6 {
			continue
		}
		ringOlefins = append(ringOlefins, bi)
	}
	// Many ring olefins (polyenes, oligomers): analyse the most promising few, by a strain proxy
	// on ring size; the rest are counted only.
	if len(ringOlefins) > MaxOlefinsAnalysed {
		pref := func(bi int) int {
			switch p.BondRingSize[bi] {
			case 4, 3:
				return 0
			case 5, 8:
				return 1
			case 7, 9, 10:
				return 2
			}
			return 3
		}
		slices.SortStableFunc(ringOlefins, func(a, b int) int { return cmp.Compare(pref(a), pref(b)) })
		s.Skipped = len(ringOlefins) - MaxOlefinsAnalysed
		ringOlefins = ringOlefins[:MaxOlefinsAnalysed]
	}
	for _, bi := range ringOlefins {
		o := s.analyse(bi)
		if err := bredt(m, p, o); err != nil {
			return nil, err
		}
		s.Olefins = append(s.Olefins, o)
	}
	return s, nil
}

// bredt refuses a double bond at the bridgehead of a small bridged bicycle (Bredt's rule: the
// p orbitals cannot overlap; such olefins are not isolable when the bridges hold fewer than
// seven atoms in all, e.g. bicyclo[2.2.1]hept-1-ene; common practice, the S ≥ 7 limit from
// memory). It returns a *ValenceError naming the atom.
func bredt(m *mol.Molecule, p *rings.Rings, o *Olefin) error {
	if len(o.CoreRings) < 2 || len(o.CoreAtoms) == len(o.SmallRing) {
		return nil
	}
	// bridged: two of the core's rings share three or more atoms
	bridged := false
	for i := 0; i < len(o.CoreRings) && !bridged; i++ {
		for j := i + 1; j < len(o.CoreRings); j++ {
			if rings.SharedAtoms(p.SSSR[o.CoreRings[i]], p.SSSR[o.CoreRings[j]]) >= 3 {
				bridged = true
				break
			}
		}
	}
	if !bridged {
		return nil
	}
	for _, a := range [2]int{o.A, o.B} {
		n := 0
		for _, x := range m.HeavyNbrs(a) {
			if _, ok := slices.BinarySearch(o.CoreAtoms, x); ok { // CoreAtoms is sorted
				n++
			}
		}
		if n >= 3 && len(o.CoreAtoms)-2 < 7 {
			return &ValenceError{Atom: a, Msg: fmt.Sprintf("atom %d: a double bond at the bridgehead of a small bridged bicycle cannot exist (Bredt's rule: %d atoms in the bridges, fewer than 7)", a+1, len(o.CoreAtoms)-2)}
		}
	}
	return nil
}

// MaxOlefinsAnalysed bounds the ring olefins of one monomer that are analysed in full (design
// choice: enough for any oligomeric monomer, bounded for polyenes).
const MaxOlefinsAnalysed = 12

// checkValence refuses carbon, oxygen and fluorine beyond their valence (pentavalent carbon and
// the like are typing errors, not monomers).
func checkValence(m *mol.Molecule) error {
	for i := range m.Atoms {
		a := &m.Atoms[i] // not a copy: an atom is thirteen words
		limit := -1
		switch a.Z {
		case 6:
			limit = 4 - mol.Abs(a.Charge)
		case 8:
			limit = 2 + a.Charge
		case 9:
			limit = 1 + a.Charge
		}
		if limit < 0 {
			continue
		}
		if v := m.BondOrderSum(i) + a.HCount; v > limit {
			sym := mol.ElementByZ(a.Z).Symbol
			return &ValenceError{Atom: i, Msg: fmt.Sprintf("%s has %d bonds, more than its valence %d allows", sym, v, limit)}
		}
	}
	return nil
}

// pickMain chooses the component with the most heavy atoms (carbon-bearing first) as the monomer
// and lists the others as counter-ions.
func (s *Structure) pickMain(text string) {
	m := s.Mol
	best, bestScore := -1, -1
	for ci := 0; ci < m.NumComponents(); ci++ {
		comp := m.Component(ci)
		heavy, carbon := 0, 0
		for _, a := range comp {
			if m.Atoms[a].Z != 1 {
				heavy++
			}
			if m.Atoms[a].Z == 6 {
				carbon = 1
			}
		}
		score := carbon*100000 + heavy
		if score > bestScore {
			best, bestScore = ci, score
		}
	}
	comp := m.Component(best)
	s.Main = s.ints.room(len(comp))
	if len(comp) == len(m.Atoms) { // the whole molecule: its atoms in order, nothing to sort
		for a := range comp {
			s.Main = append(s.Main, a)
		}
	} else {
		s.Main = append(s.Main, comp...)
		sort.Ints(s.Main)
	}
	if m.NumComponents() == 1 {
		s.MainSMILES = text
		return
	}
	if text != "" && strings.Count(text, ".")+1 == m.NumComponents() {
		// the best component's part of the text, split at its dots
		rest := text
		for range best {
			_, rest, _ = strings.Cut(rest, ".")
		}
		s.MainSMILES, _, _ = strings.Cut(rest, ".")
	} else {
		s.MainSMILES = text
	}
	// the other components' formulas, as a list shared by every structure with the same ones
	var stack [256]byte
	key := stack[:0]
	for ci := 0; ci < m.NumComponents(); ci++ {
		if ci == best {
			continue
		}
		if len(key) > 0 {
			key = append(key, "; "...)
		}
		key = m.AppendFormulaOf(key, m.Component(ci))
	}
	if len(key) > 0 {
		s.CounterIons = counterIonLists.DoBytes(key, func(string) []string {
			var list []string
			for ci := 0; ci < m.NumComponents(); ci++ {
				if ci != best {
					list = append(list, formulaOf(m, m.Component(ci)))
				}
			}
			return slices.Clip(list)
		})
	}
}

// counterIonLists holds the counter-ion lists handed out, keyed by their formulas joined by
// "; " (design choice: 4,096 combinations, then the cache starts afresh). A list is shared:
// read it, never change it.
var counterIonLists = memo.New[[]string](4096)

// conjKinds lists the conjugation kinds in the order ConjugatedWith lists them (sorted by
// name); the bits below index it.
var conjKinds = [...]string{ConjAromatic, ConjCarbonyl, ConjNitrile, ConjOlefin, ConjRingOlefin}

const (
	conjAromaticBit = iota
	conjCarbonylBit
	conjNitrileBit
	conjOlefinBit
	conjRingOlefinBit
)

// conjLists holds, per set of conjugation bits, the kinds it names in conjKinds' order (nil for
// none): one shared list per set, with capacity = length so an append copies.
var conjLists = func() (out [1 << len(conjKinds)][]string) {
	for set := range out {
		for k, c := range conjKinds {
			if set&(1<<k) != 0 {
				out[set] = append(out[set], c)
			}
		}
		out[set] = slices.Clip(out[set])
	}
	return out
}()

// ringAtomsBound is the number of atoms the rings listed hold, counted once per ring (a bound on
// their distinct atoms).
func ringAtomsBound(rs []rings.Ring, idx []int) int {
	n := 0
	for _, i := range idx {
		n += len(rs[i].Atoms)
	}
	return n
}

func (s *Structure) analyse(bi int) *Olefin {
	m, p := s.Mol, s.Rings
	g := graph{m, p}
	b := m.Bonds[bi]
	o := &s.firstOlefin
	if len(s.Olefins) > 0 {
		o = s.nextOlefin()
	}
	*o = Olefin{Bond: bi, A: b.A, B: b.B}
	// ring system and core
	var system []int
	sysIdx := -1
	for ri, r := range p.SSSR {
		for _, rb := range r.Bonds {
			if rb == bi {
				sysIdx = s.ringSystem[ri]
				system = s.systems[sysIdx]
			}
		}
	}
	if s.sysAtoms == nil {
		if len(s.systems) <= len(s.sysAtomsArr) {
			s.sysAtoms = s.sysAtomsArr[:len(s.systems)]
		} else {
			s.sysAtoms = make([][]int, len(s.systems))
		}
	}
	if s.sysAtoms[sysIdx] == nil {
		s.sysAtoms[sysIdx] = rings.AppendAtoms(s.ints.room(ringAtomsBound(p.SSSR, system)), p.SSSR, system)
	}
	o.SystemRings = system
	o.SystemAtoms = s.sysAtoms[sysIdx]
	var withBond [8]int
	o.CoreRings = rings.AppendCore(s.ints.room(len(system)), p.SSSR, system, rings.AppendWithBond(withBond[:0], p.SSSR, system, bi))
	if len(o.CoreRings) == len(system) {
		o.CoreAtoms = o.SystemAtoms // the core is the whole system
	} else {
		o.CoreAtoms = rings.AppendAtoms(s.ints.room(ringAtomsBound(p.SSSR, o.CoreRings)), p.SSSR, o.CoreRings)
	}
	smallest := -1
	for _, ri := range o.CoreRings {
		for _, rb := range p.SSSR[ri].Bonds {
			if rb == bi && (smallest < 0 || len(p.SSSR[ri].Atoms) < len(p.SSSR[smallest].Atoms)) {
				smallest = ri
			}
		}
	}
	o.SmallRing = append(s.ints.room(len(p.SSSR[smallest].Atoms)), p.SSSR[smallest].Atoms...)
	n := len(m.Atoms)
	// the five atom sets below in one array: on the stack for molecules of up to 64 atoms
	var flagStack [5 * 64]bool
	var flags []bool
	if 5*n <= len(flagStack) {
		flags = flagStack[:5*n]
	} else {
		flags = make([]bool, 5*n)
	}
	inSystem, inCore, inSmall, allylic, homo := flags[:n], flags[n:2*n], flags[2*n:3*n], flags[3*n:4*n], flags[4*n:]
	for _, a := range o.SystemAtoms {
		inSystem[a] = true
	}
	for _, a := range o.CoreAtoms {
		inCore[a] = true
	}
	for _, a := range o.SmallRing {
		inSmall[a] = true
	}
	d := &o.Desc
	d.FromStructure = true
	d.RingSize = p.BondRingSize[bi]
	d.RingSystem = rings.Kind(p.SSSR, system)
	d.RingSystemRings = len(system)
	d.FunctionalGroups = s.Groups // shared, never changed (FunctionalGroups)
	// substitution and conjugation
	var conj uint8 // bit k: conjugated with conjKinds[k]
	for _, end := range []int{o.A, o.B} {
		other := o.B
		if end == o.B {
			other = o.A
		}
		for _, nbi := range m.Neighbors(end) {
			n := m.Other(nbi, end)
			if n == other || m.Atoms[n].Z == 1 {
				continue
			}
			d.OlefinSubstitution++
			if g.isEWG(n) {
				d.EWGOnOlefin = true
			}
			if p.AromaticAtom[n] {
				conj |= 1 << conjAromaticBit
				continue
			}
			if g.isCarbonyl(n) {
				conj |= 1 << conjCarbonylBit
			}
			for _, nb2 := range m.Neighbors(n) {
				bb := &m.Bonds[nb2]
				x := m.Other(nb2, n)
				if x == end {
					continue
				}
				if bb.Order == mol.BondTriple && m.Atoms[x].Z == 7 {
					conj |= 1 << conjNitrileBit
				}
				if bb.Order == mol.BondDouble && !p.AromaticBond[nb2] && m.Atoms[x].Z == 6 {
					if inSmall[n] && inSmall[x] {
						conj |= 1 << conjRingOlefinBit
					} else {
						conj |= 1 << conjOlefinBit
					}
				}
			}
		}
	}
	d.ConjugatedWith = conjLists[conj] // shared: read, never change
	d.Conjugated = len(d.ConjugatedWith) > 0
	// EWG on the olefin's own (smallest) ring
	for _, a := range o.SmallRing {
		if a == o.A || a == o.B {
			continue
		}
		if g.isEWG(a) {
			d.EWGOnOlefinRing = true
		}
		for _, x := range m.HeavyNbrs(a) {
			if !inSystem[x] && g.isEWG(x) {
				d.EWGOnOlefinRing = true
			}
		}
	}
	if d.EWGOnOlefin {
		d.EWGOnOlefinRing = true
	}
	// allylic and homoallylic substituents
	var listStack [16]int
	allylicList, homoList := listStack[:0:8], listStack[8:8:16]
	for _, end := range []int{o.A, o.B} {
		for _, x := range m.HeavyNbrs(end) {
			if x != o.A && x != o.B && inSmall[x] && !allylic[x] {
				allylic[x] = true
				allylicList = append(allylicList, x)
			}
		}
	}
	for _, x := range allylicList {
		for _, y := range m.HeavyNbrs(x) {
			if inCore[y] && !allylic[y] && y != o.A && y != o.B && !homo[y] {
				homo[y] = true
				homoList = append(homoList, y)
			}
		}
	}
	for _, a := range allylicList {
		exo := 0
		for _, x := range m.HeavyNbrs(a) {
			if inSystem[x] {
				continue
			}
			exo++
			d.AllylicSubstituents++
			if m.HeavyDegree(x) >= 3 {
				d.BulkyAllylic = true
			}
		}
		quaternary := m.HeavyDegree(a) == 4
		if exo >= 2 {
			d.GemDisubstituted++
			if quaternary {
				d.BulkyAllylic = true
			}
		}
		if quaternary {
			for _, x := range m.HeavyNbrs(a) {
				if !inSystem[x] && (g.isCarbonyl(x) || g.isEWG(x)) {
					d.QuaternaryAllylicEWG = true
				}
			}
		}
	}
	for _, a := range homoList {
		exo := 0
		for _, x := range m.HeavyNbrs(a) {
			if !inSystem[x] {
				exo++
			}
		}
		d.HomoallylicSubstituents += exo
		if exo >= 2 {
			d.GemDisubstituted++
		}
	}
	// geometry: trans is possible only in rings of eight or more
	if d.RingSize >= 8 {
		d.TransOlefin = s.ringTrans(o, inSmall) == 1
	}
	d.ExoEndo = s.exoEndo(o, inCore, inSystem)
	d.TransRingFusion = s.transFusion(o, inSmall, inSystem)
	o.Signature, d.SkeletonKey = canon.SignatureAndKey(m, p, o.SystemAtoms)
	if len(o.CoreAtoms) == len(o.SystemAtoms) {
		d.CoreKey = d.SkeletonKey // the core is the whole system
	} else {
		o.CoreSignature, d.CoreKey = canon.SignatureAndKey(m, p, o.CoreAtoms)
	}
	return o
}
