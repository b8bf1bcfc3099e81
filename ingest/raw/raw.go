// Package raw keeps the newest raw lines of a stream, with their sources
// and line numbers, for what needs the text the model does not keep: a
// drop plan's measurement and a screen's lines behind a finding. It is
// ingest's (an Ingester fills one, never under --redact) and a leaf
// package so that plan can use it without importing ingest.
package raw

import "bytes"

// DefaultBytes caps the line text a Lines holds, so that a stream of
// very long lines cannot make it grow past the window's share of memory.
const DefaultBytes = 64 << 20

// Line is one line of a stream as it was read, with where it came from.
type Line struct {
	Source string // the input's name ("" when not known)
	Num    int64  // its line number in that input (0 when not known)
	Text   []byte
}

// Lines keeps the newest lines of a stream, raw, with their source and
// line number: the model keeps no text for identifiers, and the raw text
// tells nesting and value types apart, which parsed records do not. A drop
// plan is measured on them (plan.Measure), and a screen shows the lines
// behind a finding (Line, Newest). It holds at most max lines and
// DefaultBytes of text, dropping the oldest first. Blank lines are not
// records and are not kept.
//
// An Ingester keeps one only when asked (Ingester.KeepRaw) and never under
// --redact: that is the one place the switch is read.
//
// Invariant: lines[(start+i)%len(lines)] for i < n are the kept lines,
// oldest first, and bytes is the sum of their lengths.
type Lines struct {
	max      int
	maxBytes int
	lines    []Line
	start, n int
	bytes    int
}

// New returns a keeper of at most n lines (at least one).
func New(n int) *Lines {
	return &Lines{max: max(n, 1), maxBytes: DefaultBytes}
}

// Add keeps a copy of line, whose source and number are not known.
func (s *Lines) Add(line []byte) { s.Put("", 0, line) }

// Put keeps a copy of line num of source, dropping the oldest lines past
// the caps.
func (s *Lines) Put(source string, num int64, line []byte) {
	if len(bytes.Trim(line, " \t\r")) == 0 {
		return
	}
	for s.n > 0 && (s.n >= s.max || s.bytes+len(line) > s.maxBytes) {
		s.popOldest()
	}
	if len(s.lines) < s.max {
		s.lines = append(s.lines, Line{})
	}
	l := &s.lines[(s.start+s.n)%len(s.lines)]
	l.Source, l.Num, l.Text = source, num, append(l.Text[:0], line...)
	s.n++
	s.bytes += len(line)
}

func (s *Lines) popOldest() {
	s.bytes -= len(s.lines[s.start].Text)
	s.start = (s.start + 1) % len(s.lines)
	s.n--
}

func (s *Lines) at(i int) *Line { return &s.lines[(s.start+i)%len(s.lines)] }

// Clone returns a copy that shares nothing with s, for handing to another
// goroutine (a Lines is not safe for concurrent use).
func (s *Lines) Clone() *Lines {
	c := &Lines{max: s.max, maxBytes: s.maxBytes, lines: make([]Line, s.n), n: s.n, bytes: s.bytes}
	for i := range c.lines {
		l := s.at(i)
		c.lines[i] = Line{Source: l.Source, Num: l.Num, Text: bytes.Clone(l.Text)}
	}
	return c
}

// Len is the number of lines kept.
func (s *Lines) Len() int { return s.n }

// Keep keeps only the newest n lines (to match a window that holds fewer
// records than were kept).
func (s *Lines) Keep(n int) {
	for s.n > max(n, 0) {
		s.popOldest()
	}
}

// Each calls fn with the kept lines' text, oldest first; fn must not keep
// the slice.
func (s *Lines) Each(fn func(line []byte)) {
	for i := 0; i < s.n; i++ {
		fn(s.at(i).Text)
	}
}

// Line returns a copy of line num of source, if it is still kept.
func (s *Lines) Line(source string, num int64) ([]byte, bool) {
	for i := s.n - 1; i >= 0; i-- {
		if l := s.at(i); l.Num == num && l.Source == source {
			return bytes.Clone(l.Text), true
		}
	}
	return nil, false
}

// Newest returns copies of the newest n lines kept, oldest first.
func (s *Lines) Newest(n int) []Line {
	n = min(max(n, 0), s.n)
	out := make([]Line, n)
	for i := range out {
		l := s.at(s.n - n + i)
		out[i] = Line{Source: l.Source, Num: l.Num, Text: bytes.Clone(l.Text)}
	}
	return out
}
