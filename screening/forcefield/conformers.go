package forcefield

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"sort"

	"ringsieve/screening/mol"
)

// Conformer search: our own stochastic search over the minima of the force field. It starts
// from a few independent embeddings, then repeatedly takes one of the lowest minima found so far
// (the one used least as a starting point), perturbs it — turning one or two rotatable bonds,
// kicking the atoms of one flexible ring, or embedding afresh — and relaxes the result. It stops
// when the budget of minimizations is spent or when the lowest minimum has been found again and
// again while nothing lower turned up. Minima that agree in energy and in the sorted list of
// heavy-atom distances are one conformer (mirror-image conformers of an achiral molecule count
// once).

// Budget bounds the work spent on one molecule. The zero value takes the defaults.
type Budget struct {
	// MaxAtoms caps the atoms with hydrogens (default 250).
	MaxAtoms int
	// MaxMinimizations caps the force-field minimizations of one search (default 400).
	MaxMinimizations int
	// MaxIterations caps the iterations of one minimization (default 2000).
	MaxIterations int
	// MaxConformers caps the conformers returned (default 10, at most 100).
	MaxConformers int
}

// Budget defaults and hard ceilings (design choices: a monomer has a few dozen atoms; these
// keep one request under a few seconds of one core).
const (
	DefaultMaxAtoms          = 250
	DefaultMaxMinimizations  = 400
	DefaultMaxIterations     = 2000
	DefaultMaxConformers     = 10
	CeilingConformers        = 100
	CeilingMinimizations     = 5000
	ceilingIterationsPerRun  = 20000
	minimumRepeatsToConverge = 3
)

func (b Budget) withDefaults() Budget {
	if b.MaxAtoms <= 0 {
		b.MaxAtoms = DefaultMaxAtoms
	}
	if b.MaxMinimizations <= 0 {
		b.MaxMinimizations = DefaultMaxMinimizations
	}
	b.MaxMinimizations = min(b.MaxMinimizations, CeilingMinimizations)
	if b.MaxIterations <= 0 {
		b.MaxIterations = DefaultMaxIterations
	}
	b.MaxIterations = min(b.MaxIterations, ceilingIterationsPerRun)
	if b.MaxConformers <= 0 {
		b.MaxConformers = DefaultMaxConformers
	}
	b.MaxConformers = min(b.MaxConformers, CeilingConformers)
	return b
}

// ErrBudget reports a molecule or a request past the work budget.
var ErrBudget = errors.New("past the work budget")

// SearchOptions configure a conformer search.
type SearchOptions struct {
	Variant Variant
	Budget  Budget
	// Seed makes the search reproducible; the same seed gives the same conformers.
	Seed uint64
	// Stereo, when not nil, replaces the stereo elements read from the graph (for a structure
	// read with coordinates, see StereoFromCoords).
	Stereo *Stereo
	// Start, when not nil, is a starting geometry (3 per atom of the molecule with hydrogens).
	Start []float64
	// Dielectric is the electrostatic term's constant D (0 or 1: the published gas phase).
	Dielectric float64
}

// Conformer is one minimum of the force field.
type Conformer struct {
	// X holds 3 coordinates per atom of the system's molecule (hydrogens explicit), Å.
	X             []float64
	EnergyKcalMol float64
	// Found counts how often the search reached this minimum.
	Found int

	used int
	sig  []float64
}

// SearchResult is the outcome of a conformer search.
type SearchResult struct {
	System *System
	Stereo Stereo
	// Conformers holds the lowest minima, lowest first, at most Budget.MaxConformers.
	Conformers []Conformer
	// Distinct counts the distinct minima found (which may exceed len(Conformers)).
	Distinct      int
	Minimizations int
	// Converged is true when the search stopped because the lowest minimum kept recurring,
	// false when the minimization budget ran out first.
	Converged bool
}

