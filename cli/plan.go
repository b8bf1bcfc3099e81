package cli

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"sort"
	"strings"

	"github.com/spf13/cobra"

	"bitsift/ingest"
	"bitsift/model"
	"bitsift/parse"
	"bitsift/plan"
	"bitsift/report"
)

// planOutputs and planEmits are the values of plan's -o and --emit.
var (
	planOutputs = []string{"text", "json", "html"}
	planEmits   = plan.Emits
)

type planCmd struct {
	streamFlags
	maxLoss    float64
	keep, drop []string
	output     string
	emit       string
	out        string
	tables     string
}

func newPlanCmd(std IO) *cobra.Command {
	c := &planCmd{}
	cmd := &cobra.Command{
		Use:   "plan [flags] FILE...|-",
		Short: "Choose fields to drop before shipping, with the bytes saved and the bits lost",
		Long: `plan reads log files (plain, .gz or .zst) or standard input ("-") and chooses
fields to delete before the logs are shipped: constants (their value is kept
once) and fields another kept field determines (rebuilt from a mapping table,
whose size counts against the saving); with --max-loss above 0, also the
fields that lose fewest bits per byte saved.

It measures the saving on the last min(window, 100,000) records, written out
in their input format before and after the plan, raw and compressed with
zstd, rebuilds the deleted fields from the tables and counts the mismatches.

Dropping fields deletes data that audits, security investigations and
regulations may require: check your retention obligations first.`,
		Example: `  bitsift plan app.log
  bitsift plan --keep host --max-loss 0.5 -o json app.log.zst
  bitsift plan --emit jq --out drop.jq app.log && jq -c -f drop.jq app.log`,
		Args: cobra.MinimumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			return c.run(cmd.Context(), std, args)
		},
	}
	c.register(cmd, "all")
	fs := cmd.Flags()
	fs.Float64Var(&c.maxLoss, "max-loss", 0, "information the plan may lose, bits per record (0: lossless)")
	fs.StringSliceVar(&c.keep, "keep", nil, "fields the plan must keep (comma-separated)")
	fs.StringSliceVar(&c.drop, "drop", nil, "fields the plan must delete (comma-separated)")
	fs.StringVarP(&c.output, "output", "o", "text", "output format: "+strings.Join(planOutputs, ", "))
	fs.StringVar(&c.emit, "emit", "", "print a program that applies the plan instead: "+strings.Join(planEmits, ", "))
	fs.StringVar(&c.out, "out", "", "write the output to FILE (whole or not at all) instead of stdout")
	fs.StringVar(&c.tables, "tables", "", "also write the constants and mapping tables to FILE as CSV, for a lookup at query time")
	cmd.RegisterFlagCompletionFunc("output", func(*cobra.Command, []string, string) ([]string, cobra.ShellCompDirective) {
		return planOutputs, cobra.ShellCompDirectiveNoFileComp
	})
	cmd.RegisterFlagCompletionFunc("emit", func(*cobra.Command, []string, string) ([]string, cobra.ShellCompDirective) {
		return planEmits, cobra.ShellCompDirectiveNoFileComp
	})
	return cmd
}

func usage(format string, a ...any) error {
	return &ExitError{Code: ExitUsage, Err: fmt.Errorf(format, a...)}
}

func (c *planCmd) run(ctx context.Context, std IO, paths []string) error {
	if !oneOf(c.output, planOutputs) {
		return usage("plan: unknown output format %q (use one of %s)", c.output, strings.Join(planOutputs, ", "))
	}
	if c.emit != "" && !oneOf(c.emit, planEmits) {
		return usage("plan: unknown --emit %q (use one of %s)", c.emit, strings.Join(planEmits, ", "))
	}
	if !(c.maxLoss >= 0) || math.IsInf(c.maxLoss, 1) { // NaN fails every comparison
		return usage("plan: --max-loss must be a number of bits per record, 0 or more")
	}
	if isProf, err := profileInputs(paths); err != nil || isProf {
		if err != nil {
			return err
		}
		return c.runProfiles(ctx, std, paths)
	}
	cfg, err := c.config()
	if err != nil {
		return err
	}
	cfg.Stdin = std.In
	cfg.Model.Headless = true // one snapshot, at the end
	in, err := ingest.New(cfg)
	if err != nil {
		return usage("%v", err)
	}
	n := plan.DefaultBatch
	if w := cfg.Model.Window; w.Kind == model.WindowRecords {
		n = min(n, w.Records)
	}
	// Measuring needs the raw lines; with --redact none are kept (smp is
	// nil), so the plan is then chosen from the figures alone.
	smp := in.KeepRaw(n)
	for _, p := range paths {
		in.AddSource(p)
	}
	src := parse.NewFileSource(paths, cfg.MaxLine)
	src.Stdin = std.In
	readErr := in.ReadSource(ctx, src)
	src.Close()
	if errors.Is(readErr, context.Canceled) {
		return readErr
	}
	restoreGC := quietGC()
	snap, err := in.SnapshotContext(ctx, model.SnapshotOptions{})
	restoreGC()
	if err != nil {
		return err
	}
	if smp != nil {
		smp.Keep(snap.Records)
	}
	pins, err := c.pins(snap)
	if err != nil {
		return err
	}
	if snap.Records == 0 {
		return outcome(std, in, readErr, snap)
	}
	opts := plan.Options{MaxLoss: c.maxLoss, Pins: pins, RecordTimes: in.TimeKey() != ""}
	if smp != nil {
		opts.Batch = smp.Len()
	}
	if c.emit != "" && !plan.Fits(c.emit, snap.Input.Format) {
		return usage("plan: --emit %s cannot process %s records; the exports that fit this input: %s",
			c.emit, snap.Input.Format, strings.Join(plan.EmitsFor(snap.Input.Format), ", "))
	}
	if smp == nil && (c.emit == plan.EmitJQRestore || c.emit == plan.EmitJQRecords || c.emit == plan.EmitOTelRecords || c.tables != "") {
		return usage("plan: --redact keeps no raw lines, so there are no tables or record classes to write (--emit jq-restore, jq-records, otel-records, --tables)")
	}
	var p *plan.Plan
	if smp == nil {
		p = plan.Choose(snap, opts)
		p.Notes = append(p.Notes, "not measured and not verified: --redact keeps no raw lines, so the saving is the model's estimate")
	} else if p, err = plan.Make(snap, smp, opts); err != nil {
		return &ExitError{Code: ExitUnreadable, Err: err}
	}
	if err := ctx.Err(); err != nil {
		return err // interrupted while measuring: nothing is written
	}
	return c.write(ctx, std, snap, p, readErr)
}

