package forcefield

import (
	"errors"
	"math"
	"math/rand/v2"
)

// Embedding: 3-D coordinates from the graph by restraint minimization, our own variant of
// distance geometry. Atoms start at random points of a four-dimensional box; an objective of
// flat-bottomed distance restraints (bond lengths and 1,3 distances from the force field's
// reference lengths and angles, 1,4 distances across double bonds from their cis/trans
// geometry, and lower bounds between non-bonded atoms) plus chirality-volume restraints is
// minimized, first with the fourth coordinate free so that atoms can pass one another, then with
// a penalty that flattens it away. The result is refined with the force field by the caller.

// distRestraint keeps atoms i and j between lo and hi Å: E = k (lo − d)² below, k (d − hi)²
// above.
type distRestraint struct {
	i, j   int
	lo, hi float64
	k      float64
}

// embedder is the restraint objective of one molecule.
type embedder struct {
	n       int
	dists   []distRestraint
	centres []Centre
	// planar lists sp2 centres (atom and its three neighbours) held flat.
	planar [][4]int
	// w4 weights the penalty on the fourth coordinate (0 in the first stage).
	w4 float64
	// nBonded counts the restraints from the bonded topology (bonds, angles, olefins); the
	// non-bonded lower bounds follow them in dists and are left out while soft is set.
	nBonded int
	soft    bool
}

const (
	kBond           = 200.0
	kAngle          = 100.0
	kOlefin         = 50.0
	kRepel          = 10.0
	kChiral         = 20.0
	kPlanar         = 10.0
	minChiralVolume = 2.0 // Å³; about a third of an ideal carbon centre's (design choice)
)

// newEmbedder builds the restraints of s honouring the stereo elements st.
func newEmbedder(s *System, st Stereo) *embedder {
	m := s.Mol
	n := len(m.Atoms)
	e := &embedder{n: n, centres: st.Centres}
	r0 := make(map[[2]int]float64, len(s.bonds))
	for _, b := range s.bonds {
		r0[[2]int{min(b.i, b.j), max(b.i, b.j)}] = b.r0
		e.dists = append(e.dists, distRestraint{i: b.i, j: b.j, lo: b.r0 - 0.01, hi: b.r0 + 0.01, k: kBond})
	}
	bl := func(a, b int) float64 { return r0[[2]int{min(a, b), max(a, b)}] }
	th0 := make(map[[3]int]float64, len(s.angles))
	for _, a := range s.angles {
		t := a.theta0
		if a.linear {
			t = 180
		}
		th0[[3]int{min(a.i, a.k), a.j, max(a.i, a.k)}] = t
		d := lawOfCosines(bl(a.i, a.j), bl(a.j, a.k), t)
		e.dists = append(e.dists, distRestraint{i: a.i, j: a.k, lo: d - 0.02, hi: d + 0.02, k: kAngle})
	}
	angle := func(a, b, c int) float64 { return th0[[3]int{min(a, c), b, max(a, c)}] }
	// 1,4 distances across double bonds with a fixed geometry
	for _, o := range st.Olefins {
		for _, x := range m.NeighborAtoms(o.A) {
			if x == o.B {
				continue
			}
			for _, y := range m.NeighborAtoms(o.B) {
				if y == o.A {
					continue
				}
				trans := o.Trans
				if (x == o.X) != (y == o.Y) {
					trans = !trans
				}
				d := planar14(bl(x, o.A), bl(o.A, o.B), bl(o.B, y), angle(x, o.A, o.B), angle(o.A, o.B, y), trans)
				r := distRestraint{i: x, j: y, lo: d - 0.1, hi: d + 0.4, k: kOlefin}
				if trans {
					r.lo, r.hi = d-0.6, d+0.1 // strained rings twist a trans olefin
				}
				e.dists = append(e.dists, r)
			}
		}
	}
	e.nBonded = len(e.dists)
	// flat three-connected centres (those with an out-of-plane term)
	for _, o := range s.oops {
		e.planar = append(e.planar, [4]int{o.j, o.i, o.k, o.l})
	}
	// lower bounds between atoms three or more bonds apart
	for _, p := range s.pairs {
		hi, hj := m.Atoms[p.i].Z == 1, m.Atoms[p.j].Z == 1
		var lo float64
		switch {
		case hi && hj:
			lo = 1.9
		case hi || hj:
			lo = 2.3
		default:
			lo = 2.9
		}
		if p.oneFour {
			lo -= 0.4
		}
		e.dists = append(e.dists, distRestraint{i: p.i, j: p.j, lo: lo, hi: math.Inf(1), k: kRepel})
	}
	return e
}

// lawOfCosines is the distance between the ends of two bonds a and b meeting at theta degrees.
func lawOfCosines(a, b, thetaDeg float64) float64 {
	return math.Sqrt(math.Max(0, a*a+b*b-2*a*b*math.Cos(thetaDeg*math.Pi/180)))
}

// planar14 is the X…Y distance of a planar X–A=B–Y unit (cis or trans) from its bond lengths
// and angles (degrees).
func planar14(xa, ab, by, thXAB, thABY float64, trans bool) float64 {
	// A at the origin, B on +x; X above the axis; Y above (cis) or below (trans)
	t1 := thXAB * math.Pi / 180
	t2 := thABY * math.Pi / 180
	x := [2]float64{-xa * math.Cos(t1), xa * math.Sin(t1)}
	y := [2]float64{ab + by*math.Cos(t2), by * math.Sin(t2)}
	if trans {
		y[1] = -y[1]
	}
	return math.Hypot(x[0]-y[0], x[1]-y[1])
}

