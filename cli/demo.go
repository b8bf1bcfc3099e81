package cli

import (
	"bufio"
	"context"
	"fmt"
	"io"
	"math"
	"os"
	"time"

	"github.com/spf13/cobra"

	"bitsift/demo"
	"bitsift/ingest"
	"bitsift/model"
	"bitsift/report"
)

// defaultDemoLines is the length of the demo stream the default command
// reports on when it cannot show the screen.
const defaultDemoLines = 200_000

type demoCmd struct {
	lines int64
	rate  float64
	seed  uint64
}

func newDemoCmd(std IO) *cobra.Command {
	c := &demoCmd{}
	cmd := &cobra.Command{
		Use:   "demo",
		Short: "Write the built-in demo stream (JSON lines) to stdout",
		Long: `demo writes the access log of "quayside", an invented ferry-booking API, as
JSON lines. Its fields have known relations (zone follows from host, region
from zone, method from route, level from status; req_id is unique) and it
carries a scripted incident: from record 70,000 to 100,000 a bad deploy on
hosts qs-api-07 and -08 misroutes harbormaster calls to ledger, and berth
calls fail and slow down.`,
		Example: `  bitsift demo --lines 100000 > demo.jsonl
  bitsift demo --rate 2000 | bitsift watch -`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			return c.run(cmd.Context(), std)
		},
	}
	cmd.Flags().Int64Var(&c.lines, "lines", defaultDemoLines, "lines to write (0: endless)")
	cmd.Flags().Float64Var(&c.rate, "rate", 0, "lines per second (0: as fast as possible)")
	cmd.Flags().Uint64Var(&c.seed, "seed", 1, "random seed; the same seed gives the same stream")
	return cmd
}

func (c *demoCmd) run(ctx context.Context, std IO) error {
	if !(c.rate >= 0) || math.IsInf(c.rate, 1) || c.lines < 0 { // NaN fails every comparison
		return usage("demo: --rate must be a number of lines per second, 0 or more, and --lines 0 or more")
	}
	w := bufio.NewWriterSize(std.Out, 64<<10)
	g := demo.New(c.seed, c.lines)
	var tick *time.Ticker
	perTick := 0
	if c.rate > 0 {
		g.Now = time.Now
		// Write in small bursts every 10 ms rather than sleeping per line.
		tick = time.NewTicker(10 * time.Millisecond)
		defer tick.Stop()
	}
	buf := make([]byte, 0, 512)
	start := time.Now()
	for i := int64(0); c.lines == 0 || i < c.lines; i++ {
		if c.rate > 0 {
			if perTick == 0 {
				if err := w.Flush(); err != nil {
					return writeError(err)
				}
				select {
				case <-ctx.Done():
					return nil
				case <-tick.C:
				}
				due := int64(time.Since(start).Seconds() * c.rate)
				perTick = int(max(due-i, 0))
				if perTick == 0 {
					i--
					continue
				}
			}
			perTick--
		} else if i&4095 == 0 && ctx.Err() != nil {
			return nil
		}
		buf = append(g.Append(buf[:0]), '\n')
		if _, err := w.Write(buf); err != nil {
			return writeError(err)
		}
	}
	return writeError(w.Flush())
}

// runDefault is `bitsift` with no command: the demo stream, on the screen
// when stdout is a terminal, else as a report.
func runDefault(ctx context.Context, std IO, o *outputFlags) error {
	if err := o.check(); err != nil {
		return err
	}
	base, err := o.baseline.load()
	if err != nil {
		return err
	}
	if inputWaiting(std.In) {
		// `zcat app.log.gz | bitsift` reads like a request to look at
		// app.log; without this line the demo's figures would pass for it.
		fmt.Fprintln(std.Err, "bitsift: standard input is not read without a command: this is the built-in demo (for your logs: bitsift report -, or bitsift watch -)")
	}
	if std.IsTerminal {
		// A window of 100,000 records (50 s at the demo's pace) keeps
		// memory bounded on an endless stream and lets the incident
		// stand out rather than fade into all that came before.
		cfg := ingest.Config{Model: model.Options{Window: model.Window{Kind: model.WindowRecords, Records: 100_000}}}
		return showScreen(ctx, std, cfg, demo.NewSource(1, 0, demo.ScreenRate), screenOptions{base: base, mouse: o.mouse})
	}
	in, err := ingest.New(ingest.Config{Model: model.Options{Window: model.Window{Kind: model.WindowAll}}})
	if err != nil {
		return err
	}
	in.SetBaseline(base)
	g := demo.New(1, defaultDemoLines)
	buf := make([]byte, 0, 512)
	in.AddSource("demo")
	for i := int64(1); i <= defaultDemoLines; i++ {
		buf = g.Append(buf[:0])
		in.Line(buf, i, "demo")
	}
	in.Flush()
	if err := checkBaseline(in, base); err != nil {
		return err
	}
	opt := model.SnapshotOptions{}
	if base != nil {
		opt = model.SnapshotOptions{Deep: true, Profile: true}
	}
	return writeError(report.Write(std.Out, buildReport(in, in.Snapshot(opt)), o.output))
}

// inputWaiting says whether in is a pipe or a regular file: input the user
// most likely meant to be read (a terminal, /dev/null or no file at all is
// not).
func inputWaiting(in io.Reader) bool {
	f, ok := in.(*os.File)
	if !ok || f == nil {
		return false
	}
	fi, err := f.Stat()
	return err == nil && (fi.Mode()&os.ModeNamedPipe != 0 || fi.Mode().IsRegular())
}
