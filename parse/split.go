package parse

import (
	"bytes"
	"io"
)

// splitReadSize is how much a splitter asks for in one read.
const splitReadSize = 64 << 10

// splitter cuts a growing byte stream into lines for sources that must not
// treat the end of the data as the end of a line: a followed file whose
// last line may still be half written. Lines are returned without their
// LF or CRLF; a line over max bytes is dropped in bounded memory and
// reported as too long.
//
// Invariant: buf[start:] holds the bytes read and not yet returned, none of
// them a newline when skipping is set (those bytes are being dropped).
type splitter struct {
	buf      []byte
	start    int
	max      int
	skipping bool
}

func newSplitter(max int) splitter {
	if max <= 0 {
		max = DefaultMaxLine
	}
	return splitter{max: max}
}

// line returns the next complete line held, if any. The slice is valid
// until the next fill.
func (s *splitter) line() (text []byte, tooLong, ok bool) {
	i := bytes.IndexByte(s.buf[s.start:], '\n')
	if i < 0 {
		if len(s.buf)-s.start > s.max+1 { // +1: a CR before the LF to come
			s.skipping = true
			s.buf, s.start = s.buf[:0], 0
		}
		return nil, false, false
	}
	text = trimEOL(s.buf[s.start : s.start+i+1])
	s.start += i + 1
	if s.skipping {
		s.skipping = false
		return nil, true, true
	}
	if len(text) > s.max {
		return nil, true, true
	}
	return text[bomLen(text):], false, true
}

// rest returns the unterminated last line held, if any, and forgets it:
// for the end of an input, when no newline will come.
func (s *splitter) rest() (text []byte, tooLong, ok bool) {
	text = s.buf[s.start:]
	skipping := s.skipping
	s.buf, s.start, s.skipping = s.buf[:0], 0, false
	switch {
	case skipping:
		return nil, true, true
	case len(text) == 0:
		return nil, false, false
	case len(text) > s.max:
		return nil, true, true
	}
	return lineText(text), false, true
}

// pending is the number of bytes held that are not yet a line.
func (s *splitter) pending() int { return len(s.buf) - s.start }

// reset forgets everything held.
func (s *splitter) reset() { s.buf, s.start, s.skipping = s.buf[:0], 0, false }

// fill reads once from r into the buffer.
func (s *splitter) fill(r io.Reader) (int, error) {
	if s.start > 0 {
		n := copy(s.buf, s.buf[s.start:])
		s.buf, s.start = s.buf[:n], 0
	}
	if cap(s.buf)-len(s.buf) < splitReadSize {
		nb := make([]byte, len(s.buf), len(s.buf)+2*splitReadSize)
		copy(nb, s.buf)
		s.buf = nb
	}
	n, err := r.Read(s.buf[len(s.buf) : len(s.buf)+splitReadSize])
	s.buf = s.buf[:len(s.buf)+n]
	return n, err
}

// push appends data read elsewhere (standard input's reader goroutine).
func (s *splitter) push(p []byte) {
	if s.start > 0 {
		n := copy(s.buf, s.buf[s.start:])
		s.buf, s.start = s.buf[:n], 0
	}
	s.buf = append(s.buf, p...)
}
