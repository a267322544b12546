package forcefield

import "math"

// The seven MMFF94 energy terms in kcal/mol (Halgren, J. Comput. Chem. 1996, 17, 490, eqs 2–8),
// with coordinates in Å and angles in degrees where the papers use degrees:
//
//	bond stretch   EB  = 143.9325/2 · kb Δr² (1 + cs Δr + 7/12 cs² Δr²), cs = −2 Å⁻¹
//	angle bend     EA  = 0.043844/2 · ka Δθ² (1 + cb Δθ), cb = −0.006981317 deg⁻¹;
//	               linear centres: EA = 143.9325 ka (1 + cos θ)
//	stretch–bend   EBA = 2.51210 (kIJK Δr_IJ + kKJI Δr_KJ) Δθ
//	out-of-plane   EOOP = 0.043844/2 · koop χ² (Wilson angle χ, each of three per centre)
//	torsion        ET  = ½ (V1 (1 + cos φ) + V2 (1 − cos 2φ) + V3 (1 + cos 3φ))
//	van der Waals  EvdW = ε (1.07 R*/(R + 0.07 R*))⁷ (1.12 R*⁷/(R⁷ + 0.12 R*⁷) − 2)
//	electrostatic  EQ  = 332.0716 q_i q_j / (R + 0.05)   (× 0.75 for 1-4 pairs)

// Terms is the energy of each term, kcal/mol.
type Terms struct {
	Bond          float64 `json:"bond"`
	Angle         float64 `json:"angle"`
	StretchBend   float64 `json:"stretch_bend"`
	OutOfPlane    float64 `json:"out_of_plane"`
	Torsion       float64 `json:"torsion"`
	VanDerWaals   float64 `json:"van_der_waals"`
	Electrostatic float64 `json:"electrostatic"`
}

// Total is the sum of the terms.
func (t Terms) Total() float64 {
	return t.Bond + t.Angle + t.StretchBend + t.OutOfPlane + t.Torsion + t.VanDerWaals + t.Electrostatic
}

const (
	mdynToKcal = 143.9325     // mdyn Å → kcal/mol
	angleConst = 0.043844     // mdyn Å/rad² with Δθ in degrees → kcal/mol
	cs         = -2.0         // Å⁻¹
	cb         = -0.006981317 // deg⁻¹
	sbConst    = 2.51210
	coulomb    = 332.0716
	radToDeg   = 180 / math.Pi
)

type vec [3]float64

func at(x []float64, i int) vec { return vec{x[3*i], x[3*i+1], x[3*i+2]} }
func sub(a, b vec) vec          { return vec{a[0] - b[0], a[1] - b[1], a[2] - b[2]} }
func add(a, b vec) vec          { return vec{a[0] + b[0], a[1] + b[1], a[2] + b[2]} }
func scale(a vec, s float64) vec {
	return vec{a[0] * s, a[1] * s, a[2] * s}
}
func dot(a, b vec) float64 { return a[0]*b[0] + a[1]*b[1] + a[2]*b[2] }
func cross(a, b vec) vec {
	return vec{a[1]*b[2] - a[2]*b[1], a[2]*b[0] - a[0]*b[2], a[0]*b[1] - a[1]*b[0]}
}
func norm(a vec) float64 { return math.Sqrt(dot(a, a)) }

func addGrad(g []float64, i int, v vec, s float64) {
	g[3*i] += v[0] * s
	g[3*i+1] += v[1] * s
	g[3*i+2] += v[2] * s
}

// Energy returns the total energy at coordinates x (3 per atom, Å).
func (s *System) Energy(x []float64) float64 { return s.Terms(x).Total() }

// Terms returns the energy of each term at coordinates x.
func (s *System) Terms(x []float64) Terms { return s.eval(x, nil) }

// Gradient writes the gradient (kcal/mol/Å) into g, which must hold 3 per atom, and returns the
// energy.
func (s *System) Gradient(x, g []float64) float64 {
	for k := range g {
		g[k] = 0
	}
	return s.eval(x, g).Total()
}

