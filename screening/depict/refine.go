package depict

import (
	"math"

	"ringsieve/screening/mol"
	"ringsieve/screening/rings"
)

// Layout quality, the stress refinement and the finishing steps (orientation, E/Z).

// MinContact is the closest two atoms that share no bond may come, in bond lengths (the
// readable-layout rule the tests check).
const MinContact = 0.45

// quality scores a layout: bond crossings, close contacts and the spread of bond lengths.
type quality struct {
	crossings, contacts int
	inSystem            int // crossings between bonds of one ring system (the worst kind)
	cv                  float64
}

func (q quality) bad() int { return 100*q.inSystem + 4*q.crossings + q.contacts }

func (q quality) less(o quality) bool {
	if q.bad() != o.bad() {
		return q.bad() < o.bad()
	}
	return q.cv < o.cv-1e-9
}

// score measures a component's layout.
func score(m *mol.Molecule, r *rings.Rings, p []Point, atoms []int) quality {
	var q quality
	bondSys := bondSystems(m, r)
	for _, x := range Crossings(m, p, atoms) {
		if bondSys[x[0]] >= 0 && bondSys[x[0]] == bondSys[x[1]] {
			q.inSystem++
		} else {
			q.crossings++
		}
	}
	q.contacts = len(Contacts(m, p, atoms))
	q.cv = BondLengthCV(m, p, atoms)
	return q
}

// bondSystems returns the ring-system index of every bond (-1 for acyclic bonds): bonds of
// SSSR rings that share an atom belong to one system.
func bondSystems(m *mol.Molecule, r *rings.Rings) []int {
	sysOf, _ := rings.Systems(r.SSSR)
	out := make([]int, len(m.Bonds))
	for i := range out {
		out[i] = -1
	}
	for ri, rg := range r.SSSR {
		for _, bi := range rg.Bonds {
			out[bi] = sysOf[ri]
		}
	}
	return out
}

// BondLengthCV is the coefficient of variation of the bond lengths among atoms (all when nil).
func BondLengthCV(m *mol.Molecule, p []Point, atoms []int) float64 {
	in := member(len(m.Atoms), atoms)
	var s, s2 float64
	n := 0
	for _, b := range m.Bonds {
		if !in[b.A] {
			continue
		}
		d := dist(p[b.A], p[b.B])
		s += d
		s2 += d * d
		n++
	}
	if n == 0 {
		return 0
	}
	mean := s / float64(n)
	v := s2/float64(n) - mean*mean
	return math.Sqrt(math.Max(0, v)) / mean
}

// Contacts lists pairs of atoms that share no bond and stand closer than MinContact.
func Contacts(m *mol.Molecule, p []Point, atoms []int) [][2]int {
	if atoms == nil {
		atoms = seq(len(m.Atoms))
	}
	var out [][2]int
	for i, a := range atoms {
		for _, b := range atoms[i+1:] {
			if dist(p[a], p[b]) < MinContact && m.BondBetween(a, b) < 0 {
				out = append(out, [2]int{a, b})
			}
		}
	}
	return out
}

// Crossings lists pairs of bonds (indices) that cross, among bonds of atoms (all when nil).
func Crossings(m *mol.Molecule, p []Point, atoms []int) [][2]int {
	in := member(len(m.Atoms), atoms)
	var bs []int
	for bi, b := range m.Bonds {
		if in[b.A] {
			bs = append(bs, bi)
		}
	}
	var out [][2]int
	for i, x := range bs {
		a := m.Bonds[x]
		for _, y := range bs[i+1:] {
			b := m.Bonds[y]
			if a.A == b.A || a.A == b.B || a.B == b.A || a.B == b.B {
				continue
			}
			if segmentsCross(p[a.A], p[a.B], p[b.A], p[b.B]) {
				out = append(out, [2]int{x, y})
			}
		}
	}
	return out
}

func segmentsCross(a, b, c, d Point) bool {
	d1, d2 := cross2(a, b, c), cross2(a, b, d)
	d3, d4 := cross2(c, d, a), cross2(c, d, b)
	return ((d1 > 1e-9 && d2 < -1e-9) || (d1 < -1e-9 && d2 > 1e-9)) && ((d3 > 1e-9 && d4 < -1e-9) || (d3 < -1e-9 && d4 > 1e-9))
}

func member(n int, atoms []int) []bool {
	in := make([]bool, n)
	if atoms == nil {
		for i := range in {
			in[i] = true
		}
		return in
	}
	for _, a := range atoms {
		in[a] = true
	}
	return in
}

func seq(n int) []int {
	s := make([]int, n)
	for i := range s {
		s[i] = i
	}
	return s
}

// targets holds the ideal distances of the stress refinement: for two atoms of one ring the
// chord of the regular polygon, otherwise the span of a zig-zag chain of the same number of
// bonds (√(3/4·g² + ¼) for an odd count g, √3/2·g for an even one).
type targets struct {
	atoms []int
	d     [][]float64 // by local index
}