// Search finds low-energy conformers of m (hydrogens are added when implicit) honouring its
// stereo elements. Errors: ErrBudget (wrapped) when m has more atoms than the budget allows;
// *TypeError or *ParamError when the force field does not cover m; ErrEmbedding when no 3-D
// structure with the right stereo was found; the context's error when it ends first.
func Search(ctx context.Context, m *mol.Molecule, opt SearchOptions) (*SearchResult, error) {
	b := opt.Budget.withDefaults()
	if n := len(m.Atoms) + m.ImplicitHCount(); n > b.MaxAtoms {
		return nil, fmt.Errorf("%d atoms with hydrogens, the conformer search allows %d: %w", n, b.MaxAtoms, ErrBudget)
	}
	s, err := Setup(m, opt.Variant)
	if err != nil {
		return nil, err
	}
	s.SetDielectric(opt.Dielectric)
	st := StereoFromGraph(s.Mol)
	if opt.Stereo != nil {
		st = *opt.Stereo
	}
	sr := &searcher{
		ctx: ctx, s: s, st: st, b: b,
		rng:   rand.New(rand.NewPCG(opt.Seed, 0x5eed)),
		emb:   newEmbedder(s, st),
		rot:   rotatableBonds(s.Mol),
		rings: flexibleRings(s.Mol),
		heavy: heavyAtoms(s.Mol),
	}
	sr.swaps = openCentres(s.Mol, st)
	if err := sr.run(opt.Start); err != nil {
		return nil, err
	}
	res := &SearchResult{System: s, Stereo: st, Distinct: sr.distinct, Minimizations: sr.mins, Converged: sr.converged}
	sort.SliceStable(sr.pool, func(i, j int) bool { return sr.pool[i].EnergyKcalMol < sr.pool[j].EnergyKcalMol })
	for k := 0; k < len(sr.pool) && k < b.MaxConformers; k++ {
		c := sr.pool[k]
		res.Conformers = append(res.Conformers, Conformer{X: c.X, EnergyKcalMol: c.EnergyKcalMol, Found: c.Found})
	}
	return res, nil
}

type searcher struct {
	ctx   context.Context
	s     *System
	st    Stereo
	b     Budget
	rng   *rand.Rand
	emb   *embedder
	rot   [][2]int // rotatable bonds (atom pairs)
	rings [][]int  // flexible rings
	// swaps lists, for atoms whose handedness the input leaves open, two pendant groups whose
	// exchange inverts the atom (another stereoisomer: the input does not say which)
	swaps [][3]int
	heavy []int

	pool      []*Conformer
	distinct  int
	mins      int
	converged bool
}

// Search constants (design choices, tuned on the monomer reference set).
const (
	// energyTol is the energy window within which two minima of the search may be the same,
	// kcal/mol; finalEnergyTol the same after the final relaxation.
	energyTol      = 0.05
	finalEnergyTol = 0.01
	// shapeTol is the largest RMS difference of sorted heavy-atom distances of one conformer, Å.
	shapeTol = 0.05
	// searchGradTol stops a minimization in the search, kcal/mol/Å.
	searchGradTol = 0.05
	// baseWindow is how many of the lowest minima serve as starting points.
	baseWindow = 6
)

