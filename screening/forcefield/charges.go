package forcefield

// MMFF partial charges (Halgren 1996, II): from formal charges q0, shared over the atoms that
// carry a delocalized charge, and bond-charge increments ω,
//
//	q_i = (1 − M_i u_i) q0_i + Σ_k u_k q0_k + Σ_k ω_ki
//
// summed over the neighbours k of atom i, with M_i the coordination of i's type and u_i its
// formal-charge adjustment factor (mmffpbci.par): an atom with a formal charge passes the
// fraction u of it to each of its M neighbours, so the charges sum to the formal charge. ω_ki comes from the bond-charge-increment
// table by bond type and atom types (mmffchg.par); a pair missing there takes the empirical rule
// ω_ki = pbci_i − pbci_k.

// formalCharges returns MMFF's formal charges: an atom's own charge, except on groups that share
// one (terminal oxygens and sulfurs around a central atom — carboxylate, nitro, sulfonate,
// phosphate, perchlorate —, the nitrogens of amidinium, guanidinium and imidazolium ions, and
// the nitrogens of azole anions), where the group's charge is divided among them.
func (b *builder) formalCharges() []float64 {
	m, types := b.m, b.s.Types
	q0 := make([]float64, len(m.Atoms))
	for a := range m.Atoms {
		q0[a] = float64(m.Atoms[a].Charge)
	}
	shared := make([]bool, len(m.Atoms))
	for a := range m.Atoms {
		switch types[a] {
		case 60, 61, 47, 53:
			q0[a] = 0 // the +/− pairs of isonitriles and azides cancel
		case 25:
			q0[a] = 0 // tetracoordinate phosphorus carries no formal charge in MMFF
		}
	}
	for a := range m.Atoms {
		switch types[a] {
		case 32, 72:
			// terminal O/S around one central atom: the group's charge over all of them
			nb := m.HeavyNbrs(a)
			if len(nb) != 1 {
				continue
			}
			c := nb[0]
			total := float64(m.Atoms[c].Charge)
			var terms []int
			for _, o := range m.HeavyNbrs(c) {
				if (m.Atoms[o].Z == 8 || m.Atoms[o].Z == 16) && m.Degree(o) == 1 {
					terms = append(terms, o)
					total += float64(m.Atoms[o].Charge)
				}
			}
			for _, o := range terms {
				if types[o] == 32 || types[o] == 72 {
					q0[o] = total / float64(len(terms))
				} else {
					q0[o] = 0
				}
				shared[o] = true
			}
			q0[c] = 0
			shared[c] = true
		}
	}
	// positive nitrogens of amidinium (55), guanidinium (56) and imidazolium (81) ions and the
	// nitrogens of azole anions (76): the charge of the conjugated group over its nitrogens
	for a := range m.Atoms {
		t := types[a]
		if shared[a] || (t != 55 && t != 56 && t != 81 && t != 76) {
			continue
		}
		group := b.chargeGroup(a, t)
		total := 0.0
		for _, x := range group {
			total += float64(m.Atoms[x].Charge)
		}
		for _, x := range group {
			if types[x] == t {
				q0[x] = total / float64(b.countType(group, t))
			} else {
				q0[x] = 0
			}
			shared[x] = true
		}
	}
	return q0
}

// chargeGroup collects the atoms over which a delocalized charge is shared: for amidinium and
// guanidinium nitrogens the central carbon and its nitrogens; for imidazolium and azole-anion
// nitrogens the atoms of their five-membered aromatic ring.
func (b *builder) chargeGroup(a, t int) []int {
	m := b.m
	switch t {
	case 55, 56:
		for _, c := range m.HeavyNbrs(a) {
			if b.s.Types[c] == 57 {
				group := []int{c}
				for _, o := range m.HeavyNbrs(c) {
					if m.Atoms[o].Z == 7 {
						group = append(group, o)
					}
				}
				return group
			}
		}
	case 81, 76:
		for _, r := range b.rs.atomIn[a] {
			ring := b.rs.rings[r]
			if len(ring) == 5 && b.s.Aromatic[ring[0]] {
				return ring
			}
		}
	}
	return []int{a}
}

func (b *builder) countType(atoms []int, t int) int {
	n := 0
	for _, x := range atoms {
		if b.s.Types[x] == t {
			n++
		}
	}
	return n
}

// charges computes the MMFF partial charges.
func (b *builder) charges() error {
	m, types := b.m, b.s.Types
	q0 := b.formalCharges()
	q := make([]float64, len(m.Atoms))
	for i := range m.Atoms {
		ti := types[i]
		u := b.p.fcadj[ti]
		crd := float64(b.p.prop[ti].crd)
		qi := (1 - crd*u) * q0[i]
		for _, bi := range m.Neighbors(i) {
			k := m.Other(bi, i)
			qi += b.p.fcadj[types[k]] * q0[k]
			w, err := b.increment(i, k, b.bt[bi])
			if err != nil {
				return err
			}
			qi += w
		}
		q[i] = qi
	}
	b.s.Charges = q
	return nil
}

// increment returns ω_ki, the charge the bond k–i adds to atom i. The table entry for types
// I < J holds the increment added to J (and taken from I).
func (b *builder) increment(i, k, bt int) (float64, error) {
	ti, tk := b.s.Types[i], b.s.Types[k]
	if ti == tk {
		return 0, nil
	}
	lo, hi := min(ti, tk), max(ti, tk)
	if v, ok := b.p.chg[key3{bt, lo, hi}]; ok {
		if ti == hi {
			return v, nil
		}
		return -v, nil
	}
	if !b.p.hasPB[ti] || !b.p.hasPB[tk] {
		return 0, &ParamError{Msg: "no bond-charge increment for atom types " + itoa(ti) + " and " + itoa(tk)}
	}
	return b.p.pbci[ti] - b.p.pbci[tk], nil
}