// value returns the objective at x (4 per atom) and writes its gradient into g.
func (e *embedder) value(x, g []float64) float64 {
	for k := range g {
		g[k] = 0
	}
	var total float64
	dists := e.dists
	if e.soft {
		dists = dists[:e.nBonded]
	}
	for _, r := range dists {
		i, j := 4*r.i, 4*r.j
		d0, d1, d2, d3 := x[i]-x[j], x[i+1]-x[j+1], x[i+2]-x[j+2], x[i+3]-x[j+3]
		d := math.Sqrt(d0*d0 + d1*d1 + d2*d2 + d3*d3)
		var viol float64
		switch {
		case d < r.lo:
			viol = d - r.lo
		case d > r.hi:
			viol = d - r.hi
		default:
			continue
		}
		total += r.k * viol * viol
		if d < 1e-8 {
			continue
		}
		f := 2 * r.k * viol / d
		g[i] += f * d0
		g[i+1] += f * d1
		g[i+2] += f * d2
		g[i+3] += f * d3
		g[j] -= f * d0
		g[j+1] -= f * d1
		g[j+2] -= f * d2
		g[j+3] -= f * d3
	}
	for _, c := range e.centres {
		v, gv := volume4(x, c.Nbrs)
		sv := float64(c.Sign) * v
		if sv >= minChiralVolume {
			continue
		}
		viol := minChiralVolume - sv
		total += kChiral * viol * viol
		f := -2 * kChiral * viol * float64(c.Sign)
		for n, a := range c.Nbrs {
			for d := 0; d < 3; d++ {
				g[4*a+d] += f * gv[n][d]
			}
		}
	}
	for _, p := range e.planar {
		if e.soft {
			break
		}
		v, gv := volume4(x, p)
		total += kPlanar * v * v
		f := 2 * kPlanar * v
		for n, a := range p {
			for d := 0; d < 3; d++ {
				g[4*a+d] += f * gv[n][d]
			}
		}
	}
	if e.w4 > 0 {
		for a := 0; a < e.n; a++ {
			w := x[4*a+3]
			total += e.w4 * w * w
			g[4*a+3] += 2 * e.w4 * w
		}
	}
	return total
}

// volume4 is the triple product (p1−p0)·((p2−p0)×(p3−p0)) over the first three coordinates of
// four atoms (4 coordinates per atom in x), with its gradient for each atom.
func volume4(x []float64, p [4]int) (float64, [4]vec) {
	o := vec{x[4*p[0]], x[4*p[0]+1], x[4*p[0]+2]}
	a := sub(vec{x[4*p[1]], x[4*p[1]+1], x[4*p[1]+2]}, o)
	b := sub(vec{x[4*p[2]], x[4*p[2]+1], x[4*p[2]+2]}, o)
	c := sub(vec{x[4*p[3]], x[4*p[3]+1], x[4*p[3]+2]}, o)
	bc, ca, ab := cross(b, c), cross(c, a), cross(a, b)
	v := dot(a, bc)
	var g [4]vec
	g[1], g[2], g[3] = bc, ca, ab
	g[0] = scale(add(add(bc, ca), ab), -1)
	return v, g
}

// ErrEmbedding reports that no 3-D structure honouring the stereo elements was found within the
// attempts allowed.
var ErrEmbedding = errors.New("no 3-D structure honouring the stereo elements was found")

// embed returns 3-D coordinates (3 per atom) for s honouring st, or ErrEmbedding after
// attempts tries. The restraint minimizations are bounded by maxIter iterations each.
func (e *embedder) embed(rng *rand.Rand, st Stereo, attempts, maxIter int) ([]float64, error) {
	n := e.n
	side := 2.0 * math.Cbrt(float64(n)) // Å: a box a little larger than the molecule
	x4 := make([]float64, 4*n)
	for try := 0; try < attempts; try++ {
		for k := range x4 {
			x4[k] = side * (rng.Float64() - 0.5)
		}
		e.w4, e.soft = 0, true
		if _, err := lbfgs(e.value, x4, MinimizeOptions{MaxIterations: maxIter, GradientTol: 1e-2}); err != nil {
			continue
		}
		e.soft = false
		failed := false
		for _, w := range [...]float64{1, 20} {
			e.w4 = w
			if _, err := lbfgs(e.value, x4, MinimizeOptions{MaxIterations: maxIter, GradientTol: 1e-3}); err != nil {
				failed = true
				break
			}
		}
		if failed {
			continue
		}
		x := make([]float64, 3*n)
		for a := 0; a < n; a++ {
			x[3*a], x[3*a+1], x[3*a+2] = x4[4*a], x4[4*a+1], x4[4*a+2]
		}
		if c, o := st.StereoViolations(x); len(c) == 0 && len(o) == 0 {
			return x, nil
		}
	}
	return nil, ErrEmbedding
}

// Embed returns one set of 3-D coordinates for s (3 per atom, Å) honouring the stereo
// elements st, relaxed with the force field, from the random source rng. Errors: ErrEmbedding
// when no structure with the right stereo was found in embedAttempts attempts.
func (s *System) Embed(st Stereo, rng *rand.Rand) ([]float64, error) {
	return s.embedWith(newEmbedder(s, st), st, rng, MinimizeOptions{})
}

// embedAttempts bounds the random starts of one embedding (design choice: a structure whose
// stereo cannot be met in this many starts is reported, not searched for without end).
const embedAttempts = 40

func (s *System) embedWith(e *embedder, st Stereo, rng *rand.Rand, opt MinimizeOptions) ([]float64, error) {
	for try := 0; try < embedAttempts; try++ {
		x, err := e.embed(rng, st, 1, 500)
		if err != nil {
			continue
		}
		if _, err := s.Minimize(x, opt); err != nil {
			continue
		}
		if c, o := st.StereoViolations(x); len(c) == 0 && len(o) == 0 {
			return x, nil
		}
	}
	return nil, ErrEmbedding
}
