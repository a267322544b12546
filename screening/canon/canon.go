// Package canon computes canonical skeleton keys: a SMILES-like string for a set of atoms (a
// ring system or part of one) that is the same however the molecule was written, and written
// signatures that name a subgraph exactly as written (cache keys).
package canon

import (
	"bytes"
	"cmp"
	"slices"
	"sort"
	"strconv"
	"strings"

	"ringsieve/screening/mol"
	"ringsieve/screening/rings"
)

// Canonical skeleton keys: a SMILES-like string for a set of atoms (a ring system or part of one)
// that is the same however the molecule was written. Only the atoms in the set and the bonds
// between them count; substituents are stripped, elements, aromaticity and bond orders kept.
// The labelling is colour refinement with individualization of tied atoms; every tied choice is
// tried (up to a budget) and the smallest string kept, so the key does not depend on input order.

// canonBranchBudget bounds the tie-breaking branches tried per key (design choice).
const canonBranchBudget = 4096

// maxCanonAtoms bounds the subgraphs (design choice) that get a full canonical key; larger ring systems (never in
// the strain table) get a deterministic invariant summary instead.
const maxCanonAtoms = 64

// largeKey summarizes a large subgraph by its atom labels with their degrees and its bond
// count: equal for equal graphs, possibly equal for some different ones, which is harmless since
// no table row is that large. It is linear in the size so that no input can make it slow.
func (g *subgraph) largeKey() string {
	counts := map[string]int{}
	bonds := 0
	for i := range g.atoms {
		counts[g.label[i]+strconv.Itoa(len(g.nbr[i]))]++
		bonds += len(g.nbr[i])
	}
	var parts []string
	for k, v := range counts {
		parts = append(parts, k+"x"+strconv.Itoa(v))
	}
	sort.Strings(parts)
	return "large:" + strconv.Itoa(len(g.atoms)) + "/" + strconv.Itoa(bonds/2) + ":" + strings.Join(parts, ",")
}

type subgraph struct {
	atoms []int    // molecule atom indices
	nbr   [][]int  // local adjacency
	ord   [][]int  // bond order to each neighbour (4 = aromatic)
	label []string // atom label: element symbol, lower-case when aromatic
}

// newSubgraph builds the subgraph of atoms (without bond skipBond when ≥ 0). With full, atom
// labels carry charge, isotope and unusual hydrogen counts (whole structures); without, element
// and aromaticity only (ring skeletons).
func newSubgraph(m *mol.Molecule, r *rings.Rings, atoms []int, skipBond int, full bool) *subgraph {
	g := &subgraph{atoms: append([]int(nil), atoms...)}
	sort.Ints(g.atoms)
	local := make([]int32, len(m.Atoms)) // local index + 1 of each atom of the subgraph; 0: not in it
	for i, a := range g.atoms {
		local[a] = int32(i) + 1
	}
	n := len(g.atoms)
	// the neighbour and order lists carved from one array each, in the molecule's neighbour
	// order: count each atom's neighbours in the subgraph, then fill
	deg := make([]int, n)
	for i, a := range g.atoms {
		for _, bi := range m.Neighbors(a) {
			if bi != skipBond && local[m.Other(bi, a)] != 0 {
				deg[i]++
			}
		}
	}
	total := 0
	for _, d := range deg {
		total += d
	}
	nbrArr, ordArr := make([]int, total), make([]int, total)
	g.nbr = make([][]int, n)
	g.ord = make([][]int, n)
	g.label = make([]string, n)
	at0 := 0
	for i, a := range g.atoms {
		at := &m.Atoms[a]
		sym := "*"
		if e := mol.ElementByZ(at.Z); e != nil {
			sym = e.Symbol
		}
		if r.AromaticAtom[a] {
			sym = lowerSymbol(at.Z, sym)
		}
		if full {
			sym = fullLabel(m, a, sym)
		}
		g.label[i] = sym
		nbr, ord := nbrArr[at0:at0:at0+deg[i]], ordArr[at0:at0:at0+deg[i]]
		at0 += deg[i]
		for _, bi := range m.Neighbors(a) {
			if bi == skipBond {
				continue
			}
			j := local[m.Other(bi, a)]
			if j == 0 {
				continue
			}
			o := m.Bonds[bi].Order
			if r.AromaticBond[bi] {
				o = 4
			}
			nbr = append(nbr, int(j-1))
			ord = append(ord, o)
		}
		if len(nbr) > 0 { // as before: an atom without neighbours in the subgraph has nil lists
			g.nbr[i], g.ord[i] = nbr, ord
		}
	}
	return g
}

