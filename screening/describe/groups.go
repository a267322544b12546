package describe

import (
	"sort"

	"ringsieve/screening/internal/memo"
	"ringsieve/screening/mol"
	"ringsieve/screening/rings"
)

// Functional-group inventory used by the catalyst-compatibility rules. Each detector is a small
// hand-written graph pattern; names are the stable identifiers returned to callers.

// Functional-group identifiers.
const (
	FGCarboxylicAcid  = "carboxylic_acid"
	FGCarboxylate     = "carboxylate"
	FGAlcohol         = "alcohol"
	FGPhenol          = "phenol"
	FGAldehyde        = "aldehyde"
	FGKetone          = "ketone"
	FGEster           = "ester"
	FGAmide           = "amide"
	FGImide           = "imide"
	FGAnhydride       = "anhydride"
	FGNitrile         = "nitrile"
	FGPrimaryAmine    = "primary_amine"
	FGSecondaryAmine  = "secondary_amine"
	FGHinderedAmine   = "hindered_secondary_amine"
	FGTertiaryAmine   = "tertiary_amine"
	FGAmmonium        = "ammonium_salt"
	FGPyridineN       = "pyridine_n"
	FGThiol           = "thiol"
	FGThioether       = "thioether"
	FGThioester       = "thioester"
	FGPhosphine       = "phosphine"
	FGPhosphineBorane = "phosphine_borane"
	FGSulfone         = "sulfone"
	FGSulfonamide     = "sulfonamide"
	FGSulfoxide       = "sulfoxide"
	FGHalide          = "halide"
	FGSilylEther      = "silyl_ether"
	FGVinylEther      = "vinyl_ether"
	FGTerminalOlefin  = "acyclic_terminal_olefin"
	FGAcyclicOlefin   = "acyclic_internal_olefin"
	FGAlkyne          = "alkyne"
	FGCarbamate       = "carbamate"
	FGEther           = "ether"
	FGEpoxide         = "epoxide"
	FGNitro           = "nitro"
	FGWater           = "water"
	FGCyclicEnolEther = "cyclic_enol_ether"
	FGPhosphite       = "phosphite"
	FGBoronicEster    = "boronic_ester"
	FGAromaticNHetero = "pyrrole_type_nh"
	FGIsocyanide      = "isocyanide"
	FGSulfonicAcid    = "sulfonic_acid"
)

// KnownFunctionalGroups lists every identifier the inventory can report; descriptor records may
// only name these.
var KnownFunctionalGroups = []string{
	FGCarboxylicAcid, FGCarboxylate, FGAlcohol, FGPhenol, FGAldehyde, FGKetone, FGEster, FGAmide, FGImide,
	FGAnhydride, FGNitrile, FGPrimaryAmine, FGSecondaryAmine, FGHinderedAmine, FGTertiaryAmine, FGAmmonium, FGPyridineN,
	FGThiol, FGThioether, FGThioester, FGPhosphine, FGPhosphineBorane, FGSulfone, FGSulfonamide,
	FGSulfoxide, FGHalide, FGSilylEther, FGVinylEther, FGTerminalOlefin, FGAcyclicOlefin, FGAlkyne,
	FGCarbamate, FGEther, FGEpoxide, FGNitro, FGWater, FGCyclicEnolEther, FGPhosphite,
	FGBoronicEster, FGAromaticNHetero, FGIsocyanide, FGSulfonicAcid,
}

// IsKnownFunctionalGroup reports whether name is an identifier of the inventory.
func IsKnownFunctionalGroup(name string) bool {
	for _, g := range KnownFunctionalGroups {
		if g == name {
			return true
		}
	}
	return false
}

// graph is a molecule with its perceived rings: the chemistry helpers read aromaticity from
// the rings, never from the molecule as written.
type graph struct {
	m *mol.Molecule
	r *rings.Rings
}

// doubleTo returns the atoms joined to a by a non-aromatic double bond with atomic number z
// (z = 0: any).
func (g graph) doubleTo(a, z int) []int {
	var out []int
	for _, bi := range g.m.Neighbors(a) {
		if g.m.Bonds[bi].Order == mol.BondDouble && !g.r.AromaticBond[bi] {
			o := g.m.Other(bi, a)
			if z == 0 || g.m.Atoms[o].Z == z {
				out = append(out, o)
			}
		}
	}
	return out
}