// eval computes the terms and, when g is not nil, adds the gradient to g. It allocates nothing.
func (s *System) eval(x, g []float64) Terms {
	var t Terms
	t.Bond = s.evalBonds(x, g)
	t.Angle, t.StretchBend = s.evalAngles(x, g)
	for _, o := range s.oops {
		t.OutOfPlane += wilson(x, g, o.i, o.j, o.k, o.l, o.koop)
		t.OutOfPlane += wilson(x, g, o.i, o.j, o.l, o.k, o.koop)
		t.OutOfPlane += wilson(x, g, o.k, o.j, o.l, o.i, o.koop)
	}
	for n := range s.tors {
		t.Torsion += torsion(x, g, &s.tors[n])
	}
	t.VanDerWaals, t.Electrostatic = s.evalPairs(x, g)
	return t
}

func (s *System) evalBonds(x, g []float64) float64 {
	var e float64
	for n := range s.bonds {
		b := &s.bonds[n]
		i3, j3 := 3*b.i, 3*b.j
		dx, dy, dz := x[i3]-x[j3], x[i3+1]-x[j3+1], x[i3+2]-x[j3+2]
		r := math.Sqrt(dx*dx + dy*dy + dz*dz)
		dr := r - b.r0
		a := mdynToKcal / 2 * b.kb
		e += a * dr * dr * (1 + cs*dr + 7.0/12*cs*cs*dr*dr)
		if g != nil && r > 0 {
			pairGrad(g, i3, j3, a*(2*dr+3*cs*dr*dr+7.0/3*cs*cs*dr*dr*dr)/r, dx, dy, dz)
		}
	}
	return e
}

// pairGrad adds the gradient of a term that depends on the distance of two atoms only: f is
// (dE/dr)/r and (dx, dy, dz) the vector from the second atom (at g[j3]) to the first.
func pairGrad(g []float64, i3, j3 int, f, dx, dy, dz float64) {
	g[i3] += f * dx
	g[i3+1] += f * dy
	g[i3+2] += f * dz
	g[j3] -= f * dx
	g[j3+1] -= f * dy
	g[j3+2] -= f * dz
}

// evalAngles computes the angle bends and the stretch–bend couplings, which share the angle;
// written out in scalars.
func (s *System) evalAngles(x, g []float64) (eAngle, eSB float64) {
	for n := range s.angles {
		a := &s.angles[n]
		i3, j3, k3 := 3*a.i, 3*a.j, 3*a.k
		_ = x[i3+2]
		_ = x[j3+2]
		_ = x[k3+2]
		ux, uy, uz := x[i3]-x[j3], x[i3+1]-x[j3+1], x[i3+2]-x[j3+2]
		vx, vy, vz := x[k3]-x[j3], x[k3+1]-x[j3+1], x[k3+2]-x[j3+2]
		lu2, lv2 := ux*ux+uy*uy+uz*uz, vx*vx+vy*vy+vz*vz
		if lu2 == 0 || lv2 == 0 {
			continue
		}
		lu, lv := math.Sqrt(lu2), math.Sqrt(lv2)
		c := (ux*vx + uy*vy + uz*vz) / (lu * lv)
		c = math.Max(-1, math.Min(1, c))
		th := math.Acos(c)
		var de float64 // dE/dθ, θ in radians
		var ci, ck float64
		if a.linear {
			eAngle += mdynToKcal * a.ka * (1 + c)
			de = -mdynToKcal * a.ka * math.Sin(th)
		} else {
			dth := th*radToDeg - a.theta0
			eAngle += angleConst / 2 * a.ka * dth * dth * (1 + cb*dth)
			de = angleConst / 2 * a.ka * (2*dth + 3*cb*dth*dth) * radToDeg
			if a.sb {
				f := a.kIJK*(lu-a.r0IJ) + a.kKJI*(lv-a.r0KJ)
				eSB += sbConst * f * dth
				de += sbConst * f * radToDeg
				ci = sbConst * a.kIJK * dth / lu
				ck = sbConst * a.kKJI * dth / lv
			}
		}
		if g == nil {
			continue
		}
		_ = g[i3+2]
		_ = g[j3+2]
		_ = g[k3+2]
		sn := math.Sqrt(1 - c*c)
		if sn < 1e-8 {
			sn = 1e-8
		}
		// ∂θ/∂r_i = −(v/(|u||v|) − c u/|u|²)/sin θ, likewise for k; ∂θ/∂r_j is minus their sum
		p := -de / sn
		inv := 1 / (lu * lv)
		qi, qk := c/lu2, c/lv2
		gix, giy, giz := p*(vx*inv-ux*qi)+ci*ux, p*(vy*inv-uy*qi)+ci*uy, p*(vz*inv-uz*qi)+ci*uz
		gkx, gky, gkz := p*(ux*inv-vx*qk)+ck*vx, p*(uy*inv-vy*qk)+ck*vy, p*(uz*inv-vz*qk)+ck*vz
		g[i3] += gix
		g[i3+1] += giy
		g[i3+2] += giz
		g[k3] += gkx
		g[k3+1] += gky
		g[k3+2] += gkz
		g[j3] -= gix + gkx
		g[j3+1] -= giy + gky
		g[j3+2] -= giz + gkz
	}
	return eAngle, eSB
}

