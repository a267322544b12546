package plan

import (
	"math"

	"ringsieve/screening/units"
)

// Living-polymerization statistics.

// PoissonDispersity is Đ = Mw/Mn for instantaneous initiation and no termination or transfer:
// each chain carries one unit from initiation plus a Poisson-distributed number of propagation
// steps with mean ν = DP_n − 1, so Đ = 1 + ν/(ν+1)² (Flory, J. Am. Chem. Soc. 1940, 62, 1561,
// DOI 10.1021/ja01864a037). dpn must be ≥ 1.
func PoissonDispersity(dpn float64) float64 {
	nu := dpn - 1
	return 1 + nu/((nu+1)*(nu+1))
}

// goldMoments returns μ0, μ1, μ2 of the chain-length distribution per initiator for initiation
// slower than propagation (Gold, J. Chem. Phys. 1958, 28, 91, DOI 10.1063/1.1744087; moments in
// the closed form of the project reference romp_facts.md b.3), with s = k_i ∫[M]dt and
// r = k_p/k_i:
//
//	μ0 = 1 − e,  μ1 = (1 − e) + r[s − (1 − e)],
//	μ2 = (1 − e) + 3r[s − (1 − e)] + 2r²[s²/2 − s + (1 − e)],  e = exp(−s).
//
// Small s uses series for the two differences to avoid cancellation.
func goldMoments(s, r float64) (mu0, mu1, mu2 float64) {
	oneMinusE := -math.Expm1(-s)
	var d1, d2 float64 // s − (1 − e), s²/2 − s + (1 − e)
	if s < 1e-3 {
		d1 = s*s/2 - s*s*s/6 + s*s*s*s/24
		d2 = s*s*s/6 - s*s*s*s/24 + s*s*s*s*s/120
	} else {
		d1 = s - oneMinusE
		d2 = s*s/2 - d1
	}
	mu0 = oneMinusE
	mu1 = oneMinusE + r*d1
	mu2 = oneMinusE + 3*r*d1 + 2*r*r*d2
	return
}

// GoldResult is the slow-initiation outcome at one conversion.
type GoldResult struct {
	Dispersity          float64 // Mw/Mn of the chains started
	DPn                 float64 // real number-average degree of polymerization
	UnreactedInitiator  float64 // fraction of initiator never started
	S                   float64 // k_i ∫[M]dt at this conversion
	MonomerPerInitiator float64 // X = [M]0/[I]0
}

// GoldAt solves μ1(s) = p·X by bisection (μ1 rises monotonically with s) and returns dispersity,
// real DP_n and unreacted initiator at conversion p (0 < p ≤ 1) for X = [M]0/[I]0 and
// r = k_p/k_i. r = 0 is instantaneous initiation.
func GoldAt(r, x, p float64) GoldResult {
	target := p * x
	lo, hi := 0.0, 1.0
	for {
		_, m1, _ := goldMoments(hi, r)
		if m1 >= target || hi > 1e15 {
			break
		}
		hi *= 2
	}
	for i := 0; i < 200; i++ {
		mid := (lo + hi) / 2
		_, m1, _ := goldMoments(mid, r)
		if m1 < target {
			lo = mid
		} else {
			hi = mid
		}
		if hi-lo <= 1e-14*hi {
			break
		}
	}
	s := (lo + hi) / 2
	m0, m1, m2 := goldMoments(s, r)
	return GoldResult{Dispersity: m2 * m0 / (m1 * m1), DPn: m1 / m0, UnreactedInitiator: math.Exp(-s), S: s, MonomerPerInitiator: x}
}