func (sr *searcher) run(start []float64) error {
	nRot := len(sr.rot)
	// ring flexibility: atoms beyond four in each flexible ring (a cyclononene counts 5)
	ringFlex := 0
	for _, r := range sr.rings {
		ringFlex += len(r) - 4
	}
	initial := 3 + min(nRot, 6) + ringFlex
	// patience: minimizations without a lower minimum before the search may stop (it stops
	// then if the lowest minimum has been reached at least twice, and in any case after twice
	// as many)
	patience := 12 + 6*min(nRot, 12) + 6*min(ringFlex, 12)
	sinceBest := 0
	file := func(x []float64) error {
		before := math.Inf(1)
		if len(sr.pool) > 0 {
			before = sr.lowest().EnergyKcalMol
		}
		if err := sr.relax(x); err != nil && !errors.Is(err, errStereoLost) {
			return err
		}
		if len(sr.pool) > 0 && sr.lowest().EnergyKcalMol < before-energyTol {
			sinceBest = 0
		} else {
			sinceBest++
		}
		return nil
	}
	if start != nil {
		if err := file(slices.Clone(start)); err != nil {
			return err
		}
	}
	for k := 0; k < initial && sr.mins < sr.b.MaxMinimizations; k++ {
		if err := sr.ctx.Err(); err != nil {
			return err
		}
		x, err := sr.emb.embed(sr.rng, sr.st, embedAttempts, 500)
		if err != nil {
			continue
		}
		if err := file(x); err != nil {
			return err
		}
	}
	if len(sr.pool) == 0 {
		return ErrEmbedding
	}
	for sr.mins < sr.b.MaxMinimizations {
		if err := sr.ctx.Err(); err != nil {
			return err
		}
		best := sr.lowest()
		if (sinceBest >= patience && best.Found >= 2) || sinceBest >= 2*patience {
			sr.converged = true
			break
		}
		base := sr.pickBase()
		base.used++
		x := slices.Clone(base.X)
		switch r := sr.rng.Float64(); {
		case r < 0.1 || (nRot == 0 && len(sr.rings) == 0):
			y, err := sr.emb.embed(sr.rng, sr.st, embedAttempts, 500)
			if err != nil {
				sinceBest++
				continue
			}
			x = y
		case len(sr.swaps) > 0 && r < 0.18:
			sr.swap(x)
		case nRot > 1 && r < 0.23:
			sr.extend(x)
		case nRot > 0 && (len(sr.rings) == 0 || r < 0.6):
			sr.turn(x)
			if nRot > 1 && sr.rng.Float64() < 0.4 {
				sr.turn(x)
			}
		default:
			sr.kickRing(x)
		}
		if err := file(x); err != nil {
			return err
		}
	}
	return sr.polish()
}

// polish relaxes the lowest minima to the final gradient tolerance and files them again, so
// that the energies reported are converged and duplicates that the looser search tolerance
// kept apart are merged.
func (sr *searcher) polish() error {
	sort.SliceStable(sr.pool, func(i, j int) bool { return sr.pool[i].EnergyKcalMol < sr.pool[j].EnergyKcalMol })
	keep := min(len(sr.pool), sr.b.MaxConformers+5)
	var out []*Conformer
	for _, c := range sr.pool[:keep] {
		r, err := sr.s.Minimize(c.X, MinimizeOptions{MaxIterations: sr.b.MaxIterations})
		if err != nil {
			continue
		}
		if cs, os := sr.st.StereoViolations(c.X); len(cs) > 0 || len(os) > 0 {
			continue
		}
		c.EnergyKcalMol, c.sig = r.EnergyKcalMol, sr.signature(c.X)
		dup := false
		for _, o := range out {
			if math.Abs(o.EnergyKcalMol-c.EnergyKcalMol) < finalEnergyTol && sigDiff(o.sig, c.sig) < shapeTol {
				o.Found += c.Found
				dup = true
				break
			}
		}
		if !dup {
			out = append(out, c)
		}
	}
	distinct := len(sr.pool) - keep + len(out)
	sr.pool = append(out, sr.pool[keep:]...)
	sr.distinct = distinct
	return nil
}

var errStereoLost = errors.New("stereo lost in minimization")

// relax minimizes x and files the minimum in the pool.
func (sr *searcher) relax(x []float64) error {
	sr.mins++
	r, err := sr.s.Minimize(x, MinimizeOptions{MaxIterations: sr.b.MaxIterations, GradientTol: searchGradTol})
	if err != nil {
		if errors.Is(err, ErrNotFinite) {
			return errStereoLost
		}
		return err
	}
	if c, o := sr.st.StereoViolations(x); len(c) > 0 || len(o) > 0 {
		return errStereoLost
	}
	sig := sr.signature(x)
	for _, c := range sr.pool {
		if math.Abs(c.EnergyKcalMol-r.EnergyKcalMol) < energyTol && sigDiff(c.sig, sig) < shapeTol {
			c.Found++
			if r.EnergyKcalMol < c.EnergyKcalMol {
				c.X, c.EnergyKcalMol, c.sig = x, r.EnergyKcalMol, sig
			}
			return nil
		}
	}
	sr.pool = append(sr.pool, &Conformer{X: x, EnergyKcalMol: r.EnergyKcalMol, Found: 1, sig: sig})
	return nil
}

