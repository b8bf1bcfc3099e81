package cli

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"os"
	"runtime/debug"
	"strings"

	"github.com/spf13/cobra"

	"bitsift/ingest"
	"bitsift/model"
	"bitsift/parse"
	"bitsift/report"
)

// streamFlags are the flags every command that reads logs shares.
type streamFlags struct {
	format       string
	pattern      string
	window       string
	maxLine      int
	redact       bool
	redactFields []string
	analyseTime  bool
	redactKey    string
	narrow       narrowFlags
	templates    []string
}

func (f *streamFlags) register(cmd *cobra.Command, defaultWindow string) {
	fs := cmd.Flags()
	fs.StringVar(&f.format, "format", "", "log format ("+strings.Join(parse.Names(), ", ")+", pattern); detected when empty")
	fs.StringVar(&f.pattern, "pattern", "", "Go regular expression with named groups, (?P<name>...): each group is a field (sets --format pattern)")
	fs.StringVar(&f.window, "window", defaultWindow, `records the figures cover: "all", a count (50000, 50k) or a duration (5m)`)
	fs.IntVar(&f.maxLine, "max-line", parse.DefaultMaxLine, "longest line in bytes; longer lines are rejected")
	fs.BoolVar(&f.redact, "redact", false, "replace every value by a keyed hash at ingest (figures unchanged; raw values never kept or shown)")
	fs.StringSliceVar(&f.redactFields, "redact-fields", nil, "replace the values of these fields only by keyed hashes (comma-separated)")
	fs.StringVar(&f.redactKey, "redact-key", "", "redact with the key in FILE (at least 16 bytes) instead of a random one, so that profiles of several runs add up (implies --redact unless --redact-fields)")
	f.narrow.register(cmd)
	fs.BoolVar(&f.analyseTime, "analyse-time", false, "analyse the timestamp field like any other (by default it is marked and left out of pairs)")
	fs.StringSliceVar(&f.templates, "template", nil, "give these fields a FIELD~template companion whatever the sample says (comma-separated)")
	cmd.RegisterFlagCompletionFunc("format", func(*cobra.Command, []string, string) ([]string, cobra.ShellCompDirective) {
		return append(parse.Names(), "pattern"), cobra.ShellCompDirectiveNoFileComp
	})
}

func (f *streamFlags) config() (ingest.Config, error) {
	w, err := model.ParseWindow(f.window)
	if err != nil {
		return ingest.Config{}, &ExitError{Code: ExitUsage, Err: err}
	}
	filter, err := f.narrow.filter()
	if err != nil {
		return ingest.Config{}, err
	}
	cfg := ingest.Config{Format: f.format, Pattern: f.pattern, MaxLine: f.maxLine, Model: model.Options{Window: w},
		Redact: f.redact, RedactFields: f.redactFields, AnalyseTime: f.analyseTime, Templates: f.templates, Filter: filter}
	if cfg.RedactKey, err = readRedactKey(f.redactKey); err != nil {
		return ingest.Config{}, err
	}
	if cfg.RedactKey != nil && len(cfg.RedactFields) == 0 {
		cfg.Redact = true
	}
	if f.format != "" && f.format != "pattern" {
		if _, err := parse.ByName(f.format); err != nil {
			return ingest.Config{}, &ExitError{Code: ExitUsage, Err: err}
		}
	}
	if f.pattern != "" || f.format == "pattern" {
		// Check the expression now, so that a bad one is a usage error.
		if _, err := ingest.New(cfg); err != nil {
			return ingest.Config{}, &ExitError{Code: ExitUsage, Err: err}
		}
	}
	return cfg, nil
}

type reportCmd struct {
	streamFlags
	topic    topicFlags
	live     followFlags
	output   string
	baseline baselineFlag
	prof     profileFlags
	by       string
}

