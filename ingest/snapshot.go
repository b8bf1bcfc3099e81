package ingest

import (
	"context"

	"bitsift/model"
	"bitsift/parse"
)

// What the Ingester hands out of its model: snapshots with the input
// accounting beside the figures, and the model rebuilt over another window.

// Snapshot takes a snapshot of the model with the input accounting.
func (in *Ingester) Snapshot(opt model.SnapshotOptions) *model.Snapshot {
	s, _ := in.SnapshotContext(context.Background(), opt)
	return s
}

// SnapshotContext is Snapshot, given up when ctx is done (see
// model.Model.SnapshotContext): the error is then ctx's.
//
// A Timeline asked for without Sources is made with the stream's inputs.
func (in *Ingester) SnapshotContext(ctx context.Context, opt model.SnapshotOptions) (*model.Snapshot, error) {
	if opt.Timeline && opt.Sources == nil {
		opt.Sources = append([]string(nil), in.input.Sources...)
	}
	s, err := in.model.SnapshotContext(ctx, opt)
	if err != nil {
		return nil, err
	}
	in.labelTemplates(s)
	s.Input = in.input
	s.Input.Sources = append([]string(nil), in.input.Sources...)
	s.Input.RejectedExamples = append([]model.Rejection(nil), in.input.RejectedExamples...)
	s.Input.Faults = append([]string(nil), in.input.Faults...)
	s.Input.Events = append([]parse.SourceEvent(nil), in.input.Events...)
	s.Input.TimeField, s.Input.TimeFormat = in.times.Key(), in.times.Format()
	return s, nil
}

// TimeKey is the timestamp field found in the stream, "" if none.
func (in *Ingester) TimeKey() string { return in.times.Key() }

// SetWindow rebuilds the model over window w from the records the current
// window holds (see model.Model.WithWindow). The input accounting (lines,
// rejections) is of the whole stream and does not change.
//
// The baseline carries over: a fixed one (pinned or from a file) stays, a
// rolling one starts again over the new window's length.
func (in *Ingester) SetWindow(w model.Window) {
	in.cfg.Model.Window = w
	mode, fixed := in.model.BaselineMode(), in.model.Baseline()
	in.model = in.model.WithWindow(w)
	if in.timeMarked && !in.cfg.AnalyseTime {
		// WithWindow builds a fresh model, which does not know the
		// timestamp field.
		in.model.SetTimestamp(in.times.Key())
	}
	switch mode {
	case model.BaselineFixed:
		in.model.SetBaseline(fixed)
	case model.BaselineRolling:
		in.model.UseRollingBaseline()
	}
}
