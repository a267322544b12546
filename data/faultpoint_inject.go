//go:build faultinject

package data

import (
	"fmt"
	"os"
)

// FaultPoint ends the process abruptly (exit status 86, no deferred functions, no cleanup, as a
// crash or SIGKILL would) when RINGSIEVE_FAULT names this point. Built only with
// -tags faultinject, for the fault tests.
func FaultPoint(name string) {
	if os.Getenv("RINGSIEVE_FAULT") == name {
		fmt.Fprintf(os.Stderr, "fault injected at %s\n", name)
		os.Exit(86)
	}
}
