// Package ingest connects sources of lines to the model: it detects the
// stream's format, parses each line, takes records into the model, and
// counts every line that is not a record with its reason. One goroutine owns
// an Ingester; others see its work only through snapshots.
package ingest

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"strings"
	"time"
	"unicode/utf8"

	"bitsift/companion"
	"bitsift/ingest/raw"
	"bitsift/model"
	"bitsift/parse"
)

// detectLines is how many non-blank lines are read before the format is
// chosen.
const detectLines = 64

// MinConfidence is the least detection confidence (the winning format's
// mean Sniff score over the sample) taken as a format: below it the sample
// is mostly something else (binary data, free text), and reading it as the
// best of poor matches would turn noise into records. Every line is then
// rejected, saying to give --format or --pattern.
const MinConfidence = 0.25

// keptRejections is how many rejected lines are kept as examples.
const keptRejections = 20

// Config says how to read a stream.
type Config struct {
	Format string // a parse format name; "" detects
	// Pattern is a Go regular expression with named groups (--pattern);
	// it selects the format "pattern".
	Pattern string
	MaxLine int // longest line in bytes (0: parse.DefaultMaxLine)
	Model   model.Options
	// Clock gives arrival times for records without a timestamp, and the
	// reference year for syslog stamps.
	Clock func() time.Time
	// Stdin is what the path "-" reads (default os.Stdin).
	Stdin io.Reader
	// Redact replaces values by keyed hashes at ingest (see Redactor):
	// RedactFields names the fields, or every field when empty.
	Redact       bool
	RedactFields []string
	// NoCompanions turns off the fields bitsift adds (see companions.go).
	NoCompanions bool
	// AnalyseTime analyses the timestamp field like any other; by default
	// it is marked and left out of pairs (see model.Model.SetTimestamp).
	AnalyseTime bool
	// RedactKey, when set, is the redaction key (see NewRedactorWithKey)
	// instead of one drawn at random for the run.
	RedactKey []byte
	// Templates names fields that get a FIELD~template companion whatever
	// the sample says (--template FIELD).
	Templates []string
	// Observer, when set, sees what becomes of every line (annotate.go).
	Observer Observer
	// Filter, when active, leaves out the records it does not keep
	// (counted in Input.Filtered), after the companions are added and
	// before redaction (see filter.go).
	Filter *Filter
}

// Ingester turns lines into model records.
type Ingester struct {
	cfg    Config
	model  *model.Model
	format parse.Format
	joiner parse.Joiner // format, when its records may span lines
	conf   float64
	rec    parse.Record
	times  parse.TimeFinder
	redact *Redactor // nil: values are kept as they are
	comp   companion.Set
	det    detectState // detect.go
	// recordTemplates and replayTemplates: see annotate.go.
	recordTemplates, replayTemplates *companion.Recording
	// timeMarked: the timestamp field found has been marked in the model.
	timeMarked bool

	lastSource string // the input of the last line taken
	// raw keeps the newest raw lines when asked (KeepRaw); nil under
	// --redact.
	raw *raw.Lines

	// Until started, lines wait in pending: the format is detected from
	// them and the companions chosen from their records.
	started  bool
	pending  []pendingLine
	nonBlank int // non-blank lines in pending
	lastNum  int64

	input model.Input
	held  heldRecords // a batch's records, for the model (batch.go)
	// holding: a batch is being taken, and commit holds its records.
	holding bool
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
	in.times.Now = cfg.Clock
	if cfg.Redact || len(cfg.RedactFields) > 0 {
		r, err := newRedactorFor(cfg)
		if err != nil {
			return nil, err
		}
		in.redact = r
	}
	var f parse.Format
	switch {
	case cfg.Pattern != "":
		if cfg.Format != "" && cfg.Format != "pattern" {
			return nil, fmt.Errorf("ingest: --pattern reads lines with its own expression; drop --format %s", cfg.Format)
		}
		p, err := parse.NewPattern(cfg.Pattern)
		if err != nil {
			return nil, err
		}
		f = p
	case cfg.Format == "pattern":
		return nil, errors.New("ingest: format pattern needs --pattern REGEX with named groups")
	case cfg.Format != "":
		var err error
		if f, err = parse.ByName(cfg.Format); err != nil {
			return nil, err
		}
	}
	if f != nil {
		in.setFormat(f, 1)
	}
	return in, nil
}

