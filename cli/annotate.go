package cli

import (
	"context"
	"errors"

	"github.com/spf13/cobra"

	"bitsift/ingest"
)

type annotateCmd struct{ streamFlags }

func newAnnotateCmd(std IO) *cobra.Command {
	c := &annotateCmd{}
	cmd := &cobra.Command{
		Use:   "annotate [flags] FILE...|-",
		Short: "Write one JSON object per input line: its fields, templates and surprisal",
		Long: `annotate writes one JSON object per input line, in input order: file, line,
time, fields (the record's fields and bitsift's companions), templates (per
free-text field: {"id": its group's id, "text": the group's final text}),
bits and because (the record's surprisal against the whole input, and the
fields that made it so), or rejected with the reason.

It reads the input three times (standard input is kept in a temporary file
for that), so that template ids and texts are final and the bits price each
record against all of the input. Values from logs are written as they are:
they may be personal data.`,
		Example: `  bitsift annotate app.log | jq 'select(.bits > 40)'
  bitsift annotate auth.log | jq -r '.templates.msg.text' | sort | uniq -c | sort -rn`,
		Args: cobra.MinimumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			return c.run(cmd.Context(), std, args)
		},
	}
	c.register(cmd, "all")
	cmd.Flags().Lookup("window").Hidden = true
	return cmd
}

func (c *annotateCmd) run(ctx context.Context, std IO, paths []string) error {
	cfg, err := c.config()
	if err != nil {
		return err
	}
	cfg.Stdin = std.In
	if cfg.Redact || len(cfg.RedactFields) > 0 {
		for _, p := range paths {
			if p == "-" {
				return &ExitError{Code: ExitUsage, Err: errors.New("annotate reads its input three times and would keep standard input in a file; under --redact it keeps no raw copy: give files")}
			}
		}
	}
	snap, readErr := ingest.Annotate(ctx, cfg, paths, std.Out)
	if errors.Is(readErr, context.Canceled) {
		return readErr
	}
	if snap == nil {
		if isBrokenPipe(readErr) {
			return writeError(readErr)
		}
		return &ExitError{Code: ExitUnreadable, Err: readErr}
	}
	return inputError(readErr, snap)
}
