package plan

import "bitsift/ingest/raw"

// DefaultSampleBytes caps the line text a Sample holds (see
// raw.DefaultBytes).
const DefaultSampleBytes = raw.DefaultBytes

// Sample is the raw lines Measure works on: the newest lines of a stream as
// ingest keeps them (ingest.Ingester.KeepRaw, never under --redact), with
// their sources and line numbers.
type Sample = raw.Lines

// NewSample returns a sample of at most max lines (DefaultBatch when
// max ≤ 0), for lines given by hand; a stream's are kept by its Ingester.
func NewSample(max int) *Sample {
	if max <= 0 {
		max = DefaultBatch
	}
	return raw.New(max)
}
