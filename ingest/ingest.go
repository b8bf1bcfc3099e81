// Package ingest connects sources of lines to the model: it detects the
// stream's format, parses each line, takes records into the model, and
// counts every line that is not a record with its reason. One goroutine owns
// an Ingester; others see its work only through snapshots.
package ingest

import (
	"bytes"
	"context"
	"errors"
	"io"
	"strings"
	"time"
	"unicode/utf8"

	"bitsift/model"
	"bitsift/parse"
)

// detectLines is how many non-blank lines are read before the format is
// chosen.
const detectLines = 64

// keptRejections is how many rejected lines are kept as examples.
const keptRejections = 20

// Config says how to read a stream.
type Config struct {
	Format  string // a parse format name; "" detects
	MaxLine int    // longest line in bytes (0: parse.DefaultMaxLine)
	Model   model.Options
	// Clock gives arrival times for records without a timestamp.
	Clock func() time.Time
	// Stdin is what the path "-" reads (default os.Stdin).
	Stdin io.Reader
}

// Ingester turns lines into model records.
type Ingester struct {
	cfg    Config
	model  *model.Model
	format parse.Format
	conf   float64
	rec    parse.Record
	times  parse.TimeFinder

	pending  []pendingLine // lines read before the format is known
	nonBlank int           // non-blank lines in pending

	input model.Input
}

type pendingLine struct {
	text   []byte
	num    int64
	source string
}

// New returns an Ingester for cfg.
func New(cfg Config) (*Ingester, error) {
	if cfg.Clock == nil {
		cfg.Clock = time.Now
	}
	in := &Ingester{cfg: cfg, model: model.New(cfg.Model)}
	if cfg.Format != "" {
		f, err := parse.ByName(cfg.Format)
		if err != nil {
			return nil, err
		}
		in.format, in.conf = f, 1
		in.input.Format = f.Name()
		in.input.Confidence = 1
	}
	return in, nil
}

// Model is the model the Ingester feeds. Only the goroutine that owns the
// Ingester may use it.
func (in *Ingester) Model() *model.Model { return in.model }

// Line takes one line (without its line ending) from source. The slice may
// be reused by the caller after Line returns.
func (in *Ingester) Line(line []byte, num int64, source string) {
	in.input.Lines++
	if in.format == nil {
		in.pending = append(in.pending, pendingLine{bytes.Clone(line), num, source})
		if len(bytes.TrimSpace(line)) > 0 {
			in.nonBlank++
		}
		// Blank lines do not help detection; stop waiting for more after
		// a while all the same.
		if in.nonBlank >= detectLines || len(in.pending) >= 16*detectLines {
			in.detect()
		}
		return
	}
	in.parse(line, num, source)
}

// Reject counts a line that could not even be read as a line (too long).
func (in *Ingester) Reject(num int64, source, reason string) {
	in.input.Lines++
	in.reject(num, source, reason, nil)
}

func (in *Ingester) reject(num int64, source, reason string, text []byte) {
	in.input.Rejected++
	if len(in.input.RejectedExamples) < keptRejections {
		in.input.RejectedExamples = append(in.input.RejectedExamples, model.Rejection{
			Line: num, Source: source, Reason: reason, Text: excerpt(text),
		})
	}
}

// excerpt keeps the start of a rejected line for display, valid UTF-8.
func excerpt(b []byte) string {
	const max = 120
	if len(b) > max {
		b = b[:max]
	}
	return strings.ToValidUTF8(string(b), string(utf8.RuneError))
}

// Fault records a read error that ended an input early.
func (in *Ingester) Fault(source string, err error) {
	msg := err.Error()
	if source != "" {
		msg = source + ": " + msg
	}
	in.input.Faults = append(in.input.Faults, msg)
}

