package thermo

import (
	"bytes"
	"cmp"
	"fmt"
	"math"
	"slices"
	"sort"
	"strconv"
	"strings"

	"ringsieve/screening/canon"
	"ringsieve/screening/internal/memo"
	"ringsieve/screening/mol"
	"ringsieve/screening/rings"
)

// gasMemo caches gas-phase estimates by the written signature of the ring system and the bond
// opened (50,000 entries: a design choice, a few megabytes).
var gasMemo = memo.New[GasEstimate](50000)

// ResetCache empties the ring-estimate, analogue-key and parent caches (benchmarks of a cold
// start).
func ResetCache() {
	gasMemo.Reset()
	analogueMemo.Reset()
	parentMemo.Reset()
	parentNameMemo.Reset()
	parentGraphMemo.Reset()
	systemKeyMemo.Reset()
}

// systemKey is the canonical key of a ring system given as atoms of m (bonds among them, less
// skip), computed on an extracted copy so that aromaticity is judged on the system alone;
// trans adds the marker for a trans ring olefin.
func systemKey(m *mol.Molecule, atoms []int, skip int, trans bool) string {
	sub, sr := extract(m, atoms, skip)
	k := canon.SkeletonKey(sub, sr, seq(len(sub.Atoms)), -1)
	if trans {
		k += "|E"
	}
	return k
}

// extract copies the atoms (and the bonds among them, less skip) into a new molecule with no
// hydrogens and perceives it. It returns the copy and its rings.
func extract(m *mol.Molecule, atoms []int, skip int) (*mol.Molecule, *rings.Rings) {
	// sized once: a ring system has about as many bonds as atoms (one more per extra ring)
	sub := &mol.Molecule{Atoms: make([]mol.Atom, 0, len(atoms)), Bonds: make([]mol.Bond, 0, len(atoms)+len(atoms)/2+1)}
	idx := make([]int32, len(m.Atoms)) // local number + 1 of each atom copied so far; 0: not (yet) copied
	for _, a := range atoms {
		idx[a] = int32(len(sub.Atoms)) + 1
		at := m.Atoms[a]
		at.HCount, at.Bracket, at.Chiral, at.NChiral = 0, true, 0, 0
		if at.Z == 7 || at.Z == 15 || at.Z == 5 {
			// keep pyrrole-type nitrogens three-connected for aromaticity
			if m.Degree(a)+m.Atoms[a].HCount == 3 {
				at.HCount = 3 - heavyNbrsIn(m, a, idx)
				if at.HCount < 0 {
					at.HCount = 0
				}
			}
		}
		sub.Atoms = append(sub.Atoms, at)
	}
	for bi, b := range m.Bonds {
		if bi == skip {
			continue
		}
		if x, y := idx[b.A], idx[b.B]; x > 0 && y > 0 {
			nb := b
			nb.A, nb.B, nb.Dir = int(x-1), int(y-1), 0
			sub.Bonds = append(sub.Bonds, nb)
		}
	}
	sortLocalBonds(sub.Bonds)
	sub.Index()
	return sub, rings.Perceive(sub)
}

// sortLocalBonds puts the bonds of a copied subgraph in the order of their atoms' local numbers
// (lower end, then higher end), so that the copy, its ring perception and everything computed
// from it depend on the atoms' order alone — what canon.WrittenSignature, the key of the caches
// holding those values, describes.
func sortLocalBonds(bonds []mol.Bond) {
	slices.SortFunc(bonds, func(x, y mol.Bond) int {
		return cmp.Or(cmp.Compare(min(x.A, x.B), min(y.A, y.B)), cmp.Compare(max(x.A, x.B), max(y.A, y.B)))
	})
}

// heavyNbrsIn counts the non-hydrogen neighbours of a that are marked in idx (non-zero).
func heavyNbrsIn(m *mol.Molecule, a int, idx []int32) int {
	n := 0
	for _, x := range m.HeavyNbrs(a) {
		if idx[x] != 0 {
			n++
		}
	}
	return n
}

// strainTerm is one ring-correction term of an estimate.
type strainTerm struct {
	Key    string
	Name   string
	H, S   float64
	UH, US float64
	Hit    bool // found in the table (else a fallback)
	Row    *RingRow
}

