// Package scratch holds the helpers of storage a worker reuses from one molecule to the next.
package scratch

// Zeroed returns s with length n and every element zero, reusing its array when it is large
// enough (a new one otherwise).
func Zeroed[T any](s []T, n int) []T {
	if cap(s) < n {
		return make([]T, n)
	}
	s = s[:n]
	clear(s)
	return s
}
