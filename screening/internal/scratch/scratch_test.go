package scratch

import "testing"

// TestZeroed: the slice comes back at the length asked, all zero, in the same array when it
// was large enough and in a new one when it was not.
func TestZeroed(t *testing.T) {
	s := []int{1, 2, 3, 4}
	got := Zeroed(s, 3)
	if len(got) != 3 || got[0] != 0 || got[1] != 0 || got[2] != 0 || &got[0] != &s[0] {
		t.Fatalf("Zeroed(s, 3) = %v (same array %v)", got, &got[0] == &s[0])
	}
	if s[3] != 4 {
		t.Fatal("Zeroed cleared past the length asked")
	}
	big := Zeroed(s, 10)
	if len(big) != 10 || &big[0] == &s[0] {
		t.Fatalf("Zeroed(s, 10): length %d, same array %v", len(big), &big[0] == &s[0])
	}
	for _, v := range big {
		if v != 0 {
			t.Fatalf("Zeroed(s, 10) = %v", big)
		}
	}
}
