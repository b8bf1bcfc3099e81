package parse

import (
	"bytes"
	"errors"
	"fmt"
	"sort"
)

// Format turns one line of text into a Record.
//
// Parse must not keep line after it returns, must not allocate per field in
// the steady state (write keys and values into rec), and reports a line that
// is not a record of this format with an error whose text is the reason, in
// a few words, for the user (e.g. "unterminated quoted value").
type Format interface {
	// Name is the value of --format that selects this format.
	Name() string
	// Parse fills rec, which the caller has Reset, from line, which has no
	// line ending.
	Parse(line []byte, rec *Record) error
	// Sniff scores how well line looks like this format, from 0 (not at
	// all) to 1 (unmistakably). Detection sums it over the first lines.
	Sniff(line []byte) float64
}

// ErrNotRecord is wrapped by Parse errors for lines that are not records.
var ErrNotRecord = errors.New("not a record")

// ErrPart is returned by a Joiner's Parse for a line that it holds as a part
// of a record that a later line completes. Such a line is neither a record
// nor a rejection: ingest counts it as a record part, so that lines read =
// records + rejected + parts stays exact.
var ErrPart = errors.New("line held as part of a record joined from several lines")

// Joiner is a Format whose records may span several lines, such as CRI
// partial lines. Its Parse returns ErrPart for the lines it holds and a
// record on the line that completes one.
type Joiner interface {
	Format
	// Flush fills rec with the record still open at the end of a stream
	// and reports whether there was one. Its last part then counts as the
	// record rather than as a part.
	Flush(rec *Record) bool
}

// Cloner is a Format whose Parse keeps nothing from one line to the next
// but holds what it was made or learned with (the header a Header learned,
// a Pattern's expression): Clone gives a copy for another goroutine, which
// parses as this one does, sharing nothing it writes.
type Cloner interface {
	Format
	Clone() Format
}

// reject makes a Parse error with the given reason.
func reject(reason string) error { return &RejectError{Reason: reason} }

// RejectError says why a line is not a record.
type RejectError struct{ Reason string }

func (e *RejectError) Error() string { return e.Reason }

// Unwrap lets callers test with errors.Is(err, ErrNotRecord).
func (e *RejectError) Unwrap() error { return ErrNotRecord }

var registry = map[string]func() Format{}

// Register makes a format available to Detect and ByName. Formats register
// themselves in init; a new format is one file plus its Register call.
func Register(name string, make func() Format) {
	if _, dup := registry[name]; dup {
		panic("parse: format registered twice: " + name)
	}
	registry[name] = make
}

// Names lists the registered formats, sorted.
func Names() []string {
	names := make([]string, 0, len(registry))
	for n := range registry {
		names = append(names, n)
	}
	sort.Strings(names)
	return names
}

// ByName returns a new instance of the named format.
func ByName(name string) (Format, error) {
	mk, ok := registry[name]
	if !ok {
		return nil, fmt.Errorf("parse: unknown format %q (known: %v)", name, Names())
	}
	return mk(), nil
}

// Detection is the outcome of Detect.
type Detection struct {
	Format     Format
	Confidence float64 // mean Sniff score of the winner over the sample, 0..1
}

// Detect picks the format that best explains sample, the first lines of a
// stream (blank lines are ignored). Ties go to the format registered under
// the alphabetically first name, so detection is deterministic.
func Detect(sample [][]byte) (Detection, error) {
	best := Detection{}
	bestName := ""
	n := 0
	for _, l := range sample {
		if len(trimSpace(l)) > 0 {
			n++
		}
	}
	if n == 0 {
		return best, errors.New("parse: no lines to detect a format from")
	}
	wide := 0
	for _, l := range sample {
		if LooksUTF16(l) {
			wide++
		}
	}
	if wide*2 > n {
		// logfmt and the header formats would read it, NULs and all, into
		// fields named "\x00l\x00e\x00v…".
		return best, errors.New("parse: the lines look like UTF-16 text, which no format reads")
	}
	// Continuation lines (stack traces) are left out, unless nearly all
	// the lines are such (then they are the format): the lines that start
	// records decide it. Java services' traces can be most of the lines.
	cont := 0
	for _, l := range sample {
		if LooksContinuation(l) {
			cont++
		}
	}
	if cont > 0 && cont*10 < n*9 {
		kept := make([][]byte, 0, len(sample)-cont)
		for _, l := range sample {
			if !LooksContinuation(l) {
				kept = append(kept, l)
			}
		}
		sample, n = kept, n-cont
	}
	for _, name := range Names() {
		f := registry[name]()
		if l, ok := f.(Learner); ok {
			l.Learn(sample)
		}
		sum := 0.0
		for _, l := range sample {
			l = trimSpace(l)
			if len(l) == 0 {
				continue
			}
			sum += f.Sniff(l)
		}
		score := sum / float64(n)
		if score > best.Confidence {
			best = Detection{Format: f, Confidence: score}
			bestName = name
		}
	}
	if best.Format == nil {
		return best, errors.New("parse: no known format matches the first lines (use --format)")
	}
	_ = bestName
	return best, nil
}

func trimSpace(b []byte) []byte {
	for len(b) > 0 && (b[0] == ' ' || b[0] == '\t' || b[0] == '\r') {
		b = b[1:]
	}
	for len(b) > 0 && (b[len(b)-1] == ' ' || b[len(b)-1] == '\t' || b[len(b)-1] == '\r') {
		b = b[:len(b)-1]
	}
	return b
}

// LooksUTF16 says whether line looks like UTF-16 text cut at its newline
// bytes: it starts with a UTF-16 byte order mark, or a third or more of
// its bytes are NUL (every other byte, for ASCII text). Windows tools
// write logs so (Windows PowerShell 5's Out-File, by default).
func LooksUTF16(line []byte) bool {
	if len(line) >= 2 && (line[0] == 0xFF && line[1] == 0xFE || line[0] == 0xFE && line[1] == 0xFF) {
		return true
	}
	return len(line) > 0 && bytes.Count(line, []byte{0})*3 >= len(line)
}
