package main

import (
	"context"
	"io"

	"github.com/spf13/cobra"
)

// run builds the command line and executes it with the given arguments, environment lookup and
// streams; main is only signal handling around it.
func run(ctx context.Context, args []string, getenv func(string) string, stdin io.Reader, stdout, stderr io.Writer) error {
	root := &cobra.Command{
		Use:           "ringsieve",
		Short:         "Screen cyclic olefins for ring-opening metathesis polymerization",
		SilenceUsage:  true,
		SilenceErrors: true,
	}
	root.SetArgs(args)
	root.SetIn(stdin)
	root.SetOut(stdout)
	root.SetErr(stderr)
	root.AddCommand(serveCmd(getenv), workerCmd(getenv), screenCmd(), keysCmd(getenv), submitCmd(getenv), forcefieldCmd(), planCmd(), depictCmd())
	return root.ExecuteContext(ctx)
}