func (sr *searcher) lowest() *Conformer {
	best := sr.pool[0]
	for _, c := range sr.pool[1:] {
		if c.EnergyKcalMol < best.EnergyKcalMol {
			best = c
		}
	}
	return best
}

// pickBase returns the least-used of the lowest minima (ties to the lower energy).
func (sr *searcher) pickBase() *Conformer {
	sorted := slices.Clone(sr.pool)
	sort.SliceStable(sorted, func(i, j int) bool { return sorted[i].EnergyKcalMol < sorted[j].EnergyKcalMol })
	if len(sorted) > baseWindow {
		sorted = sorted[:baseWindow]
	}
	base := sorted[0]
	for _, c := range sorted[1:] {
		if c.used < base.used {
			base = c
		}
	}
	return base
}

// signature is the sorted list of heavy-atom distances (independent of atom numbering and of
// reflection).
func (sr *searcher) signature(x []float64) []float64 {
	h := sr.heavy
	out := make([]float64, 0, len(h)*(len(h)-1)/2)
	for a := 0; a < len(h); a++ {
		for b := a + 1; b < len(h); b++ {
			out = append(out, norm(sub(at(x, h[a]), at(x, h[b]))))
		}
	}
	sort.Float64s(out)
	return out
}

func sigDiff(a, b []float64) float64 {
	if len(a) == 0 {
		return 0
	}
	var s float64
	for k := range a {
		d := a[k] - b[k]
		s += d * d
	}
	return math.Sqrt(s / float64(len(a)))
}

// turn sets one rotatable bond to another of its likely minima (see setDihedral), moving the
// smaller side; the dihedral is measured between heavy neighbours where there are any.
func (sr *searcher) turn(x []float64) {
	sr.setDihedral(x, sr.rot[sr.rng.IntN(len(sr.rot))], -1)
}

// swap exchanges the positions of two pendant groups of an open centre by a half turn about the
// bisector of their bonds (a proper rotation: each group keeps its own shape), which inverts the
// centre.
func (sr *searcher) swap(x []float64) {
	c := sr.swaps[sr.rng.IntN(len(sr.swaps))]
	a, p, q := c[0], c[1], c[2]
	m := sr.s.Mol
	side := append(sideOf(m, a, p), sideOf(m, a, q)...)
	up := sub(at(x, p), at(x, a))
	uq := sub(at(x, q), at(x, a))
	axis := add(scale(up, 1/norm(up)), scale(uq, 1/norm(uq)))
	if norm(axis) < 1e-6 {
		return
	}
	rotateAbout(x, at(x, a), axis, math.Pi, side)
}

// openCentres lists the four-connected atoms that carry no stereo requirement and have two
// pendant groups (each reached only through the atom), with two such groups.
func openCentres(m *mol.Molecule, st Stereo) [][3]int {
	fixed := make(map[int]bool, len(st.Centres))
	for _, c := range st.Centres {
		fixed[c.Atom] = true
	}
	var out [][3]int
	for a := range m.Atoms {
		if fixed[a] || m.Degree(a) != 4 || m.Atoms[a].Z == 1 {
			continue
		}
		nb := m.NeighborAtoms(a)
		var pend []int
		heavyPend := false
		for _, n := range nb {
			side := sideOf(m, a, n)
			closed := false
			for _, o := range nb {
				if o != n && slices.Contains(side, o) {
					closed = true
					break
				}
			}
			if !closed {
				pend = append(pend, n)
				if m.Atoms[n].Z != 1 {
					heavyPend = true
				}
			}
		}
		// a ring atom with two pendant groups, at least one of them heavy, is the case that
		// matters (exo/endo, axial/equatorial epimers); two hydrogens would only rename atoms
		if len(pend) == 2 && heavyPend {
			out = append(out, [3]int{a, pend[0], pend[1]})
		}
	}
	return out
}

