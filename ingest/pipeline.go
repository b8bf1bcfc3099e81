package ingest

import (
	"context"
	"errors"
	"io"
	"runtime"
	"sync/atomic"

	"bitsift/parse"
)

// Parallel parsing. Files read once are parsed by several workers while the
// goroutine that owns the Ingester takes the results into the model, batch
// by batch in the order the lines were read: every line is still counted
// once, as a record or a rejection, under its own number, and the model is
// fed exactly the records a sequential run feeds it, in the same order.
//
// The pipeline starts only once the stream's format is known and the time
// finder has settled (found its field, or given up): both decide from the
// first records, which are taken one by one as before. Only formats that
// keep nothing from one line to the next can be parsed out of order.

// parallelFormats are the formats whose Parse keeps no state between
// lines (each has scratch buffers only), made afresh for each worker by
// name. A format that joins lines (CRI partial lines) must not be listed.
// A format that keeps what it learned (header) or was made with
// (pattern) implements parse.Cloner, and each worker parses with a clone.
var parallelFormats = map[string]bool{"json": true, "logfmt": true, "klog": true, "envoy": true,
	"access": true, "rfc3164": true, "rfc5424": true, "docker": true, "prefixed": true}

// parallelFormat says whether the pipeline's workers can parse f.
func parallelFormat(f parse.Format) bool {
	if _, ok := f.(parse.Cloner); ok {
		return true
	}
	return parallelFormats[f.Name()]
}

// workerFormat is a worker's own copy of f.
func workerFormat(f parse.Format) parse.Format {
	if c, ok := f.(parse.Cloner); ok {
		return c.Clone()
	}
	w, err := parse.ByName(f.Name())
	if err != nil {
		panic("ingest: format " + f.Name() + " vanished from the registry")
	}
	return w
}

// A batch's records go to the model in one AddBatch, whose passes spread
// over the cores only for segments large enough (model.parallelMin). The
// model's passes read each record's values again, field by field, after a
// worker wrote them: the batches in flight (see pipeline) should fit in
// the cores' caches. 512 lines (about 150 KB of demo records a batch)
// took `report` over 1M demo lines 16% less wall time than 2048 (19% with
// --window 100000), 5 interleaved runs each; 256 and 384 were no better
// than 512. (Before the model's per-segment costs fell, 2048 had been the
// better.)
const (
	batchLines = 512     // lines per batch
	batchBytes = 1 << 20 // text per batch, at most (a longer line is a batch of its own)
)

// parallelOK says whether src can be read by the pipeline: a source of
// files read once (a follower must hand each line over as it comes, not
// when a batch fills), on more than one core.
func parallelOK(src parse.Source) bool {
	_, ok := src.(*parse.FileSource)
	return ok && runtime.GOMAXPROCS(0) > 1
}

// batchReader is the pipeline's reader: it fills batches with the lines
// of a FileSource, read a block at a time straight into the batch's text
// (FileSource.NextBlock), in input order.
type batchReader struct {
	fs    *parse.FileSource
	spans []parse.BlockLine
	room  parse.BlockRoom
}

// fill reads lines into b, empty, until no more fit: it returns nil when
// the next line has no place in b, and otherwise what ended it after the
// lines before (io.EOF, ctx's error, or a fault of an input). A batch takes
// batchLines lines, or fewer of at most batchBytes of text together (a
// longer line is a batch of its own).
func (r *batchReader) fill(ctx context.Context, b *batch) error {
	r.room = parse.BlockRoom{MaxLines: batchLines, MaxText: batchBytes}
	for {
		var (
			source string
			full   bool
			err    error
		)
		b.text, r.spans, source, full, err = r.fs.NextBlock(ctx, b.text, r.spans[:0], &r.room)
		for _, s := range r.spans {
			b.lines = append(b.lines, batchLine{start: s.Start, end: s.End, num: s.Num, source: source, tooLong: s.TooLong})
		}
		if full || err != nil {
			return err
		}
	}
}

// settled says whether the remaining lines can go to the pipeline.
func (in *Ingester) settled() bool {
	return in.started && in.format != nil && parallelFormat(in.format) && !in.det.perFile &&
		(in.times.Key() != "" || in.model.Seen() > timeFinderTries)
}

// timeFinderTries is how many records parse.TimeFinder looks at before it
// gives up on finding a time field (every record parsed is looked at, then
// added to the model, so Seen counts them).
const timeFinderTries = 101

// pipeline reads src to its end through parallel workers and returns the
// first fault, io.EOF at a clean end, or ctx.Err().
func (in *Ingester) pipeline(ctx context.Context, src parse.Source) error {
	workers := runtime.GOMAXPROCS(0)
	// One batch being filled, one being taken, one for each worker: the
	// workers parse far faster than the model takes, so more would only
	// hold memory (each is about 1 MB of text and records).
	free := make(chan *batch, workers+2)
	for range cap(free) {
		free <- &batch{ready: make(chan struct{}, 1)}
	}
	work := make(chan *batch, cap(free))
	order := make(chan *batch, cap(free))

	go func() { // reader
		defer close(order)
		defer close(work)
		r := batchReader{fs: src.(*parse.FileSource)}
		for {
			b := <-free
			// There are never more batches than the channels hold, so the
			// sends do not block; the consumer returns every batch to free.
			err := r.fill(ctx, b)
			switch {
			case err == nil: // full
			case errors.Is(err, io.EOF) || ctx.Err() != nil:
				b.end = err
				work <- b
				order <- b
				return
			default:
				b.add(parse.Line{}, err) // a fault, recorded in order
			}
			work <- b
			order <- b
		}
	}()
	// format is the one the workers parse with; reformatted tells them to
	// stop once the owner has taken another.
	format := in.format
	var reformatted atomic.Bool
	for range workers {
		f := workerFormat(in.format)
		times := in.times // settled: every copy decides alike
		// The companions are chosen by now and do not change while the
		// pipeline runs (a read of several files, which may add some,
		// stays sequential): each worker labels with copies of its own.
		lab := in.comp.Labeller()
		go func() {
			for b := range work {
				if !reformatted.Load() {
					parseBatch(b, f, &times, lab)
				}
				b.ready <- struct{}{}
			}
		}()
	}

	var first, end error
	for b := range order {
		<-b.ready
		if in.format != format {
			// The lines changed shape and were detected again (takeBatch,
			// Ingester.rejected): what the workers parsed in the old
			// format is read again, line by line, in the new one.
			reformatted.Store(true)
			b.parsed = false
		}
		if err := in.takeBatch(b, nil); first == nil {
			first = err
		}
		if b.end != nil && end == nil {
			end = b.end
		}
		b.reset()
		free <- b
	}
	if first == nil && ctx.Err() == nil {
		first = end
	}
	if ctx.Err() != nil {
		return ctx.Err()
	}
	if first == nil {
		first = io.EOF
	}
	return first
}
