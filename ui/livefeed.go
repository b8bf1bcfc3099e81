package ui

import (
	"context"
	"errors"

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
	if in.Redacting() {
		// Raw lines are exactly what --redact promises not to keep: the
		// Plan screen then shows the estimate only.
		return &LiveFeed{Live: ingest.StartLiveWith(ctx, in, src, ingest.LiveOptions{})}
	}
	smp := plan.NewSample(plan.DefaultBatch)
	live := ingest.StartLiveWith(ctx, in, src, ingest.LiveOptions{Tap: smp.Add})
	return &LiveFeed{Live: live, sample: smp}
}

// Sample returns a copy of the kept raw lines. Making it holds up ingest
// (about 40 ms for 100,000 demo lines), so the screen asks seldom.
func (f *LiveFeed) Sample(ctx context.Context) (*plan.Sample, error) {
	if f.sample == nil {
		return nil, errNoSample
	}
	var c *plan.Sample
	if err := f.Visit(ctx, func() { c = f.sample.Clone() }); err != nil {
		return nil, err
	}
	return c, nil
}

// errNoSample is the Plan screen's word when no raw lines are kept.
var errNoSample = errors.New("--redact keeps no raw lines to measure on")
