package cli

import (
	"context"
	"errors"
	"time"

	"github.com/spf13/cobra"

	"bitsift/ingest"
	"bitsift/parse"
)

// watchCmd is `bitsift watch`: a live file (or stdin) followed across
// rotations, on the screen, or as a text report when standard output is
// not a terminal.
type watchCmd struct {
	streamFlags
	fromStart   bool
	lines       int
	rotateGrace time.Duration
	poll        bool
	forDur      time.Duration
	idle        time.Duration
}

func newWatchCmd(std IO) *cobra.Command {
	c := &watchCmd{}
	cmd := &cobra.Command{
		Use:   "watch [flags] FILE|-",
		Short: "Show the live screen for a log file as it grows, or for stdin",
		Long: `watch follows a live log file from its end (--from-start: from its first
line; --lines N: N lines back) and goes on across rotations, truncations
and a file deleted and created again; "-" reads standard input. The screen
shows the fields as they are read, what changed, and a drop plan.

When standard output is not a terminal, watch follows the file the same
way until it is interrupted (ctrl+c), --for has passed or no line has come
for --idle, then prints the text report.`,
		Example: `  bitsift watch /var/log/app.log
  bitsift watch --from-start --rotate-grace 5s /var/log/app.log
  bitsift demo --rate 2000 --lines 0 | bitsift watch -
  bitsift watch --from-start --idle 10s app.log > report.txt`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			return c.run(cmd.Context(), std, args[0])
		},
	}
	// A live stream has no end: a bounded window keeps memory bounded.
	c.register(cmd, watchWindow)
	fs := cmd.Flags()
	fs.BoolVar(&c.fromStart, "from-start", false, "read the file from its first line (default: from its end)")
	fs.IntVar(&c.lines, "lines", 0, "begin this many lines before the end")
	fs.DurationVar(&c.rotateGrace, "rotate-grace", parse.DefaultRotateGrace, "how long a rotated file must be quiet before the new one is read")
	fs.BoolVar(&c.poll, "poll", false, "look for changes every 250ms instead of waiting for notifications (network filesystems)")
	fs.DurationVar(&c.forDur, "for", 0, "stop reading after this long (e.g. 30s, 5m); the figures stay on the screen")
	fs.DurationVar(&c.idle, "idle", 0, "stop reading once no line has come for this long (e.g. 10s)")
	return cmd
}

func (c *watchCmd) run(ctx context.Context, std IO, path string) error {
	switch {
	case c.lines < 0:
		return usage("watch: --lines must be 0 or more")
	case c.lines > 0 && c.fromStart:
		return usage("watch: give --from-start or --lines, not both")
	case c.rotateGrace <= 0:
		return usage("watch: --rotate-grace must be above 0")
	case c.forDur < 0 || c.idle < 0:
		return usage("watch: --for and --idle must not be negative")
	}
	cfg, err := c.config()
	if err != nil {
		return err
	}
	cfg.Stdin = std.In
	fl, err := parse.NewFollower(path, parse.FollowOptions{
		FromStart: c.fromStart, Lines: c.lines, RotateGrace: c.rotateGrace, Poll: c.poll,
		Idle: c.idle, MaxLine: cfg.MaxLine, Stdin: std.In,
	})
	if err != nil {
		return &ExitError{Code: ExitUnreadable, Err: err}
	}
	var src parse.Source = fl
	if c.forDur > 0 {
		src = newUntilSource(fl, time.Now().Add(c.forDur), "stopped after --for "+c.forDur.String())
	}
	if !std.IsTerminal {
		return printReport(ctx, std, cfg, src)
	}
	return showScreen(ctx, std, cfg, src)
}

// replayCmd is `bitsift replay`: archives paced on the screen, or read to
// their end into a text report when standard output is not a terminal.
type replayCmd struct {
	streamFlags
	speed     string
	keepOrder bool
}

func newReplayCmd(std IO) *cobra.Command {
	c := &replayCmd{}
	cmd := &cobra.Command{
		Use:   "replay [flags] FILE...",
		Short: "Show the live screen for archived logs (plain, .gz, .zst), at any speed",
		Long: `replay reads archived log files in the order of their first timestamps
(--keep-order: as given), as fast as they can be read (--speed max, the
default) or at N times the pace their timestamps say the records came
(--speed N), with gaps of more than 2s shortened to 2s and shown. On the
screen, space pauses the replay and n lets one window of records through.

When standard output is not a terminal, replay reads the files to their end
at the given speed and prints the text report.`,
		Example: `  bitsift replay app.log.2.gz app.log.1.gz app.log
  bitsift replay --speed 20 --window 5m yesterday.log.zst`,
		Args: cobra.MinimumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			return c.run(cmd.Context(), std, args)
		},
	}
	c.register(cmd, "all")
	fs := cmd.Flags()
	fs.StringVar(&c.speed, "speed", "max", `"max", or N times the records' original pace (e.g. 1, 10, 0.5)`)
	fs.BoolVar(&c.keepOrder, "keep-order", false, "read the files in the order given, not by their first timestamps")
	return cmd
}

func (c *replayCmd) run(ctx context.Context, std IO, paths []string) error {
	speed, err := parse.ParseSpeed(c.speed)
	if err != nil {
		return usage("replay: --%v", err)
	}
	cfg, err := c.config()
	if err != nil {
		return err
	}
	format := cfg.Format
	if format == "pattern" {
		format = "" // the replayer reads times with a named format only
	}
	r, err := parse.NewReplayer(paths, parse.ReplayOptions{Speed: speed, KeepOrder: c.keepOrder, Format: format, MaxLine: cfg.MaxLine})
	if err != nil {
		return usage("replay: %v", err)
	}
	if !std.IsTerminal {
		return printReport(ctx, std, cfg, r)
	}
	return showScreen(ctx, std, cfg, r)
}

// printReport reads src to its end (or until ctx is done: an interrupted
// follow still reports what it read) and prints the text report.
func printReport(ctx context.Context, std IO, cfg ingest.Config, src parse.Source) error {
	defer src.Close()
	in, err := ingest.New(cfg)
	if err != nil {
		return &ExitError{Code: ExitUsage, Err: err}
	}
	in.AddSource(src.Status().Name)
	selfStopping.Store(true)
	readErr := in.ReadSource(ctx, src)
	if errors.Is(readErr, context.Canceled) || errors.Is(readErr, context.DeadlineExceeded) {
		readErr = nil
	}
	// An interrupt is how a headless watch ends: the report follows it.
	return writeReport(context.WithoutCancel(ctx), std, in, "text", readErr)
}

// watchWindow is watch's default window: the last 100,000 records, as on
// the demo's screen, so that following a busy service for hours keeps
// memory bounded; --window all covers everything since the start.
const watchWindow = "100k"
