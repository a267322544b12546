// Package rings perceives the rings of a molecule graph: the bonds on cycles, the smallest ring
// through each bond and atom, a smallest set of smallest rings, ring systems and their kind, and
// Hückel aromaticity. Results are returned; the molecule is never changed.
package rings

import (
	"slices"
	"sort"
	"strconv"
	"strings"
	"sync"

	"ringsieve/screening/internal/scratch"
	"ringsieve/screening/mol"
)

// Ring is one ring of the smallest set of smallest rings, as atom indices in ring order and the
// bond indices joining them.
type Ring struct {
	Atoms []int
	Bonds []int
}

// Rings holds what perception derives from a molecule; it refers to the molecule by index and
// never changes it.
type Rings struct {
	// BondRingSize is, per bond, the size of the smallest ring containing it (0: acyclic).
	BondRingSize []int
	// AtomRingSize is, per atom, the size of the smallest ring containing it (0: acyclic).
	AtomRingSize []int
	// SSSR is a smallest set of smallest rings; its length is the cyclomatic number.
	SSSR []Ring
	// Aromatic atoms and bonds after Hückel perception.
	AromaticAtom []bool
	AromaticBond []bool

	ws *workspace // storage reused by PerceiveInto (nil after Perceive)
}

// Perceive computes rings and aromaticity of m. It never fails on an indexed molecule and
// never changes it.
func Perceive(m *mol.Molecule) *Rings {
	w := workspaces.Get().(*workspace)
	tmp := Rings{ws: w}
	PerceiveInto(&tmp, m)
	p := tmp.clone()
	if len(m.Atoms) <= pooledAtomsMax {
		workspaces.Put(w)
	}
	return p
}

// workspaces are the scratch of Perceive, reused across calls; pooledAtomsMax bounds the
// molecules whose scratch is kept (design choice: a rare huge one is left to the collector).
var workspaces = sync.Pool{New: func() any { return &workspace{} }}

const pooledAtomsMax = 256

// clone copies a perception into storage of its own: one array for the ring sizes and the
// rings' atoms and bonds, one for the rings, one for the aromaticity flags.
func (p *Rings) clone() *Rings {
	nb, na := len(p.BondRingSize), len(p.AtomRingSize)
	n := nb + na
	for _, r := range p.SSSR {
		n += len(r.Atoms) + len(r.Bonds)
	}
	ints := make([]int, n)
	q := &Rings{BondRingSize: ints[:nb:nb], AtomRingSize: ints[nb : nb+na : nb+na]}
	copy(q.BondRingSize, p.BondRingSize)
	copy(q.AtomRingSize, p.AtomRingSize)
	rest := ints[nb+na:]
	if len(p.SSSR) > 0 {
		q.SSSR = make([]Ring, len(p.SSSR))
		for i, r := range p.SSSR {
			a, b := len(r.Atoms), len(r.Bonds)
			q.SSSR[i] = Ring{Atoms: rest[:a:a], Bonds: rest[a : a+b : a+b]}
			copy(q.SSSR[i].Atoms, r.Atoms)
			copy(q.SSSR[i].Bonds, r.Bonds)
			rest = rest[a+b:]
		}
	}
	flags := make([]bool, na+nb)
	q.AromaticAtom, q.AromaticBond = flags[:na:na], flags[na:]
	copy(q.AromaticAtom, p.AromaticAtom)
	copy(q.AromaticBond, p.AromaticBond)
	return q
}

// PerceiveInto is Perceive into p, reusing the storage of p's earlier perceptions: in the steady
// state of a worker that perceives one molecule after another into the same Rings it allocates
// nothing (TestPerceiveIntoAllocatesNothing). Everything p held before is overwritten, slices
// taken from it included.
func PerceiveInto(p *Rings, m *mol.Molecule) { perceiveInto(p, m, true) }

