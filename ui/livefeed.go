package ui

import (
	"context"

	"bitsift/ingest"
	"bitsift/parse"
	"bitsift/plan"
)

// LiveFeed is the Feed of a running ingest.Live, with the raw lines the
// Plan screen measures on: a plan.Sample of the newest ones, fed through
// the Live's tap on its owner goroutine and copied there on request.
type LiveFeed struct {
	*ingest.Live
	sample *plan.Sample
}

// StartLive starts reading src into in (see ingest.StartLive), keeping
// the newest plan.DefaultBatch raw lines for the Plan screen.
func StartLive(ctx context.Context, in *ingest.Ingester, src parse.Source) *LiveFeed {
	smp := plan.NewSample(plan.DefaultBatch)
	live := ingest.StartLiveWith(ctx, in, src, ingest.LiveOptions{Tap: smp.Add})
	return &LiveFeed{Live: live, sample: smp}
}

// Sample returns a copy of the kept raw lines. Making it holds up ingest
// (about 40 ms for 100,000 demo lines), so the screen asks seldom.
func (f *LiveFeed) Sample(ctx context.Context) (*plan.Sample, error) {
	var c *plan.Sample
	if err := f.Visit(ctx, func() { c = f.sample.Clone() }); err != nil {
		return nil, err
	}
	return c, nil
}
