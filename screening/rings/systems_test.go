package rings

import (
	"math/rand/v2"
	"slices"
	"testing"
)

// TestAppendAtomsSortedAndUnique: AppendAtoms lists every atom of the chosen rings once, in
// increasing order, after what dst held — for atom numbers inside its bit set (below 256) and
// beyond it (the sorting path), with shared atoms between rings (a set's definition, common
// practice).
func TestAppendAtomsSortedAndUnique(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	for trial := 0; trial < 2000; trial++ {
		top := 40
		if trial%3 == 0 {
			top = 600
		}
		rs := make([]Ring, 1+rng.IntN(4))
		for i := range rs {
			n := 3 + rng.IntN(8)
			for k := 0; k < n; k++ {
				rs[i].Atoms = append(rs[i].Atoms, rng.IntN(top))
			}
		}
		idx := []int{}
		for i := range rs {
			if rng.IntN(4) > 0 {
				idx = append(idx, i)
			}
		}
		var want []int
		for _, i := range idx {
			want = append(want, rs[i].Atoms...)
		}
		slices.Sort(want)
		want = slices.Compact(want)
		got := AppendAtoms([]int{-5}, rs, idx)
		if got[0] != -5 || !slices.Equal(got[1:], want) {
			t.Fatalf("trial %d: AppendAtoms = %v, want [-5] + %v", trial, got, want)
		}
	}
}
