package cli

import (
	"context"
	"errors"

	"bitsift/ingest"
	"bitsift/model"
	"bitsift/report"
)

// byMaxGroups is how many values of the --by field get a section: the most
// frequent ones.
const byMaxGroups = 10

// groups adds to rep a report per frequent value of --by: the files are
// read again for each, narrowed to that value (as --where FIELD=VALUE
// would), so each group's figures are those of its records alone.
func (c *reportCmd) groups(ctx context.Context, rep *report.Report, snap *model.Snapshot, cfg ingest.Config, base *model.Profile, paths []string) error {
	if c.live.follow {
		return usage("--by reads the files once per value: not with --follow")
	}
	for _, p := range paths {
		if p == "-" {
			return usage("--by reads the input once per value: give files, not standard input")
		}
	}
	i := snap.Index(c.by)
	if i < 0 {
		return usage("--by %s: no such field in the stream", c.by)
	}
	f := &snap.Fields[i]
	if f.Kind == model.Identifier {
		return usage("--by %s: an identifier has a value per record; choose a field with few values", c.by)
	}
	top := topValues(snap, i)
	rep.By = c.by
	rep.GroupsLeftOut = max(0, f.Distinct-len(top))
	for _, v := range top {
		gcfg := cfg
		filter := &ingest.Filter{}
		if cfg.Filter != nil {
			*filter = *cfg.Filter
		}
		filter.Where = append(append([]model.Cond(nil), filter.Where...), model.Cond{Field: c.by, Value: v.Value, Absent: v.Absent})
		filter.Text = append(append([]string(nil), filter.Text...), c.by+"="+v.Value)
		gcfg.Filter = filter
		in, err := ingest.New(gcfg)
		if err != nil {
			return &ExitError{Code: ExitUsage, Err: err}
		}
		in.Model().SetBaseline(base)
		if err := in.ReadFiles(ctx, paths); errors.Is(err, context.Canceled) {
			return err
		}
		gs := in.Snapshot(model.SnapshotOptions{Deep: true, Timeline: true})
		rep.Groups = append(rep.Groups, report.Group{Value: v.Value, Absent: v.Absent, Report: buildReport(in, gs)})
	}
	return nil
}

// in0 lists the most frequent values of field i, at most byMaxGroups.
func topValues(snap *model.Snapshot, i int) []model.ValueCount {
	top := snap.Fields[i].Top
	if len(top) > byMaxGroups {
		top = top[:byMaxGroups]
	}
	return top
}