// detect chooses the format from the pending lines and parses them.
func (in *Ingester) detect() {
	sample := make([][]byte, len(in.pending))
	for i, p := range in.pending {
		sample[i] = p.text
	}
	d, err := parse.Detect(sample)
	if err != nil || d.Confidence == 0 {
		// Nothing recognisable: every line is rejected with that reason,
		// so nothing vanishes unexplained.
		d.Format, d.Confidence = unknownFormat{}, 0
	}
	in.format, in.conf = d.Format, d.Confidence
	in.input.Format, in.input.Confidence = d.Format.Name(), d.Confidence
	pending := in.pending
	in.pending = nil
	for _, p := range pending {
		in.parse(p.text, p.num, p.source)
	}
}

func (in *Ingester) parse(line []byte, num int64, source string) {
	if len(bytes.TrimSpace(line)) == 0 {
		in.reject(num, source, "blank line", nil)
		return
	}
	in.rec.Reset()
	if err := in.format.Parse(line, &in.rec); err != nil {
		in.reject(num, source, err.Error(), line)
		return
	}
	t, ok := in.times.Find(&in.rec)
	if !ok {
		t = in.cfg.Clock().UnixNano()
	}
	in.model.Add(&in.rec, num, t)
}

// Flush parses lines still waiting for format detection (a stream shorter
// than the detection sample) and brings the model's classification up to
// date.
func (in *Ingester) Flush() {
	if in.format == nil && len(in.pending) > 0 {
		in.detect()
	}
	in.model.Flush()
}

// Snapshot takes a snapshot of the model with the input accounting.
func (in *Ingester) Snapshot(opt model.SnapshotOptions) *model.Snapshot {
	s := in.model.Snapshot(opt)
	s.Input = in.input
	s.Input.Sources = append([]string(nil), in.input.Sources...)
	s.Input.RejectedExamples = append([]model.Rejection(nil), in.input.RejectedExamples...)
	s.Input.Faults = append([]string(nil), in.input.Faults...)
	return s
}

// TimeKey is the timestamp field found in the stream, "" if none.
func (in *Ingester) TimeKey() string { return in.times.Key() }

// Take takes one line from a Source.
func (in *Ingester) Take(l parse.Line) {
	if l.TooLong {
		in.Reject(l.Num, l.Source, "line longer than --max-line")
		return
	}
	in.Line(l.Text, l.Num, l.Source)
}

// ReadSource reads src to its end, or until ctx is done. It goes on past an
// input that fails (a fault is recorded), and returns the first fault.
func (in *Ingester) ReadSource(ctx context.Context, src parse.Source) error {
	if parallelOK(src) {
		return in.readParallel(ctx, src)
	}
	var first error
	for {
		l, err := src.Next(ctx)
		switch {
		case err == nil:
			in.Take(l)
			continue
		case errors.Is(err, io.EOF):
			in.Flush()
			return first
		case ctx.Err() != nil:
			in.Flush()
			return ctx.Err()
		}
		in.Fault("", err)
		if first == nil {
			first = err
		}
	}
}

// ReadFiles reads each path in turn ("-" is standard input), plain, gzip
// or zstd. It goes on past a file that fails, and returns the first fault.
func (in *Ingester) ReadFiles(ctx context.Context, paths []string) error {
	in.input.Sources = append(in.input.Sources, paths...)
	src := parse.NewFileSource(paths, in.cfg.MaxLine)
	src.Stdin = in.cfg.Stdin
	defer src.Close()
	return in.ReadSource(ctx, src)
}

// AddSource names a source whose lines are given with Line.
func (in *Ingester) AddSource(name string) { in.input.Sources = append(in.input.Sources, name) }

// unknownFormat rejects every line: the stream matched no known format.
type unknownFormat struct{}

func (unknownFormat) Name() string         { return "unknown" }
func (unknownFormat) Sniff([]byte) float64 { return 0 }
func (unknownFormat) Parse([]byte, *parse.Record) error {
	return &parse.RejectError{Reason: "no known format matches this stream (use --format or --pattern)"}
}
