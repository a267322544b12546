// Package depict draws molecules in two dimensions: coordinates from the graph (ring systems
// from regular polygons, fused, spiro and bridged systems, zig-zag chains, substituents placed
// into the widest free angle, a stress refinement where the templates collide), wedge and hash
// bonds that carry the tetrahedral stereo, E/Z double bonds drawn as such, and writers for SVG
// and for a V2000 molfile with the 2-D coordinates. Coordinates are in bond lengths (1.0 is one
// bond). It is pure computation.
package depict

import (
	"math"
	"math/rand"
	"sort"

	"ringsieve/screening/mol"
	"ringsieve/screening/rings"
)

// Point is a 2-D position in bond lengths.
type Point struct{ X, Y float64 }

func (p Point) add(q Point) Point     { return Point{p.X + q.X, p.Y + q.Y} }
func (p Point) sub(q Point) Point     { return Point{p.X - q.X, p.Y - q.Y} }
func (p Point) scale(f float64) Point { return Point{p.X * f, p.Y * f} }
func (p Point) len() float64          { return math.Hypot(p.X, p.Y) }
func (p Point) rot(a float64) Point {
	s, c := math.Sincos(a)
	return Point{p.X*c - p.Y*s, p.X*s + p.Y*c}
}
func (p Point) angle() float64     { return math.Atan2(p.Y, p.X) }
func dist(p, q Point) float64      { return p.sub(q).len() }
func cross2(o, a, b Point) float64 { return (a.X-o.X)*(b.Y-o.Y) - (a.Y-o.Y)*(b.X-o.X) }
func unit(a float64) Point         { s, c := math.Sincos(a); return Point{c, s} }
func mid(p, q Point) Point         { return Point{(p.X + q.X) / 2, (p.Y + q.Y) / 2} }
func (p Point) norm() Point {
	l := p.len()
	if l == 0 {
		return Point{1, 0}
	}
	return p.scale(1 / l)
}

// Layout is a molecule's 2-D drawing: one point per atom and, per bond, its stereo mark.
type Layout struct {
	Mol *mol.Molecule
	P   []Point
	// Wedge is, per bond, 0 (plain), +1 (wedge: towards the viewer) or -1 (hash: away), drawn
	// narrow at WedgeFrom (the stereocentre).
	Wedge     []int8
	WedgeFrom []int
	// ringBondSize is the smallest ring size per bond (0: acyclic), from perception.
	ringBondSize []int
}

// Compute lays out m (indexed) with its rings r. It never fails; a molecule it cannot draw
// well still gets coordinates (the checks in the tests measure how well).
func Compute(m *mol.Molecule, r *rings.Rings) *Layout {
	n := len(m.Atoms)
	l := &Layout{Mol: m, P: make([]Point, n), Wedge: make([]int8, len(m.Bonds)), WedgeFrom: make([]int, len(m.Bonds)), ringBondSize: r.BondRingSize}
	for i := range l.WedgeFrom {
		l.WedgeFrom[i] = -1
	}
	ringsOf := make([][]int, n) // SSSR ring indices per atom
	for ri, rg := range r.SSSR {
		for _, a := range rg.Atoms {
			ringsOf[a] = append(ringsOf[a], ri)
		}
	}
	// each connected component on its own, then side by side
	var offset float64
	for c := 0; c < m.NumComponents(); c++ {
		atoms := m.Component(c)
		pts := layoutComponent(m, r, ringsOf, atoms)
		orient(pts, atoms)
		fixDoubleBonds(m, r, pts, atoms)
		minX, maxX := math.Inf(1), math.Inf(-1)
		minY, maxY := math.Inf(1), math.Inf(-1)
		for _, a := range atoms {
			minX, maxX = math.Min(minX, pts[a].X), math.Max(maxX, pts[a].X)
			minY, maxY = math.Min(minY, pts[a].Y), math.Max(maxY, pts[a].Y)
		}
		cy := (minY + maxY) / 2
		for _, a := range atoms {
			l.P[a] = Point{pts[a].X - minX + offset, pts[a].Y - cy}
		}
		offset += maxX - minX + 1.5
	}
	assignWedges(l, r)
	return l
}

