package ui

import (
	"context"
	"errors"

	"bitsift/ingest"
	"bitsift/model"
	"bitsift/parse"
	"bitsift/plan"
)

// LiveFeed is the Feed of a running ingest.Live, with the raw lines the
// Plan screen measures on: the Ingester keeps the newest ones (none under
// --redact), copied on its owner goroutine on request.
type LiveFeed struct {
	*ingest.Live
	in *ingest.Ingester
}

// StartLive starts reading src into in (see ingest.StartLive), keeping
// the newest plan.DefaultBatch raw lines for the Plan screen.
func StartLive(ctx context.Context, in *ingest.Ingester, src parse.Source) *LiveFeed {
	live := ingest.StartLiveWith(ctx, in, src, ingest.LiveOptions{RawLines: plan.DefaultBatch})
	return &LiveFeed{Live: live, in: in}
}

// Sample returns a copy of the kept raw lines. Making it holds up ingest
// (about 40 ms for 100,000 demo lines), so the screen asks seldom.
func (f *LiveFeed) Sample(ctx context.Context) (*plan.Sample, error) {
	var c *plan.Sample
	if err := f.Visit(ctx, func() {
		if r := f.in.Raw(); r != nil {
			c = r.Clone()
		}
	}); err != nil {
		return nil, err
	}
	if c == nil {
		// Raw lines are exactly what --redact promises not to keep: the
		// Plan screen then shows the estimate only.
		return nil, errNoSample
	}
	return c, nil
}

// errNoSample is the Plan screen's word when no raw lines are kept.
var errNoSample = errors.New("--redact keeps no raw lines to measure on")

// Lines finds the records behind a finding on the owner goroutine (it
// holds up ingest for one scan of the window's named columns).
func (f *LiveFeed) Lines(ctx context.Context, conds []model.Cond, limit int) ([]ingest.LineBehind, int, error) {
	var lines []ingest.LineBehind
	total := 0
	err := f.Visit(ctx, func() { lines, total = f.in.LinesBehind(conds, limit) })
	return lines, total, err
}
