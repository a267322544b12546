package depict

import (
	"fmt"
	"math"
	"strings"

	"ringsieve/screening/mol"
	"ringsieve/screening/rings"
)

// assignWedges gives every tetrahedral centre written in the SMILES one wedge (towards the
// viewer) or hash (away) bond, narrow at the centre, such that a reader of the drawing gets
// the written handedness back. Preferred bonds: to an acyclic neighbour that is no stereocentre
// itself, single, not yet marked; a ring bond only when nothing else is left.
//
// The handedness rule: with the neighbours n0…n3 in the SMILES order (a bracket hydrogen where
// it was written), the volume (n1−n0)·((n2−n0)×(n3−n0)) is negative for '@' and positive for
// '@@' (the same rule the force field embeds with). The drawing's volume uses z = ±1 for the
// marked neighbour, z = 0 for the others and, for a bracket hydrogen, the free side of the
// centre on the opposite face; a bond is marked only where placing that hydrogen behind the
// centre instead reads the same (drawings that readers could take either way are avoided).
func assignWedges(l *Layout, r *rings.Rings) {
	m := l.Mol
	for a := range m.Atoms {
		order := m.Atoms[a].ChiralNbrs()
		if order == nil {
			continue
		}
		want := -1.0
		if m.Atoms[a].Chiral == 2 {
			want = 1
		}
		type cand struct {
			nb, bond, rank int
		}
		var cands []cand
		for _, x := range m.NeighborAtoms(a) {
			bi := m.BondBetween(a, x)
			if l.Wedge[bi] != 0 || m.Bonds[bi].Order != 1 {
				continue
			}
			rank := 0
			if r.BondRingSize[bi] > 0 {
				rank += 4
			}
			if m.Atoms[x].ChiralNbrs() != nil {
				rank += 2
			}
			if m.Degree(x) > 1 {
				rank++
			}
			cands = append(cands, cand{x, bi, rank})
		}
		for i := 1; i < len(cands); i++ { // stable insertion sort by rank
			for j := i; j > 0 && cands[j].rank < cands[j-1].rank; j-- {
				cands[j], cands[j-1] = cands[j-1], cands[j]
			}
		}
		// a marked bond is taken only where the drawing reads the same whichever way a reader
		// places the hydrogen (free side or behind the centre); else the next candidate
		pick := -1
		for k, c := range cands {
			v1, v2 := volume(l, a, order, c.nb, false), volume(l, a, order, c.nb, true)
			if math.Abs(v1) < 1e-3 {
				continue
			}
			if pick < 0 {
				pick = k
			}
			if (v1 < 0) == (v2 < 0) && math.Abs(v2) > 1e-3 {
				pick = k
				break
			}
		}
		if pick >= 0 {
			c := cands[pick]
			v := volume(l, a, order, c.nb, false)
			l.WedgeFrom[c.bond] = a
			if (v < 0) == (want < 0) {
				l.Wedge[c.bond] = 1
			} else {
				l.Wedge[c.bond] = -1
			}
		}
	}
}

// volume is the handedness volume of centre a in the drawing with neighbour up raised (z = 1).
func volume(l *Layout, a int, order []int, up int, hBehind bool) float64 {
	m := l.Mol
	c := l.P[a]
	pos := func(x int) [3]float64 {
		if x < 0 { // the bracket hydrogen
			if hBehind { // behind the centre
				return [3]float64{c.X, c.Y, -1}
			}
			// on the free side of the centre, below
			s := Point{}
			for _, y := range m.NeighborAtoms(a) {
				s = s.add(l.P[y].sub(c).norm())
			}
			h := c
			if s.len() > 0.2 {
				h = c.sub(s.norm().scale(0.6))
			}
			return [3]float64{h.X, h.Y, -1}
		}
		z := 0.0
		if x == up {
			z = 1
		}
		return [3]float64{l.P[x].X, l.P[x].Y, z}
	}
	p0, p1, p2, p3 := pos(order[0]), pos(order[1]), pos(order[2]), pos(order[3])
	d := func(p [3]float64) [3]float64 { return [3]float64{p[0] - p0[0], p[1] - p0[1], p[2] - p0[2]} }
	u, v, w := d(p1), d(p2), d(p3)
	cx := [3]float64{v[1]*w[2] - v[2]*w[1], v[2]*w[0] - v[0]*w[2], v[0]*w[1] - v[1]*w[0]}
	return u[0]*cx[0] + u[1]*cx[1] + u[2]*cx[2]
}

// StereoSignature summarizes what a reader of the drawing takes its stereo from, as discrete
// facts: each wedge or hash bond (narrow end, wide end, kind) with the handedness its centre
// then shows, and for each double bond with substituents on both ends whether the first
// neighbours (lowest atom index) stand cis or trans. Two drawings with the same signature read
// the same; reference files keyed by it stay valid while it does not change.
func StereoSignature(l *Layout) string {
	m := l.Mol
	var parts []string
	for bi, w := range l.Wedge {
		if w == 0 {
			continue
		}
		from := l.WedgeFrom[bi]
		to := m.Other(bi, from)
		kind := "w"
		if w < 0 {
			kind = "h"
		}
		parts = append(parts, fmt.Sprintf("%s%d>%d", kind, from, to))
	}
	for _, b := range m.Bonds {
		if b.Order != 2 {
			continue
		}
		x, y := firstOther(m, b.A, b.B), firstOther(m, b.B, b.A)
		if x < 0 || y < 0 {
			continue
		}
		cx, cy := cross2(l.P[b.A], l.P[b.B], l.P[x]), cross2(l.P[b.A], l.P[b.B], l.P[y])
		rel := "c"
		if cx*cy < 0 {
			rel = "t"
		}
		parts = append(parts, fmt.Sprintf("%s%d=%d", rel, b.A, b.B))
	}
	return strings.Join(parts, " ")
}

func firstOther(m *mol.Molecule, a, other int) int {
	best := -1
	for _, x := range m.NeighborAtoms(a) {
		if x != other && (best < 0 || x < best) {
			best = x
		}
	}
	return best
}