// runProfiles plans from profiles: chosen from the counts alone, as a
// profile keeps no raw line to measure on or rebuild.
func (c *planCmd) runProfiles(ctx context.Context, std IO, paths []string) error {
	prof, err := mergedProfile(std, paths)
	if err != nil {
		return err
	}
	snap := prof.Snapshot(model.SnapshotOptions{})
	pins, err := c.pins(snap)
	if err != nil {
		return err
	}
	if snap.Records == 0 {
		return &ExitError{Code: ExitUnreadable, Err: errors.New("plan: the profile counts no records")}
	}
	p := plan.Choose(snap, plan.Options{MaxLoss: c.maxLoss, Pins: pins, RecordTimes: prof.TimeField != ""})
	p.Notes = append(p.Notes, "not measured and not verified: "+errNoLines.Error()+"; the saving is the model's estimate")
	return c.write(ctx, std, snap, p, nil)
}

// write writes the plan as the flags ask.
func (c *planCmd) write(ctx context.Context, std IO, snap *model.Snapshot, p *plan.Plan, readErr error) error {
	write := func(w io.Writer) error {
		switch {
		case c.emit == "jq":
			return plan.WriteJQ(w, p)
		case c.emit == plan.EmitJQRestore:
			return plan.WriteJQRestore(w, p)
		case c.emit == plan.EmitOTel:
			return plan.WriteOTel(w, p)
		case c.emit == plan.EmitJQRecords:
			return plan.WriteJQRecords(w, p)
		case c.emit == plan.EmitOTelRecords:
			return plan.WriteOTelRecords(w, p)
		case c.output == "json":
			return plan.WriteJSON(w, p)
		case c.output == "html":
			return report.WriteHTML(w, report.Build(snap), p)
		}
		return plan.WriteText(w, p)
	}
	if c.tables != "" {
		if err := plan.WriteFile(c.tables, func(w io.Writer) error { return plan.WriteTablesCSV(w, p) }); err != nil {
			return &ExitError{Code: ExitWrite, Err: err}
		}
	}
	if c.out != "" {
		if err := plan.WriteFile(c.out, write); err != nil {
			return &ExitError{Code: ExitWrite, Err: err}
		}
		return inputError(readErr, snap)
	}
	var out bytes.Buffer
	if err := write(&out); err != nil {
		return writeError(err)
	}
	if err := writeOut(ctx, std.Out, out.Bytes()); err != nil {
		return err
	}
	return inputError(readErr, snap)
}

// pins reads --keep and --drop, which must name fields of the stream.
func (c *planCmd) pins(snap *model.Snapshot) (map[string]plan.Pin, error) {
	pins := map[string]plan.Pin{}
	for _, set := range []struct {
		flag  string
		names []string
		pin   plan.Pin
	}{{"--keep", c.keep, plan.PinKeep}, {"--drop", c.drop, plan.PinDrop}} {
		for _, name := range set.names {
			if snap.Index(name) < 0 {
				return nil, usage("plan: %s %q is not a field of the stream (fields: %s)", set.flag, name, fieldNames(snap))
			}
			if old, ok := pins[name]; ok && old != set.pin {
				return nil, usage("plan: %q is given to both --keep and --drop; choose one", name)
			}
			pins[name] = set.pin
		}
	}
	return pins, nil
}

func fieldNames(snap *model.Snapshot) string {
	names := make([]string, len(snap.Fields))
	for i, f := range snap.Fields {
		names[i] = f.Name
	}
	sort.Strings(names)
	if len(names) > 20 {
		names = append(names[:20], "...")
	}
	return strings.Join(names, ", ")
}

func oneOf(v string, set []string) bool {
	for _, s := range set {
		if s == v {
			return true
		}
	}
	return false
}