// lowerSymbols holds each element's lower-case symbol (an aromatic atom's label), by atomic
// number, written once.
var lowerSymbols = func() (out [mol.NumElements + 1]string) {
	for z := range out {
		if e := mol.ElementByZ(z); e != nil {
			out[z] = strings.ToLower(e.Symbol)
		}
	}
	return out
}()

// lowerSymbol is strings.ToLower(sym) for the symbol sym of atomic number z, shared per element.
func lowerSymbol(z int, sym string) string {
	if z >= 0 && z < len(lowerSymbols) && lowerSymbols[z] != "" {
		return lowerSymbols[z]
	}
	return strings.ToLower(sym)
}

// refine runs colour refinement from the given colours until the partition is stable and returns
// dense ranks (0 = smallest). Each round gives atom i the signature
// "colour|c1/o1,c2/o2,…" (its colour, then its neighbours' colours with the bond orders, the
// pieces in byte order) and ranks the signatures in byte order; the signatures are built in one
// reused buffer and compared as bytes, so a round allocates nothing per atom.
func (g *subgraph) refine(col []int) []int {
	n := len(col)
	cur := append([]int(nil), col...)
	var (
		buf    []byte
		off    = make([]int, n+1)
		idx    = make([]int, n)
		next   = make([]int, n)
		parts  []byte
		pOff   []int
		pOrder []int
	)
	sig := func(i int) []byte { return buf[off[i]:off[i+1]] }
	distinct := countDistinct(cur)
	for iter := 0; iter < n+1; iter++ {
		buf = buf[:0]
		for i := 0; i < n; i++ {
			off[i] = len(buf)
			buf = appendSmallInt(buf, cur[i])
			buf = append(buf, '|')
			// the neighbour pieces, then sorted in byte order
			parts, pOff, pOrder = parts[:0], pOff[:0], pOrder[:0]
			for k, j := range g.nbr[i] {
				pOff = append(pOff, len(parts))
				pOrder = append(pOrder, k)
				parts = appendSmallInt(parts, cur[j])
				parts = append(parts, '/')
				parts = appendSmallInt(parts, g.ord[i][k])
			}
			pOff = append(pOff, len(parts))
			piece := func(k int) []byte { return parts[pOff[k]:pOff[k+1]] }
			for x := 1; x < len(pOrder); x++ { // insertion sort: a handful of neighbours
				for y := x; y > 0 && bytes.Compare(piece(pOrder[y]), piece(pOrder[y-1])) < 0; y-- {
					pOrder[y], pOrder[y-1] = pOrder[y-1], pOrder[y]
				}
			}
			for x, k := range pOrder {
				if x > 0 {
					buf = append(buf, ',')
				}
				buf = append(buf, piece(k)...)
			}
		}
		off[n] = len(buf)
		for i := range idx {
			idx[i] = i
		}
		slices.SortFunc(idx, func(a, b int) int { return bytes.Compare(sig(a), sig(b)) })
		rank := 0
		for k, i := range idx {
			if k > 0 && !bytes.Equal(sig(i), sig(idx[k-1])) {
				rank++
			}
			next[i] = rank
		}
		if rank+1 == distinct {
			return next
		}
		distinct = rank + 1
		cur, next = next, cur
	}
	return cur
}

func denseRanks(sigs []string) []int {
	uniq := append([]string(nil), sigs...)
	sort.Strings(uniq)
	rank := map[string]int{}
	for _, s := range uniq {
		if _, ok := rank[s]; !ok {
			rank[s] = len(rank)
		}
	}
	out := make([]int, len(sigs))
	for i, s := range sigs {
		out[i] = rank[s]
	}
	return out
}

// countDistinct counts the distinct values of x (non-negative colours).
func countDistinct(x []int) int {
	hi := 0
	for _, v := range x {
		hi = max(hi, v)
	}
	seen := make([]bool, hi+1)
	d := 0
	for _, v := range x {
		if !seen[v] {
			seen[v] = true
			d++
		}
	}
	return d
}

