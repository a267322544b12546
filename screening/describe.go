package screening

import (
	"sort"
	"strings"
)

// Structure is a parsed, perceived monomer with one analysis per ring C=C.
type Structure struct {
	Mol         *Molecule
	P           *Perceived
	Main        []int // atoms of the screened component
	MainSMILES  string
	CounterIons []string // formulas of the other components
	Groups      []string // functional-group inventory of the main component
	Olefins     []*Olefin
	Skipped     int     // ring olefins beyond MaxOlefinsAnalysed, not analysed
	ringSystem  []int   // per SSSR ring: index of its ring system
	systems     [][]int // SSSR ring indices per ring system
	sysAtoms    [][]int // sorted atoms per ring system, computed on first use
}

// Olefin is one ring C=C (both atoms carbon, in a ring, not aromatic) and what governs its ROMP.
type Olefin struct {
	Bond, A, B  int
	SystemRings []int // SSSR ring indices of the whole ring system
	SystemAtoms []int
	CoreRings   []int // rings holding the olefin plus those bridged to them
	CoreAtoms   []int
	SmallRing   []int // atoms of the smallest ring holding the olefin
	D           Descriptors
	sig         string // written signature of the ring system (cache key)
}

// Describe reads a SMILES and derives everything ROMP screening needs from it. Errors are
// *SMILESError values with the character offset.
func Describe(smiles string) (*Structure, error) {
	m, err := ParseSMILES(smiles)
	if err != nil {
		return nil, err
	}
	return DescribeMolecule(m, smiles)
}

