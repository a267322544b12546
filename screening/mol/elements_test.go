package mol

import "testing"

func TestElementTableOrder(t *testing.T) {
	for i, e := range elements {
		if e.Z != i+1 {
			t.Fatalf("elements[%d] is %s with Z %d", i, e.Symbol, e.Z)
		}
	}
}
