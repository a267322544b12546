// Command ringsieve screens cyclic olefins for ring-opening metathesis polymerization: as an
// HTTP service (serve), offline on a file (screen), or as a client of a running service (submit).
package main

import (
	"context"
	"fmt"
	"os"
	"os/signal"
	"syscall"
)

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	if err := run(ctx, os.Args[1:], os.Getenv, os.Stdin, os.Stdout, os.Stderr); err != nil {
		fmt.Fprintln(os.Stderr, "ringsieve:", err)
		os.Exit(1)
	}
}
