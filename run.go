package main

import (
	"context"
	"fmt"
	"io"
	"os"
	"runtime/pprof"

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
	// --cpu-profile writes a CPU profile of the whole command (for the speed work: go tool pprof)
	var profile string
	var profFile *os.File
	root.PersistentFlags().StringVar(&profile, "cpu-profile", "", "write a CPU profile of the command to this file (go tool pprof reads it)")
	root.PersistentPreRunE = func(cmd *cobra.Command, _ []string) error {
		if profile == "" {
			return nil
		}
		f, err := os.Create(profile)
		if err != nil {
			return fmt.Errorf("cpu profile: %w", err)
		}
		profFile = f
		return pprof.StartCPUProfile(f)
	}
	defer func() {
		if profFile != nil {
			pprof.StopCPUProfile()
			profFile.Close()
		}
	}()
	root.SetArgs(args)
	root.SetIn(stdin)
	root.SetOut(stdout)
	root.SetErr(stderr)
	root.AddCommand(serveCmd(getenv), workerCmd(getenv), screenCmd(), keysCmd(getenv), submitCmd(getenv), forcefieldCmd(), planCmd(), depictCmd())
	return root.ExecuteContext(ctx)
}
