package cli

import (
	"context"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"bitsift/parse"
)

// watchCmd is `bitsift watch`: a live file (or stdin) followed across
// rotations, on the screen, or as a text report when standard output is
// not a terminal.
type watchCmd struct {
	streamFlags
	topic       topicFlags
	fromStart   bool
	lines       int
	rotateGrace time.Duration
	poll        bool
	forDur      time.Duration
	idle        time.Duration
	out         outputFlags
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
  bitsift watch --from-start --idle 10s app.log > report.txt
  bitsift watch --brokers kafka-1:9092 --topic app-logs
  bitsift watch --brokers kafka-1:9093 --tls --sasl scram-sha-512 --sasl-file kafka.cred --topic app-logs --start 15m`,
		Args: c.topic.args("watch", 1, 1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if c.topic.on() {
				return c.runTopic(cmd.Context(), std)
			}
			return c.run(cmd.Context(), std, args[0])
		},
	}
	c.topic.register(cmd, "newest")
	// A live stream has no end: a bounded window keeps memory bounded.
	c.register(cmd, watchWindow)
	fs := cmd.Flags()
	fs.BoolVar(&c.fromStart, "from-start", false, "read the file from its first line (default: from its end)")
	fs.IntVar(&c.lines, "lines", 0, "begin this many lines before the end")
	fs.DurationVar(&c.rotateGrace, "rotate-grace", parse.DefaultRotateGrace, "how long a rotated file must be quiet before the new one is read")
	fs.BoolVar(&c.poll, "poll", false, "look for changes every 250ms instead of waiting for notifications (network filesystems)")
	fs.DurationVar(&c.forDur, "for", 0, "stop reading after this long (e.g. 30s, 5m); the figures stay on the screen")
	fs.DurationVar(&c.idle, "idle", 0, "stop reading once no line has come for this long (e.g. 10s)")
	c.out.register(cmd)
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
	if err := c.out.check(); err != nil {
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
	return c.out.show(ctx, std, cfg, src)
}

// runTopic is watch on a Kafka topic: from --start (newest by default)
// on, until interrupted, --for or --idle.
func (c *watchCmd) runTopic(ctx context.Context, std IO) error {
	switch {
	case c.fromStart || c.lines != 0 || c.poll:
		return usage("watch: --from-start, --lines and --poll are for files; give --start with --topic")
	case c.forDur < 0 || c.idle < 0:
		return usage("watch: --for and --idle must not be negative")
	}
	cfg, err := c.config()
	if err != nil {
		return err
	}
	ks, err := c.topic.open(ctx, false, c.idle, cfg.MaxLine)
	if err != nil {
		return err
	}
	var src parse.Source = ks
	if c.forDur > 0 {
		src = newUntilSource(ks, time.Now().Add(c.forDur), "stopped after --for "+c.forDur.String())
	}
	return c.out.show(ctx, std, cfg, src)
}

// replayCmd is `bitsift replay`: archives paced on the screen, or read to
// their end into a text report when standard output is not a terminal.
type replayCmd struct {
	streamFlags
	topic     topicFlags
	speed     string
	keepOrder bool
	out       outputFlags
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
  bitsift replay --speed 20 --window 5m yesterday.log.zst
  bitsift replay --brokers kafka-1:9092 --topic app-logs --start 2026-12-01T22:00:00Z`,
		Args: c.topic.args("replay", 1, 0),
		RunE: func(cmd *cobra.Command, args []string) error {
			if c.topic.on() {
				return c.runTopic(cmd.Context(), std)
			}
			return c.run(cmd.Context(), std, args)
		},
	}
	c.topic.register(cmd, "oldest")
	c.register(cmd, "all")
	fs := cmd.Flags()
	fs.StringVar(&c.speed, "speed", "max", `"max", or N times the records' original pace (e.g. 1, 10, 0.5)`)
	fs.BoolVar(&c.keepOrder, "keep-order", false, "read the files in the order given, not by their first timestamps")
	c.out.register(cmd)
	return cmd
}

func (c *replayCmd) run(ctx context.Context, std IO, paths []string) error {
	if isProf, err := profileInputs(paths); err != nil || isProf {
		if err != nil {
			return err
		}
		p, err := mergedProfile(std, paths)
		if err != nil {
			return err
		}
		if !std.IsTerminal {
			return reportProfile(std, p, "text", "")
		}
		return showProfileScreen(ctx, std, p, strings.Join(paths, " "))
	}
	speed, err := parse.ParseSpeed(c.speed)
	if err != nil {
		return usage("replay: --%v", err)
	}
	cfg, err := c.config()
	if err != nil {
		return err
	}
	if err := c.out.check(); err != nil {
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
	return c.out.show(ctx, std, cfg, r)
}

// runTopic is replay on a Kafka topic: the records it holds from --start
// (oldest by default) to the end offsets it had when replay began, as fast
// as they can be read or paced by the records' timestamps (--speed N;
// partitions come interleaved as they are fetched, so the pace follows
// the records' times only roughly).
func (c *replayCmd) runTopic(ctx context.Context, std IO) error {
	speed, err := parse.ParseSpeed(c.speed)
	switch {
	case err != nil:
		return usage("replay: --%v", err)
	case c.keepOrder:
		return usage("replay: --keep-order is for files")
	}
	cfg, err := c.config()
	if err != nil {
		return err
	}
	ks, err := c.topic.open(ctx, true, 0, cfg.MaxLine)
	if err != nil {
		return err
	}
	var src parse.Source = ks
	if speed > 0 {
		format := cfg.Format
		if format == "pattern" {
			format = ""
		}
		if src, err = parse.NewSourceReplayer(ks, parse.ReplayOptions{Speed: speed, Format: format, MaxLine: cfg.MaxLine}); err != nil {
			ks.Close()
			return usage("replay: %v", err)
		}
	}
	return c.out.show(ctx, std, cfg, src)
}

// watchWindow is watch's default window: the last 100,000 records, as on
// the demo's screen, so that following a busy service for hours keeps
// memory bounded; --window all covers everything since the start.
const watchWindow = "100k"
