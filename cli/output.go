package cli

import (
	"context"
	"errors"
	"fmt"
	"strings"

	"github.com/spf13/cobra"

	"bitsift/ingest"
	"bitsift/model"
	"bitsift/parse"
	"bitsift/report"
)

// outputFlags are what watch and replay share besides the stream flags:
// the baseline, and the report's format when standard output is not a
// terminal.
type outputFlags struct {
	baseline baselineFlag
	output   string
	mouse    bool
}

func (o *outputFlags) register(cmd *cobra.Command) {
	o.baseline.register(cmd)
	cmd.Flags().BoolVar(&o.mouse, "mouse", false, "let the screen read the mouse wheel (then hold shift to select text)")
	cmd.Flags().StringVarP(&o.output, "output", "o", "text", "report format when standard output is not a terminal: "+strings.Join(report.Formats, ", "))
	cmd.RegisterFlagCompletionFunc("output", func(*cobra.Command, []string, string) ([]string, cobra.ShellCompDirective) {
		return report.Formats, cobra.ShellCompDirectiveNoFileComp
	})
}

func (o *outputFlags) check() error {
	if !validOutput(o.output) {
		return &ExitError{Code: ExitUsage, Err: fmt.Errorf("unknown output format %q (use one of %s)", o.output, strings.Join(report.Formats, ", "))}
	}
	return nil
}

// show runs the screen on a terminal, else reads src to its end and
// prints the report.
func (o *outputFlags) show(ctx context.Context, std IO, cfg ingest.Config, src parse.Source) error {
	base, err := o.baseline.load()
	if err != nil {
		src.Close()
		return err
	}
	if !std.IsTerminal {
		return printReport(ctx, std, cfg, src, o.output, base)
	}
	return showScreen(ctx, std, cfg, src, screenOptions{base: base, mouse: o.mouse})
}

// printReport reads src to its end (or until ctx is done: an interrupted
// follow still reports what it read) and prints the report.
func printReport(ctx context.Context, std IO, cfg ingest.Config, src parse.Source, format string, base *model.Profile) error {
	defer src.Close()
	in, err := ingest.New(cfg)
	if err != nil {
		return &ExitError{Code: ExitUsage, Err: err}
	}
	in.SetBaseline(base)
	in.AddSource(src.Status().Name)
	selfStopping.Store(true)
	readErr := in.ReadSource(ctx, src)
	if errors.Is(readErr, context.Canceled) || errors.Is(readErr, context.DeadlineExceeded) {
		readErr = nil
	}
	if err := checkBaseline(in, base); err != nil {
		return err
	}
	// An interrupt is how a headless watch ends: the report follows it.
	return writeReport(context.WithoutCancel(ctx), std, in, format, readErr, nil)
}