// perceiveInto is PerceiveInto, reading ring systems' searches from their cache when cached is
// set (searching every time otherwise: the comparison in tests).
func perceiveInto(p *Rings, m *mol.Molecule, cached bool) {
	if p.ws == nil {
		p.ws = &workspace{}
	}
	w := p.ws
	nb, na := len(m.Bonds), len(m.Atoms)
	// the size lists and the path scratch (which perception alone uses) in one array
	w.ints = scratch.Zeroed(w.ints, nb+na+5*na)
	p.BondRingSize, p.AtomRingSize = w.ints[:nb:nb], w.ints[nb:nb+na:nb+na]
	pathScratch := w.ints[nb+na:]
	w.arena, w.spans, w.seenMasks = w.arena[:0], w.spans[:0], w.seenMasks[:0]
	inRing := w.ringBonds(m)
	small := len(m.Bonds) <= 64
	var seenHash map[[2]uint64]bool // larger molecules: bond-set hashes of the rings found
	cycleOf := w.simpleCycles(m, inRing)
	searched := w.searchSystems(m, inRing, cycleOf, pathScratch, cached)
	for bi := range m.Bonds {
		if !inRing[bi] {
			continue
		}
		if c := cycleOf[bi]; c != nil {
			// a ring system that is one plain cycle: its only ring, found without a search
			if c[0] == -1 {
				continue // already listed
			}
			c[0] = -1
			for _, b := range w.addCandidate(m, c[1:]) {
				p.BondRingSize[b] = len(c) - 1
			}
			continue
		}
		if f := searched[bi]; f.sys != nil {
			// the search's result for this bond, read from its ring system's cached searches
			p.BondRingSize[bi] = int(f.sys.size[f.local])
			if r := f.sys.ring[f.local]; r >= 0 {
				w.addRing(f.sys.globalRing(r, w.sysAtoms[f.atomsAt:], w.sysBonds[f.bondsAt:], &w.tr))
			}
			continue
		}
		path, pathBonds := shortestPathAvoiding(m, m.Bonds[bi].A, m.Bonds[bi].B, bi, pathScratch)
		if path == nil {
			continue
		}
		p.BondRingSize[bi] = len(path)
		if small {
			// skip a ring already found through another of its bonds before storing it
			var mask uint64
			for _, b := range pathBonds {
				mask |= 1 << uint(b)
			}
			if slices.Contains(w.seenMasks, mask) {
				continue
			}
			w.seenMasks = append(w.seenMasks, mask)
		} else {
			// the same ring is found through each of its bonds: keep it once (a large macrocycle
			// would otherwise give as many candidate copies as it has bonds)
			h := pathHash(m, path)
			if seenHash[h] {
				continue
			}
			if seenHash == nil {
				seenHash = map[[2]uint64]bool{}
			}
			seenHash[h] = true
		}
		w.addRing(path, pathBonds)
	}
	for bi, sz := range p.BondRingSize {
		if sz == 0 {
			continue
		}
		for _, a := range [2]int{m.Bonds[bi].A, m.Bonds[bi].B} {
			if p.AtomRingSize[a] == 0 || sz < p.AtomRingSize[a] {
				p.AtomRingSize[a] = sz
			}
		}
	}
	p.SSSR = w.selectSSSR(m, w.candidates())
	p.perceiveAromaticity(m)
}

// workspace is the storage one Rings reuses from one perception to the next.
type workspace struct {
	ints      []int      // bond and atom ring sizes, path scratch
	inRing    []bool     // per bond: on a cycle
	lowLink   []int      // ringBonds: discovery order and low link per atom
	frames    []dfsFrame // ringBonds: the depth-first stack
	cycleOf   [][]int    // simpleCycles: per bond its plain cycle
	cycles    []int      // simpleCycles: degrees, cycles found, the walk in progress
	seen      []bool     // simpleCycles: atoms walked
	visited   []bool     // markComponent
	stack     []int      // markComponent
	arena     []int      // candidate rings' atoms then bonds, one span each
	spans     []span     // candidate rings as spans of arena
	cands     []Ring     // candidate rings, slices of arena
	seenMasks []uint64   // bond masks of the candidates (molecules of at most 64 bonds)
	vecs      []uint64   // selectSSSR: candidates' bond vectors
	basis     [][]uint64 // selectSSSR: reduced rows
	pivots    []int      // selectSSSR
	picked    []Ring     // selectSSSR: the rings chosen (the SSSR)
	pickMasks []uint64   // selectSSSR: one-word bond masks seen
	flags     []bool     // aromatic atoms and bonds, and two scratch sets
	union     []int      // perceiveAromaticity: atoms of two fused rings
	// searchSystems: per bond the cached searches of its ring system, the systems' atoms and
	// bonds in ascending order (each system's run starting where its bonds' entries say), the
	// system each atom belongs to, a key buffer and translation scratch
	searched []systemBond
	sysAtoms []int
	sysBonds []int
	sysOf    []int
	sysLocal []int
	sysKey   []byte
	tr       [2][]int
}