func newReportCmd(std IO) *cobra.Command {
	c := &reportCmd{}
	cmd := &cobra.Command{
		Use:   "report [flags] FILE...|-",
		Short: "Print the fields' information figures for log files or stdin",
		Long: `report reads log files (plain, .gz or .zst) or standard input ("-") to the
end and prints every field's entropy, kind and best predictor, and the
strongest dependencies between fields.

With --follow it reads one live file from its start and goes on reading
what is appended, across rotations, until --for has passed, no line has
come for --idle, or it is interrupted; then it prints the report.`,
		Example: `  bitsift report app.log
  bitsift report -o json --window 50000 app.log.zst
  kubectl logs deploy/api | bitsift report -
  bitsift report --follow --idle 4s -o json /var/log/app.log
  bitsift report -o json monday.log > base.json
  bitsift report --baseline base.json tuesday.log
  bitsift report --brokers kafka-1:9092 --topic app-logs --start 1h -o json
  bitsift report --brokers kafka-1:9092 --topic app-logs --follow --for 10m`,
		Args: c.topic.args("report", 1, 0),
		RunE: func(cmd *cobra.Command, args []string) error {
			if isProf, err := profileInputs(args); err != nil || isProf {
				if err != nil {
					return err
				}
				return c.runProfiles(cmd, std, args)
			}
			return c.run(cmd.Context(), std, args)
		},
	}
	c.register(cmd, "all")
	c.live.register(cmd)
	c.topic.register(cmd, "oldest")
	c.prof.register(cmd)
	cmd.Flags().StringVarP(&c.output, "output", "o", "text", "output format: "+strings.Join(report.Formats, ", "))
	c.baseline.register(cmd)
	cmd.Flags().StringVar(&c.by, "by", "", "also report on each of the most frequent values of this field on its own (a section per value; reads the files once more per value)")
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
	cfg.Model.Headless = true // one snapshot, at the end
	if c.prof.out != "" {
		cfg.Model.KeepText = true // identifiers are sketched from their text
	}
	in, err := ingest.New(cfg)
	if err != nil {
		return &ExitError{Code: ExitUsage, Err: err}
	}
	base, err := c.baseline.load()
	if err != nil {
		return err
	}
	in.Model().SetBaseline(base)
	var readErr error
	if c.topic.on() {
		readErr = c.readTopic(ctx, in, cfg.MaxLine)
	} else if c.live.follow {
		readErr = c.live.read(ctx, in, paths, cfg.MaxLine)
	} else {
		if err := c.live.check(); err != nil {
			return err
		}
		readErr = in.ReadFiles(ctx, paths)
	}
	var usage *ExitError
	if errors.Is(readErr, context.Canceled) || errors.As(readErr, &usage) {
		return readErr
	}
	if err := checkBaseline(in, base); err != nil {
		return err
	}
	if c.live.follow {
		// An interrupt is how a follow ends: the report of what was read
		// follows it.
		ctx = context.WithoutCancel(ctx)
	}
	if c.prof.out != "" {
		if err := writeLogProfile(in, cfg, paths, c.prof); err != nil {
			return err
		}
	}
	var more func(*report.Report, *model.Snapshot) error
	if c.by != "" {
		more = func(rep *report.Report, snap *model.Snapshot) error {
			return c.groups(ctx, rep, snap, cfg, base, paths)
		}
	}
	return writeReport(ctx, std, in, c.output, readErr, more)
}

// writeReport takes the final snapshot and writes the report whole, unless
// ctx ends first; then the exit code says what the input was worth. more,
// when not nil, adds to the report before it is written (--by's groups).
// snapshotGCPercent is the collector's setting while a headless run takes
// its one deep snapshot (main sets 25 for the reading; GOGC in the
// environment wins over both).
const snapshotGCPercent = 15

// quietGC prepares for a headless run's one deep snapshot: the stream is
// read, so the memory its reading left behind goes back to the system, and
// the analyses' short-lived tables are collected a little sooner. On 1M
// demo lines (medians of 2, load 6): peak RSS 124 → 116 MB for 0.05 CPU-s
// more; at 10%, 112 MB for 0.3 CPU-s more. It returns the function that
// restores the collector's setting.
func quietGC() (restore func()) {
	debug.FreeOSMemory()
	if os.Getenv("GOGC") != "" {
		return func() {}
	}
	old := debug.SetGCPercent(snapshotGCPercent)
	return func() { debug.SetGCPercent(old) }
}

func writeReport(ctx context.Context, std IO, in *ingest.Ingester, format string, readErr error, more func(*report.Report, *model.Snapshot) error) error {
	defer quietGC()()
	snap, err := in.SnapshotContext(ctx, model.SnapshotOptions{Deep: true, Profile: true, Timeline: true})
	if err != nil {
		return err
	}
	rep := buildReport(in, snap)
	if more != nil {
		if err := more(rep, snap); err != nil {
			return err
		}
	}
	var out bytes.Buffer
	if err := report.Write(&out, rep, format); err != nil {
		return writeError(err)
	}
	if err := writeOut(ctx, std.Out, out.Bytes()); err != nil {
		return err
	}
	return outcome(std, in, readErr, snap)
}

// runProfiles reports on profiles instead of logs: their counts added.
func (c *reportCmd) runProfiles(cmd *cobra.Command, std IO, args []string) error {
	if !validOutput(c.output) {
		return usage("unknown output format %q (use one of %s)", c.output, strings.Join(report.Formats, ", "))
	}
	if err := unusedWithProfiles(cmd, "follow", "format", "pattern", "window", "redact", "redact-fields", "redact-key", "baseline", "analyse-time"); err != nil {
		return err
	}
	p, err := mergedProfile(std, args)
	if err != nil {
		return err
	}
	if err := reportProfile(std, p, c.output, c.prof.out); err != nil {
		return err
	}
	return missingError(p)
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