// canonicalKey returns the canonical string of the subgraph.
func (g *subgraph) canonicalKey() string {
	n := len(g.atoms)
	if n == 0 {
		return ""
	}
	if n > maxCanonAtoms {
		return g.largeKey()
	}
	key, _ := g.canonical()
	return key
}

// initialLabels are the colours refinement starts from: element (aromatic in lower case), degree
// and bond-order sum.
func (g *subgraph) initialLabels() []string {
	init := make([]string, len(g.atoms))
	for i := range init {
		sum := 0
		for _, o := range g.ord[i] {
			sum += o
		}
		init[i] = g.label[i] + "|" + strconv.Itoa(len(g.nbr[i])) + "|" + strconv.Itoa(sum)
	}
	return init
}

// canonical returns the canonical string and the complete ranking (per local atom) that wrote it.
func (g *subgraph) canonical() (string, []int) {
	n := len(g.atoms)
	init := g.initialLabels()
	best := ""
	var bestRank []int
	budget := canonBranchBudget
	var search func(col []int)
	search = func(col []int) {
		if budget <= 0 {
			return
		}
		col = g.refine(col)
		if countDistinct(col) == n {
			budget--
			s := g.write(col)
			if best == "" || s < best {
				best, bestRank = s, col
			}
			return
		}
		// first tied class with the smallest rank
		counts := make([]int, n)
		for _, c := range col {
			counts[c]++
		}
		target := -1
		for c := 0; c < n; c++ {
			if counts[c] > 1 {
				target = c
				break
			}
		}
		for i := 0; i < n && budget > 0; i++ {
			if col[i] != target {
				continue
			}
			next := make([]int, n)
			for k := range col {
				next[k] = col[k] * 2
				if col[k] > target || (col[k] == target && k != i) {
					next[k]++
				}
			}
			search(next)
		}
	}
	search(denseRanks(init))
	return best, bestRank
}

// write renders the subgraph as SMILES-like text from a complete ranking: depth-first from the
// lowest-ranked atom of each connected piece, neighbours in rank order, ring closures numbered in
// order of opening.
func (g *subgraph) write(rank []int) string {
	n := len(g.atoms)
	order := make([]int, n)
	for i := range order {
		order[i] = i
	}
	slices.SortFunc(order, func(a, b int) int { return cmp.Compare(rank[a], rank[b]) })
	visited := make([]bool, n)
	var sb strings.Builder
	bondSym := func(o int) string {
		switch o {
		case 2:
			return "="
		case 3:
			return "#"
		case 4:
			return ":"
		}
		return ""
	}
	// first pass: DFS tree to find ring-closure pairs
	type edge struct{ a, b int }
	parent := make([]int, n)
	for i := range parent {
		parent[i] = -1
	}
	var closures []edge
	seenEdge := map[[2]int]bool{}
	var dfs1 func(a int)
	dfs1 = func(a int) {
		visited[a] = true
		nb := g.sortedNbrs(a, rank)
		for _, j := range nb {
			key := [2]int{min(a, j), max(a, j)}
			if seenEdge[key] {
				continue
			}
			seenEdge[key] = true
			if visited[j] {
				closures = append(closures, edge{a, j})
				continue
			}
			parent[j] = a
			dfs1(j)
		}
	}
	var roots []int
	for _, s := range order {
		if !visited[s] {
			roots = append(roots, s)
			dfs1(s)
		}
	}
	// ring-closure digits per atom
	ringsAt := make([][]int, n) // closure indices at each atom in order of appearance
	for ci, c := range closures {
		ringsAt[c.b] = append(ringsAt[c.b], ci)
		ringsAt[c.a] = append(ringsAt[c.a], ci)
	}
	visited = make([]bool, n)
	digitOf := map[int]int{}
	free := []int{}
	nextDigit := 1
	var dfs2 func(a int)
	dfs2 = func(a int) {
		visited[a] = true
		sb.WriteString(g.label[a])
		for _, ci := range ringsAt[a] {
			c := closures[ci]
			if d, ok := digitOf[ci]; ok {
				sb.WriteString(bondSym(g.orderBetween(c.a, c.b)))
				sb.WriteString(ringDigit(d))
				free = append(free, d)
				sort.Ints(free)
				delete(digitOf, ci)
			} else {
				d := 0
				if len(free) > 0 {
					d, free = free[0], free[1:]
				} else {
					d = nextDigit
					nextDigit++
				}
				digitOf[ci] = d
				sb.WriteString(ringDigit(d))
			}
		}
		var kids []int
		for _, j := range g.sortedNbrs(a, rank) {
			if parent[j] == a && !visited[j] {
				kids = append(kids, j)
			}
		}
		for k, j := range kids {
			if k < len(kids)-1 {
				sb.WriteString("(")
			}
			sb.WriteString(bondSym(g.orderBetween(a, j)))
			dfs2(j)
			if k < len(kids)-1 {
				sb.WriteString(")")
			}
		}
	}
	for i, r := range roots {
		if i > 0 {
			sb.WriteString(".")
		}
		dfs2(r)
	}
	return sb.String()
}