// span is a candidate ring's place in the arena: n atoms from off, then its n bonds.
type span struct{ off, n int }

// addCandidate stores a closed path as a candidate ring, its atoms and bonds, and returns the
// bonds as stored (valid until the next candidate is added).
func (w *workspace) addCandidate(m *mol.Molecule, path []int) []int {
	n := len(path)
	w.spans = append(w.spans, span{len(w.arena), n})
	w.arena = append(w.arena, path...)
	for i := range path {
		w.arena = append(w.arena, m.BondBetween(path[i], path[(i+1)%n]))
	}
	return w.arena[len(w.arena)-n:]
}

// addRing is addCandidate for a path whose bonds are known (bonds[i] joins path[i] to the next
// atom, the last one closing the ring).
func (w *workspace) addRing(path, bonds []int) {
	w.spans = append(w.spans, span{len(w.arena), len(path)})
	w.arena = append(w.arena, path...)
	w.arena = append(w.arena, bonds...)
}

// candidates returns the candidate rings as slices of the arena (taken once the arena stops
// growing, so none refers to an array left behind).
func (w *workspace) candidates() []Ring {
	w.cands = w.cands[:0]
	for _, sp := range w.spans {
		at := w.arena[sp.off : sp.off+sp.n : sp.off+sp.n]
		bo := w.arena[sp.off+sp.n : sp.off+2*sp.n : sp.off+2*sp.n]
		w.cands = append(w.cands, Ring{Atoms: at, Bonds: bo})
	}
	return w.cands
}

// simpleCycles finds the ring systems that are one plain cycle (as many ring bonds as atoms, every
// atom on two of them) and returns, per ring bond of such a system, the cycle as a slice whose
// first element is a marker (0) followed by the atoms in ring order; other bonds get nil. Rings
// of such systems need no shortest-path search, which keeps a 1,000-membered macrocycle linear.
func (w *workspace) simpleCycles(m *mol.Molecule, inRing []bool) [][]int {
	w.cycleOf = scratch.Zeroed(w.cycleOf, len(m.Bonds))
	out := w.cycleOf
	n := len(m.Atoms)
	// deg, then every cycle found (each a marker and its atoms: at most 2n in all, so cycles
	// carved from it never move), then the bonds of the walk in progress
	w.cycles = scratch.Zeroed(w.cycles, n+2*n+n)
	buf := w.cycles
	deg, cycles, walk := buf[:n], buf[n:n:3*n], buf[3*n:3*n]
	for bi, r := range inRing {
		if r {
			deg[m.Bonds[bi].A]++
			deg[m.Bonds[bi].B]++
		}
	}
	var seen []bool
	for start := range m.Atoms {
		if deg[start] == 0 || (seen != nil && seen[start]) {
			continue
		}
		if seen == nil {
			w.seen = scratch.Zeroed(w.seen, n)
			seen = w.seen
		}
		// walk the ring-bond component from start; it is a plain cycle when every atom on it has
		// ring degree 2 and the walk returns to start
		from := len(cycles)
		cycles = append(cycles, 0, start)
		seen[start] = true
		plain := deg[start] == 2
		prevBond, x := -1, start
		bonds := walk[:0]
		for {
			next, nb := -1, -1
			for _, bi := range m.Neighbors(x) {
				if inRing[bi] && bi != prevBond {
					next, nb = m.Other(bi, x), bi
					break
				}
			}
			if next < 0 {
				plain = false
				break
			}
			bonds = append(bonds, nb)
			if next == start {
				break
			}
			if seen[next] || deg[next] != 2 {
				plain = false
				break
			}
			seen[next] = true
			cycles = append(cycles, next)
			prevBond, x = nb, next
		}
		if !plain {
			cycles = cycles[:from]
			// mark the rest of this component as seen so it is not walked again
			w.markComponent(m, inRing, start, seen)
			continue
		}
		cyc := cycles[from:len(cycles):len(cycles)]
		for _, bi := range bonds {
			out[bi] = cyc
		}
	}
	return out
}