// layoutComponent returns positions (indexed by atom; only atoms of the component are set).
func layoutComponent(m *mol.Molecule, r *rings.Rings, ringsOf [][]int, atoms []int) []Point {
	pts := make([]Point, len(m.Atoms))
	if len(atoms) == 1 {
		return pts
	}
	t := newTemplater(m, r, ringsOf, pts)
	t.place(atoms)
	best := append([]Point(nil), pts...)
	bestScore := score(m, r, best, atoms)
	if bestScore.bad() == 0 && bestScore.cv < 0.05 {
		return best
	}
	// refine by stress majorization from the template, then from perturbed starts
	target := newTargets(m, r, ringsOf, atoms)
	rng := rand.New(rand.NewSource(int64(len(atoms))*7919 + int64(len(m.Bonds))))
	tries := 4
	if len(atoms) > 150 {
		tries = 1
	}
	for k := 0; k < tries; k++ {
		cand := append([]Point(nil), best...)
		if k > 0 {
			for _, a := range atoms {
				cand[a] = cand[a].add(Point{rng.NormFloat64() * 0.6, rng.NormFloat64() * 0.6})
			}
		}
		target.stress(cand, max(10, 80*150/max(150, len(atoms))))
		sc := score(m, r, cand, atoms)
		if sc.less(bestScore) {
			best, bestScore = cand, sc
		}
		if bestScore.bad() == 0 && bestScore.cv < 0.08 {
			break
		}
	}
	return best
}

// templater places ring systems from polygons and everything else by growing outwards.
type templater struct {
	m       *mol.Molecule
	r       *rings.Rings
	ringsOf [][]int
	pts     []Point
	placed  []bool
	turn    []int8 // zig-zag side used when the atom was placed from a chain
	system  []int  // ring-system index per atom (-1: acyclic)
	systems [][]int
}

func newTemplater(m *mol.Molecule, r *rings.Rings, ringsOf [][]int, pts []Point) *templater {
	t := &templater{m: m, r: r, ringsOf: ringsOf, pts: pts, placed: make([]bool, len(m.Atoms)), turn: make([]int8, len(m.Atoms)), system: make([]int, len(m.Atoms))}
	for i := range t.system {
		t.system[i] = -1
	}
	// ring systems: rings sharing an atom
	parent := make([]int, len(r.SSSR))
	for i := range parent {
		parent[i] = i
	}
	var find func(int) int
	find = func(x int) int {
		for parent[x] != x {
			parent[x] = parent[parent[x]]
			x = parent[x]
		}
		return x
	}
	for _, rs := range ringsOf {
		for k := 1; k < len(rs); k++ {
			parent[find(rs[k])] = find(rs[0])
		}
	}
	idx := map[int]int{}
	for ri := range r.SSSR {
		root := find(ri)
		si, ok := idx[root]
		if !ok {
			si = len(t.systems)
			idx[root] = si
			t.systems = append(t.systems, nil)
		}
		t.systems[si] = append(t.systems[si], ri)
		for _, a := range r.SSSR[ri].Atoms {
			t.system[a] = si
		}
	}
	return t
}