func (in *Ingester) setFormat(f parse.Format, conf float64) {
	in.format, in.conf = f, conf
	in.joiner, _ = f.(parse.Joiner)
	in.input.Format, in.input.Confidence = f.Name(), conf
}

// Model is the model the Ingester feeds. Only the goroutine that owns the
// Ingester may use it.
func (in *Ingester) Model() *model.Model { return in.model }

// Line takes one line (without its line ending) from source. The slice may
// be reused by the caller after Line returns.
func (in *Ingester) Line(line []byte, num int64, source string) {
	in.input.Lines++
	in.observeLine(num, source)
	in.keepRaw(line, num, source, false)
	if !in.started {
		in.pending = append(in.pending, pendingLine{bytes.Clone(line), num, source})
		if len(bytes.TrimSpace(line)) > 0 {
			in.nonBlank++
		}
		// Blank lines do not help detection; stop waiting for more after
		// a while all the same.
		if in.nonBlank >= detectLines || len(in.pending) >= 16*detectLines {
			in.start()
		}
		return
	}
	if in.read(line, num, source) {
		in.add(num, source)
	}
}

// KeepRaw makes the Ingester keep the newest n raw lines it takes from
// now on, with their sources and line numbers, and returns them (see
// raw.Lines; only the owner goroutine may read them, a copy elsewhere).
// Under --redact it keeps none and returns nil: no raw line may be kept
// then, and this is the one place that is decided.
func (in *Ingester) KeepRaw(n int) *raw.Lines {
	if in.redact == nil && n > 0 {
		in.raw = raw.New(n)
	}
	return in.raw
}

// Raw is the raw lines kept (KeepRaw), nil when none are.
func (in *Ingester) Raw() *raw.Lines { return in.raw }

// keepRaw keeps a line's text, if raw lines are kept; lines over
// --max-line are not.
func (in *Ingester) keepRaw(text []byte, num int64, source string, tooLong bool) {
	if in.raw != nil && !tooLong {
		in.raw.Put(source, num, text)
	}
}