// markComponent marks every atom reachable from s over ring bonds.
func (w *workspace) markComponent(m *mol.Molecule, inRing []bool, s int, seen []bool) {
	w.visited = scratch.Zeroed(w.visited, len(m.Atoms))
	visited := w.visited
	stack := append(w.stack[:0], s)
	defer func() { w.stack = stack[:0] }()
	visited[s], seen[s] = true, true
	for len(stack) > 0 {
		x := stack[len(stack)-1]
		stack = stack[:len(stack)-1]
		for _, bi := range m.Neighbors(x) {
			if o := m.Other(bi, x); inRing[bi] && !visited[o] {
				visited[o], seen[o] = true, true
				stack = append(stack, o)
			}
		}
	}
}

// ringBonds marks the bonds that lie on a cycle: every bond that is not a bridge of the graph
// (Tarjan's low-link, iterative depth-first search).
func (ws *workspace) ringBonds(m *mol.Molecule) []bool {
	n := len(m.Atoms)
	ws.inRing = scratch.Zeroed(ws.inRing, len(m.Bonds))
	inRing := ws.inRing
	for i := range inRing {
		inRing[i] = true
	}
	ws.lowLink = scratch.Zeroed(ws.lowLink, 2*n)
	disc, low := ws.lowLink[:n], ws.lowLink[n:]
	for i := range disc {
		disc[i] = -1
	}
	t := 0
	stack := ws.frames[:0] // the depth-first stack, reused for every component
	defer func() { ws.frames = stack[:0] }()
	for s := 0; s < n; s++ {
		if disc[s] >= 0 {
			continue
		}
		stack = append(stack[:0], dfsFrame{s, -1, 0})
		disc[s], low[s] = t, t
		t++
		for len(stack) > 0 {
			f := &stack[len(stack)-1]
			if f.next < len(m.Neighbors(f.v)) {
				bi := m.Neighbors(f.v)[f.next]
				f.next++
				if bi == f.parentBond {
					continue
				}
				w := m.Other(bi, f.v)
				if disc[w] < 0 {
					disc[w], low[w] = t, t
					t++
					stack = append(stack, dfsFrame{w, bi, 0})
				} else if disc[w] < low[f.v] {
					low[f.v] = disc[w]
				}
				continue
			}
			// finished v: propagate low to the parent and classify the tree bond
			v, pb := f.v, f.parentBond
			stack = stack[:len(stack)-1]
			if pb >= 0 {
				u := m.Other(pb, v)
				if low[v] < low[u] {
					low[u] = low[v]
				}
				if low[v] > disc[u] {
					inRing[pb] = false // a bridge
				}
			}
		}
	}
	return inRing
}

// dfsFrame is one atom on ringBonds' depth-first stack: the bond it was reached by and the next
// of its bonds to follow.
type dfsFrame struct{ v, parentBond, next int }

// shortestPathAvoiding returns the atoms on a shortest path from a to b that does not use bond
// skip (a first, b last), or nil, and the bonds of the ring the path closes with skip: bonds[i]
// joins path[i] to path[i+1], and the last one is skip. scratch must hold 5 × atoms ints; the
// lists returned live in it and are overwritten by the next call.
func shortestPathAvoiding(m *mol.Molecule, a, b, skip int, scratch []int) (path, bonds []int) {
	n := len(m.Atoms)
	prev, prevBond := scratch[:n], scratch[3*n:4*n]
	for i := range prev {
		prev[i] = -2
	}
	prev[a] = -1
	q := scratch[n:n]
	q = append(q, a)
	// breadth first; stop as b is reached: its first discovery fixes its predecessor, so the
	// rest of the level would change nothing
search:
	for k := 0; k < len(q); k++ {
		x := q[k]
		for _, bi := range m.Neighbors(x) {
			if bi == skip {
				continue
			}
			o := m.Other(bi, x)
			if prev[o] == -2 {
				prev[o], prevBond[o] = x, bi
				if o == b {
					break search
				}
				q = append(q, o)
			}
		}
	}
	if prev[b] == -2 {
		return nil, nil
	}
	path, bonds = scratch[2*n:2*n], scratch[4*n:4*n]
	for x := b; x != -1; x = prev[x] {
		path = append(path, x)
		if x != a {
			bonds = append(bonds, prevBond[x])
		}
	}
	// reverse to run a -> b; the ring closes with skip
	for i, j := 0, len(path)-1; i < j; i, j = i+1, j-1 {
		path[i], path[j] = path[j], path[i]
	}
	for i, j := 0, len(bonds)-1; i < j; i, j = i+1, j-1 {
		bonds[i], bonds[j] = bonds[j], bonds[i]
	}
	return path, append(bonds, skip)
}