// extend sets every rotatable bond anti: the extended chain, often the lowest conformer of an
// alkyl or ester chain in the gas phase.
func (sr *searcher) extend(x []float64) {
	for _, bd := range sr.rot {
		sr.setDihedral(x, bd, 180)
	}
}

// setDihedral turns bond bd to target degrees (a random staggered target when target < 0).
func (sr *searcher) setDihedral(x []float64, bd [2]int, target float64) {
	m := sr.s.Mol
	j, k := bd[0], bd[1]
	side := sideOf(m, j, k)
	if len(side) > len(m.Atoms)/2 {
		side = sideOf(m, k, j)
		j, k = k, j
	}
	i, l := refNbr(m, j, k), refNbr(m, k, j)
	if i < 0 || l < 0 {
		return
	}
	now := Dihedral(x, i, j, k, l)
	if target < 0 {
		// staggered positions about a bond between saturated atoms; eclipsed, perpendicular and
		// anti about a bond to a flat (three-connected or doubly bonded) atom, whose minima lie
		// there (esters, amides, aryl and vinyl groups)
		targets := []float64{180, 180, 60, -60}
		if flatAtom(m, j) || flatAtom(m, k) {
			targets = []float64{0, 180, 90, -90, 120, -120}
		}
		for try := 0; try < 4; try++ {
			target = targets[sr.rng.IntN(len(targets))] + 20*(sr.rng.Float64()-0.5)
			if math.Abs(angleDiff(target, now)) > 30 {
				break
			}
		}
	}
	// rotating the k side about j→k by δ changes the dihedral i–j–k–l by δ
	delta := angleDiff(target, now) * math.Pi / 180
	rotateAbout(x, at(x, j), sub(at(x, k), at(x, j)), delta, side)
}

// flatAtom reports an atom with a double bond or an oxygen or nitrogen next to one (conjugated
// ester oxygen, amide nitrogen): the end of a bond whose turning minima are not staggered.
func flatAtom(m *mol.Molecule, a int) bool {
	for _, n := range m.NeighborAtoms(a) {
		if m.Bonds[m.BondBetween(a, n)].Order == mol.BondDouble {
			return true
		}
	}
	z := m.Atoms[a].Z
	if z != 7 && z != 8 {
		return false
	}
	for _, n := range m.NeighborAtoms(a) {
		for _, o := range m.NeighborAtoms(n) {
			if o != a && m.Bonds[m.BondBetween(n, o)].Order == mol.BondDouble {
				return true
			}
		}
	}
	return false
}

// angleDiff is a − b folded into (−180°, 180°].
func angleDiff(a, b float64) float64 {
	d := math.Mod(a-b, 360)
	if d > 180 {
		d -= 360
	} else if d <= -180 {
		d += 360
	}
	return d
}

// refNbr returns a neighbour of a other than b, a heavy atom when there is one, or −1.
func refNbr(m *mol.Molecule, a, b int) int {
	best := -1
	for _, n := range m.NeighborAtoms(a) {
		if n == b {
			continue
		}
		if m.Atoms[n].Z != 1 {
			return n
		}
		if best < 0 {
			best = n
		}
	}
	return best
}

