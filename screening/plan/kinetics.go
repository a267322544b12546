package plan

import (
	"math"
	"ringsieve/screening/thermo"
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

// SlowInitiationRatio returns the monomer-to-initiator ratio X at which the chains actually
// started reach the number-average degree of polymerization dp at conversion p, for
// r = k_p/k_i (Gold model, above): DP_n(X) rises with X, so X is found by bisection between
// dp/p/1000 and dp/p (every initiator started).
func SlowInitiationRatio(r, dp, p float64) float64 {
	hi := dp / p
	if r <= 0 {
		return hi
	}
	lo := hi / 1000
	for i := 0; i < 100; i++ {
		mid := math.Sqrt(lo * hi)
		if GoldAt(r, mid, p).DPn < dp {
			lo = mid
		} else {
			hi = mid
		}
		if hi/lo < 1+1e-9 {
			break
		}
	}
	return math.Sqrt(lo * hi)
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

// The Jacobson–Stockmayer functions live in the thermo step (thermo/ringchain.go), which also
// uses them for strain-free macrocycles; these names keep the planning code readable.
var (
	JSConstantMolL       = thermo.JSConstantMolL
	JSCriticalConc       = thermo.JSCriticalConc
	MeanSquareBondLength = thermo.MeanSquareBondLength
)