func ringDigit(d int) string {
	if d < 10 {
		return strconv.Itoa(d)
	}
	return "%" + strconv.Itoa(d)
}

func (g *subgraph) sortedNbrs(a int, rank []int) []int {
	nb := append([]int(nil), g.nbr[a]...)
	slices.SortFunc(nb, func(x, y int) int { return cmp.Compare(rank[x], rank[y]) })
	return nb
}

func (g *subgraph) orderBetween(a, b int) int {
	for k, j := range g.nbr[a] {
		if j == b {
			return g.ord[a][k]
		}
	}
	return 1
}

// SkeletonKey returns the canonical key of the atoms given (bonds among them only), optionally
// leaving out one bond (skipBond >= 0), as used for the ring left after ring opening.
// Aromaticity is read from r, the rings perceived on m.
func SkeletonKey(m *mol.Molecule, r *rings.Rings, atoms []int, skipBond int) string {
	return newSubgraph(m, r, atoms, skipBond, false).canonicalKey()
}

// StructureKey is the canonical key of the atoms given as a whole structure: like SkeletonKey,
// but an atom with a charge, an isotope or a hydrogen count other than its default valence gives
// (OpenSMILES 3.1.5) is written in brackets with them, so that an amine and its ammonium salt,
// or a carbon and a carbene centre, get different keys.
func StructureKey(m *mol.Molecule, r *rings.Rings, atoms []int) string {
	return newSubgraph(m, r, atoms, -1, true).canonicalKey()
}

// fullLabel writes atom a in brackets when its charge, isotope or hydrogen count is not what its
// element symbol alone implies.
func fullLabel(m *mol.Molecule, a int, sym string) string {
	at := &m.Atoms[a]
	h := m.TotalH(a)
	if at.Charge == 0 && at.Isotope == 0 {
		if e := mol.ElementByZ(at.Z); e != nil && len(e.Valences) > 0 {
			v := m.BondOrderSum(a) - m.TotalH(a) + at.HCount // bonds to heavy atoms
			for _, dv := range e.Valences {
				if dv >= v {
					if dv-v == h {
						return sym
					}
					break
				}
			}
		}
	}
	var b strings.Builder
	b.WriteByte('[')
	if at.Isotope != 0 {
		b.WriteString(strconv.Itoa(at.Isotope))
	}
	b.WriteString(sym)
	if h > 0 {
		b.WriteString("H")
		if h > 1 {
			b.WriteString(strconv.Itoa(h))
		}
	}
	switch {
	case at.Charge > 0:
		b.WriteString(strings.Repeat("+", at.Charge))
	case at.Charge < 0:
		b.WriteString(strings.Repeat("-", -at.Charge))
	}
	b.WriteByte(']')
	return b.String()
}

// Order returns the atoms given in canonical order, the order in which StructureKey ranks them,
// so that two writings of the same graph list corresponding atoms in the same places (atoms
// related by a symmetry of the graph may trade places), and class, per listed atom, its colour
// after refinement: atoms related by a symmetry always share a class. Subgraphs larger than the
// canonical limit (64 atoms) come back in ascending index order with a nil class.
func Order(m *mol.Molecule, r *rings.Rings, atoms []int) (order, class []int) {
	g := newSubgraph(m, r, atoms, -1, true)
	if len(g.atoms) == 0 || len(g.atoms) > maxCanonAtoms {
		return g.atoms, nil
	}
	_, rank := g.canonical()
	stable := g.refine(denseRanks(g.initialLabels()))
	order = make([]int, len(g.atoms))
	class = make([]int, len(g.atoms))
	for i, a := range g.atoms {
		order[rank[i]] = a
		class[rank[i]] = stable[i]
	}
	return order, class
}
