package api

import (
	"regexp"
	"strings"
	"testing"
)

// TestValidRequestID: the hand-written check accepts exactly what the pattern
// ^[A-Za-z0-9._-]{1,64}$ accepts (the pattern itself is kept here only, not compiled at start-up).
func TestValidRequestID(t *testing.T) {
	pattern := regexp.MustCompile(`^[A-Za-z0-9._-]{1,64}$`)
	cases := []string{"", "a", "A-z_0.9", strings.Repeat("x", 64), strings.Repeat("x", 65), "with space", "tab\t",
		"ünïcode", "semi;colon", "slash/", "plus+", "req-123e4567.e89b_12d3", "\x00", "-", ".", "_", "ab\n"}
	for c := byte(0); c < 128; c++ {
		cases = append(cases, "id"+string(rune(c)))
	}
	for _, id := range cases {
		if got, want := validRequestID(id), pattern.MatchString(id); got != want {
			t.Errorf("%q: %v, the pattern says %v", id, got, want)
		}
	}
}
