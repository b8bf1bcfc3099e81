package ingest

import (
	"bytes"
	"fmt"
	"strings"

	"bitsift/parse"
	"bitsift/sanitize"
)

// Format detection beyond the first lines:
//
//   - a file read once is sampled over its whole length (parse.SpreadSample)
//     and that sample joins the first lines for detection and for choosing
//     the companions (a larger sample: spreadLines lines);
//   - in a read of several files, each file is detected on its own (the
//     companions of a later file are added to those already chosen);
//   - a stream whose lines stop matching its format (redetectRun rejected
//     lines in a row) is detected again from those lines, and the new format
//     reads the lines after them;
//   - a format given with --format that fits the first lines badly is
//     named in a warning (Warnings).
const (
	spreadLines  = 512
	redetectRun  = 32
	poorForced   = 0.5 // mean Sniff below which a forced format fits badly
	maxWarnings  = 8
	helpExamples = 3
)

type detectState struct {
	spread   map[string][][]byte
	perFile  bool
	names    []string // the formats chosen, in order
	run      [][]byte
	warnings []string
}

// autodetect says whether the format is the Ingester's to choose.
func (in *Ingester) autodetect() bool { return in.cfg.Format == "" && in.cfg.Pattern == "" }

// prepareFiles samples each file over its length, and asks for detection
// per file when there are several.
func (in *Ingester) prepareFiles(paths []string) {
	if !in.autodetect() && in.cfg.NoCompanions {
		return
	}
	if in.det.spread == nil {
		in.det.spread = map[string][][]byte{}
	}
	for _, p := range paths {
		if s := parse.SpreadSample(p, spreadLines); len(s) > 0 {
			in.det.spread[p] = s
		}
	}
	if len(paths) > 1 && in.autodetect() {
		in.det.perFile = true
	}
}

// detectionSample is the pending lines' text plus the spread sample of the
// file they come from.
func (in *Ingester) detectionSample(pending [][]byte) [][]byte {
	if len(in.pending) == 0 {
		return pending
	}
	return append(pending, in.det.spread[in.pending[0].source]...)
}

// spreadRecords parses the spread sample of source (not counted: its lines
// are read again in turn) for choosing companions; none for formats that
// join lines.
func (in *Ingester) spreadRecords(source string) []*parse.Record {
	lines := in.det.spread[source]
	if len(lines) == 0 || in.joiner != nil {
		return nil
	}
	out := make([]*parse.Record, 0, len(lines))
	for _, l := range lines {
		rec := &parse.Record{}
		if in.format.Parse(l, rec) == nil {
			out = append(out, rec)
		}
	}
	return out
}

// nextFile starts detection again for the file that begins now.
func (in *Ingester) nextFile() {
	if !in.det.perFile || !in.started {
		return
	}
	in.started, in.nonBlank, in.format, in.joiner = false, 0, nil, nil
	// Each file finds its own time field and form.
	in.times = parse.TimeFinder{Now: in.cfg.Clock}
	in.timeMarked = false
}

// formatChosen notes the format just chosen (for a file, or after a shape
// change): one that differs from the last gets a fresh time finder, and the
// input names every format read ("header+rfc3164").
func (in *Ingester) formatChosen() {
	name := in.format.Name()
	names := in.det.names
	if len(names) > 0 && names[len(names)-1] != name {
		in.times = parse.TimeFinder{Now: in.cfg.Clock}
		in.timeMarked = false
	}
	seen := false
	for _, n := range names {
		seen = seen || n == name
	}
	if !seen {
		in.det.names = append(names, name)
	}
	in.input.Format = strings.Join(in.det.names, "+")
}

// rejected notes a line the format could not read; after redetectRun in a
// row it detects the format again from them.
func (in *Ingester) rejected(line []byte) {
	if !in.autodetect() || in.redact != nil {
		return
	}
	in.det.run = append(in.det.run, bytes.Clone(line))
	if len(in.det.run) < redetectRun {
		return
	}
	d, err := parse.Detect(in.det.run)
	in.det.run = in.det.run[:0]
	if err != nil || d.Confidence < 2*MinConfidence || d.Format.Name() == in.format.Name() {
		return
	}
	in.flushRecords() // the records read as the old format go first
	in.setFormat(d.Format, d.Confidence)
	in.formatChosen()
	in.warn(fmt.Sprintf("the lines changed shape: read as %s from line %d on", d.Format.Name(), in.lastNum+1))
}

// accepted notes a line the format read.
func (in *Ingester) accepted() { in.det.run = in.det.run[:0] }

// learnForced lets a format given with --format that learns the lines'
// shape (parse.Learner) learn it from the sample.
func (in *Ingester) learnForced(texts [][]byte) {
	if l, ok := in.format.(parse.Learner); ok && in.cfg.Format != "" {
		l.Learn(in.detectionSample(texts))
	}
}

// checkForced warns when a format given with --format fits the sample
// badly, naming the format detection would take.
func (in *Ingester) checkForced(sample [][]byte) {
	if in.cfg.Format == "" || len(sample) == 0 {
		return
	}
	sum, n := 0.0, 0
	for _, l := range sample {
		if len(bytes.TrimSpace(l)) == 0 {
			continue
		}
		sum += in.format.Sniff(l)
		n++
	}
	if n == 0 || sum/float64(n) >= poorForced {
		return
	}
	msg := fmt.Sprintf("--format %s fits these lines badly (mean score %.2f of 1)", in.cfg.Format, sum/float64(n))
	if d, err := parse.Detect(sample); err == nil && d.Confidence >= MinConfidence && d.Format.Name() != in.cfg.Format {
		msg += fmt.Sprintf("; detection would read them as %s (%.2f)", d.Format.Name(), d.Confidence)
	}
	in.warn(msg + "; its fields may be junk")
}

func (in *Ingester) warn(msg string) {
	if len(in.det.warnings) < maxWarnings {
		in.det.warnings = append(in.det.warnings, msg)
	}
}

// Warnings are what the reading noticed that the user should know: a
// forced format that fits badly, a stream that changed shape.
func (in *Ingester) Warnings() []string { return append([]string(nil), in.det.warnings...) }

// Unreadable explains a run in which no line was a record: the first lines
// it could not read (as shown on a terminal, or none under --redact) and a
// --pattern made from the first of them to start from. It is "" when some
// line was a record, or no line was read.
func (in *Ingester) Unreadable() string {
	if in.model.Seen() > 0 || in.input.Lines == 0 {
		return ""
	}
	var b strings.Builder
	b.WriteString("no line could be read as a record")
	var first string
	shown := 0
	for _, r := range in.input.RejectedExamples {
		if r.Text == "" || shown == helpExamples {
			continue
		}
		if shown == 0 {
			b.WriteString("; the first lines:")
			first = r.Text
		}
		fmt.Fprintf(&b, "\n  line %d: %s", r.Line, sanitize.String(r.Text))
		shown++
	}
	if len(in.input.RejectedExamples) > 0 {
		fmt.Fprintf(&b, "\n  (%s)", in.input.RejectedExamples[0].Reason)
		if in.input.RejectedExamples[0].Reason == reasonUTF16 {
			return b.String() // no format or pattern reads it as it is
		}
	}
	b.WriteString("\nname the format with --format, or give the lines' shape with --pattern")
	if first != "" {
		fmt.Fprintf(&b, ", for example:\n  --pattern '%s'", parse.SuggestPattern([]byte(first)))
	}
	return b.String()
}
