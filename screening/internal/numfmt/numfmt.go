// Package numfmt appends floating-point numbers in decimal with a fixed number of decimals or of
// significant digits: byte for byte what strconv.AppendFloat writes for the formats 'f' and 'g'
// with a precision, by integer arithmetic on the common magnitudes (result tables and reason
// texts write a dozen such numbers per structure) and by strconv on the rest.
//
// The scaled value x·10^k is split exactly into the rounded product and its error (a fused
// multiply-add gives the error of a product exactly; 10^k is exact in float64 for k ≤ 22), so
// it is rounded to the nearest integer as the exact binary value would be, ties to even, as
// strconv rounds (TestMatchesStrconv, FuzzMatchesStrconv).
package numfmt

import (
	"math"
	"slices"
	"strconv"
)

// pow10 holds the powers of ten that are exact in float64 and in uint64.
var pow10 = [...]float64{1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15}

var pow10u = [...]uint64{1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15}

// maxScaled bounds the scaled values taken by the integer path (below 2^52, so that a float64
// holds every integer and half-integer up to it exactly).
const maxScaled = 1 << 52

// roundScaled returns ax·10^k rounded to the nearest integer, ties to even, for a finite
// ax ≥ 0 and 0 ≤ k < len(pow10); ok is false when the scaled value is too large for the
// integer path.
func roundScaled(ax float64, k int) (n uint64, ok bool) {
	p := pow10[k]
	hi := ax * p
	if !(hi < maxScaled) {
		return 0, false
	}
	lo := math.FMA(ax, p, -hi) // ax·p = hi + lo exactly
	fl := math.Floor(hi)
	n = uint64(fl)
	// the exact value's distance above n + ½: hi−fl−½ is exact where it matters (near zero)
	d := (hi - fl - 0.5) + lo
	if d > 0 || d == 0 && n%2 == 1 {
		n++
	}
	return n, true
}

// AppendFixed appends x with prec decimals: strconv.AppendFloat(b, x, 'f', prec, 64).
func AppendFixed(b []byte, x float64, prec int) []byte {
	if prec < 0 || prec >= len(pow10) || math.IsNaN(x) || math.IsInf(x, 0) {
		return strconv.AppendFloat(b, x, 'f', prec, 64)
	}
	n, ok := roundScaled(math.Abs(x), prec)
	if !ok {
		return strconv.AppendFloat(b, x, 'f', prec, 64)
	}
	if math.Signbit(x) {
		b = append(b, '-')
	}
	return appendScaled(b, n, prec, false)
}

// AppendSig appends x with prec significant digits: strconv.AppendFloat(b, x, 'g', prec, 64)
// (trailing zeros dropped; an exponent below −4 or from prec on is written by strconv).
func AppendSig(b []byte, x float64, prec int) []byte {
	if prec <= 0 || prec >= len(pow10) || x == 0 || math.IsNaN(x) || math.IsInf(x, 0) {
		return strconv.AppendFloat(b, x, 'g', prec, 64)
	}
	ax := math.Abs(x)
	e := exponentGuess(ax) // the decimal exponent, maybe off by one: checked below
guess:
	for range 3 {
		k := prec - 1 - e
		if e < -4 || e >= prec || k >= len(pow10) {
			break // the exponent form, or too many decimals for the integer path
		}
		n, ok := roundScaled(ax, k)
		if !ok {
			break
		}
		switch {
		case n < pow10u[prec-1]:
			e-- // fewer digits than asked: the exponent was guessed too large
			continue
		case n >= pow10u[prec]:
			if n == pow10u[prec] && ax*pow10[k] < pow10[prec] {
				// rounding carried into a new digit (9.9996 → 10.00): one digit fewer after
				// the point, the same digits; the exponent may now call for the other form
				e++
				if e >= prec {
					break guess
				}
				n, k = pow10u[prec-1], k-1
			} else {
				e++ // more digits than asked: the exponent was guessed too small
				continue
			}
		}
		if math.Signbit(x) {
			b = append(b, '-')
		}
		return appendScaled(b, n, k, true)
	}
	return strconv.AppendFloat(b, x, 'g', prec, 64)
}

// exponentGuess returns about floor(log10(ax)) for the magnitudes the integer path takes (it
// may be off by one near a power of ten: AppendSig corrects it) and a value outside them else.
func exponentGuess(ax float64) int {
	if ax >= 1 {
		e := 0
		for e+1 < len(pow10) && ax >= pow10[e+1] {
			e++
		}
		return e
	}
	e := -1
	for e > -6 && ax*pow10[-e] < 1 {
		e--
	}
	return e
}

// appendScaled appends n·10^−k with k decimals, or with trailing zero decimals (and then the
// point) dropped when trim is set. The digits are written in place, last first.
func appendScaled(b []byte, n uint64, k int, trim bool) []byte {
	if trim {
		for k > 0 && n%10 == 0 {
			n /= 10
			k--
		}
	}
	digits := 1 // n's digits, at least k+1 so that a number below one reads "0.…"
	for x := n; x >= 10; x /= 10 {
		digits++
	}
	digits = max(digits, k+1)
	size := digits
	if k > 0 {
		size++ // the point
	}
	start := len(b)
	b = slices.Grow(b, size)[:start+size]
	i := len(b) - 1
	for range k {
		b[i] = byte('0' + n%10)
		n /= 10
		i--
	}
	if k > 0 {
		b[i] = '.'
		i--
	}
	for ; i >= start; i-- {
		b[i] = byte('0' + n%10)
		n /= 10
	}
	return b
}