// place lays out the component: the largest ring system (or the most central atom) first, then
// outwards breadth-first.
func (t *templater) place(atoms []int) {
	start := -1
	bestSize := 0
	for si, sys := range t.systems {
		a := t.r.SSSR[sys[0]].Atoms[0]
		if !inList(atoms, a) {
			continue
		}
		size := 0
		for _, ri := range sys {
			size += len(t.r.SSSR[ri].Atoms)
		}
		if size > bestSize {
			start, bestSize = si, size
		}
	}
	var queue []int
	if start >= 0 {
		local := t.systemTemplate(start)
		for a, p := range local {
			t.pts[a], t.placed[a] = p, true
			queue = append(queue, a)
		}
		sort.Ints(queue)
	} else {
		// acyclic: start at a centre of the longest path so that chains grow both ways
		a := centreAtom(t.m, atoms)
		t.pts[a], t.placed[a] = Point{}, true
		queue = append(queue, a)
	}
	for len(queue) > 0 {
		a := queue[0]
		queue = queue[1:]
		var todo []int
		for _, x := range t.m.NeighborAtoms(a) {
			if !t.placed[x] {
				todo = append(todo, x)
			}
		}
		if len(todo) == 0 {
			continue
		}
		dirs := t.freeDirections(a, todo)
		for k, x := range todo {
			p := t.pts[a].add(dirs[k])
			if si := t.system[x]; si >= 0 {
				// a ring system hangs here: its template, turned so that x sits at p and the
				// system lies beyond it
				local := t.systemTemplate(si)
				c := Point{}
				for _, q := range local {
					c = c.add(q)
				}
				c = c.scale(1 / float64(len(local)))
				out := local[x].sub(c)
				if out.len() < 1e-6 {
					out = Point{1, 0}
				}
				rotA := dirs[k].angle() - (out.scale(-1)).angle()
				for b, q := range local {
					if t.placed[b] {
						continue
					}
					t.pts[b] = q.sub(local[x]).rot(rotA).scale(-1).add(p)
					t.placed[b] = true
					queue = append(queue, b)
				}
				continue
			}
			t.pts[x], t.placed[x] = p, true
			queue = append(queue, x)
		}
	}
}

// freeDirections returns unit bond vectors from a for the unplaced neighbours todo: a chain
// continues in zig-zag, a triple bond or cumulated double bonds straight on, and several
// substituents share the widest free angle evenly.
func (t *templater) freeDirections(a int, todo []int) []Point {
	var used []float64
	var placedNbr []int
	for _, x := range t.m.NeighborAtoms(a) {
		if t.placed[x] {
			used = append(used, t.pts[x].sub(t.pts[a]).angle())
			placedNbr = append(placedNbr, x)
		}
	}
	out := make([]Point, len(todo))
	if len(used) == 0 {
		step := 2 * math.Pi / float64(len(todo))
		if len(todo) == 2 {
			step = 2 * math.Pi / 3
		}
		for k := range todo {
			out[k] = unit(math.Pi/6 + float64(k)*step)
		}
		if len(todo) == 2 && linear(t.m, a) {
			out[0], out[1] = unit(0), unit(math.Pi)
		}
		return out
	}
	if len(used) == 1 && len(todo) == 1 {
		back := used[0]
		if linear(t.m, a) {
			out[0] = unit(back + math.Pi)
			return out
		}
		p := placedNbr[0]
		side := -t.turn[p]
		if side == 0 {
			// leaving a ring or a branch point: turn to the less crowded side
			side = 1
			if t.crowd(t.pts[a].add(unit(back-2*math.Pi/3))) < t.crowd(t.pts[a].add(unit(back+2*math.Pi/3))) {
				side = -1
			}
		}
		t.turn[a] = side
		out[0] = unit(back + float64(side)*2*math.Pi/3)
		t.turn[todo[0]] = side
		return out
	}
	if len(used) == 1 && len(todo) == 2 && !linear(t.m, a) {
		back := used[0]
		out[0] = unit(back + 2*math.Pi/3)
		out[1] = unit(back - 2*math.Pi/3)
		return out
	}
	// the widest gap between used directions
	sort.Float64s(used)
	gapStart, gap := 0.0, -1.0
	for i := range used {
		next := used[(i+1)%len(used)]
		if i == len(used)-1 {
			next += 2 * math.Pi
		}
		if g := next - used[i]; g > gap {
			gapStart, gap = used[i], g
		}
	}
	for k := range todo {
		out[k] = unit(gapStart + gap*float64(k+1)/float64(len(todo)+1))
	}
	return out
}

// crowd measures how close point q comes to the atoms placed so far (sum of 1/d²).
func (t *templater) crowd(q Point) float64 {
	c := 0.0
	for a, ok := range t.placed {
		if ok {
			d := dist(q, t.pts[a])
			c += 1 / (d*d + 0.01)
		}
	}
	return c
}