// pathHash is an order-free hash of the bond set of a closed path: two sums of a 64-bit mix of
// each bond index (equal for the same ring found from any of its bonds; a collision of both
// sums between two different rings of one molecule is negligibly unlikely).
func pathHash(m *mol.Molecule, path []int) [2]uint64 {
	var h [2]uint64
	for i := range path {
		b := uint64(m.BondBetween(path[i], path[(i+1)%len(path)]))
		h[0] += mix64(b + 0x9e3779b97f4a7c15)
		h[1] += mix64(b*0xbf58476d1ce4e5b9 + 1)
	}
	return h
}

// mix64 is the finalizer of the splitmix64 generator (Steele, Lea & Flood, OOPSLA 2014).
func mix64(x uint64) uint64 {
	x ^= x >> 30
	x *= 0xbf58476d1ce4e5b9
	x ^= x >> 27
	x *= 0x94d049bb133111eb
	return x ^ x>>31
}

// hortonBudget bounds the extra ring search of selectSSSR (path steps).
const hortonBudget = 2_000_000

// selectSSSR picks linearly independent rings (over GF(2) on bond sets), smallest first, until the
// cyclomatic number is reached; if the per-bond candidates do not span the cycle space, candidates
// through every atom are added (a Horton-type set).
func (w *workspace) selectSSSR(m *mol.Molecule, cands []Ring) []Ring {
	need := m.Cyclomatic()
	if need <= 0 {
		return nil
	}
	pick := func(cands []Ring) []Ring {
		slices.SortStableFunc(cands, func(a, b Ring) int { return len(a.Bonds) - len(b.Bonds) })
		words := (len(m.Bonds) + 63) / 64
		basis := w.basis[:0] // reduced rows with pivot
		pivots := w.pivots[:0]
		out := w.picked[:0]
		defer func() { w.basis, w.pivots, w.picked = basis[:0], pivots[:0], out[:0] }()
		var seen map[string]bool
		seenMask := w.pickMasks[:0] // one-word bond masks when the molecule has at most 64 bonds
		defer func() { w.pickMasks = seenMask[:0] }()
		// the candidates' bond vectors, carved from one array
		w.vecs = scratch.Zeroed(w.vecs, words*len(cands))
		vecs := w.vecs
		for ci, c := range cands {
			v := vecs[ci*words : (ci+1)*words : (ci+1)*words]
			for _, bi := range c.Bonds {
				v[bi/64] |= 1 << (bi % 64)
			}
			if words == 1 {
				dup := false
				for _, s := range seenMask {
					if s == v[0] {
						dup = true
						break
					}
				}
				if dup {
					continue
				}
				seenMask = append(seenMask, v[0])
			} else {
				key := ringKey(c)
				if seen[key] {
					continue
				}
				if seen == nil {
					seen = map[string]bool{}
				}
				seen[key] = true
			}
			for k, row := range basis {
				pv := pivots[k]
				if v[pv/64]&(1<<(pv%64)) != 0 {
					for w := range v {
						v[w] ^= row[w]
					}
				}
			}
			pv := -1
			for w := range v {
				if v[w] != 0 {
					for bit := 0; bit < 64; bit++ {
						if v[w]&(1<<bit) != 0 {
							pv = w*64 + bit
							break
						}
					}
					break
				}
			}
			if pv < 0 {
				continue
			}
			// keep rows reduced at the new pivot
			for k, row := range basis {
				if row[pv/64]&(1<<(pv%64)) != 0 {
					for w := range row {
						basis[k][w] ^= v[w]
					}
				}
			}
			basis = append(basis, v)
			pivots = append(pivots, pv)
			out = append(out, c)
			if len(out) == need {
				break
			}
		}
		return out
	}
	out := pick(cands)
	if len(out) == need {
		return out
	}
	// Horton-type candidates: for each atom v and bond (x,y), P(v,x) + (x,y) + P(y,v). The work
	// is bounded (hortonBudget path steps) so that no input can make perception slow; a cycle
	// space that needs more is left with the rings found so far.
	// (rare: the candidates through each bond almost always span the cycle space, so this part
	// allocates as it goes). They join the candidates already stored: a stable sort by size puts
	// them after those of the same size, as before.
	work := 0
	for v := range m.Atoms {
		if work > hortonBudget || len(w.spans) > 20000 {
			break
		}
		prev := bfsTree(m, v)
		work += len(m.Atoms)
		for bi, b := range m.Bonds {
			if prev[b.A] == -2 || prev[b.B] == -2 || prev[b.A] == b.B || prev[b.B] == b.A {
				continue
			}
			px := treePath(prev, b.A)
			py := treePath(prev, b.B)
			work += len(px) + len(py)
			if work > hortonBudget {
				break
			}
			if len(px) > 1 && len(py) > 1 && px[1] == py[1] {
				continue // the two paths share their first step: not a simple cycle through v
			}
			set := map[int]bool{}
			ok := true
			for _, a := range px {
				set[a] = true
			}
			for _, a := range py[1:] {
				if set[a] {
					ok = false
					break
				}
			}
			if !ok || m.BondBetween(b.A, b.B) != bi {
				continue
			}
			path := append([]int(nil), px...)
			for i := len(py) - 1; i >= 1; i-- {
				path = append(path, py[i])
			}
			if len(path) < 3 {
				continue
			}
			w.addCandidate(m, path)
		}
	}
	return pick(w.candidates())
}

