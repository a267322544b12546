package describe

import (
	"sort"
	"testing"
)

// TestGroupSetHoldsEveryGroup: a groupSet has room for every group the inventory knows, so a
// molecule carrying all of them cannot overflow it (design choice of the fixed array).
func TestGroupSetHoldsEveryGroup(t *testing.T) {
	if len(KnownFunctionalGroups) > maxGroups {
		t.Fatalf("%d known groups, a groupSet holds %d", len(KnownFunctionalGroups), maxGroups)
	}
	var s groupSet
	for _, g := range KnownFunctionalGroups {
		s.add(g)
		s.add(g)
	}
	got := s.shared()
	if len(got) != len(KnownFunctionalGroups) || !sort.StringsAreSorted(got) || cap(got) != len(got) {
		t.Fatalf("shared() = %v (cap %d): want every known group once, sorted, capacity = length", got, cap(got))
	}
}

// TestFunctionalGroupsListsAreShared: two structures with the same groups get one list (no
// allocation per structure), and appending to it cannot change what the other one reads.
func TestFunctionalGroupsListsAreShared(t *testing.T) {
	a, err := Describe("OC(=O)C1CC2C=CC1C2") // norbornene carboxylic acid (common practice)
	if err != nil {
		t.Fatal(err)
	}
	b, err := Describe("OC(=O)C1CC=CCC1") // cyclohexene carboxylic acid (common practice)
	if err != nil {
		t.Fatal(err)
	}
	if len(a.Groups) == 0 || &a.Groups[0] != &b.Groups[0] {
		t.Fatalf("groups %v and %v: want one shared list", a.Groups, b.Groups)
	}
	grown := append(a.Groups, "x")
	if &grown[0] == &b.Groups[0] || len(b.Groups) != 1 {
		t.Fatalf("appending to a shared list changed it: %v", b.Groups)
	}
}
