package ingest

import (
	"bytes"
	"errors"

	"bitsift/companion"
	"bitsift/parse"
)

// batch is a run of consecutive lines of a source, their text in one
// buffer, on their way to the Ingester. The live reader fills one under the
// handoff's lock (handoff.go), copying each line; the pipeline's reader
// reads a file straight into the buffer, where the lines stay with their
// endings between them (batchReader, pipeline.go); the pipeline's workers
// parse it (parseBatch) before the owner takes it (Ingester.takeBatch),
// the live runner's owner parses it as it takes it. Either way every line goes through parseLine and
// Ingester.account: the rules that make a line a record, a rejection or a
// part are written once. Batches are recycled.
type batch struct {
	text  []byte
	lines []batchLine
	// recs[i] is line i's record, once parsed (parsed is set); labelled:
	// its companion fields are there, to be resolved (companion.Labeller).
	recs     []parse.Record
	parsed   bool
	labelled bool
	ready    chan struct{} // the pipeline's worker is done with it
	end      error         // the pipeline's source ended after the lines (io.EOF, or ctx's error)
}

type batchLine struct {
	start, end int
	num        int64
	source     string
	tooLong    bool
	err        error // a fault of the source, in order after the lines before it

	// Filled by parseBatch.
	kind    lineKind
	reason  string // why the line was rejected
	t       int64
	hasTime bool
	from    int // the record's first companion field, when labelled
}

// lineKind is what a line turned out to be.
type lineKind uint8

const (
	lineRecord   lineKind = iota
	lineRejected          // with a reason
	linePart              // held by a parse.Joiner, counted as a part
)

// add appends one line read from a source (or a fault, err != nil).
func (b *batch) add(l parse.Line, err error) {
	start := len(b.text)
	b.text = append(b.text, l.Text...)
	b.lines = append(b.lines, batchLine{start: start, end: len(b.text), num: l.Num, source: l.Source, tooLong: l.TooLong, err: err})
}

func (b *batch) reset() {
	b.text = b.text[:0]
	b.lines = b.lines[:0]
	b.parsed, b.labelled, b.end = false, false, nil
}

func (b *batch) line(i int) parse.Line {
	l := &b.lines[i]
	return parse.Line{Text: b.text[l.start:l.end], Num: l.num, Source: l.source, TooLong: l.tooLong}
}

// parseLine is the one place a line becomes a record: it parses text (a
// line over --max-line when tooLong) with f into rec and says what the line
// is, with the reason when it is rejected.
func parseLine(f parse.Format, text []byte, tooLong bool, rec *parse.Record) (lineKind, string) {
	switch {
	case tooLong:
		return lineRejected, reasonTooLong
	case len(bytes.TrimSpace(text)) == 0:
		return lineRejected, "blank line"
	}
	rec.Reset()
	err := f.Parse(text, rec)
	switch {
	case err == nil:
		return lineRecord, ""
	case errors.Is(err, parse.ErrPart):
		return linePart, ""
	}
	return lineRejected, err.Error()
}

// parseBatch parses every line of b (a pipeline worker, on a format that
// keeps nothing from one line to the next), finding record times with its
// own copy of a settled TimeFinder, and appending the companion fields
// with its own Labeller (none when lab is nil).
func parseBatch(b *batch, f parse.Format, times *parse.TimeFinder, lab *companion.Labeller) {
	for len(b.recs) < len(b.lines) {
		b.recs = append(b.recs, parse.Record{})
	}
	for i := range b.lines {
		l := &b.lines[i]
		if l.err != nil {
			continue
		}
		rec := &b.recs[i]
		l.kind, l.reason = parseLine(f, b.text[l.start:l.end], l.tooLong, rec)
		l.hasTime = false
		if l.kind == lineRecord {
			l.t, l.hasTime = times.Find(rec)
			if lab != nil {
				l.from = rec.Len()
				lab.Apply(rec)
			}
			// Compared here, off the owner; takeBatch keeps it only when
			// the line before went to the model too.
			rec.KeysRepeat = i > 0 && b.lines[i-1].err == nil && b.lines[i-1].kind == lineRecord && rec.SameKeys(&b.recs[i-1])
		}
	}
	b.parsed, b.labelled = true, lab != nil
}

// takeBatch takes b's lines in order: faults are recorded, the records of
// a parsed batch go to the model together (model.Model.AddBatch), the
// lines of an unparsed one through take. between (when not nil) is called
// every chunkLines lines, so that the live owner can answer requests; when
// it returns false the rest is left (the live runner is stopping). It
// returns the first fault.
func (in *Ingester) takeBatch(b *batch, between func() bool) (first error) {
	// Records read line by line are held too (commit), and go to the
	// model with the parsed ones at each flush.
	in.holding = true
	defer func() { in.flushRecords(); in.holding = false }()
	held := -1 // the last line whose record was held
	for i := range b.lines {
		if between != nil && i%chunkLines == chunkLines-1 {
			in.flushRecords()
			if !between() {
				return first // stopping: the rest is not wanted
			}
		}
		l := &b.lines[i]
		if l.err != nil {
			in.fault("", l.err)
			if first == nil {
				first = l.err
			}
			continue
		}
		if !b.parsed {
			in.take(b.line(i))
			continue
		}
		text := b.text[l.start:l.end]
		in.enter(l.source)
		in.input.Lines++
		in.lastNum = l.num
		in.observeLine(l.num, l.source)
		in.keepRaw(text, l.num, l.source, l.tooLong)
		format := in.format
		if !in.account(l.kind, l.reason, l.num, l.source, text) {
			if in.format != format {
				// The lines changed shape (account): the rest are read
				// line by line, in the new format.
				b.parsed = false
			}
			continue
		}
		t := l.t
		if !l.hasTime {
			t = in.cfg.Clock().UnixNano()
		} else {
			in.markTime()
		}
		rec := &b.recs[i]
		if b.labelled {
			in.comp.Resolve(rec, l.from)
		} else {
			in.comp.Apply(rec)
		}
		if !in.admit(rec, l.num, t, l.source) {
			continue // left out by --where, --since or --until
		}
		// The worker compared the keys with the line before's; they are
		// the keys of the record before in the model only if that one
		// was held too, and as read only if no redaction renamed them.
		rec.KeysRepeat = rec.KeysRepeat && held == i-1 && in.redact == nil
		held = i
		in.held.recs = append(in.held.recs, rec)
		in.held.lines = append(in.held.lines, l.num)
		in.held.times = append(in.held.times, t)
	}
	return first
}

// heldRecords are a batch's records on their way to the model: a parsed
// batch's own, or copies in pool of records read line by line.
type heldRecords struct {
	recs         []*parse.Record
	lines, times []int64
	pool         []*parse.Record
}

// flushRecords takes the held records into the model.
func (in *Ingester) flushRecords() {
	h := &in.held
	if len(h.recs) == 0 {
		return
	}
	in.model.AddBatch(h.recs, h.lines, h.times)
	clear(h.recs)
	h.recs, h.lines, h.times = h.recs[:0], h.lines[:0], h.times[:0]
}
