package describe

import "ringsieve/screening/mol"

// Stereochemistry read from the SMILES marks: ring olefin geometry from '/' '\\', and the faces
// of tetrahedral centres for exo/endo placement and trans ring fusion.

// dirSign returns +1 or -1 for the side of neighbour x at double-bond atom a from the '/' '\'
// marks, or 0 when the bond a–x carries none.
func dirSign(m *mol.Molecule, a, x int) int {
	bi := m.BondBetween(a, x)
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
		for _, x := range m.HeavyNbrs(end) {
			if x == other {
				continue
			}
			if d := dirSign(m, end, x); d != 0 {
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
func orient(m *mol.Molecule, a int, want []int) int {
	at := &m.Atoms[a]
	have := at.ChiralNbrs()
	if have == nil {
		return 0
	}
	// complete want with the missing neighbour (in an array of its own: the caller's list stays
	// as it was, and nothing is allocated)
	if len(want) > 4 {
		return 0
	}
	var w [4]int
	n := copy(w[:], want)
	if n == 3 {
		for _, x := range have {
			if x != w[0] && x != w[1] && x != w[2] {
				w[3], n = x, 4
				break
			}
		}
	}
	if n != 4 {
		return 0
	}
	want = w[:]
	var perm [4]int
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
func cisOnRing(m *mol.Molecule, prev, a, b, next, p, q int) int {
	oa := orient(m, a, []int{prev, b, p})
	ob := orient(m, b, []int{a, next, q})
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
		for _, bh := range m.HeavyNbrs(end) { // bridgehead candidates
			if bh == other || !inCore[bh] {
				continue
			}
			var nbrArr [4]int // a bridgehead's core neighbours: two are wanted, more are skipped
			bridgeNbrs := nbrArr[:0]
			for _, x := range m.HeavyNbrs(bh) {
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
				for _, x := range m.HeavyNbrs(sAtom) {
					if x != bh && inCore[x] {
						next = x
					}
				}
				if next < 0 || s.Mol.BondBetween(next, other) >= 0 || next == other {
					continue // one-atom bridge (syn/anti, not exo/endo) or the olefin itself
				}
				// top must be on the shorter bridge: it must not lead back to the olefin
				for _, sub := range m.HeavyNbrs(sAtom) {
					if inSystem[sub] {
						continue
					}
					c := cisOnRing(m, end, bh, sAtom, next, top, sub)
					// the other-ring relation is only meaningful when top belongs to the one- or
					// two-atom bridge opposite the olefin
					if c == 1 {
						found["exo"] = true
					} else if c == -1 {
						found["endo"] = true
					}
				}
				// fused spectator rings count as substituents too (imides, anhydrides)
				for _, sub := range m.HeavyNbrs(sAtom) {
					if !inSystem[sub] || inCore[sub] {
						continue
					}
					c := cisOnRing(m, end, bh, sAtom, next, top, sub)
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
		for _, x := range m.HeavyNbrs(a) {
			if inSystem[x] && !inSmall[x] {
				pa = x
			}
		}
		for _, x := range m.HeavyNbrs(b) {
			if inSystem[x] && !inSmall[x] {
				qb = x
			}
		}
		if pa < 0 || qb < 0 || m.Atoms[a].Chiral == 0 || m.Atoms[b].Chiral == 0 || !s.sameOtherRing(pa, qb, a, b) {
			continue
		}
		if cisOnRing(m, prev, a, b, next, pa, qb) == -1 {
			return true
		}
	}
	return false
}

// sameOtherRing reports that x and y (out-of-ring neighbours of the fused pair a–b) lie in one
// SSSR ring with a and b: the pair is a fusion bond.
func (s *Structure) sameOtherRing(x, y, a, b int) bool {
	for _, r := range s.Rings.SSSR {
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
