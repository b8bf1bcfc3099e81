package ingest

import (
	"bytes"
	"context"
	"errors"
	"io"
	"runtime"

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
// lines. A format that joins lines (CRI partial lines) must not be listed.
var parallelFormats = map[string]bool{"json": true, "logfmt": true}

const (
	batchLines = 512     // lines per batch
	batchBytes = 1 << 20 // text per batch, at most (a longer line is a batch of its own)
)

// lineBatch is a run of consecutive lines and, once a worker is done with it,
// their parse results. Batches are recycled.
type lineBatch struct {
	text  []byte
	lines []parsedLine
	recs  []parse.Record
	fault error // a read fault after the lines, to be recorded in order
	ready chan struct{}
}

type parsedLine struct {
	start, end int
	num        int64
	source     string
	tooLong    bool
	// results
	blank   bool
	reason  string // "" for a record
	t       int64
	hasTime bool
}

// parallelOK says whether src can be read by the pipeline: a source of
// files read once (a follower must hand each line over as it comes, not
// when a batch fills), on more than one core.
func parallelOK(src parse.Source) bool {
	_, ok := src.(*parse.FileSource)
	return ok && runtime.GOMAXPROCS(0) > 1
}

// settled says whether the remaining lines can go to the pipeline.
func (in *Ingester) settled() bool {
	return in.started && in.format != nil && parallelFormats[in.format.Name()] && !in.det.perFile &&
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
	free := make(chan *lineBatch, 2*workers+2)
	for range cap(free) {
		free <- &lineBatch{ready: make(chan struct{}, 1)}
	}
	work := make(chan *lineBatch, cap(free))
	order := make(chan *lineBatch, cap(free))

	go func() { // reader
		defer close(order)
		defer close(work)
		b := <-free
		// There are never more batches than the channels hold, so the
		// sends do not block; the consumer returns every batch to free.
		send := func() {
			work <- b
			order <- b
			b = <-free
		}
		for {
			l, err := src.Next(ctx)
			if err == nil {
				if len(b.lines) > 0 && (len(b.lines) == batchLines || len(b.text)+len(l.Text) > batchBytes) {
					send()
				}
				s := len(b.text)
				b.text = append(b.text, l.Text...)
				b.lines = append(b.lines, parsedLine{start: s, end: len(b.text), num: l.Num, source: l.Source, tooLong: l.TooLong})
				continue
			}
			b.fault = err
			if errors.Is(err, io.EOF) || ctx.Err() != nil {
				work <- b
				order <- b
				return
			}
			send()
		}
	}()
	for range workers {
		f, err := parse.ByName(in.format.Name())
		if err != nil {
			panic("ingest: format " + in.format.Name() + " vanished from the registry")
		}
		times := in.times // settled: every copy decides alike
		go func() {
			for b := range work {
				parseBatch(b, f, &times)
				b.ready <- struct{}{}
			}
		}()
	}

	var first error
	for b := range order {
		<-b.ready
		in.takeBatch(b)
		if b.fault != nil {
			switch {
			case errors.Is(b.fault, io.EOF), ctx.Err() != nil:
				if first == nil {
					first = b.fault
					if ctx.Err() != nil {
						first = ctx.Err()
					}
				}
			default:
				in.Fault("", b.fault)
				if first == nil {
					first = b.fault
				}
			}
		}
		b.text, b.lines, b.fault = b.text[:0], b.lines[:0], nil
		free <- b
	}
	if ctx.Err() != nil {
		return ctx.Err()
	}
	if first == nil {
		first = io.EOF
	}
	return first
}

// parseBatch parses every line of b, as Ingester.parse does.
func parseBatch(b *lineBatch, f parse.Format, times *parse.TimeFinder) {
	for len(b.recs) < len(b.lines) {
		b.recs = append(b.recs, parse.Record{})
	}
	for i := range b.lines {
		l := &b.lines[i]
		l.blank, l.reason, l.hasTime = false, "", false
		if l.tooLong {
			continue
		}
		text := b.text[l.start:l.end]
		if len(bytes.TrimSpace(text)) == 0 {
			l.blank = true
			continue
		}
		rec := &b.recs[i]
		rec.Reset()
		if err := f.Parse(text, rec); err != nil {
			l.reason = err.Error()
			continue
		}
		l.t, l.hasTime = times.Find(rec)
	}
}

// takeBatch does the accounting of a parsed batch and feeds its records to
// the model, in order.
func (in *Ingester) takeBatch(b *lineBatch) {
	for i := range b.lines {
		l := &b.lines[i]
		in.input.Lines++
		in.observeLine(l.num, l.source)
		switch {
		case l.tooLong:
			in.reject(l.num, l.source, "line longer than --max-line", nil)
		case l.blank:
			in.reject(l.num, l.source, "blank line", nil)
		case l.reason != "":
			in.reject(l.num, l.source, l.reason, b.text[l.start:l.end])
		default:
			t := l.t
			if !l.hasTime {
				t = in.cfg.Clock().UnixNano()
			} else {
				in.markTime()
			}
			in.commit(&b.recs[i], l.num, t, l.source)
		}
	}
}