// ringSystemsTerms returns the strain terms of every ring system in the extracted molecule sub:
// a whole-system row when the table has one, else the sum of its cores (rings sharing three or
// more atoms), each a row or a fallback.
//
// trans marks a trans ring olefin between sub atoms olA and olB: the whole-system key carries
// the marker for a single ring, and in a fused system the core holding the olefin carries it
// (so that a trans-cyclooctene fused to another ring is looked up as trans-cyclooctene).
func (t *ringTable) ringSystemsTerms(sub *mol.Molecule, p *rings.Rings, trans bool, olA, olB int) []strainTerm {
	_, systems := rings.Systems(p.SSSR)
	var terms []strainTerm
	for _, sys := range systems {
		atoms := rings.Atoms(p.SSSR, sys)
		key := t.lookupKey(sub, p, atoms, trans && len(sys) == 1)
		if row, ok := t.byKey[key]; ok {
			terms = append(terms, strainTerm{Key: key, Name: row.Name, H: row.RSCH, S: row.RSCS, UH: row.UH, US: row.US, Hit: true, Row: row})
			continue
		}
		// cores
		done := map[int]bool{}
		for _, r := range sys {
			if done[r] {
				continue
			}
			core := rings.Core(p.SSSR, sys, []int{r})
			for _, c := range core {
				done[c] = true
			}
			catoms := rings.Atoms(p.SSSR, core)
			ckey := t.lookupKey(sub, p, catoms, trans && containsBoth(catoms, olA, olB))
			if row, ok := t.byKey[ckey]; ok {
				terms = append(terms, strainTerm{Key: ckey, Name: row.Name, H: row.RSCH, S: row.RSCS, UH: row.UH, US: row.US, Hit: true, Row: row})
				continue
			}
			terms = append(terms, t.fallback(sub, p, core, ckey))
		}
	}
	return terms
}

// lookupKey is systemKey for a table look-up (p: the rings perceived on sub): a system larger
// than every table row gets a plain size label instead of its canonical key, which no row could
// match anyway. Keys are cached under the subgraph's written signature (systemKeyMemo).
func (t *ringTable) lookupKey(sub *mol.Molecule, p *rings.Rings, atoms []int, trans bool) string {
	if len(atoms) > t.maxAtoms {
		return fmt.Sprintf("ring system of %d atoms", len(atoms))
	}
	extra := "|system"
	if trans {
		extra = "|system E"
	}
	var stack [512]byte
	sig := canon.AppendWrittenSignature(stack[:0], sub, p, atoms, -1, extra)
	return systemKeyMemo.DoBytes(sig, func(string) string { return systemKey(sub, atoms, -1, trans) })
}

// systemKeyMemo caches the keys of ring systems and cores looked up in the table by what
// determines them: the written signature of the subgraph (extracted and perceived on its own
// by systemKey) and the trans marker (5,000 entries, a design choice: the parts of ring
// systems repeat across structures more than the systems do).
var systemKeyMemo = memo.New[string](5000)

// fallback estimates a core the table lacks. First choice: the all-carbon analogue of the whole
// core (heteroatoms replaced by carbon, bond orders kept) when the table has it, e.g. a
// diaza-oxa-norbornene read as norbornene, with 8 kJ/mol and 15 J/(mol K) added to the
// uncertainty for the substitution. Else each ring on its own: the all-carbon ring with the same
// bond pattern, else the cycloalkene (or cycloalkane) of the same size with 5 kJ/mol more
// uncertainty; aromatic rings count zero; bridged cores add 25 kJ/mol of uncertainty for the
// unknown bridging strain. Marked not-hit either way.
func (t *ringTable) fallback(sub *mol.Molecule, p *rings.Rings, core []int, key string) strainTerm {
	term := strainTerm{Key: key, Name: "estimate for " + key}
	catoms := rings.Atoms(p.SSSR, core)
	if len(core) < 2 || len(catoms) > t.maxAtoms {
		// a single ring, or larger than every row: no analogue to look up (its key is costly)
	} else if row, ok := t.byKey[cachedAnalogueKey(sub, p, catoms)]; ok {
		term.Name = "all-carbon analogue " + row.Name
		term.H, term.S = row.RSCH, row.RSCS
		term.UH, term.US = math.Hypot(row.UH, 8), math.Hypot(row.US, 15)
		return term
	}
	for _, ri := range core {
		r := p.SSSR[ri]
		arom := true
		doubles := 0
		for _, b := range r.Bonds {
			if !p.AromaticBond[b] {
				arom = false
			}
			if sub.Bonds[b].Order == mol.BondDouble && !p.AromaticBond[b] {
				doubles++
			}
		}
		if arom {
			continue
		}
		n := len(r.Atoms)
		orders := make([]byte, n)
		for i := 0; i < n; i++ {
			ord := sub.Bonds[r.Bonds[i]].Order
			if p.AromaticBond[r.Bonds[i]] {
				ord = 1
			}
			orders[i] = byte('0' + ord)
		}
		row, ok := t.byKey[ringAnalogueKey(orders)]
		widen := 0.0
		if !ok {
			// same size, one ring double bond (or none): the cycloalkene or cycloalkane
			parent := bytes.Repeat([]byte{'1'}, n)
			if doubles > 0 {
				parent[0] = '2'
			}
			row, ok = t.byKey[ringAnalogueKey(parent)]
			widen = 5
		}
		if ok {
			term.H += row.RSCH
			term.S += row.RSCS
			term.UH = math.Hypot(term.UH, row.UH+5+widen)
			term.US = math.Hypot(term.US, row.US+5+widen)
			continue
		}
		// no row of that size: large rings are nearly strain-free
		if n >= 12 {
			term.S += 30
			term.UH = math.Hypot(term.UH, 8)
			term.US = math.Hypot(term.US, 15)
		} else {
			term.H += 25
			term.S += 90
			term.UH = math.Hypot(term.UH, 20)
			term.US = math.Hypot(term.US, 25)
		}
	}
	if len(core) > 1 {
		term.UH = math.Hypot(term.UH, 25)
		term.US = math.Hypot(term.US, 25)
	}
	return term
}