// firstDoubleTo is the first atom doubleTo(a, z) lists, or -1 (without allocating).
func (g graph) firstDoubleTo(a, z int) int {
	for _, bi := range g.m.Neighbors(a) {
		if g.m.Bonds[bi].Order == mol.BondDouble && !g.r.AromaticBond[bi] {
			if o := g.m.Other(bi, a); z == 0 || g.m.Atoms[o].Z == z {
				return o
			}
		}
	}
	return -1
}

// countDoubleTo counts the atoms joined to a by a non-aromatic double bond with atomic number z
// (z = 0: any), without allocating.
func (g graph) countDoubleTo(a, z int) int {
	n := 0
	for _, bi := range g.m.Neighbors(a) {
		if g.m.Bonds[bi].Order == mol.BondDouble && !g.r.AromaticBond[bi] && (z == 0 || g.m.Atoms[g.m.Other(bi, a)].Z == z) {
			n++
		}
	}
	return n
}

// isCarbonyl reports a carbon with a C=O.
func (g graph) isCarbonyl(a int) bool {
	return g.m.Atoms[a].Z == 6 && g.countDoubleTo(a, 8) > 0
}

// isEWG reports an electron-withdrawing atom: carbonyl or thiocarbonyl carbon, nitrile carbon,
// sulfonyl sulfur, nitro nitrogen, or a carbon carrying two or more fluorines.
func (g graph) isEWG(a int) bool {
	m := g.m
	at := &m.Atoms[a]
	switch at.Z {
	case 6:
		// one pass over the bonds: a C=O or C=S (not aromatic), a C≡N, or two fluorines
		f := 0
		for _, bi := range m.Neighbors(a) {
			b := &m.Bonds[bi]
			oz := m.Atoms[m.Other(bi, a)].Z
			switch {
			case b.Order == mol.BondDouble && (oz == 8 || oz == 16) && !g.r.AromaticBond[bi]:
				return true
			case b.Order == mol.BondTriple && oz == 7:
				return true
			case oz == 9:
				f++
			}
		}
		return f >= 2
	case 16:
		return g.countDoubleTo(a, 8) >= 2
	case 7:
		return at.Charge == 1 && g.countDoubleTo(a, 8) > 0
	}
	return false
}

// isocyanideN reports the nitrogen of an isocyanide R–N⁺≡C⁻ (written as such or as R–N=C:).
func (g graph) isocyanideN(a int) bool {
	m := g.m
	if m.Atoms[a].Z != 7 {
		return false
	}
	for _, bi := range m.Neighbors(a) {
		o := m.Other(bi, a)
		b := m.Bonds[bi]
		if m.Atoms[o].Z == 6 && m.Degree(o) == 1 && m.TotalH(o) == 0 && (b.Order == mol.BondTriple || (b.Order == mol.BondDouble && m.Atoms[o].Charge == 0 && m.Atoms[o].Bracket)) {
			return true
		}
	}
	return false
}