// kickRing reshapes one flexible ring: usually a flap (crankshaft) move — one or two
// consecutive ring atoms, with everything hanging off them, turned about the axis through their
// two ring neighbours by 60° to 180° either way, which keeps every bond length and every angle
// away from the hinge and so carries the ring into another pucker (an envelope or half-chair
// flip, a chair–boat change); otherwise a random displacement of up to 0.8 Å of every ring atom.
func (sr *searcher) kickRing(x []float64) {
	ring := sr.rings[sr.rng.IntN(len(sr.rings))]
	m := sr.s.Mol
	if sr.rng.Float64() < 0.8 {
		n := len(ring)
		for try := 0; try < 4; try++ {
			seg := 1 + sr.rng.IntN(2)
			start := sr.rng.IntN(n)
			hingeA := ring[(start+n-1)%n]
			hingeB := ring[(start+seg)%n]
			moving := make([]int, 0, seg)
			for k := 0; k < seg; k++ {
				moving = append(moving, ring[(start+k)%n])
			}
			side, ok := segmentSide(m, moving, hingeA, hingeB)
			if !ok {
				continue
			}
			angle := (60 + 120*sr.rng.Float64()) * math.Pi / 180
			if sr.rng.Float64() < 0.5 {
				angle = -angle
			}
			rotateAbout(x, at(x, hingeA), sub(at(x, hingeB), at(x, hingeA)), angle, side)
			return
		}
	}
	for _, a := range ring {
		d := vec{0.8 * (2*sr.rng.Float64() - 1), 0.8 * (2*sr.rng.Float64() - 1), 0.8 * (2*sr.rng.Float64() - 1)}
		move := []int{a}
		for _, h := range m.NeighborAtoms(a) {
			if m.Atoms[h].Z == 1 {
				move = append(move, h)
			}
		}
		for _, i := range move {
			x[3*i] += d[0]
			x[3*i+1] += d[1]
			x[3*i+2] += d[2]
		}
	}
}

// segmentSide returns the segment atoms with everything reached from them without passing the
// hinge atoms; ok is false when that reaches the rest of the molecule some other way (a fused or
// bridged ring), where a rigid turn would tear bonds.
func segmentSide(m *mol.Molecule, seg []int, hingeA, hingeB int) ([]int, bool) {
	seen := make([]bool, len(m.Atoms))
	seen[hingeA], seen[hingeB] = true, true
	out := make([]int, 0, 8)
	for _, a := range seg {
		if !seen[a] {
			seen[a] = true
			out = append(out, a)
		}
	}
	for q := 0; q < len(out); q++ {
		for _, v := range m.NeighborAtoms(out[q]) {
			if seen[v] {
				continue
			}
			seen[v] = true
			out = append(out, v)
		}
	}
	// the moving side must not contain the hinges' other neighbours (it would if a second path
	// links the segment to the rest of the ring)
	for _, h := range [2]int{hingeA, hingeB} {
		for _, v := range m.NeighborAtoms(h) {
			if slices.Contains(seg, v) {
				continue
			}
			if slices.Contains(out, v) {
				return nil, false
			}
		}
	}
	if len(out) > len(m.Atoms)/2+len(seg) {
		return nil, false
	}
	return out, true
}

// rotateAbout turns the atoms in side by angle (radians) about the axis through origin along
// dir.
func rotateAbout(x []float64, origin, dir vec, angle float64, side []int) {
	u := scale(dir, 1/norm(dir))
	c, s := math.Cos(angle), math.Sin(angle)
	for _, a := range side {
		p := sub(at(x, a), origin)
		// Rodrigues' rotation formula
		r := add(add(scale(p, c), scale(cross(u, p), s)), scale(u, dot(u, p)*(1-c)))
		q := add(r, origin)
		x[3*a], x[3*a+1], x[3*a+2] = q[0], q[1], q[2]
	}
}

// sideOf returns the atoms reached from k without crossing the bond j–k (k included).
func sideOf(m *mol.Molecule, j, k int) []int {
	seen := make([]bool, len(m.Atoms))
	seen[j], seen[k] = true, true
	out := []int{k}
	for q := 0; q < len(out); q++ {
		for _, v := range m.NeighborAtoms(out[q]) {
			if !seen[v] {
				seen[v] = true
				out = append(out, v)
			}
		}
	}
	return out
}

