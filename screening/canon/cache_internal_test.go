package canon

import (
	"strconv"
	"testing"
)

// appendSmallInt writes what strconv.AppendInt writes, the shortcut below 100 and the rest alike.
func TestAppendSmallInt(t *testing.T) {
	for v := -120; v <= 1200; v++ {
		if got, want := string(appendSmallInt([]byte("x"), v)), "x"+strconv.Itoa(v); got != want {
			t.Fatalf("%d: %q, want %q", v, got, want)
		}
	}
}