func containsBoth(sorted []int, a, b int) bool {
	i, j := sort.SearchInts(sorted, a), sort.SearchInts(sorted, b)
	return i < len(sorted) && sorted[i] == a && j < len(sorted) && sorted[j] == b
}

func seq(n int) []int {
	out := make([]int, n)
	for i := range out {
		out[i] = i
	}
	return out
}

// analogueMemo caches carbon-analogue keys by what determines them: the written signature of
// the subgraph, or the bond orders around a single ring (2,000 entries, a design choice: they
// are few).
var analogueMemo = memo.New[string](2000)

// cachedAnalogueKey is carbonAnalogueKey(sub, atoms) cached under the subgraph's written
// signature (which holds the bonds and their orders, so equal signatures give equal keys).
func cachedAnalogueKey(sub *mol.Molecule, p *rings.Rings, atoms []int) string {
	return analogueMemo.Do(canon.WrittenSignature(sub, p, atoms, -1, "|analogue"), func() string {
		return carbonAnalogueKey(sub, atoms)
	})
}

// ringAnalogueKey is the carbon-analogue key of one ring whose bond orders, in ring order, are
// orders ('1', '2', …; aromatic bonds read as single), cached by that sequence.
func ringAnalogueKey(orders []byte) string {
	return analogueMemo.Do("ring|"+string(orders), func() string {
		n := len(orders)
		ring := &mol.Molecule{}
		for i := 0; i < n; i++ {
			ring.Atoms = append(ring.Atoms, mol.Atom{Z: 6, Bracket: true})
		}
		for i := 0; i < n; i++ {
			ring.Bonds = append(ring.Bonds, mol.Bond{A: i, B: (i + 1) % n, Order: int(orders[i] - '0')})
		}
		return carbonAnalogueKey(ring, seq(n))
	})
}

// carbonAnalogueKey is the skeleton key of atoms with every atom made a non-aromatic carbon and
// aromatic bonds read as single (the bond orders of the Kekulé form are kept).
func carbonAnalogueKey(m *mol.Molecule, atoms []int) string {
	c := &mol.Molecule{}
	idx := map[int]int{}
	for i, a := range atoms {
		idx[a] = i
		c.Atoms = append(c.Atoms, mol.Atom{Z: 6, Bracket: true})
	}
	for _, b := range m.Bonds {
		x, okx := idx[b.A]
		y, oky := idx[b.B]
		if okx && oky {
			c.Bonds = append(c.Bonds, mol.Bond{A: x, B: y, Order: b.Order})
		}
	}
	c.Index()
	return canon.SkeletonKey(c, rings.Perceive(c), seq(len(c.Atoms)), -1)
}

// cancelTerms removes terms present on both sides (spectator rings that ring opening leaves
// unchanged).
func cancelTerms(mono, surv []strainTerm) ([]strainTerm, []strainTerm) {
	used := make([]bool, len(surv))
	var m2 []strainTerm
	for _, a := range mono {
		matched := false
		for j, b := range surv {
			if !used[j] && a.Key == b.Key {
				used[j] = true
				matched = true
				break
			}
		}
		if !matched {
			m2 = append(m2, a)
		}
	}
	var s2 []strainTerm
	for j, b := range surv {
		if !used[j] {
			s2 = append(s2, b)
		}
	}
	return m2, s2
}

// GasEstimate is the gas-phase ring-correction estimate for opening one ring olefin.
type GasEstimate struct {
	DH, DS   float64 // kJ/mol, J/(mol K), gas phase, before offsets
	UH, US   float64
	AllHits  bool
	Terms    []string // names of the monomer-side terms
	Survive  []string // names of surviving terms
	Row      *RingRow // whole-system row when the table has the system
	Spectate int      // spectator terms cancelled
	Path     string   // "monomer terms → surviving terms", for the result's source

	source string // the table estimate's source text, made once per cached estimate
	// missNote is the skeleton_not_in_table note's text when not every term hit the table (made
	// once per cached estimate; empty when the caller gave no skeleton key)
	missNote string
}

