package batch

import (
	"bytes"
	"math"
	"math/rand/v2"
	"testing"
)

// TestCompareOrdersAsBytes: Compare gives bytes.Compare's answer for every pair of keys the
// ranking makes — scores and ΔG_p across signs, zeros, equal halves, infinities and the failed
// key — and for random bytes (the key's definition: byte order, common practice).
func TestCompareOrdersAsBytes(t *testing.T) {
	vals := []float64{math.Inf(-1), -1e9, -137.53, -1, math.Copysign(0, -1), 0, 1e-300, 0.5, 0.9998, 1, 13.2, math.Inf(1)}
	keys := []Key{FailedKey()}
	for _, s := range vals {
		for _, g := range vals {
			keys = append(keys, ScoreKey(s, g))
		}
	}
	rng := rand.New(rand.NewPCG(3, 5))
	for range 500 {
		var k Key
		for i := range k {
			k[i] = byte(rng.IntN(4)) * 85 // few distinct bytes: many equal prefixes
		}
		keys = append(keys, k)
	}
	for _, a := range keys {
		for _, b := range keys {
			if got, want := Compare(a, b), bytes.Compare(a[:], b[:]); got != want {
				t.Fatalf("Compare(%x, %x) = %d, bytes.Compare says %d", a, b, got, want)
			}
		}
	}
}