func newTargets(m *mol.Molecule, r *rings.Rings, ringsOf [][]int, atoms []int) *targets {
	n := len(atoms)
	local := make(map[int]int, n)
	for i, a := range atoms {
		local[a] = i
	}
	t := &targets{atoms: atoms, d: make([][]float64, n)}
	for i, a := range atoms {
		// breadth-first graph distances
		g := make([]int, n)
		for k := range g {
			g[k] = -1
		}
		g[i] = 0
		q := []int{a}
		for len(q) > 0 {
			x := q[0]
			q = q[1:]
			for _, y := range m.NeighborAtoms(x) {
				if j := local[y]; g[j] < 0 {
					g[j] = g[local[x]] + 1
					q = append(q, y)
				}
			}
		}
		row := make([]float64, n)
		for j := range row {
			gj := float64(g[j])
			if g[j]%2 == 1 {
				row[j] = math.Sqrt(0.75*gj*gj + 0.25)
			} else {
				row[j] = math.Sqrt(0.75) * gj
			}
		}
		t.d[i] = row
	}
	// polygon chords within rings (the smallest ring wins)
	for _, rg := range r.SSSR {
		k := len(rg.Atoms)
		if _, ok := local[rg.Atoms[0]]; !ok {
			continue
		}
		rad := 1 / (2 * math.Sin(math.Pi/float64(k)))
		for x := 0; x < k; x++ {
			for y := x + 1; y < k; y++ {
				steps := min(y-x, k-(y-x))
				chord := 2 * rad * math.Sin(math.Pi*float64(steps)/float64(k))
				i, j := local[rg.Atoms[x]], local[rg.Atoms[y]]
				t.d[i][j], t.d[j][i] = chord, chord
			}
		}
	}
	return t
}

// stress moves the atoms towards the target distances (localized stress majorization with
// weights d⁻²), iters sweeps.
func (t *targets) stress(p []Point, iters int) {
	for it := 0; it < iters; it++ {
		for i, a := range t.atoms {
			var sx, sy, sw float64
			pa := p[a]
			for j, b := range t.atoms {
				if i == j {
					continue
				}
				d := t.d[i][j]
				if d <= 0 {
					continue
				}
				w := 1 / (d * d)
				pb := p[b]
				dx, dy := pa.X-pb.X, pa.Y-pb.Y
				l := math.Hypot(dx, dy)
				if l < 1e-9 {
					dx, dy, l = 1e-3*float64(i-j), 1e-3, 1e-3
				}
				sx += w * (pb.X + d*dx/l)
				sy += w * (pb.Y + d*dy/l)
				sw += w
			}
			if sw > 0 {
				p[a] = Point{sx / sw, sy / sw}
			}
		}
	}
}

// orient turns a component so that its long axis is horizontal (principal axes of the atom
// positions), which suits a table cell.
func orient(p []Point, atoms []int) {
	if len(atoms) < 2 {
		return
	}
	c := Point{}
	for _, a := range atoms {
		c = c.add(p[a])
	}
	c = c.scale(1 / float64(len(atoms)))
	var sxx, syy, sxy float64
	for _, a := range atoms {
		d := p[a].sub(c)
		sxx += d.X * d.X
		syy += d.Y * d.Y
		sxy += d.X * d.Y
	}
	th := 0.5 * math.Atan2(2*sxy, sxx-syy)
	for _, a := range atoms {
		p[a] = p[a].sub(c).rot(-th)
	}
}

// fixDoubleBonds draws every acyclic double bond with '/' '\' marks in its written geometry by
// reflecting one side across the bond axis when it comes out the other way. Ring double bonds
// keep the geometry of the ring polygon (cis in rings under eight atoms, as written or not).
func fixDoubleBonds(m *mol.Molecule, r *rings.Rings, p []Point, atoms []int) {
	in := member(len(m.Atoms), atoms)
	for bi, b := range m.Bonds {
		if b.Order != mol.BondDouble || !in[b.A] || r.BondRingSize[bi] > 0 {
			continue
		}
		x, sx := marked(m, b.A, b.B)
		y, sy := marked(m, b.B, b.A)
		if x < 0 || y < 0 {
			continue
		}
		trans := sx != sy
		cx := cross2(p[b.A], p[b.B], p[x])
		cy := cross2(p[b.A], p[b.B], p[y])
		if (cx*cy < 0) == trans {
			continue
		}
		// reflect the side of B (everything reached from B without crossing the double bond)
		side := reach(m, b.B, bi)
		if side == nil {
			continue // the two sides are joined (a ring): nothing to flip
		}
		for _, a := range side {
			p[a] = mirror(p[a], p[b.A], p[b.B])
		}
	}
}

// marked returns the neighbour of a (not other) whose bond carries a '/' or '\' mark and its
// side sign, or -1.
func marked(m *mol.Molecule, a, other int) (int, int) {
	for _, x := range m.NeighborAtoms(a) {
		if x == other {
			continue
		}
		bd := m.Bonds[m.BondBetween(a, x)]
		if bd.Dir == 0 {
			continue
		}
		s := 1
		if bd.Dir == '\\' {
			s = -1
		}
		if bd.DirFrom != a {
			s = -s
		}
		return x, s
	}
	return -1, 0
}

// reach returns the atoms reached from a without using bond skip, or nil when that reaches the
// bond's other atom.
func reach(m *mol.Molecule, a, skip int) []int {
	other := m.Other(skip, a)
	seen := map[int]bool{a: true}
	q := []int{a}
	out := []int{a}
	for len(q) > 0 {
		x := q[0]
		q = q[1:]
		for _, y := range m.NeighborAtoms(x) {
			if m.BondBetween(x, y) == skip || seen[y] {
				continue
			}
			if y == other {
				return nil
			}
			seen[y] = true
			q = append(q, y)
			out = append(out, y)
		}
	}
	return out
}