// FunctionalGroups returns the sorted set of functional groups found in the atoms of comp
// (indices into m), with the rings r perceived on m. The ring olefins themselves are not listed.
// The list is shared with every other structure that has the same groups: read it, never change
// it.
func FunctionalGroups(m *mol.Molecule, r *rings.Rings, comp []int) []string {
	g := graph{m, r}
	p := r
	var found groupSet
	for _, a := range comp {
		at := &m.Atoms[a]
		nb := m.HeavyNbrs(a)
		h := 0 // hydrogens: read by every case but carbon's
		if at.Z != 6 {
			h = m.TotalH(a)
		}
		switch at.Z {
		case 8:
			if len(nb) == 0 && h == 2 {
				found.add(FGWater)
				continue
			}
			if at.Charge == -1 && len(nb) == 1 && g.isCarbonyl(nb[0]) {
				found.add(FGCarboxylate)
				continue
			}
			if g.countDoubleTo(a, 0) > 0 || at.Charge != 0 {
				continue
			}
			if len(nb) == 1 && h == 1 {
				c := nb[0]
				switch {
				case g.isCarbonyl(c):
					found.add(FGCarboxylicAcid)
				case r.AromaticAtom[c]:
					found.add(FGPhenol)
				case m.Atoms[c].Z == 6:
					found.add(FGAlcohol)
				}
				continue
			}
			if len(nb) == 2 {
				c1, c2 := nb[0], nb[1]
				carb1, carb2 := g.isCarbonyl(c1), g.isCarbonyl(c2)
				switch {
				case carb1 && carb2:
					found.add(FGAnhydride)
				case carb1 || carb2:
					c := c1
					if carb2 {
						c = c2
					}
					hasN := false
					for _, x := range m.HeavyNbrs(c) {
						if m.Atoms[x].Z == 7 {
							hasN = true
						}
					}
					if hasN {
						found.add(FGCarbamate)
					} else {
						found.add(FGEster)
					}
				case m.Atoms[c1].Z == 14 || m.Atoms[c2].Z == 14:
					found.add(FGSilylEther)
				case m.Atoms[c1].Z == 5 || m.Atoms[c2].Z == 5:
					found.add(FGBoronicEster)
				case m.Atoms[c1].Z == 15 || m.Atoms[c2].Z == 15:
					// phosphite / phosphate ester oxygens are counted on P
				default:
					vinyl := false
					for _, c := range nb {
						for _, d := range g.doubleTo(c, 6) {
							if p.BondRingSize[m.BondBetween(c, d)] == 0 {
								vinyl = true
							} else if !r.AromaticAtom[c] {
								found.add(FGCyclicEnolEther)
							}
						}
					}
					if vinyl {
						found.add(FGVinylEther)
					} else if p.AtomRingSize[a] == 3 {
						found.add(FGEpoxide)
					} else {
						found.add(FGEther)
					}
				}
			}
		case 6:
			if r.AromaticAtom[a] {
				continue
			}
			if oxo := g.firstDoubleTo(a, 8); oxo >= 0 {
				var cN, cO, cS, cC int
				for _, x := range nb {
					if x == oxo {
						continue
					}
					switch m.Atoms[x].Z {
					case 7:
						cN++
					case 8:
						cO++
					case 16:
						cS++
					case 6:
						cC++
					}
				}
				switch {
				case cS > 0:
					found.add(FGThioester)
				case cN > 0 && cO == 0:
					// amide unless the N carries a second acyl (imide)
					imide := false
					for _, x := range nb {
						if m.Atoms[x].Z != 7 {
							continue
						}
						acyl := 0
						for _, y := range m.HeavyNbrs(x) {
							if g.isCarbonyl(y) {
								acyl++
							}
						}
						if acyl >= 2 {
							imide = true
						}
					}
					if imide {
						found.add(FGImide)
					} else if cN == 1 {
						found.add(FGAmide)
					}
				case cO == 0 && cN == 0:
					if cC >= 2 {
						found.add(FGKetone)
					} else {
						found.add(FGAldehyde)
					}
				}
			}
			for _, bi := range m.Neighbors(a) {
				b := &m.Bonds[bi]
				o := m.Other(bi, a)
				if b.Order == mol.BondTriple && m.Atoms[o].Z == 7 && !g.isocyanideN(o) {
					found.add(FGNitrile)
				}
				if b.Order == mol.BondTriple && m.Atoms[o].Z == 6 {
					found.add(FGAlkyne)
				}
				if b.Order == mol.BondDouble && !r.AromaticBond[bi] && m.Atoms[o].Z == 6 && p.BondRingSize[bi] == 0 && a < o {
					if m.TotalH(a) == 2 || m.TotalH(o) == 2 {
						found.add(FGTerminalOlefin)
					} else {
						found.add(FGAcyclicOlefin)
					}
				}
				if (m.Atoms[o].Z == 9 || m.Atoms[o].Z == 17 || m.Atoms[o].Z == 35 || m.Atoms[o].Z == 53) && b.Order == mol.BondSingle {
					found.add(FGHalide)
				}
			}
		case 7:
			if r.AromaticAtom[a] {
				if h > 0 {
					found.add(FGAromaticNHetero)
				} else if len(nb) == 2 && at.Charge == 0 {
					found.add(FGPyridineN)
				} else if at.Charge == 1 && h > 0 {
					found.add(FGAmmonium)
				}
				continue
			}
			if at.Charge == 1 {
				if g.isocyanideN(a) {
					found.add(FGIsocyanide)
				} else if g.countDoubleTo(a, 8) > 0 {
					found.add(FGNitro)
				} else if g.countDoubleTo(a, 0) == 0 {
					found.add(FGAmmonium)
				}
				continue
			}
			if at.Charge != 0 || g.countDoubleTo(a, 0) > 0 {
				if g.countDoubleTo(a, 8) > 0 {
					found.add(FGNitro)
				}
				continue
			}
			triple := false
			for _, bi := range m.Neighbors(a) {
				if m.Bonds[bi].Order == mol.BondTriple {
					triple = true
				}
			}
			if triple {
				continue
			}
			acyl, sulfonyl, nN := 0, 0, 0
			for _, x := range nb {
				if g.isCarbonyl(x) || (m.Atoms[x].Z == 6 && g.countDoubleTo(x, 16) > 0) {
					acyl++
				}
				if m.Atoms[x].Z == 16 && g.countDoubleTo(x, 8) >= 2 {
					sulfonyl++
				}
				if m.Atoms[x].Z == 7 {
					nN++
				}
				if m.Atoms[x].Z == 6 && g.countDoubleTo(x, 7) > 0 {
					acyl++ // amidine / imine carbon: not a basic amine here
				}
			}
			if sulfonyl > 0 {
				found.add(FGSulfonamide)
				continue
			}
			if acyl > 0 || nN > 0 {
				continue // amide, imide, carbamate, hydrazine-type N: handled on the acyl carbon
			}
			switch {
			case len(nb) == 1 && h == 2:
				found.add(FGPrimaryAmine)
			case len(nb) == 2 && h == 1:
				// flanked by two fully substituted carbons (e.g. 2,2,6,6-tetramethylpiperidine)
				if len(m.HeavyNbrs(nb[0])) == 4 && len(m.HeavyNbrs(nb[1])) == 4 {
					found.add(FGHinderedAmine)
				} else {
					found.add(FGSecondaryAmine)
				}
			case len(nb) == 3:
				found.add(FGTertiaryAmine)
			case len(nb) == 0:
				// ammonia: treat as primary amine for catalyst purposes
				found.add(FGPrimaryAmine)
			}
		case 16:
			if r.AromaticAtom[a] {
				continue
			}
			oxo := g.countDoubleTo(a, 8)
			if oxo >= 2 {
				// sulfonic acid: an S(=O)2 carrying an O–H
				for _, x := range nb {
					if m.Atoms[x].Z == 8 && m.TotalH(x) > 0 && m.Bonds[m.BondBetween(a, x)].Order == mol.BondSingle {
						found.add(FGSulfonicAcid)
					}
				}
				if len(nb) == 4 && !found.has(FGSulfonicAcid) {
					hasN := false
					for _, x := range nb {
						if m.Atoms[x].Z == 7 {
							hasN = true
						}
					}
					if !hasN {
						found.add(FGSulfone)
					}
				}
				continue
			}
			if oxo == 1 {
				found.add(FGSulfoxide)
				continue
			}
			if at.Charge != 0 {
				continue
			}
			if len(nb) == 1 && h == 1 {
				found.add(FGThiol)
			} else if len(nb) == 2 && !g.isCarbonyl(nb[0]) && !g.isCarbonyl(nb[1]) {
				found.add(FGThioether)
			}
		case 15:
			if g.countDoubleTo(a, 0) > 0 {
				continue
			}
			boron, oxy := false, 0
			for _, x := range nb {
				if m.Atoms[x].Z == 5 {
					boron = true
				}
				if m.Atoms[x].Z == 8 {
					oxy++
				}
			}
			switch {
			case boron:
				found.add(FGPhosphineBorane)
			case oxy == 3 && len(nb) == 3:
				found.add(FGPhosphite)
			case len(nb)+h == 3 && at.Charge == 0:
				found.add(FGPhosphine)
			}
		}
	}
	return found.shared()
}

