package cli

import (
	"context"

	"github.com/spf13/cobra"

	"bitsift/parse"
)

// screenCmd is watch or replay: the live screen over files, or the text
// report when standard output is not a terminal.
type screenCmd struct {
	streamFlags
}

func newWatchCmd(std IO) *cobra.Command {
	c := &screenCmd{}
	cmd := &cobra.Command{
		Use:   "watch [flags] FILE|-",
		Short: "Show the live screen for a log file or stdin",
		Long: `watch shows the fields of a log as it is read: their entropy, the pairs
that explain each other, and one field up close. For now the file is read
once, to its end. When standard output is not a terminal it prints the
report instead.`,
		Example: `  bitsift watch app.log
  bitsift demo --rate 2000 --lines 0 | bitsift watch -`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			return c.run(cmd.Context(), std, args)
		},
	}
	c.register(cmd, "all")
	return cmd
}

func newReplayCmd(std IO) *cobra.Command {
	c := &screenCmd{}
	cmd := &cobra.Command{
		Use:   "replay [flags] FILE...",
		Short: "Show the live screen for archived logs (plain, .gz, .zst)",
		Long: `replay shows the live screen for archived log files, read in order. For
now they are read once, as fast as they can be. When standard output is not
a terminal it prints the report instead.`,
		Example: `  bitsift replay app.log.1.gz app.log`,
		Args:    cobra.MinimumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			return c.run(cmd.Context(), std, args)
		},
	}
	c.register(cmd, "all")
	return cmd
}

func (c *screenCmd) run(ctx context.Context, std IO, paths []string) error {
	if !std.IsTerminal {
		r := &reportCmd{streamFlags: c.streamFlags, output: "text"}
		return r.run(ctx, std, paths)
	}
	cfg, err := c.config()
	if err != nil {
		return err
	}
	return showScreen(ctx, std, cfg, parse.NewFileSource(paths, cfg.MaxLine))
}
