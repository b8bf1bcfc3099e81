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

// streamFlags are the flags every command that reads logs shares.
type streamFlags struct {
	format  string
	window  string
	maxLine int
}

func (f *streamFlags) register(cmd *cobra.Command, defaultWindow string) {
	fs := cmd.Flags()
	fs.StringVar(&f.format, "format", "", "log format ("+strings.Join(parse.Names(), ", ")+"); detected when empty")
	fs.StringVar(&f.window, "window", defaultWindow, `records the figures cover: "all", a count (50000, 50k) or a duration (5m)`)
	fs.IntVar(&f.maxLine, "max-line", parse.DefaultMaxLine, "longest line in bytes; longer lines are rejected")
	cmd.RegisterFlagCompletionFunc("format", func(*cobra.Command, []string, string) ([]string, cobra.ShellCompDirective) {
		return parse.Names(), cobra.ShellCompDirectiveNoFileComp
	})
}

func (f *streamFlags) config() (ingest.Config, error) {
	w, err := model.ParseWindow(f.window)
	if err != nil {
		return ingest.Config{}, &ExitError{Code: ExitUsage, Err: err}
	}
	if f.format != "" {
		if _, err := parse.ByName(f.format); err != nil {
			return ingest.Config{}, &ExitError{Code: ExitUsage, Err: err}
		}
	}
	return ingest.Config{Format: f.format, MaxLine: f.maxLine, Model: model.Options{Window: w}}, nil
}

type reportCmd struct {
	streamFlags
	output   string
	baseline string
}

func newReportCmd(std IO) *cobra.Command {
	c := &reportCmd{}
	cmd := &cobra.Command{
		Use:   "report [flags] FILE...|-",
		Short: "Print the fields' information figures for log files or stdin",
		Long: `report reads log files (plain, .gz or .zst) or standard input ("-") to the
end and prints every field's entropy, kind and best predictor, and the
strongest dependencies between fields.`,
		Example: `  bitsift report app.log
  bitsift report -o json --window 50000 app.log.zst
  bitsift report -o json monday.log > base.json
  bitsift report --baseline base.json tuesday.log
  kubectl logs deploy/api | bitsift report -`,
		Args: cobra.MinimumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			return c.run(cmd.Context(), std, args)
		},
	}
	c.register(cmd, "all")
	cmd.Flags().StringVarP(&c.output, "output", "o", "text", "output format: "+strings.Join(report.Formats, ", "))
	cmd.Flags().StringVar(&c.baseline, "baseline", "", "a JSON report (report -o json) of a healthy period to compare with")
	cmd.RegisterFlagCompletionFunc("output", func(*cobra.Command, []string, string) ([]string, cobra.ShellCompDirective) {
		return report.Formats, cobra.ShellCompDirectiveNoFileComp
	})
	return cmd
}

func (c *reportCmd) run(ctx context.Context, std IO, paths []string) error {
	if !validOutput(c.output) {
		return &ExitError{Code: ExitUsage, Err: fmt.Errorf("unknown output format %q (use one of %s)", c.output, strings.Join(report.Formats, ", "))}
	}
	cfg, err := c.config()
	if err != nil {
		return err
	}
	cfg.Stdin = std.In
	in, err := ingest.New(cfg)
	if err != nil {
		return &ExitError{Code: ExitUsage, Err: err}
	}
	if c.baseline != "" {
		p, err := report.ReadBaseline(c.baseline)
		if err != nil {
			return &ExitError{Code: ExitUsage, Err: err}
		}
		in.Model().SetBaseline(p)
	}
	readErr := in.ReadFiles(ctx, paths)
	if errors.Is(readErr, context.Canceled) {
		return readErr
	}
	snap := in.Snapshot(model.SnapshotOptions{Deep: true, Profile: true})
	if err := report.Write(std.Out, report.Build(snap), c.output); err != nil {
		return writeError(err)
	}
	return inputError(readErr, snap)
}

func validOutput(o string) bool {
	for _, f := range report.Formats {
		if f == o {
			return true
		}
	}
	return o == "md"
}

// inputError maps a read error to exit code 2 (nothing read) or 3 (some).
func inputError(err error, snap *model.Snapshot) error {
	if err == nil {
		return nil
	}
	code := ExitPartial
	if snap.Input.Lines == 0 {
		code = ExitUnreadable
	}
	return &ExitError{Code: code, Err: err}
}

// writeError treats a closed pipe (bitsift report | head) as a quiet end.
func writeError(err error) error {
	if isBrokenPipe(err) {
		return &ExitError{Code: ExitOK, Err: errQuiet}
	}
	return err
}
