package numfmt

import (
	"math"
	"math/rand/v2"
	"strconv"
	"testing"
)

// check compares both formats with strconv for x at the precisions the project writes and
// around them.
func check(t *testing.T, x float64) {
	t.Helper()
	for prec := 0; prec <= 16; prec++ {
		if got, want := string(AppendFixed(nil, x, prec)), strconv.FormatFloat(x, 'f', prec, 64); got != want {
			t.Fatalf("AppendFixed(%v (%b), %d) = %q, strconv %q", x, x, prec, got, want)
		}
		if got, want := string(AppendSig(nil, x, prec)), strconv.FormatFloat(x, 'g', prec, 64); got != want {
			t.Fatalf("AppendSig(%v (%b), %d) = %q, strconv %q", x, x, prec, got, want)
		}
	}
}

// TestMatchesStrconv: the bytes are strconv's for edge values (zeros, ties at every decimal,
// carries into a new digit, the exponent form's bounds, huge and tiny numbers, NaN and
// infinities) and for 200,000 random values over many magnitudes.
func TestMatchesStrconv(t *testing.T) {
	edges := []float64{0, math.Copysign(0, -1), 1, -1, 0.5, 1.5, 2.5, -2.5, 0.125, 0.375, 0.0625,
		9.9996, 99.995, 99999.5, 999999.5, 0.00099995, 0.0001, 0.00001, 1e-5, 9.99999e-5,
		123456789012345.6, 4503599627370495.5, 1 << 52, 1 << 53, 1e15, 1e16, 1e21, 1e22, 1e300,
		5e-324, math.SmallestNonzeroFloat64, math.MaxFloat64, math.NaN(), math.Inf(1), math.Inf(-1),
		-137.53279999999998, 1523.8557140594933, 4.164e-20, 108.184, 0.9998, -90.253, -0.004,
		-0.0004, 0.05, 0.15, 0.25, 0.35, 1.005, 2.675, 1.0000000000000002, 0.9999999999999999}
	for _, x := range edges {
		check(t, x)
		check(t, -x)
	}
	// exact ties: (2j+1)/2 scaled down by powers of ten, where binary allows
	for j := range 2000 {
		for _, s := range []float64{1, 2, 4, 8, 16, 32, 1024} {
			check(t, (float64(j)+0.5)/s)
		}
	}
	r := rand.New(rand.NewPCG(1, 2))
	for range 200_000 {
		e := r.IntN(30) - 12
		x := (r.Float64()*2 - 1) * math.Pow(10, float64(e))
		if r.IntN(4) == 0 { // a short decimal, the kind results hold
			x = math.Round(x*1e4) / 1e4
		}
		check(t, x)
	}
}

func FuzzMatchesStrconv(f *testing.F) {
	for _, x := range []float64{0, 1.5, -137.53, 99999.5, 4.164e-20, 0.00099995} {
		f.Add(math.Float64bits(x))
	}
	f.Fuzz(func(t *testing.T, bits uint64) {
		check(t, math.Float64frombits(bits))
	})
}

// BenchmarkAppendSig and BenchmarkStrconvSig compare the two on a result row's numbers.
func BenchmarkAppendSig(b *testing.B) {
	vals := []float64{-137.53, 15.7, -90.253, -110.62, 1523.9, 1, 108.184, 0.9998}
	buf := make([]byte, 0, 64)
	for i := 0; b.Loop(); i++ {
		buf = AppendSig(buf[:0], vals[i%len(vals)], 5)
	}
}

func BenchmarkStrconvSig(b *testing.B) {
	vals := []float64{-137.53, 15.7, -90.253, -110.62, 1523.9, 1, 108.184, 0.9998}
	buf := make([]byte, 0, 64)
	for i := 0; b.Loop(); i++ {
		buf = strconv.AppendFloat(buf[:0], vals[i%len(vals)], 'g', 5, 64)
	}
}