func bfsTree(m *mol.Molecule, s int) []int {
	prev := make([]int, len(m.Atoms))
	for i := range prev {
		prev[i] = -2
	}
	prev[s] = -1
	q := []int{s}
	for k := 0; k < len(q); k++ {
		x := q[k]
		for _, bi := range m.Neighbors(x) {
			o := m.Other(bi, x)
			if prev[o] == -2 {
				prev[o] = x
				q = append(q, o)
			}
		}
	}
	return prev
}

// treePath returns the path from the tree root to x, or nil if x is unreachable.
func treePath(prev []int, x int) []int {
	if prev[x] == -2 {
		return nil
	}
	var p []int
	for ; x != -1; x = prev[x] {
		p = append(p, x)
	}
	for i, j := 0, len(p)-1; i < j; i, j = i+1, j-1 {
		p[i], p[j] = p[j], p[i]
	}
	return p
}

func ringKey(r Ring) string {
	b := append([]int(nil), r.Bonds...)
	sort.Ints(b)
	var sb strings.Builder
	for _, x := range b {
		sb.WriteString(strconv.Itoa(x))
		sb.WriteByte(',')
	}
	return sb.String()
}

// piElectrons returns the number of π electrons an atom gives to a ring, or -1 when the atom
// cannot be part of an aromatic ring. The counting is the usual Hückel one: an atom in a ring
// double bond gives 1; a ring carbon with an exocyclic double bond to a more electronegative atom
// gives 0; a lone-pair donor (pyrrole-type N, furan O, thiophene S, carbanion) gives 2; a
// carbocation or boron with an empty p orbital gives 0.
func piElectrons(m *mol.Molecule, a int, ring []bool) int {
	at := &m.Atoms[a]
	deg := m.Degree(a) + at.HCount
	inRingDouble, exoDouble := false, -1
	for _, bi := range m.Neighbors(a) {
		b := &m.Bonds[bi]
		if b.Order == mol.BondTriple {
			return -1
		}
		if b.Order == mol.BondDouble {
			o := m.Other(bi, a)
			if ring[o] {
				inRingDouble = true
			} else {
				exoDouble = o
			}
		}
	}
	switch at.Z {
	case 6:
		if inRingDouble {
			return 1
		}
		if exoDouble >= 0 {
			if z := m.Atoms[exoDouble].Z; z == 7 || z == 8 || z == 16 {
				return 0
			}
			return -1
		}
		if at.Charge == -1 && deg <= 3 {
			return 2
		}
		if at.Charge == 1 && deg <= 3 {
			return 0
		}
		return -1
	case 7, 15:
		if inRingDouble {
			return 1
		}
		if at.Charge == 0 && deg == 3 {
			return 2
		}
		if at.Charge == -1 && deg == 2 {
			return 2
		}
		return -1
	case 8, 16, 34, 52:
		if inRingDouble {
			return 1
		}
		if at.Charge == 0 && deg == 2 {
			return 2
		}
		return -1
	case 5:
		if inRingDouble {
			return 1
		}
		if at.Charge == 0 && deg == 3 {
			return 0
		}
		return -1
	}
	return -1
}