func (in *Ingester) reject(num int64, source, reason string, text []byte) {
	in.input.Rejected++
	if in.cfg.Observer != nil {
		in.cfg.Observer.Rejected(num, source, reason)
	}
	if in.redact != nil {
		text = nil // a rejected line may hold the very values being hidden
	}
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

// fault records a read error that ended an input early.
func (in *Ingester) fault(source string, err error) {
	msg := err.Error()
	if source != "" {
		msg = source + ": " + msg
	}
	in.input.Faults = append(in.input.Faults, msg)
}

// start chooses the format (unless it was given) from the pending lines,
// parses them, chooses the companions from their records, and takes them
// into the model.
func (in *Ingester) start() {
	in.started = true
	texts := make([][]byte, len(in.pending))
	for i, p := range in.pending {
		texts[i] = p.text
	}
	in.learnForced(texts)
	in.checkForced(texts)
	if in.format == nil {
		d, err := parse.Detect(in.detectionSample(texts))
		if err != nil || d.Confidence < MinConfidence {
			// Nothing recognisable: every line is rejected with that
			// reason, so nothing vanishes unexplained.
			d.Format, d.Confidence = unknownFormat{}, 0
		}
		in.setFormat(d.Format, d.Confidence)
		in.formatChosen()
	}
	pending := in.pending
	in.pending = nil
	type sampled struct {
		rec    parse.Record
		num    int64
		time   int64
		source string
	}
	var recs []sampled
	for i, p := range pending {
		if i > 0 && p.source != pending[i-1].source && in.joiner != nil {
			// Records left open by the previous source (as endSource,
			// but into the sample).
			for in.rec.Reset(); in.joiner.Flush(&in.rec); in.rec.Reset() {
				in.input.Parts--
				recs = append(recs, sampled{num: pending[i-1].num, time: in.recTime(), source: pending[i-1].source})
				recs[len(recs)-1].rec.CopyFrom(&in.rec)
			}
		}
		if !in.read(p.text, p.num, p.source) {
			continue
		}
		recs = append(recs, sampled{num: p.num, time: in.recTime(), source: p.source})
		recs[len(recs)-1].rec.CopyFrom(&in.rec)
	}
	if !in.cfg.NoCompanions {
		sample := make([]*parse.Record, len(recs))
		for i := range recs {
			sample[i] = &recs[i].rec
		}
		if len(pending) > 0 {
			sample = append(sample, in.spreadRecords(pending[0].source)...)
		}
		in.chooseCompanions(sample)
	}
	if in.redact != nil {
		for i := range recs {
			in.redact.Observe(&recs[i].rec)
		}
	}
	for i := range recs {
		in.commit(&recs[i].rec, recs[i].num, recs[i].time, recs[i].source)
	}
}

// read parses one line into in.rec, counting it as a rejection or a record
// part when it is one; it reports whether in.rec holds a record.
func (in *Ingester) read(line []byte, num int64, source string) bool {
	in.lastNum = num
	kind, reason := parseLine(in.format, line, false, &in.rec)
	return in.account(kind, reason, num, source, line)
}

// account counts a line parsed as kind (rejected with reason, or a part)
// and says whether it is a record. A record ends a run of lines the format
// could not read, a rejection (not a blank line or one over --max-line)
// adds to it, which may change the format (rejected, detect.go).
func (in *Ingester) account(kind lineKind, reason string, num int64, source string, text []byte) bool {
	switch kind {
	case lineRecord:
		in.accepted()
		return true
	case linePart:
		in.input.Parts++
		if in.cfg.Observer != nil {
			in.cfg.Observer.Part(num, source)
		}
	default:
		if reason == "blank line" || reason == reasonTooLong {
			in.reject(num, source, reason, nil)
			break
		}
		if parse.LooksContinuation(text) {
			// A stack trace's lines follow their record with none of its
			// header: they say nothing of the format (no re-detection).
			in.reject(num, source, reasonContinuation, text)
			break
		}
		in.reject(num, source, reason, text)
		in.rejected(text)
	}
	return false
}

// recTime is the time of the record in in.rec: its own, else arrival.
func (in *Ingester) recTime() int64 {
	t, ok := in.times.Find(&in.rec)
	if !ok {
		return in.cfg.Clock().UnixNano()
	}
	in.markTime()
	return t
}

// markTime marks the stream's timestamp field in the model, once, unless
// it is to be analysed like any other.
func (in *Ingester) markTime() {
	if !in.timeMarked {
		in.flushRecords() // the records before it were taken before the mark
		in.timeMarked = true
		if !in.cfg.AnalyseTime {
			in.model.SetTimestamp(in.times.Key())
		}
	}
}

// add takes the record in in.rec, read from line num, into the model.
func (in *Ingester) add(num int64, source string) {
	in.commit(&in.rec, num, in.recTime(), source)
}

// commit prepares a parsed record and takes it into the model.
// While a batch is being taken (holding), the record is copied and held
// for the batch's AddBatch instead.
func (in *Ingester) commit(rec *parse.Record, num, t int64, source string) {
	if !in.prepare(rec, num, t, source) {
		return
	}
	if !in.holding {
		in.model.Add(rec, num, t)
		return
	}
	h := &in.held
	if len(h.pool) <= len(h.recs) {
		h.pool = append(h.pool, &parse.Record{})
	}
	c := h.pool[len(h.recs)]
	c.CopyFrom(rec)
	h.recs = append(h.recs, c)
	h.lines = append(h.lines, num)
	h.times = append(h.times, t)
}

// prepare adds the companions to a parsed record and admits it (admit).
func (in *Ingester) prepare(rec *parse.Record, num, t int64, source string) bool {
	in.comp.Apply(rec)
	return in.admit(rec, num, t, source)
}

// admit takes a record that has its companion fields: it filters it,
// redacts it, and shows it to the Observer (which does not read the model,
// so a batch's records may be shown before the model takes them). It says
// whether the record goes on to the model: false when --where, --since or
// --until leave it out (counted in Input.Filtered).
func (in *Ingester) admit(rec *parse.Record, num, t int64, source string) bool {
	if rec.DupKeys {
		in.input.DupKeyRecords++
	}
	if in.cfg.Filter.Active() && !in.cfg.Filter.Keep(rec, t) {
		in.input.Filtered++
		if in.cfg.Observer != nil {
			in.cfg.Observer.Rejected(num, source, "left out by --where, --since or --until")
		}
		return false
	}
	if in.redact != nil {
		// After the companions, which are made only from fields that are
		// not redacted (chooseCompanions).
		in.redact.Apply(rec)
	}
	if in.cfg.Observer != nil {
		in.cfg.Observer.Record(rec, num, source, t)
	}
	return true
}

// endSource closes records left open at the end of a source (CRI partial
// lines with no final part): each becomes a record, and its last part is
// counted as the record instead.
func (in *Ingester) endSource() {
	if in.joiner == nil {
		return
	}
	for {
		in.rec.Reset()
		if !in.joiner.Flush(&in.rec) {
			return
		}
		in.input.Parts--
		in.add(in.lastNum, in.lastSource)
	}
}

// Flush parses lines still waiting for format detection (a stream shorter
// than the detection sample) and brings the model's classification up to
// date.
func (in *Ingester) Flush() {
	if !in.started && len(in.pending) > 0 {
		in.start()
	}
	if in.started {
		in.endSource()
	}
	in.model.Flush()
}

// take takes one line from a Source.
func (in *Ingester) take(l parse.Line) {
	in.enter(l.Source)
	if l.TooLong {
		in.input.Lines++
		in.observeLine(l.Num, l.Source)
		in.reject(l.Num, l.Source, reasonTooLong, nil)
		return
	}
	in.Line(l.Text, l.Num, l.Source)
}

// reasonTooLong is the rejection of a line over --max-line.
const reasonTooLong = "line longer than --max-line"

// enter notes that lines now come from source: a record split over lines
// does not run on into the next input.
func (in *Ingester) enter(source string) {
	if source != in.lastSource {
		if !in.started && in.det.perFile && len(in.pending) > 0 {
			in.start() // the last file was shorter than the sample
		}
		if in.started && in.lastSource != "" {
			in.endSource()
			in.nextFile()
		}
		in.lastSource = source
	}
}

// setEvents sets the source events the snapshots list (a copy is kept):
// the owner of the source passes src.Status().Events.
func (in *Ingester) setEvents(events []parse.SourceEvent) {
	in.input.Events = append(in.input.Events[:0], events...)
}

// unknownFormat rejects every line: the stream matched no known format.
type unknownFormat struct{}

func (unknownFormat) Name() string         { return "unknown" }
func (unknownFormat) Sniff([]byte) float64 { return 0 }
func (unknownFormat) Parse(line []byte, _ *parse.Record) error {
	if parse.LooksUTF16(line) {
		return &parse.RejectError{Reason: reasonUTF16}
	}
	return &parse.RejectError{Reason: "no known format matches this stream (use --format or --pattern)"}
}

// reasonContinuation is the rejection of a line that continues the record
// before (parse.LooksContinuation): records are read a line each.
const reasonContinuation = "continues the record before (a stack trace or wrapped text); each record is one line here"

const reasonUTF16 = "the text looks like UTF-16, not UTF-8: convert it first (iconv -f UTF-16 -t UTF-8)"
