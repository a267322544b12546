package main

import (
	"context"
	"fmt"
	"io"
	"os"
	"runtime/pprof"
	"runtime/trace"

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
	// --cpu-profile writes a CPU profile of the whole command and --exec-trace an execution
	// trace (for the speed work: go tool pprof, go tool trace)
	var profile, traceOut string
	var profFile, traceFile *os.File
	root.PersistentFlags().StringVar(&profile, "cpu-profile", "", "write a CPU profile of the command to this file (go tool pprof reads it)")
	root.PersistentFlags().StringVar(&traceOut, "exec-trace", "", "write an execution trace of the command to this file (go tool trace reads it)")
	root.PersistentPreRunE = func(cmd *cobra.Command, _ []string) error {
		var err error
		if profFile, err = startRecording(profile, "cpu profile", pprof.StartCPUProfile); err != nil {
			return err
		}
		traceFile, err = startRecording(traceOut, "execution trace", trace.Start)
		return err
	}
	defer func() {
		if profFile != nil {
			pprof.StopCPUProfile()
			profFile.Close()
		}
		if traceFile != nil {
			trace.Stop()
			traceFile.Close()
		}
	}()
	root.SetArgs(args)
	root.SetIn(stdin)
	root.SetOut(stdout)
	root.SetErr(stderr)
	root.AddCommand(serveCmd(getenv), workerCmd(getenv), screenCmd(), keysCmd(getenv), submitCmd(getenv), forcefieldCmd(), planCmd(), depictCmd())
	return root.ExecuteContext(ctx)
}

// startRecording creates path and starts a recorder writing to it (nothing when path is
// empty); what names the recording in errors.
func startRecording(path, what string, start func(io.Writer) error) (*os.File, error) {
	if path == "" {
		return nil, nil
	}
	f, err := os.Create(path)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", what, err)
	}
	if err := start(f); err != nil {
		f.Close()
		return nil, fmt.Errorf("%s: %w", what, err)
	}
	return f, nil
}