// perceiveAromaticity marks atoms and bonds aromatic for each SSSR ring, and each pair of
// bond-sharing SSSR rings, whose π-electron count is 4n+2 with every atom contributing.
func (p *Rings) perceiveAromaticity(m *mol.Molecule) {
	na := len(m.Atoms)
	// the result flags and two scratch sets in one array
	p.ws.flags = scratch.Zeroed(p.ws.flags, 3*na+len(m.Bonds))
	flags := p.ws.flags
	p.AromaticAtom, p.AromaticBond = flags[:na:na], flags[na:na+len(m.Bonds):na+len(m.Bonds)]
	set, sp2 := flags[na+len(m.Bonds):2*na+len(m.Bonds)], flags[2*na+len(m.Bonds):]
	mark := func(atoms []int, bonds []int) {
		for _, a := range atoms {
			p.AromaticAtom[a] = true
		}
		for _, b := range bonds {
			p.AromaticBond[b] = true
		}
	}
	huckel := func(atoms []int) bool {
		for _, a := range atoms {
			set[a] = true
		}
		n := 0
		ok := true
		for _, a := range atoms {
			e := piElectrons(m, a, set)
			if e < 0 {
				ok = false
				break
			}
			n += e
		}
		for _, a := range atoms {
			set[a] = false
		}
		return ok && n%4 == 2
	}
	// an atom with no double bond and no lone pair to give cannot be in an aromatic ring: rings
	// holding one are skipped before counting
	for i := range m.Atoms {
		at := &m.Atoms[i]
		for _, bi := range m.Neighbors(i) {
			if m.Bonds[bi].Order == mol.BondDouble {
				sp2[i] = true
			}
		}
		switch {
		case sp2[i]:
		case at.Z == 7 || at.Z == 8 || at.Z == 15 || at.Z == 16 || at.Z == 34 || at.Z == 52 || at.Z == 5:
			sp2[i] = true
		case at.Z == 6 && at.Charge != 0:
			sp2[i] = true
		}
	}
	candidate := func(r Ring) bool {
		for _, a := range r.Atoms {
			if !sp2[a] {
				return false
			}
		}
		return true
	}
	for _, r := range p.SSSR {
		if len(r.Atoms) > 24 || !candidate(r) {
			continue
		}
		if huckel(r.Atoms) {
			mark(r.Atoms, r.Bonds)
		}
	}
	// fused pairs (e.g. azulene): the envelope of two rings that share one bond
	for i := 0; i < len(p.SSSR); i++ {
		if !candidate(p.SSSR[i]) {
			continue
		}
		for j := i + 1; j < len(p.SSSR); j++ {
			ri, rj := p.SSSR[i], p.SSSR[j]
			if !candidate(rj) {
				continue
			}
			shared := 0
			for _, b := range ri.Bonds {
				for _, c := range rj.Bonds {
					if b == c {
						shared++
					}
				}
			}
			if shared != 1 {
				continue
			}
			p.ws.union = unionInts(p.ws.union[:0], ri.Atoms, rj.Atoms)
			atoms := p.ws.union
			if huckel(atoms) {
				mark(atoms, ri.Bonds)
				mark(nil, rj.Bonds)
			}
		}
	}
}

// unionInts appends to out the elements of a, then those of b not in a (a and b hold no repeats:
// ring atoms).
func unionInts(out, a, b []int) []int {
	out = append(out, a...)
	for _, x := range b {
		if !slices.Contains(a, x) {
			out = append(out, x)
		}
	}
	return out
}