// groupSet is a small set of group names (a few per molecule): an array with room for every
// known group, kept on the caller's stack (a slice grown through the set's pointer would move to
// the heap).
type groupSet struct {
	n     int
	names [maxGroups]string
}

// maxGroups is the room of a groupSet: at least len(KnownFunctionalGroups)
// (TestGroupSetHoldsEveryGroup).
const maxGroups = 48

// groupLists holds every group list handed out, keyed by its names in order (a few hundred
// combinations occur in practice; design choice: 4,096, then the cache starts afresh).
var groupLists = memo.New[[]string](4096)

// shared returns the set's names sorted, as a list shared by every structure with the same
// groups: read it, never change it (its capacity is its length, so an append copies). A set
// seen before costs no allocation. Nil when there are none.
func (s *groupSet) shared() []string {
	if s.n == 0 {
		return nil
	}
	names := s.names[:s.n]
	sort.Strings(names)
	var stack [512]byte
	key := stack[:0]
	for _, g := range names {
		key = append(append(key, g...), ',')
	}
	return groupLists.DoBytes(key, func(string) []string {
		out := make([]string, len(names)) // a copy made by hand: slices.Clone's result would alias the set for the escape analysis and move it to the heap
		copy(out, names)
		return out
	})
}

func (s *groupSet) add(g string) {
	for _, x := range s.names[:s.n] {
		if x == g {
			return
		}
	}
	s.names[s.n] = g
	s.n++
}

func (s *groupSet) has(g string) bool {
	for _, x := range s.names[:s.n] {
		if x == g {
			return true
		}
	}
	return false
}
