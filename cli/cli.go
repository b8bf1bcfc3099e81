// Package cli holds bitsift's commands. main builds the root command, runs
// it with a context and turns its error into an exit code; tests drive the
// same commands in process.
package cli

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"

	"github.com/spf13/cobra"
)

// Exit codes, as documented in the README (more in exit.go).
const (
	ExitOK         = 0 // fine
	ExitUsage      = 1 // bad flags or arguments
	ExitUnreadable = 2 // no input could be read
	ExitPartial    = 3 // some input was read, some could not be
)

// ExitError carries an exit code with an error.
type ExitError struct {
	Code int
	Err  error
}

func (e *ExitError) Error() string { return e.Err.Error() }
func (e *ExitError) Unwrap() error { return e.Err }

// IO is where a command reads and writes.
type IO struct {
	In       io.Reader
	Out, Err io.Writer
	// IsTerminal says whether Out is a terminal (the screen starts only
	// then).
	IsTerminal bool
}

// Run builds the root command and runs it with args; it returns the exit
// code.
func Run(ctx context.Context, args []string, std IO) int {
	root := NewRoot(std)
	root.SetArgs(args)
	err := root.ExecuteContext(ctx)
	if err == nil {
		return ExitOK
	}
	var ee *ExitError
	if errors.As(err, &ee) {
		if ee.Err != nil && !errors.Is(ee.Err, errQuiet) {
			fmt.Fprintln(std.Err, "bitsift:", ee.Err)
		}
		return ee.Code
	}
	if errors.Is(err, context.Canceled) {
		return interrupted(ctx, std)
	}
	fmt.Fprintln(std.Err, "bitsift:", err)
	return ExitUsage
}

// errQuiet marks an error already reported.
var errQuiet = errors.New("already reported")

// NewRoot returns the root command with every subcommand.
func NewRoot(std IO) *cobra.Command {
	out := &outputFlags{}
	root := &cobra.Command{
		Use:   "bitsift",
		Short: "Measure how much information each field of a log stream carries",
		Long: `bitsift reads structured logs (JSON lines, logfmt, syslog, access logs) and
measures, per field, its Shannon entropy in bits, and for pairs of fields how
much one tells about the other. It shows which fields are redundant, what
changed, and what could be dropped before shipping.

With no command it shows the live screen on a built-in demo stream (on a
terminal), or prints the demo's report (otherwise); it does not read standard
input (bitsift report - does).`,
		SilenceUsage:  true,
		SilenceErrors: true,
		Args:          cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			return runDefault(cmd.Context(), std, out)
		},
	}
	out.register(root)
	root.SetIn(std.In)
	root.SetOut(std.Out)
	root.SetErr(std.Err)
	root.SetFlagErrorFunc(func(c *cobra.Command, err error) error {
		return &ExitError{Code: ExitUsage, Err: fmt.Errorf("%w (see %s --help)", err, c.CommandPath())}
	})
	root.AddCommand(newReportCmd(std), newDemoCmd(std), newWatchCmd(std), newReplayCmd(std), newPlanCmd(std), newMergeCmd(std), newAnnotateCmd(std), newSQLCmd(std), newWorkerCmd(std))
	return root
}

// stdinIsPipe says whether standard input is not a terminal.
func stdinIsPipe() bool {
	fi, err := os.Stdin.Stat()
	return err == nil && fi.Mode()&os.ModeCharDevice == 0
}
