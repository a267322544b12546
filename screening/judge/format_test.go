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
