//go:build !faultinject

package data

// FaultPoint marks a place where a fault-injection build (go build -tags faultinject) can end
// the process to prove crash consistency; in every other build it does nothing and costs
// nothing. Named points: "idempotent-write-before-commit" (inside the transaction of a write
// carrying an Idempotency-Key, after the key's claim) and "idempotent-write-after-commit" (the
// write committed, its response not yet recorded).
func FaultPoint(name string) {}