// linear reports whether a's bonds should be drawn straight through (a triple bond, or two
// double bonds as in an allene or a cumulene).
func linear(m *mol.Molecule, a int) bool {
	doubles := 0
	for _, x := range m.NeighborAtoms(a) {
		switch m.Bonds[m.BondBetween(a, x)].Order {
		case mol.BondTriple:
			return true
		case mol.BondDouble:
			doubles++
		}
	}
	return doubles >= 2
}

// systemTemplate lays out ring system si in its own frame (unit bonds): the ring with the most
// neighbours first as a regular polygon, then each ring that shares atoms with the placed ones:
// across a shared bond (fused), around a shared atom (spiro), or along an arc between the ends
// of a shared path (bridged).
func (t *templater) systemTemplate(si int) map[int]Point {
	sys := t.systems[si]
	out := map[int]Point{}
	shares := func(ri int) int {
		n := 0
		for _, a := range t.r.SSSR[ri].Atoms {
			n += len(t.ringsOf[a]) - 1
		}
		return n
	}
	order := append([]int(nil), sys...)
	sort.SliceStable(order, func(i, j int) bool {
		si, sj := shares(order[i]), shares(order[j])
		if si != sj {
			return si > sj
		}
		return len(t.r.SSSR[order[i]].Atoms) > len(t.r.SSSR[order[j]].Atoms)
	})
	// a ring with a trans double bond (eight atoms or more) goes first, drawn with the bond
	// across its middle
	for k, ri := range order {
		if _, _, ok := t.transRingBond(t.r.SSSR[ri].Atoms); ok {
			order[0], order[k] = order[k], order[0]
			break
		}
	}
	first := t.r.SSSR[order[0]].Atoms
	if i, j, ok := t.transRingBond(first); ok {
		transRing(first, i, j, out)
	} else {
		polygon(first, Point{}, math.Pi/2, out)
	}
	done := map[int]bool{order[0]: true}
	for len(done) < len(sys) {
		// next: the unplaced ring sharing most atoms with what is placed
		bestRi, bestShared := -1, 0
		for _, ri := range sys {
			if done[ri] {
				continue
			}
			sh := 0
			for _, a := range t.r.SSSR[ri].Atoms {
				if _, ok := out[a]; ok {
					sh++
				}
			}
			if sh > bestShared || bestRi < 0 {
				bestRi, bestShared = ri, sh
			}
		}
		done[bestRi] = true
		t.attachRing(t.r.SSSR[bestRi].Atoms, out)
	}
	return out
}

// transRingBond finds in ring (atoms in ring order) a double bond written trans with respect
// to the ring (its ring neighbours on opposite sides; only rings of eight or more allow it). It
// returns the ring positions i and i+1 of its atoms.
func (t *templater) transRingBond(ring []int) (int, int, bool) {
	n := len(ring)
	if n < 8 {
		return 0, 0, false
	}
	m := t.m
	for i := 0; i < n; i++ {
		a, b := ring[i], ring[(i+1)%n]
		bi := m.BondBetween(a, b)
		if m.Bonds[bi].Order != mol.BondDouble {
			continue
		}
		x, sx := marked(m, a, b)
		y, sy := marked(m, b, a)
		if x < 0 || y < 0 {
			continue
		}
		trans := sx != sy
		if x != ring[(i+n-1)%n] { // the mark is on the exocyclic neighbour: the ring one is opposite
			trans = !trans
		}
		if y != ring[(i+2)%n] {
			trans = !trans
		}
		if trans {
			return i, (i + 1) % n, true
		}
	}
	return 0, 0, false
}