// evalPairs computes the buffered 14-7 van der Waals and buffered Coulomb energies.
func (s *System) evalPairs(x, g []float64) (eVdW, eQ float64) {
	for n := range s.pairs {
		p := &s.pairs[n]
		i3, j3 := 3*p.i, 3*p.j
		dx, dy, dz := x[i3]-x[j3], x[i3+1]-x[j3+1], x[i3+2]-x[j3+2]
		r2 := dx*dx + dy*dy + dz*dz
		r := math.Sqrt(r2)
		r6 := r2 * r2 * r2
		r7 := r6 * r
		den := 1 / (r + 0.07*p.rStar)
		q := 1.07 * p.rStar * den
		q2 := q * q
		q7 := q2 * q2 * q2 * q
		inv := 1 / (r7 + 0.12*p.rStar7)
		bterm := 1.12*p.rStar7*inv - 2
		eVdW += p.eps * q7 * bterm
		re := 1 / (r + 0.05)
		eq := p.qq * re
		eQ += eq
		if g != nil && r > 0 {
			dq7 := -7 * q7 * den
			dbterm := -7.84 * p.rStar7 * r6 * inv * inv
			pairGrad(g, i3, j3, (p.eps*(dq7*bterm+q7*dbterm)-eq*re)/r, dx, dy, dz)
		}
	}
	return eVdW, eQ
}

// wilson returns the out-of-plane energy of atom l from the plane i–j–k (j central) and adds
// its gradient to g.
func wilson(x, g []float64, i, j, k, l int, koop float64) float64 {
	u := sub(at(x, i), at(x, j))
	v := sub(at(x, k), at(x, j))
	w := sub(at(x, l), at(x, j))
	c := cross(u, v)
	lc, lw := norm(c), norm(w)
	if lc == 0 || lw == 0 {
		return 0
	}
	s := dot(c, w) / (lc * lw)
	s = math.Max(-1, math.Min(1, s))
	chi := math.Asin(s) * radToDeg
	e := angleConst / 2 * koop * chi * chi
	if g != nil {
		cosChi := math.Sqrt(1 - s*s)
		if cosChi < 1e-8 {
			cosChi = 1e-8
		}
		de := angleConst * koop * chi * radToDeg / cosChi // dE/ds
		gw := sub(scale(c, 1/(lc*lw)), scale(w, s/(lw*lw)))
		gc := sub(scale(w, 1/(lc*lw)), scale(c, s/(lc*lc)))
		gu := cross(v, gc)
		gv := cross(gc, u)
		addGrad(g, i, gu, de)
		addGrad(g, k, gv, de)
		addGrad(g, l, gw, de)
		addGrad(g, j, add(add(gu, gv), gw), -de)
	}
	return e
}

// dihedral returns the dihedral angle i–j–k–l (radians) and, when wanted, its gradient for the
// four atoms.
func dihedral(x []float64, i, j, k, l int, want bool) (float64, [4]vec) {
	b1 := sub(at(x, j), at(x, i))
	b2 := sub(at(x, k), at(x, j))
	b3 := sub(at(x, l), at(x, k))
	n1 := cross(b1, b2)
	n2 := cross(b2, b3)
	lb2 := norm(b2)
	phi := math.Atan2(lb2*dot(b1, n2), dot(n1, n2))
	var gr [4]vec
	if !want {
		return phi, gr
	}
	n1s, n2s := dot(n1, n1), dot(n2, n2)
	if n1s < 1e-16 || n2s < 1e-16 || lb2 == 0 {
		return phi, gr
	}
	gr[0] = scale(n1, -lb2/n1s)
	gr[3] = scale(n2, lb2/n2s)
	f1 := -dot(b1, b2) / (lb2 * lb2)
	f3 := -dot(b3, b2) / (lb2 * lb2)
	gr[1] = sub(scale(gr[0], f1-1), scale(gr[3], f3))
	gr[2] = sub(scale(gr[3], f3-1), scale(gr[0], f1))
	return phi, gr
}