// rotatableBonds lists the single bonds outside rings whose turning changes the heavy-atom
// shape or places a polar hydrogen: both ends carry another neighbour, neither end is linear,
// and neither is a methyl-like end (three hydrogens) or a terminal atom.
func rotatableBonds(m *mol.Molecule) [][2]int {
	inRing := ringBonds(m)
	var out [][2]int
	for bi, b := range m.Bonds {
		if b.Order != mol.BondSingle || inRing[bi] {
			continue
		}
		ok := true
		for _, end := range [2][2]int{{b.A, b.B}, {b.B, b.A}} {
			a := end[0]
			if m.Degree(a) < 2 || m.Atoms[a].Z == 1 {
				ok = false
				break
			}
			hs, triple := 0, false
			for _, n := range m.NeighborAtoms(a) {
				if m.Atoms[n].Z == 1 {
					hs++
				}
				if m.Bonds[m.BondBetween(a, n)].Order == mol.BondTriple {
					triple = true
				}
			}
			if triple || hs >= 3 || (m.Degree(a) == 2 && hs == 1 && m.Atoms[a].Z == 6) {
				ok = false
				break
			}
		}
		if ok {
			out = append(out, [2]int{b.A, b.B})
		}
	}
	return out
}

// ringBonds marks the bonds in a ring (a bond is in a ring when its ends stay connected
// without it).
func ringBonds(m *mol.Molecule) []bool {
	out := make([]bool, len(m.Bonds))
	for bi := range m.Bonds {
		if _, _, ok := ringPath(m, bi); ok {
			out[bi] = true
		}
	}
	return out
}

// flexibleRings lists the smallest rings of five or more atoms through each ring bond, once each,
// that a kick can reshape: not flat (all atoms written aromatic) and not part of a bridged
// system (another ring sharing three or more of its atoms, as in norbornene, which holds its
// rings rigid).
func flexibleRings(m *mol.Molecule) [][]int {
	seen := map[string]bool{}
	var all [][]int
	for bi := range m.Bonds {
		ring := smallestRingThrough(m, bi)
		if len(ring) < 3 {
			continue
		}
		key := slices.Clone(ring)
		sort.Ints(key)
		k := fmt.Sprint(key)
		if !seen[k] {
			seen[k] = true
			all = append(all, ring)
		}
	}
	var out [][]int
	for n, ring := range all {
		if len(ring) < 5 {
			continue
		}
		flat, bridged := true, false
		for _, a := range ring {
			if !m.Atoms[a].Aromatic {
				flat = false
			}
		}
		for o, other := range all {
			if o == n {
				continue
			}
			shared := 0
			for _, a := range ring {
				if slices.Contains(other, a) {
					shared++
				}
			}
			if shared >= 3 {
				bridged = true
			}
		}
		if !flat && !bridged {
			out = append(out, ring)
		}
	}
	return out
}

// smallestRingThrough returns the atoms of the smallest ring through bond bi, or nil.
func smallestRingThrough(m *mol.Molecule, bi int) []int {
	a, b := m.Bonds[bi].A, m.Bonds[bi].B
	prev := make([]int, len(m.Atoms))
	for i := range prev {
		prev[i] = -2
	}
	prev[a] = -1
	queue := []int{a}
	for len(queue) > 0 {
		u := queue[0]
		queue = queue[1:]
		for _, v := range m.NeighborAtoms(u) {
			if (u == a && v == b) || prev[v] != -2 {
				continue
			}
			prev[v] = u
			if v == b {
				ring := []int{b}
				for w := u; w != -1; w = prev[w] {
					ring = append(ring, w)
				}
				return ring
			}
			queue = append(queue, v)
		}
	}
	return nil
}

func heavyAtoms(m *mol.Molecule) []int {
	var out []int
	for a := range m.Atoms {
		if m.Atoms[a].Z != 1 {
			out = append(out, a)
		}
	}
	return out
}