// transRing draws a ring whose atoms i, j (= i+1) form a trans double bond: the bond across the
// middle with its ring neighbours on opposite sides, the rest of the ring an arc round one end.
func transRing(ring []int, i, j int, out map[int]Point) {
	n := len(ring)
	a, b := ring[i], ring[j]
	x, y := ring[(i+n-1)%n], ring[(j+1)%n]
	out[a], out[b] = Point{0, 0}, Point{1, 0}
	out[x] = unit(2 * math.Pi / 3)
	out[y] = Point{1, 0}.add(unit(-math.Pi / 3))
	pts := arc(out[y], out[x], n-3)
	alt := make([]Point, len(pts))
	for k, p := range pts {
		alt[k] = mirror(p, out[y], out[x])
	}
	// the arc that keeps clear of the double bond
	near := func(ps []Point) float64 {
		d := math.Inf(1)
		for _, p := range ps {
			d = math.Min(d, math.Min(dist(p, out[a]), dist(p, out[b])))
		}
		return d
	}
	if near(alt) > near(pts) {
		pts = alt
	}
	for k := 0; k < n-4; k++ {
		out[ring[(j+2+k)%n]] = pts[k]
	}
}

// polygon places ring atoms (in ring order) on a regular polygon of unit sides around centre c,
// the first at angle a0.
func polygon(ring []int, c Point, a0 float64, out map[int]Point) {
	n := len(ring)
	rad := 1 / (2 * math.Sin(math.Pi/float64(n)))
	for k, a := range ring {
		out[a] = c.add(unit(a0 + 2*math.Pi*float64(k)/float64(n)).scale(rad))
	}
}

// attachRing places the unplaced atoms of ring (in ring order) next to the placed ones in out.
func (t *templater) attachRing(ring []int, out map[int]Point) {
	n := len(ring)
	in := make([]bool, n)
	cnt := 0
	for k, a := range ring {
		if _, ok := out[a]; ok {
			in[k] = true
			cnt++
		}
	}
	centroid := Point{}
	for _, p := range out {
		centroid = centroid.add(p)
	}
	centroid = centroid.scale(1 / float64(len(out)))
	if cnt == 0 {
		far := Point{}
		for _, p := range out {
			far.X = math.Max(far.X, p.X)
		}
		polygon(ring, Point{far.X + 3, 0}, 0, out)
		return
	}
	// the placed atoms as one run in ring order: start just after an unplaced atom
	start := -1
	for k := 0; k < n; k++ {
		if in[k] && !in[(k+n-1)%n] {
			start = k
			break
		}
	}
	if start < 0 { // every atom placed already
		return
	}
	run := 0
	for run < n && in[(start+run)%n] {
		run++
	}
	u := ring[start]           // first placed atom of the run
	v := ring[(start+run-1)%n] // last placed atom of the run
	free := n - run            // atoms to place, from after v round to before u
	freeAt := func(k int) int { return ring[(start+run+k)%n] }
	if run == 1 {
		// spiro: a polygon through u, away from u's placed neighbourhood
		away := out[u].sub(centroid)
		if away.len() < 1e-6 {
			away = Point{1, 0}
		}
		rad := 1 / (2 * math.Sin(math.Pi/float64(n)))
		c := out[u].add(away.norm().scale(rad))
		a0 := out[u].sub(c).angle()
		for k := 1; k < n; k++ {
			a := ring[(start+k)%n]
			if _, ok := out[a]; !ok {
				out[a] = c.add(unit(a0 + 2*math.Pi*float64(k)/float64(n)).scale(rad))
			}
		}
		return
	}
	pu, pv := out[u], out[v]
	if run == 2 {
		// fused across bond u–v: the polygon on the side away from the placed atoms
		m := mid(pu, pv)
		nrm := pv.sub(pu).rot(math.Pi / 2).norm()
		if nrm.X*(centroid.X-m.X)+nrm.Y*(centroid.Y-m.Y) > 0 {
			nrm = nrm.scale(-1)
		}
		apo := 1 / (2 * math.Tan(math.Pi/float64(n)))
		c := m.add(nrm.scale(apo))
		rad := 1 / (2 * math.Sin(math.Pi/float64(n)))
		av := pv.sub(c).angle()
		au := pu.sub(c).angle()
		step := 2 * math.Pi / float64(n)
		// go from v away from u
		dir := 1.0
		if math.Abs(angleDiff(av+step, au)) < 1e-6 {
			dir = -1
		}
		for k := 0; k < free; k++ {
			out[freeAt(k)] = c.add(unit(av + dir*step*float64(k+1)).scale(rad))
		}
		return
	}
	// bridged: an arc of free+1 unit steps from v to u, on the less crowded side
	pts := arc(pv, pu, free+1)
	alt := make([]Point, len(pts))
	for i, p := range pts { // the mirror image across the chord
		alt[i] = mirror(p, pv, pu)
	}
	crowd := func(ps []Point) float64 {
		s := 0.0
		for _, p := range ps {
			for _, q := range out {
				d := dist(p, q)
				s += 1 / (d*d + 0.05)
			}
		}
		return s
	}
	if crowd(alt) < crowd(pts) {
		pts = alt
	}
	for k := 0; k < free; k++ {
		out[freeAt(k)] = pts[k]
	}
}