// torsion computes one torsion term from cos φ and sin φ directly (cos 2φ = 2c² − 1,
// cos 3φ = 4c³ − 3c), without inverse trigonometric functions; written out in scalars, as it is
// the most frequent term.
func torsion(x, g []float64, t *torTerm) float64 {
	i3, j3, k3, l3 := 3*t.i, 3*t.j, 3*t.k, 3*t.l
	_ = x[i3+2]
	_ = x[j3+2]
	_ = x[k3+2]
	_ = x[l3+2]
	// b1 = j − i, b2 = k − j, b3 = l − k
	b1x, b1y, b1z := x[j3]-x[i3], x[j3+1]-x[i3+1], x[j3+2]-x[i3+2]
	b2x, b2y, b2z := x[k3]-x[j3], x[k3+1]-x[j3+1], x[k3+2]-x[j3+2]
	b3x, b3y, b3z := x[l3]-x[k3], x[l3+1]-x[k3+1], x[l3+2]-x[k3+2]
	// n1 = b1 × b2, n2 = b2 × b3
	n1x, n1y, n1z := b1y*b2z-b1z*b2y, b1z*b2x-b1x*b2z, b1x*b2y-b1y*b2x
	n2x, n2y, n2z := b2y*b3z-b2z*b3y, b2z*b3x-b2x*b3z, b2x*b3y-b2y*b3x
	n1s := n1x*n1x + n1y*n1y + n1z*n1z
	n2s := n2x*n2x + n2y*n2y + n2z*n2z
	b2s := b2x*b2x + b2y*b2y + b2z*b2z
	if n1s < 1e-16 || n2s < 1e-16 || b2s == 0 {
		// collinear atoms: φ undefined; take the value at φ = 0 with no force
		return t.v1 + t.v3
	}
	lb2 := math.Sqrt(b2s)
	inv := 1 / math.Sqrt(n1s*n2s)
	c := (n1x*n2x + n1y*n2y + n1z*n2z) * inv
	sn := lb2 * (b1x*n2x + b1y*n2y + b1z*n2z) * inv
	c2 := 2*c*c - 1
	c3 := c * (4*c*c - 3)
	e := 0.5 * (t.v1*(1+c) + t.v2*(1-c2) + t.v3*(1+c3))
	if g == nil {
		return e
	}
	_ = g[i3+2]
	_ = g[j3+2]
	_ = g[k3+2]
	_ = g[l3+2]
	// dE/dφ = ½(−V1 sin φ + 2 V2 sin 2φ − 3 V3 sin 3φ), sin 2φ = 2sc, sin 3φ = s(4c² − 1)
	de := 0.5 * (-t.v1*sn + 4*t.v2*sn*c - 3*t.v3*sn*(4*c*c-1))
	// ∂φ/∂i = −|b2|/|n1|² n1, ∂φ/∂l = |b2|/|n2|² n2, and the middle atoms from those
	a0 := -lb2 / n1s * de
	a3 := lb2 / n2s * de
	g0x, g0y, g0z := a0*n1x, a0*n1y, a0*n1z
	g3x, g3y, g3z := a3*n2x, a3*n2y, a3*n2z
	f1 := -(b1x*b2x + b1y*b2y + b1z*b2z) / b2s
	f3 := -(b3x*b2x + b3y*b2y + b3z*b2z) / b2s
	g[i3] += g0x
	g[i3+1] += g0y
	g[i3+2] += g0z
	g[l3] += g3x
	g[l3+1] += g3y
	g[l3+2] += g3z
	g[j3] += (f1-1)*g0x - f3*g3x
	g[j3+1] += (f1-1)*g0y - f3*g3y
	g[j3+2] += (f1-1)*g0z - f3*g3z
	g[k3] += (f3-1)*g3x - f1*g0x
	g[k3+1] += (f3-1)*g3y - f1*g0y
	g[k3+2] += (f3-1)*g3z - f1*g0z
	return e
}
