package judge

import (
	"fmt"
	"math"
	"strconv"
	"testing"
)

// TestFixedAndSignedWriteWhatFmtWrites: the reason texts built without fmt read exactly as the
// fmt verbs they replace (%.Nf, %+.Nf, %.3g), including rounding halves, negative zero and the
// non-finite values (formatting rules of the Go standard library, common practice).
func TestFixedAndSignedWriteWhatFmtWrites(t *testing.T) {
	vals := []float64{0, math.Copysign(0, -1), 0.05, 0.15, 0.25, -0.05, 1.45, 2.5, -2.5, 273.15, -13.049999,
		1e21, 4.2e-9, 123456.789, math.Inf(1), math.Inf(-1), math.NaN()}
	for _, v := range vals {
		for _, p := range []int{0, 1, 2} {
			if got, want := fixed(v, p), fmt.Sprintf("%.*f", p, v); got != want {
				t.Errorf("fixed(%v, %d) = %q, fmt writes %q", v, p, got, want)
			}
			if got, want := signed(v, p), fmt.Sprintf("%+.*f", p, v); got != want {
				t.Errorf("signed(%v, %d) = %q, fmt writes %q", v, p, got, want)
			}
		}
		// the concentration in the ΔG_p reason: strconv's 'g' with three digits for %.3g
		if got, want := strconv.FormatFloat(v, 'g', 3, 64), fmt.Sprintf("%.3g", v); got != want {
			t.Errorf("%%.3g of %v: strconv %q, fmt %q", v, got, want)
		}
	}
}

// TestAroundAndMainReasons: around joins its parts as concatenation with fixed would, and the
// main reasons list blocking, then penalizing, then favoring codes (notes left out), each
// with its group in parentheses, joined by "; " (design choice: the CSV column's format).
func TestAroundAndMainReasons(t *testing.T) {
	for _, v := range []float64{0, 1523.8557, -137.5328, 0.9995, math.Inf(1)} {
		if got, want := around("T_c = ", v, 0, " K"), "T_c = "+fixed(v, 0)+" K"; got != want {
			t.Errorf("around(%v) = %q, want %q", v, got, want)
		}
	}
	r := &Result{Reasons: []Reason{
		{Code: "high_ring_strain", Effect: EffectFavors},
		{Code: "ceiling_temp_extrapolated", Effect: EffectNote},
		{Code: "catalyst_poison", Effect: EffectBlocks, Group: "thiol"},
		{Code: "equilibrium_monomer", Effect: EffectPenalizes},
		{Code: "favorable_equilibrium", Effect: EffectFavors},
	}}
	want := "catalyst_poison(thiol); equilibrium_monomer; high_ring_strain; favorable_equilibrium"
	if got := MainReasons(r); got != want {
		t.Errorf("MainReasons = %q, want %q", got, want)
	}
	if got := string(AppendMainReasons([]byte("x,"), r)); got != "x,"+want {
		t.Errorf("AppendMainReasons = %q", got)
	}
	if got := MainReasons(&Result{}); got != "" {
		t.Errorf("MainReasons of no reasons = %q", got)
	}
}