// gasEstimate computes the ring-correction part for opening bond bi of the ring system atoms
// (r: the rings perceived on m).
func (t *ringTable) gasEstimate(m *mol.Molecule, r *rings.Rings, systemAtoms []int, bi int, trans bool) GasEstimate {
	return t.gasEstimateSig(m, systemAtoms, bi, trans, canon.WrittenSignature(m, r, systemAtoms, -1, ""), "")
}

// gasEstimateSig is gasEstimate with the system's written signature already computed.
// skeletonKey is the system's canonical key (a function of base, which the cache key holds) for
// the note of a table miss; "" leaves the note to the caller.
func (t *ringTable) gasEstimateSig(m *mol.Molecule, systemAtoms []int, bi int, trans bool, base, skeletonKey string) GasEstimate {
	var stack [512]byte
	key := appendGasKey(stack[:0], m, systemAtoms, bi, trans, base)
	return gasMemo.DoBytes(key, func(sig string) GasEstimate {
		g, ok := t.seededGas(sig)
		if !ok {
			g = t.gasEstimateUncached(m, systemAtoms, bi, trans)
		}
		g.source = "ring-correction table: " + g.Path
		if !g.AllHits && skeletonKey != "" {
			g.missNote = missNoteText(skeletonKey, g.Path)
		}
		return g
	})
}

// missNoteText is the skeleton_not_in_table note's text for ring system key and the estimate's
// path.
func missNoteText(key, path string) string {
	return "ring system " + key + " is not in the strain table; estimated from its rings (" + path + "), uncertainty widened"
}

// gasKey is the gas-estimate cache key: the system's written signature, the opened bond named by
// its atoms' local positions (systemAtoms is sorted) and the trans flag.
func gasKey(m *mol.Molecule, systemAtoms []int, bi int, trans bool, base string) string {
	return string(appendGasKey(nil, m, systemAtoms, bi, trans, base))
}

// appendGasKey appends gasKey to b (a look-up that hits allocates nothing).
func appendGasKey(b []byte, m *mol.Molecule, systemAtoms []int, bi int, trans bool, base string) []byte {
	la, lb := sort.SearchInts(systemAtoms, m.Bonds[bi].A), sort.SearchInts(systemAtoms, m.Bonds[bi].B)
	b = append(b, base...)
	b = append(b, "|open "...)
	b = strconv.AppendInt(b, int64(la), 10)
	b = append(b, '-')
	b = strconv.AppendInt(b, int64(lb), 10)
	b = append(b, '|')
	return strconv.AppendBool(b, trans)
}

func (t *ringTable) gasEstimateUncached(m *mol.Molecule, systemAtoms []int, bi int, trans bool) GasEstimate {
	subM, rM := extract(m, systemAtoms, -1)
	subS, rS := extract(m, systemAtoms, bi)
	la, lb := sort.SearchInts(systemAtoms, m.Bonds[bi].A), sort.SearchInts(systemAtoms, m.Bonds[bi].B)
	mono := t.ringSystemsTerms(subM, rM, trans, la, lb)
	surv := t.ringSystemsTerms(subS, rS, false, -1, -1)
	var g GasEstimate
	if len(mono) == 1 && mono[0].Hit {
		g.Row = mono[0].Row
	}
	before := len(mono)
	mono, surv = cancelTerms(mono, surv)
	g.Spectate = before - len(mono)
	// terms by name, so that neither the sums nor the path's text depend on the order ring
	// perception found the rings in (which follows how the structure was written)
	byName := func(a, b strainTerm) int { return cmp.Or(cmp.Compare(a.Name, b.Name), cmp.Compare(a.Key, b.Key)) }
	slices.SortStableFunc(mono, byName)
	slices.SortStableFunc(surv, byName)
	g.AllHits = true
	var uh2, us2 float64
	for _, x := range mono {
		g.DH -= x.H
		g.DS -= x.S
		uh2 += x.UH * x.UH
		us2 += x.US * x.US
		g.AllHits = g.AllHits && x.Hit
		g.Terms = append(g.Terms, x.Name)
	}
	for _, x := range surv {
		g.DH += x.H
		g.DS += x.S
		uh2 += x.UH * x.UH
		us2 += x.US * x.US
		g.AllHits = g.AllHits && x.Hit
		g.Survive = append(g.Survive, x.Name)
	}
	g.UH, g.US = math.Sqrt(uh2), math.Sqrt(us2)
	g.Path = strings.Join(g.Terms, " + ")
	if len(g.Survive) > 0 {
		g.Path += " → " + strings.Join(g.Survive, " + ")
	} else {
		g.Path += " → open chain"
	}
	return g
}