// DescribeMolecule analyses a molecule already read (from SMILES or a molfile); text is the
// SMILES it came from, or "" when there is none.
func DescribeMolecule(m *Molecule, text string) (*Structure, error) {
	smiles := text
	if err := m.checkValence(); err != nil {
		return nil, err
	}
	p := Perceive(m)
	s := &Structure{Mol: m, P: p}
	s.pickMain(smiles)
	s.buildSystems()
	s.Groups = FunctionalGroups(p, s.Main)
	inMain := make([]bool, len(m.Atoms))
	for _, a := range s.Main {
		inMain[a] = true
	}
	var ringOlefins []int
	for bi, b := range m.Bonds {
		if !inMain[b.A] || b.Order != bondDouble || p.AromaticBond[bi] || p.BondRingSize[bi] == 0 {
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
		sort.SliceStable(ringOlefins, func(i, j int) bool { return pref(ringOlefins[i]) < pref(ringOlefins[j]) })
		s.Skipped = len(ringOlefins) - MaxOlefinsAnalysed
		ringOlefins = ringOlefins[:MaxOlefinsAnalysed]
	}
	for _, bi := range ringOlefins {
		s.Olefins = append(s.Olefins, s.analyse(bi))
	}
	return s, nil
}

// MaxOlefinsAnalysed bounds the ring olefins of one monomer that are analysed in full.
const MaxOlefinsAnalysed = 12

// checkValence refuses carbon, oxygen and fluorine beyond their valence (pentavalent carbon and
// the like are typing errors, not monomers).
func (m *Molecule) checkValence() error {
	for i, a := range m.Atoms {
		limit := -1
		switch a.Z {
		case 6:
			limit = 4 - abs(a.Charge)
		case 8:
			limit = 2 + a.Charge
		case 9:
			limit = 1 + a.Charge
		}
		if limit < 0 {
			continue
		}
		if v := m.bondOrderSum(i) + a.HCount; v > limit {
			sym := elementByZ(a.Z).Symbol
			return smilesErr(a.Pos, "%s has %d bonds, more than its valence %d allows", sym, v, limit)
		}
	}
	return nil
}

// pickMain chooses the component with the most heavy atoms (carbon-bearing first) as the monomer
// and lists the others as counter-ions.
func (s *Structure) pickMain(smiles string) {
	m := s.Mol
	best, bestScore := -1, -1
	for ci, comp := range m.components {
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
	s.Main = m.components[best]
	sort.Ints(s.Main)
	if len(m.components) == 1 {
		s.MainSMILES = smiles
		return
	}
	parts := strings.Split(smiles, ".")
	if smiles != "" && len(parts) == len(m.components) {
		s.MainSMILES = parts[best]
	} else {
		s.MainSMILES = smiles
	}
	for ci, comp := range m.components {
		if ci == best {
			continue
		}
		s.CounterIons = append(s.CounterIons, m.subFormula(comp))
	}
}

func (m *Molecule) subFormula(atoms []int) string { return m.formulaOf(atoms) }

// buildSystems groups SSSR rings into ring systems (rings sharing at least one atom).
func (s *Structure) buildSystems() {
	rings := s.P.SSSR
	parent := make([]int, len(rings))
	for i := range parent {
		parent[i] = i
	}
	find := func(x int) int {
		for parent[x] != x {
			parent[x] = parent[parent[x]]
			x = parent[x]
		}
		return x
	}
	for i := range rings {
		for j := i + 1; j < len(rings); j++ {
			if sharedAtoms(rings[i], rings[j]) > 0 {
				parent[find(i)] = find(j)
			}
		}
	}
	idx := map[int]int{}
	s.ringSystem = make([]int, len(rings))
	for i := range rings {
		r := find(i)
		k, ok := idx[r]
		if !ok {
			k = len(s.systems)
			idx[r] = k
			s.systems = append(s.systems, nil)
		}
		s.ringSystem[i] = k
		s.systems[k] = append(s.systems[k], i)
	}
}

func sharedAtoms(a, b Ring) int {
	n := 0
	for _, x := range a.Atoms {
		for _, y := range b.Atoms {
			if x == y {
				n++
			}
		}
	}
	return n
}

func ringAtoms(rings []Ring, idx []int) []int {
	var out []int
	for _, i := range idx {
		for _, a := range rings[i].Atoms {
			dup := false
			for _, b := range out {
				if a == b {
					dup = true
					break
				}
			}
			if !dup {
				out = append(out, a)
			}
		}
	}
	sort.Ints(out)
	return out
}

// systemKind classifies a set of rings: bridged if two share three or more atoms, else fused if
// two share a bond, else spiro if two share an atom, else monocyclic.
func systemKind(rings []Ring, idx []int) string {
	kind := SystemMonocyclic
	rank := map[string]int{SystemMonocyclic: 0, SystemSpiro: 1, SystemFused: 2, SystemBridged: 3}
	for i := 0; i < len(idx); i++ {
		for j := i + 1; j < len(idx); j++ {
			k := ""
			switch n := sharedAtoms(rings[idx[i]], rings[idx[j]]); {
			case n >= 3:
				k = SystemBridged
			case n == 2:
				k = SystemFused
			case n == 1:
				k = SystemSpiro
			}
			if k != "" && rank[k] > rank[kind] {
				kind = k
			}
		}
	}
	return kind
}

// coreRings returns the rings holding bond bi plus, repeatedly, every ring sharing three or more
// atoms with them (the bridged core); rings fused by one bond or spiro-joined stay outside.
func coreRings(rings []Ring, system []int, bi int) []int {
	in := map[int]bool{}
	var core []int
	for _, r := range system {
		for _, b := range rings[r].Bonds {
			if b == bi {
				in[r] = true
				core = append(core, r)
				break
			}
		}
	}
	for changed := true; changed; {
		changed = false
		atoms := map[int]bool{}
		for _, r := range core {
			for _, a := range rings[r].Atoms {
				atoms[a] = true
			}
		}
		for _, r := range system {
			if in[r] {
				continue
			}
			n := 0
			for _, a := range rings[r].Atoms {
				if atoms[a] {
					n++
				}
			}
			if n >= 3 {
				in[r] = true
				core = append(core, r)
				changed = true
			}
		}
	}
	sort.Ints(core)
	return core
}

// isEWG reports an electron-withdrawing atom: carbonyl or thiocarbonyl carbon, nitrile carbon,
// sulfonyl sulfur, nitro nitrogen, or a carbon carrying two or more fluorines.
func (m *Molecule) isEWG(a int) bool {
	at := &m.Atoms[a]
	switch at.Z {
	case 6:
		if m.isCarbonyl(a) || m.countDoubleTo(a, 16) > 0 {
			return true
		}
		f := 0
		for _, bi := range m.adj[a] {
			b := &m.Bonds[bi]
			o := m.Other(bi, a)
			if b.Order == bondTriple && m.Atoms[o].Z == 7 {
				return true
			}
			if m.Atoms[o].Z == 9 {
				f++
			}
		}
		return f >= 2
	case 16:
		return m.countDoubleTo(a, 8) >= 2
	case 7:
		return at.Charge == 1 && m.countDoubleTo(a, 8) > 0
	}
	return false
}

func (s *Structure) analyse(bi int) *Olefin {
	m, p := s.Mol, s.P
	b := m.Bonds[bi]
	o := &Olefin{Bond: bi, A: b.A, B: b.B}
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
		s.sysAtoms = make([][]int, len(s.systems))
	}
	if s.sysAtoms[sysIdx] == nil {
		s.sysAtoms[sysIdx] = ringAtoms(p.SSSR, system)
	}
	o.SystemRings = system
	o.SystemAtoms = s.sysAtoms[sysIdx]
	o.CoreRings = coreRings(p.SSSR, system, bi)
	if len(o.CoreRings) == len(system) {
		o.CoreAtoms = o.SystemAtoms // the core is the whole system
	} else {
		o.CoreAtoms = ringAtoms(p.SSSR, o.CoreRings)
	}
	smallest := -1
	for _, ri := range o.CoreRings {
		for _, rb := range p.SSSR[ri].Bonds {
			if rb == bi && (smallest < 0 || len(p.SSSR[ri].Atoms) < len(p.SSSR[smallest].Atoms)) {
				smallest = ri
			}
		}
	}
	o.SmallRing = append([]int(nil), p.SSSR[smallest].Atoms...)
	n := len(m.Atoms)
	flags := make([]bool, 5*n) // one allocation for the five atom sets below
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
	d := &o.D
	d.FromStructure = true
	d.RingSize = p.BondRingSize[bi]
	d.RingSystem = systemKind(p.SSSR, system)
	d.RingSystemSize = len(system)
	d.FunctionalGroups = append([]string(nil), s.Groups...)
	// substitution and conjugation
	conj := map[string]bool{}
	for _, end := range []int{o.A, o.B} {
		other := o.B
		if end == o.B {
			other = o.A
		}
		for _, nbi := range m.adj[end] {
			n := m.Other(nbi, end)
			if n == other || m.Atoms[n].Z == 1 {
				continue
			}
			d.OlefinSubstitution++
			if m.isEWG(n) {
				d.EWGOnOlefin = true
			}
			if p.AromaticAtom[n] {
				conj[ConjAromatic] = true
				continue
			}
			if m.isCarbonyl(n) {
				conj[ConjCarbonyl] = true
			}
			for _, nb2 := range m.adj[n] {
				bb := &m.Bonds[nb2]
				x := m.Other(nb2, n)
				if x == end {
					continue
				}
				if bb.Order == bondTriple && m.Atoms[x].Z == 7 {
					conj[ConjNitrile] = true
				}
				if bb.Order == bondDouble && !p.AromaticBond[nb2] && m.Atoms[x].Z == 6 {
					if inSmall[n] && inSmall[x] {
						conj[ConjRingOlefin] = true
					} else {
						conj[ConjOlefin] = true
					}
				}
			}
		}
	}
	for c := range conj {
		d.ConjugatedWith = append(d.ConjugatedWith, c)
	}
	sort.Strings(d.ConjugatedWith)
	d.Conjugated = len(d.ConjugatedWith) > 0
	// EWG on the olefin's own (smallest) ring
	for _, a := range o.SmallRing {
		if a == o.A || a == o.B {
			continue
		}
		if m.isEWG(a) {
			d.EWGOnOlefinRing = true
		}
		for _, x := range m.heavyNbrs(a) {
			if !inSystem[x] && m.isEWG(x) {
				d.EWGOnOlefinRing = true
			}
		}
	}
	if d.EWGOnOlefin {
		d.EWGOnOlefinRing = true
	}
	// allylic and homoallylic substituents
	var allylicList, homoList []int
	for _, end := range []int{o.A, o.B} {
		for _, x := range m.heavyNbrs(end) {
			if x != o.A && x != o.B && inSmall[x] && !allylic[x] {
				allylic[x] = true
				allylicList = append(allylicList, x)
			}
		}
	}
	for _, x := range allylicList {
		for _, y := range m.heavyNbrs(x) {
			if inCore[y] && !allylic[y] && y != o.A && y != o.B && !homo[y] {
				homo[y] = true
				homoList = append(homoList, y)
			}
		}
	}
	for _, a := range allylicList {
		exo := 0
		for _, x := range m.heavyNbrs(a) {
			if inSystem[x] {
				continue
			}
			exo++
			d.AllylicSubstituents++
			if len(m.heavyNbrs(x)) >= 3 {
				d.BulkyAllylic = true
			}
		}
		quaternary := len(m.heavyNbrs(a)) == 4
		if exo >= 2 {
			d.GemDisubstituted++
			if quaternary {
				d.BulkyAllylic = true
			}
		}
		if quaternary {
			for _, x := range m.heavyNbrs(a) {
				if !inSystem[x] && (m.isCarbonyl(x) || m.isEWG(x)) {
					d.QuaternaryAllylicEWG = true
				}
			}
		}
	}
	for _, a := range homoList {
		exo := 0
		for _, x := range m.heavyNbrs(a) {
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
	o.sig = writtenSignature(m, o.SystemAtoms, -1, "")
	d.SkeletonKey = keyForSignature(o.sig, m, o.SystemAtoms)
	if len(o.CoreAtoms) == len(o.SystemAtoms) {
		d.CoreKey = d.SkeletonKey // the core is the whole system
	} else {
		d.CoreKey = cachedSkeletonKey(m, o.CoreAtoms, -1)
	}
	return o
}

// dirSign returns +1 or -1 for the side of neighbour x at double-bond atom a from the '/' '\'
// marks, or 0 when the bond a–x carries none.
func (m *Molecule) dirSign(a, x int) int {
	bi := m.bondBetween(a, x)
	if bi < 0 || m.Bonds[bi].Dir == 0 {
		return 0
	}
	b := &m.Bonds[bi]
	s := 1
	if b.Dir == '\\' {
		s = -1
	}
	if b.DirFrom == a { // written a / x: x comes after a
		return s
	}
	return -s
}

// ringTrans returns 1 for a trans ring olefin, 0 for cis or unspecified (marks absent).
func (s *Structure) ringTrans(o *Olefin, inSmall []bool) int {
	m := s.Mol
	side := func(end, other int) (sign int, ring bool) {
		for _, x := range m.heavyNbrs(end) {
			if x == other {
				continue
			}
			if d := m.dirSign(end, x); d != 0 {
				return d, inSmall[x]
			}
		}
		return 0, false
	}
	sa, ra := side(o.A, o.B)
	sb, rb := side(o.B, o.A)
	if sa == 0 || sb == 0 {
		return 0
	}
	trans := sa != sb
	if ra != rb {
		trans = !trans
	}
	if trans {
		return 1
	}
	return 0
}

// orient returns +1 ('@') or -1 ('@@') for the tetrahedral centre a seen with neighbours in the
// order want (up to four entries; -1 stands for the hydrogen), or 0 if a carries no usable tag.
func (m *Molecule) orient(a int, want []int) int {
	at := &m.Atoms[a]
	if at.Chiral == 0 || len(at.nbrOrder) != 4 {
		return 0
	}
	have := at.nbrOrder
	// complete want with the missing neighbour
	if len(want) == 3 {
		for _, x := range have {
			if x != want[0] && x != want[1] && x != want[2] {
				want = append(want, x)
				break
			}
		}
	}
	if len(want) != 4 {
		return 0
	}
	perm := make([]int, 4)
	for i, x := range want {
		perm[i] = -2
		for j, y := range have {
			if x == y {
				perm[i] = j
			}
		}
		if perm[i] < 0 {
			return 0
		}
	}
	// parity by counting inversions
	inv := 0
	for i := 0; i < 4; i++ {
		for j := i + 1; j < 4; j++ {
			if perm[i] > perm[j] {
				inv++
			}
		}
	}
	o := 1
	if at.Chiral == 2 {
		o = -1
	}
	if inv%2 == 1 {
		o = -o
	}
	return o
}

// cisOnRing tells whether substituent p on ring atom a and q on the adjacent ring atom b lie on
// the same face of the ring path prev–a–b–next: +1 cis, -1 trans, 0 unknown.
func (m *Molecule) cisOnRing(prev, a, b, next, p, q int) int {
	oa := m.orient(a, []int{prev, b, p})
	ob := m.orient(b, []int{a, next, q})
	if oa == 0 || ob == 0 {
		return 0
	}
	if oa == ob {
		return 1
	}
	return -1
}

// exoEndo reports exo/endo placement of substituents on the saturated bridge next to a bridgehead
// of a bridged bicyclic olefin ("exo", "endo", "exo,endo", or "" when not applicable or not
// specified by the SMILES).
func (s *Structure) exoEndo(o *Olefin, inCore, inSystem []bool) string {
	m := s.Mol
	if len(o.CoreRings) < 2 {
		return ""
	}
	found := map[string]bool{}
	for _, end := range []int{o.A, o.B} {
		other := o.B
		if end == o.B {
			other = o.A
		}
		for _, bh := range m.heavyNbrs(end) { // bridgehead candidates
			if bh == other || !inCore[bh] {
				continue
			}
			var bridgeNbrs []int
			for _, x := range m.heavyNbrs(bh) {
				if x != end && inCore[x] {
					bridgeNbrs = append(bridgeNbrs, x)
				}
			}
			if len(bridgeNbrs) != 2 {
				continue
			}
			for k, sAtom := range bridgeNbrs {
				top := bridgeNbrs[1-k] // the other bridge's first atom
				// the substituted atom must be on a bridge of two or more atoms
				var next = -1
				for _, x := range m.heavyNbrs(sAtom) {
					if x != bh && inCore[x] {
						next = x
					}
				}
				if next < 0 || s.Mol.bondBetween(next, other) >= 0 || next == other {
					continue // one-atom bridge (syn/anti, not exo/endo) or the olefin itself
				}
				// top must be on the shorter bridge: it must not lead back to the olefin
				for _, sub := range m.heavyNbrs(sAtom) {
					if inSystem[sub] {
						continue
					}
					c := m.cisOnRing(end, bh, sAtom, next, top, sub)
					// the other-ring relation is only meaningful when top belongs to the one- or
					// two-atom bridge opposite the olefin
					if c == 1 {
						found["exo"] = true
					} else if c == -1 {
						found["endo"] = true
					}
				}
				// fused spectator rings count as substituents too (imides, anhydrides)
				for _, sub := range m.heavyNbrs(sAtom) {
					if !inSystem[sub] || inCore[sub] {
						continue
					}
					c := m.cisOnRing(end, bh, sAtom, next, top, sub)
					if c == 1 {
						found["exo"] = true
					} else if c == -1 {
						found["endo"] = true
					}
				}
			}
		}
	}
	switch {
	case found["exo"] && found["endo"]:
		return "exo,endo"
	case found["exo"]:
		return "exo"
	case found["endo"]:
		return "endo"
	}
	return ""
}

// transFusion reports a trans ring fusion on the olefin's own ring (both fusion atoms carry
// stereo marks and their out-of-ring bonds point to opposite faces).
func (s *Structure) transFusion(o *Olefin, inSmall, inSystem []bool) bool {
	m := s.Mol
	ring := o.SmallRing
	n := len(ring)
	for i := 0; i < n; i++ {
		a, b := ring[i], ring[(i+1)%n]
		prev, next := ring[(i+n-1)%n], ring[(i+2)%n]
		if a == o.A || a == o.B || b == o.A || b == o.B {
			continue
		}
		var pa, qb = -1, -1
		for _, x := range m.heavyNbrs(a) {
			if inSystem[x] && !inSmall[x] {
				pa = x
			}
		}
		for _, x := range m.heavyNbrs(b) {
			if inSystem[x] && !inSmall[x] {
				qb = x
			}
		}
		if pa < 0 || qb < 0 || m.Atoms[a].Chiral == 0 || m.Atoms[b].Chiral == 0 || !s.sameOtherRing(pa, qb, a, b) {
			continue
		}
		if m.cisOnRing(prev, a, b, next, pa, qb) == -1 {
			return true
		}
	}
	return false
}

// sameOtherRing reports that x and y (out-of-ring neighbours of the fused pair a–b) lie in one
// SSSR ring with a and b: the pair is a fusion bond.
func (s *Structure) sameOtherRing(x, y, a, b int) bool {
	for _, r := range s.P.SSSR {
		n := 0
		for _, at := range r.Atoms {
			if at == x || at == y || at == a || at == b {
				n++
			}
		}
		if n == 4 {
			return true
		}
	}
	return false
}
