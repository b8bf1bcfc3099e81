package cli

import (
	"github.com/spf13/cobra"

	"bitsift/ingest"
	"bitsift/model"
	"bitsift/report"
)

// baselineFlag is --baseline, shared by report, watch, replay and the
// demo's screen.
type baselineFlag struct{ path string }

func (b *baselineFlag) register(cmd *cobra.Command) {
	cmd.Flags().StringVar(&b.path, "baseline", "", "a JSON report (report -o json) of a healthy period to compare with")
}

// load reads the baseline's profile (nil without --baseline).
func (b *baselineFlag) load() (*model.Profile, error) {
	if b.path == "" {
		return nil, nil
	}
	p, err := report.ReadBaseline(b.path)
	if err != nil {
		return nil, &ExitError{Code: ExitUsage, Err: err}
	}
	return p, nil
}

// check refuses the baseline once the stream is read, when it shares too
// few fields with it (model.CheckBaseline).
func checkBaseline(in *ingest.Ingester, p *model.Profile) error {
	if p == nil {
		return nil
	}
	if err := model.CheckBaseline(p, in.Snapshot(model.SnapshotOptions{})); err != nil {
		return &ExitError{Code: ExitUsage, Err: err}
	}
	return nil
}

// buildReport builds the report of snap with the timeline of what changed
// along the window (model.Timeline), which needs no baseline: the
// snapshot's, when it was taken with one (SnapshotOptions.Timeline, made
// beside the Deep analyses).
func buildReport(in *ingest.Ingester, snap *model.Snapshot) *report.Report {
	r := report.Build(snap)
	r.Narrowed = narrowOf(in)
	tl := snap.Timeline
	if tl == nil {
		tl = in.Model().Timeline(snap, snap.Input.Sources)
	}
	r.AddTimeline(tl, model.TimelineMethod)
	r.AddTraces(report.NewTracer(in.Model(), snap.Input.Sources))
	return r
}
