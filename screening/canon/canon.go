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

	"ringsieve/screening/internal/scratch"
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
	var best, cand []byte
	var bestRank []int
	var w keyWriter
	budget := canonBranchBudget
	var search func(col []int)
	search = func(col []int) {
		if budget <= 0 {
			return
		}
		col = g.refine(col)
		if countDistinct(col) == n {
			budget--
			cand = w.write(g, col, cand)
			if best == nil || bytes.Compare(cand, best) < 0 {
				best, cand = cand, best
				bestRank = col
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
	return string(best), bestRank
}

// keyWriter renders the subgraph as SMILES-like text from a complete ranking: depth-first from
// the lowest-ranked atom of each connected piece, neighbours in rank order, ring closures
// numbered in order of opening (the smallest free digit first). Its storage is kept across the
// leaves of one canonical search: the neighbour lists in rank order, the depth-first tree and
// the ring closures, all indexed by local atom or closure number (no maps), so that writing a
// key allocates nothing once warm.
type keyWriter struct {
	g        *subgraph
	rank     []int
	order    []int  // atoms by rank
	sorted   []int  // every atom's neighbours in rank order, carved like g.nbr
	nbrOff   []int  // atom i's sorted neighbours are sorted[nbrOff[i]:nbrOff[i+1]]
	visited  []bool // per atom
	parent   []int  // per atom: its parent in the depth-first tree, -1 for a root
	seenEdge []bool // n × n: the edge was followed (either way)
	closures []closure
	ringsOff []int // closure numbers at atom i: ringsAt[ringsOff[i]:ringsOff[i+1]]
	ringsAt  []int
	fill     []int
	digitOf  []int // per closure: its open digit, 0 while not open
	free     []int // digits freed by closed rings, ascending
	roots    []int
	out      []byte
}

// closure is a ring-closure bond of the depth-first tree, from the atom visited later (a) back to
// one visited earlier (b).
type closure struct{ a, b int }

// write renders g under rank into dst (whose contents are replaced) and returns it.
func (w *keyWriter) write(g *subgraph, rank []int, dst []byte) []byte {
	n := len(g.atoms)
	w.g, w.rank = g, rank
	w.order = scratch.Zeroed(w.order, n)
	for i := range w.order {
		w.order[i] = i
	}
	// the ranking is complete (every rank distinct), so the order is unique
	slices.SortFunc(w.order, func(a, b int) int { return cmp.Compare(rank[a], rank[b]) })
	w.nbrOff = scratch.Zeroed(w.nbrOff, n+1)
	w.sorted = w.sorted[:0]
	for i := 0; i < n; i++ {
		w.nbrOff[i] = len(w.sorted)
		w.sorted = append(w.sorted, g.nbr[i]...)
		nb := w.sorted[w.nbrOff[i]:]
		for x := 1; x < len(nb); x++ { // insertion sort: a handful of neighbours
			for y := x; y > 0 && rank[nb[y]] < rank[nb[y-1]]; y-- {
				nb[y], nb[y-1] = nb[y-1], nb[y]
			}
		}
	}
	w.nbrOff[n] = len(w.sorted)
	w.visited = scratch.Zeroed(w.visited, n)
	w.parent = scratch.Zeroed(w.parent, n)
	for i := range w.parent {
		w.parent[i] = -1
	}
	w.seenEdge = scratch.Zeroed(w.seenEdge, n*n)
	w.closures = w.closures[:0]
	w.roots = w.roots[:0]
	// first pass: the depth-first tree and its ring-closure bonds
	for _, s := range w.order {
		if !w.visited[s] {
			w.roots = append(w.roots, s)
			w.tree(s)
		}
	}
	// the closures at each atom in order of their numbers: counted, then filled
	w.ringsOff = scratch.Zeroed(w.ringsOff, n+1)
	for _, c := range w.closures {
		w.ringsOff[c.a+1]++
		w.ringsOff[c.b+1]++
	}
	for i := 1; i <= n; i++ {
		w.ringsOff[i] += w.ringsOff[i-1]
	}
	w.ringsAt = scratch.Zeroed(w.ringsAt, 2*len(w.closures))
	w.fill = append(w.fill[:0], w.ringsOff[:n]...)
	for ci, c := range w.closures {
		// each atom lists its closures in ascending number
		w.ringsAt[w.fill[c.b]] = ci
		w.fill[c.b]++
		w.ringsAt[w.fill[c.a]] = ci
		w.fill[c.a]++
	}
	// second pass: the text
	clear(w.visited)
	w.digitOf = scratch.Zeroed(w.digitOf, len(w.closures))
	w.free = w.free[:0]
	next := 1
	w.out = dst[:0]
	for i, r := range w.roots {
		if i > 0 {
			w.out = append(w.out, '.')
		}
		next = w.text(r, next)
	}
	return w.out
}

// tree is the first pass's depth-first search from a.
func (w *keyWriter) tree(a int) {
	n := len(w.g.atoms)
	w.visited[a] = true
	for _, j := range w.sorted[w.nbrOff[a]:w.nbrOff[a+1]] {
		e := min(a, j)*n + max(a, j)
		if w.seenEdge[e] {
			continue
		}
		w.seenEdge[e] = true
		if w.visited[j] {
			w.closures = append(w.closures, closure{a, j})
			continue
		}
		w.parent[j] = a
		w.tree(j)
	}
}

// text is the second pass from a: its label, its ring-closure digits, then its children in rank
// order, all but the last in parentheses. next is the next unused digit; text returns it.
func (w *keyWriter) text(a, next int) int {
	g := w.g
	w.visited[a] = true
	w.out = append(w.out, g.label[a]...)
	for _, ci := range w.ringsAt[w.ringsOff[a]:w.ringsOff[a+1]] {
		if d := w.digitOf[ci]; d != 0 {
			c := w.closures[ci]
			w.out = appendBondSymbol(w.out, g.orderBetween(c.a, c.b))
			w.out = appendRingDigit(w.out, d)
			// free the digit, keeping the free list ascending
			k := len(w.free)
			w.free = append(w.free, d)
			for k > 0 && w.free[k-1] > d {
				w.free[k] = w.free[k-1]
				k--
			}
			w.free[k] = d
			w.digitOf[ci] = 0
			continue
		}
		d := 0
		if len(w.free) > 0 {
			d = w.free[0]
			w.free = append(w.free[:0], w.free[1:]...)
		} else {
			d = next
			next++
		}
		w.digitOf[ci] = d
		w.out = appendRingDigit(w.out, d)
	}
	// the children: neighbours whose tree parent is a (none of them visited yet)
	kids := 0
	for _, j := range w.sorted[w.nbrOff[a]:w.nbrOff[a+1]] {
		if w.parent[j] == a && !w.visited[j] {
			kids++
		}
	}
	k := 0
	for _, j := range w.sorted[w.nbrOff[a]:w.nbrOff[a+1]] {
		if w.parent[j] != a || w.visited[j] {
			continue
		}
		if k < kids-1 {
			w.out = append(w.out, '(')
		}
		w.out = appendBondSymbol(w.out, g.orderBetween(a, j))
		next = w.text(j, next)
		if k < kids-1 {
			w.out = append(w.out, ')')
		}
		k++
	}
	return next
}

// appendBondSymbol writes a bond of order o: nothing for a single bond, = # and : (aromatic).
func appendBondSymbol(b []byte, o int) []byte {
	switch o {
	case 2:
		return append(b, '=')
	case 3:
		return append(b, '#')
	case 4:
		return append(b, ':')
	}
	return b
}

// appendRingDigit writes ring-closure digit d: one digit below 10, else % and the number.
func appendRingDigit(b []byte, d int) []byte {
	if d < 10 {
		return append(b, byte('0'+d))
	}
	return strconv.AppendInt(append(b, '%'), int64(d), 10)
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
