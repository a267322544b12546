package judge

import (
	"fmt"
	"math"
	"testing"
)

// TestJoinWritesWhatFmtWrites: the reason texts built without fmt read exactly as the fmt verbs
// they replace (%.Nf, %+.Nf, %.3g), including rounding halves, negative zero and the non-finite
// values (formatting rules of the Go standard library, common practice).
func TestJoinWritesWhatFmtWrites(t *testing.T) {
	vals := []float64{0, math.Copysign(0, -1), 0.05, 0.15, 0.25, -0.05, -0.04, 1.45, 2.5, -2.5, 273.15, -13.049999,
		1e21, 4.2e-9, 1e-5, 123456.789, math.Inf(1), math.Inf(-1), math.NaN()}
	blk := &judged{}
	blk.text = blk.textArr[:0]
	for _, v := range vals {
		for _, p := range []int{0, 1, 2, 3} {
			if got, want := blk.join("a ", fix(v, p), " b"), fmt.Sprintf("a %.*f b", p, v); got != want {
				t.Errorf("fix(%v, %d) = %q, fmt writes %q", v, p, got, want)
			}
			if got, want := blk.join(plus(v, p)), fmt.Sprintf("%+.*f", p, v); got != want {
				t.Errorf("plus(%v, %d) = %q, fmt writes %q", v, p, got, want)
			}
			if got, want := blk.join(sig(v, p), "|"), fmt.Sprintf("%.*g|", p, v); got != want {
				t.Errorf("sig(%v, %d) = %q, fmt writes %q", v, p, got, want)
			}
		}
	}
	if got := blk.join(); got != "" {
		t.Errorf("join of nothing = %q", got)
	}
}

// TestJoinKeepsEarlierTexts: texts taken from a block's buffer stay as they were while later
// texts fill the buffer, outgrow its room in the block and move to arrays of their own.
func TestJoinKeepsEarlierTexts(t *testing.T) {
	blk := &judged{}
	blk.text = blk.textArr[:0]
	var got, want []string
	for i := 0; len(blk.text) < 4*textRoom; i++ {
		s := blk.join("text ", fix(float64(i), 0), " of a result; ")
		got = append(got, s)
		want = append(want, fmt.Sprintf("text %d of a result; ", i))
	}
	for i := range got {
		if got[i] != want[i] {
			t.Fatalf("text %d reads %q after later texts, want %q", i, got[i], want[i])
		}
	}
}

// TestMainReasons: the main reasons list blocking, then penalizing, then favoring codes (notes
// left out), each with its group in parentheses, joined by "; " (design choice: the CSV
// column's format).
func TestMainReasons(t *testing.T) {
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

// TestJoinAllocatesNothing: join writes into the block and returns a string over it, so a text
// that fits costs no allocation — a guard against its parts escaping to the heap (a change that
// passed a part to fmt for a panic message once added five allocations per structure).
func TestJoinAllocatesNothing(t *testing.T) {
	blk := &judged{}
	n := testing.AllocsPerRun(100, func() {
		blk.text = blk.textArr[:0]
		_ = blk.join("ΔG_p = ", plus(-12.34, 1), " kJ/mol at ", fix(25, 1), " °C and ", sig(0.5, 3), " mol/L")
	})
	if n != 0 {
		t.Fatalf("join allocated %.1f times per text, want 0", n)
	}
}
