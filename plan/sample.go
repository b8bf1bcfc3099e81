package plan

// DefaultSampleBytes caps the line text a Sample holds, so that a stream of
// very long lines cannot make it grow past the window's share of memory.
const DefaultSampleBytes = 64 << 20

// Sample keeps the last lines of a stream, raw, for Measure: the model keeps
// no text for identifiers, and the JSON text tells nesting and value types
// apart, which parsed records do not. It holds at most max lines and
// DefaultSampleBytes of text, dropping the oldest first.
//
// Invariant: lines[(start+i)%len(lines)] for i < n are the kept lines,
// oldest first, and bytes is the sum of their lengths.
type Sample struct {
	max      int
	maxBytes int
	lines    [][]byte
	start, n int
	bytes    int
}

// NewSample returns a sample of at most max lines (DefaultBatch when
// max ≤ 0).
func NewSample(max int) *Sample {
	if max <= 0 {
		max = DefaultBatch
	}
	return &Sample{max: max, maxBytes: DefaultSampleBytes}
}

// Add keeps a copy of line, dropping the oldest lines past the caps. Blank
// lines are not records and are not kept.
func (s *Sample) Add(line []byte) {
	if len(trim(line)) == 0 {
		return
	}
	for s.n > 0 && (s.n >= s.max || s.bytes+len(line) > s.maxBytes) {
		s.popOldest()
	}
	if len(s.lines) < s.max {
		s.lines = append(s.lines, nil)
	}
	i := (s.start + s.n) % len(s.lines)
	s.lines[i] = append(s.lines[i][:0], line...)
	s.n++
	s.bytes += len(line)
}

func (s *Sample) popOldest() {
	s.bytes -= len(s.lines[s.start])
	s.start = (s.start + 1) % len(s.lines)
	s.n--
}

// Clone returns a copy that shares nothing with s, for handing to another
// goroutine (a Sample is not safe for concurrent use).
func (s *Sample) Clone() *Sample {
	c := &Sample{max: s.max, maxBytes: s.maxBytes, lines: make([][]byte, 0, s.n)}
	s.each(func(l []byte) { c.lines = append(c.lines, append([]byte(nil), l...)) })
	c.n, c.bytes = len(c.lines), s.bytes
	return c
}

// Len is the number of lines kept.
func (s *Sample) Len() int { return s.n }

// Keep keeps only the newest n lines (to match a window that holds fewer
// records than the sample).
func (s *Sample) Keep(n int) {
	for s.n > max(n, 0) {
		s.popOldest()
	}
}

// each calls fn with the kept lines, oldest first.
func (s *Sample) each(fn func([]byte)) {
	for i := 0; i < s.n; i++ {
		fn(s.lines[(s.start+i)%len(s.lines)])
	}
}

func trim(b []byte) []byte {
	for len(b) > 0 && (b[0] == ' ' || b[0] == '\t' || b[0] == '\r') {
		b = b[1:]
	}
	for len(b) > 0 && (b[len(b)-1] == ' ' || b[len(b)-1] == '\t' || b[len(b)-1] == '\r') {
		b = b[:len(b)-1]
	}
	return b
}