// arc returns the steps-1 inner points of a circular arc from p to q made of steps chords of
// length one (or of equal length when p and q are too far apart for that).
func arc(p, q Point, steps int) []Point {
	c := dist(p, q)
	var out []Point
	if c >= float64(steps)-1e-9 || c < 1e-9 {
		for k := 1; k < steps; k++ {
			out = append(out, p.add(q.sub(p).scale(float64(k)/float64(steps))))
		}
		return out
	}
	// find the angle th per chord: chord length 1 = 2R sin(th/2), c = 2R sin(steps th/2)
	lo, hi := 1e-9, 2*math.Pi/float64(steps)-1e-9
	f := func(th float64) float64 {
		return math.Sin(float64(steps)*th/2)/math.Sin(th/2) - c
	}
	for i := 0; i < 60; i++ {
		md := (lo + hi) / 2
		if f(md) > 0 {
			lo = md
		} else {
			hi = md
		}
	}
	th := (lo + hi) / 2
	rad := 1 / (2 * math.Sin(th/2))
	m := mid(p, q)
	h := math.Sqrt(math.Max(0, rad*rad-c*c/4))
	nrm := q.sub(p).rot(math.Pi / 2).norm()
	// centre on the side opposite the bulge when the arc is less than half a circle
	total := th * float64(steps)
	var cen Point
	if total <= math.Pi {
		cen = m.sub(nrm.scale(h))
	} else {
		cen = m.add(nrm.scale(h))
	}
	a0 := p.sub(cen).angle()
	a1 := q.sub(cen).angle()
	dir := 1.0
	if math.Abs(angleDiff(a0+total, a1)) > 1e-3 {
		dir = -1
	}
	for k := 1; k < steps; k++ {
		out = append(out, cen.add(unit(a0+dir*th*float64(k)).scale(rad)))
	}
	return out
}

func mirror(p, a, b Point) Point {
	d := b.sub(a).norm()
	v := p.sub(a)
	proj := d.scale(v.X*d.X + v.Y*d.Y)
	return a.add(proj.scale(2).sub(v))
}

func angleDiff(a, b float64) float64 {
	d := math.Mod(a-b, 2*math.Pi)
	if d > math.Pi {
		d -= 2 * math.Pi
	}
	if d < -math.Pi {
		d += 2 * math.Pi
	}
	return d
}

func inList(list []int, x int) bool {
	for _, y := range list {
		if y == x {
			return true
		}
	}
	return false
}

// centreAtom returns an atom in the middle of the longest shortest path of the component.
func centreAtom(m *mol.Molecule, atoms []int) int {
	far := func(s int) (int, []int) {
		prev := map[int]int{s: -1}
		q := []int{s}
		last := s
		for len(q) > 0 {
			a := q[0]
			q = q[1:]
			last = a
			for _, x := range m.NeighborAtoms(a) {
				if _, ok := prev[x]; !ok {
					prev[x] = a
					q = append(q, x)
				}
			}
		}
		var path []int
		for x := last; x >= 0; x = prev[x] {
			path = append(path, x)
		}
		return last, path
	}
	e, _ := far(atoms[0])
	_, path := far(e)
	return path[len(path)/2]
}
