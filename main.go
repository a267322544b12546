// Command ringsieve screens cyclic olefins for ring-opening metathesis polymerization: as an
// HTTP service (serve), a job worker (worker), offline on a file (screen), or as a client of a
// running service (submit).
package main

import (
	"context"
	"errors"
	"fmt"
	"os"
	"os/signal"
	"syscall"
)

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	err := run(ctx, os.Args[1:], os.Getenv, os.Stdin, os.Stdout, os.Stderr)
	var ec exitCode
	switch {
	case err == nil:
	case errors.As(err, &ec):
		os.Exit(int(ec)) // the command has said why
	default:
		fmt.Fprintln(os.Stderr, "ringsieve:", err)
		os.Exit(1)
	}
}

// exitCode ends the process with this status after the command has printed its own summary
// (rowsFailed: the output is complete but some rows could not be screened).
type exitCode int

const rowsFailed exitCode = 2

func (e exitCode) Error() string { return fmt.Sprintf("exit status %d", int(e)) }