// TimeToConversion returns the time (s) to reach conversion p:
//   - instantaneous initiation (ki <= 0 or ki >= kp treated exactly by the same integral):
//     the integral below reduces to t = −ln(1 − p)/(k_p [I]0) when every initiator starts at once;
//   - in general t(p) = ∫0^s(p) ds′ / (k_i ([M]0 − [I]0 μ1(s′))), evaluated by adaptive Simpson
//     quadrature (romp_facts.md b.3, b.4).
//
// kp, ki in L/(mol s), concentrations in mol/L. It returns +Inf when p cannot be reached.
func TimeToConversion(kp, ki, m0, i0, p float64) float64 {
	if p <= 0 {
		return 0
	}
	if p >= 1 || kp <= 0 || i0 <= 0 || m0 <= 0 {
		return math.Inf(1)
	}
	if ki <= 0 {
		// instantaneous initiation: −ln(1 − p)/(k_p·f_i·[I]0) with f_i = 1
		return -math.Log1p(-p) / (kp * i0)
	}
	r := kp / ki
	g := GoldAt(r, m0/i0, p)
	f := func(s float64) float64 {
		_, m1, _ := goldMoments(s, r)
		left := m0 - i0*m1
		if left <= 0 {
			return math.Inf(1)
		}
		return 1 / (ki * left)
	}
	return adaptiveSimpson(f, 0, g.S, 1e-10, 40)
}

func adaptiveSimpson(f func(float64) float64, a, b, eps float64, depth int) float64 {
	c := (a + b) / 2
	fa, fb, fc := f(a), f(b), f(c)
	whole := (b - a) / 6 * (fa + 4*fc + fb)
	return simpsonRec(f, a, b, fa, fb, fc, whole, eps, depth)
}

func simpsonRec(f func(float64) float64, a, b, fa, fb, fc, whole, eps float64, depth int) float64 {
	c := (a + b) / 2
	d, e := (a+c)/2, (c+b)/2
	fd, fe := f(d), f(e)
	left := (c - a) / 6 * (fa + 4*fd + fc)
	right := (b - c) / 6 * (fc + 4*fe + fb)
	if depth <= 0 || math.Abs(left+right-whole) <= 15*eps {
		return left + right + (left+right-whole)/15
	}
	return simpsonRec(f, a, c, fa, fc, fd, left, eps/2, depth-1) + simpsonRec(f, c, b, fc, fb, fe, right, eps/2, depth-1)
}

// Jacobson–Stockmayer ring–chain equilibrium (Jacobson & Stockmayer, J. Chem. Phys. 1950, 18,
// 1600, DOI 10.1063/1.1747547), Gaussian chain statistics: the molar cyclization constant of the
// x-meric ring is K_x = B·x^(−5/2) with
//
//	B = (3/(2π·C·ν_b·⟨l²⟩))^(3/2) / (2·N_A)     (σ_x = 2x, repeat unit readable both ways),
//
// and the critical concentration (monomer units held in rings) is c_crit = B·Σ_{x ≥ x_min} x^(−3/2).
// These are model values, not measurements (romp_facts.md section c).

// zeta32 is ζ(3/2) = Σ_{x≥1} x^(−3/2).
const zeta32 = 2.612375348685488

// JSConstantMolL returns B in mol/L for skeletal bonds per repeat unit nuB, mean-square bond
// length l2 (Å²) and characteristic ratio c.
func JSConstantMolL(nuB, l2A2, c float64) float64 {
	l2 := l2A2 * 1e-20                                                      // m²
	b := math.Pow(3/(2*math.Pi*c*nuB*l2), 1.5) / (2 * units.AvogadroPerMol) // mol/m³
	return b / 1000
}

// JSCriticalConc returns c_crit = B·Σ_{x ≥ xMin} x^(−3/2) in mol/L of repeat units.
func JSCriticalConc(b float64, xMin int) float64 {
	sum := zeta32
	for x := 1; x < xMin; x++ {
		sum -= math.Pow(float64(x), -1.5)
	}
	return b * sum
}

// MeanSquareBondLength returns ⟨l²⟩ in Å² of a polyalkenamer repeat unit with nuB skeletal
// bonds: one C=C (1.34 Å), two =CH–CH2 (1.50 Å) and the rest CH2–CH2 (1.53 Å) (standard bond
// lengths, from memory; romp_facts.md section c).
func MeanSquareBondLength(nuB int) float64 {
	return (1.34*1.34 + 2*1.50*1.50 + float64(nuB-3)*1.53*1.53) / float64(nuB)
}
