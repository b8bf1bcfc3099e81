package parse

import "bytes"

func init() { Register("header", func() Format { return &Header{} }) }

// Header reads unstructured lines that start with a header (a timestamp and
// some of: level, process id, thread, component, host) followed by free
// text, learning which header the lines have from a sample (Learn):
//
//	2026-03-14 02:11:09,417 WARN [berth-io-3] quay.berth.Planner: berth 12 over capacity
//	260314 021109 5531 INFO quay.ledger.Posting: posted batch 8812 (413 rows)
//	03-14 02:11:09.417  1702  1840 I QuayPower: shore power on at berth 12
//	20260314-2:11:09:417|Gate_Step|30002312|gate 4 opened for truck 771
//
// Each token of a line's head is classed (a timestamp in one of the forms
// of header_time.go, a level word, a number, a [bracketed] token, a word
// ending in ':', a dotted name, an upper-case word, a host-like word with
// digits, a '-'); the learned header is the run of classes that most
// sample lines share (a class held by 90% of the lines still reading a
// header is a slot; one held by 40% is an optional slot), and it ends where
// the lines' classes part, which is where the message starts. Fields: time,
// level, pid, thread, component, host (with _2, _3 for further ones of a
// kind; tokens before the timestamp are tag), msg, a bracketed "[word
// value]" as word=value, and trailing key=value pairs of the message as
// fields of their own. Lines split by '|' are read column by column.
//
// A line whose timestamp is not where the header has it is rejected; one
// that has it but ends its header early keeps the rest as msg.
type Header struct {
	slots   []headSlot
	pipe    bool
	learned bool // from a sample, not from the line being sniffed
	items   []headItem
	scratch Record
	plainB  []byte // a line without its colour codes (plain)
}

type headKind uint8

const (
	hEnd headKind = iota
	hWord
	hTime
	hEpoch
	hLevel
	hNum
	hBracket
	hColon
	hDotted
	hCaps
	hHost
	hDash
	hName // a column of a '|'-separated header
	hAny  // any token (before the timestamp)
	nKinds
)

type headSlot struct {
	kind     headKind
	form     int // time form, for hTime
	name     string
	optional bool
}

type headItem struct {
	kind       headKind
	form       int
	start, end int // the token in the line
	v0, v1     int // its value
}

const maxHeadItems = 12

// Learner is a Format that learns the shape of a stream's lines from a
// sample before reading them; Detect calls Learn with its sample.
type Learner interface {
	Format
	Learn(sample [][]byte)
}

// Name implements Format.
func (*Header) Name() string { return "header" }

// Slots describes the learned header ("time level thread component"), for
// messages.
func (h *Header) Slots() string {
	var b []byte
	for _, s := range h.slots {
		if s.name == "" {
			continue
		}
		if len(b) > 0 {
			b = append(b, ' ')
		}
		b = append(b, s.name...)
		if s.optional {
			b = append(b, '?')
		}
	}
	return string(append(b, " msg"...))
}

// Sniff implements Format: 0.75 for a line whose header has three or more
// fields, 0.6 for fewer, 0.5 for a line RFC 3164 reads with its tag or one
// with a syslog <PRI> (those formats know the syslog header better), 0 for
// a line with no timestamp where the header has one.
func (h *Header) Sniff(line []byte) float64 {
	line = h.plain(line)
	if !h.learned {
		h.learn([][]byte{line})
	}
	h.scratch.Reset()
	n, err := h.parse(line, &h.scratch)
	switch {
	case err != nil:
		return 0
	case (&RFC3164{}).Sniff(line) >= 0.9:
		return 0.5
	case len(line) > 0 && line[0] == '<':
		if _, _, ok := pri(line); ok {
			return 0.5 // a syslog PRI: the syslog formats read the rest
		}
	case n >= 3:
		return 0.75
	}
	return 0.6
}

// Clone implements Cloner: the learned header, shared (Parse only reads
// it), with scratch buffers of its own.
func (h *Header) Clone() Format {
	return &Header{slots: h.slots, pipe: h.pipe, learned: h.learned}
}

// Learn implements Learner.
func (h *Header) Learn(sample [][]byte) {
	h.learn(sample)
	h.learned = true
}

// Parse implements Format.
func (h *Header) Parse(line []byte, rec *Record) error {
	_, err := h.parse(h.plain(line), rec)
	return err
}

// plain returns line without its ANSI control sequences (ESC '[' …, the
// colour codes a logger writes when it believes it prints to a terminal,
// which stay in files that docker logs or a process manager collect).
// Left in, "\x1b[32mINFO\x1b[0m" was no level, so the header ended at
// the timestamp and the level went into the message, where the templates
// merged INFO and WARN lines. The copy is valid until the next call; a line
// with no ESC byte is returned as is.
func (h *Header) plain(line []byte) []byte {
	i := bytes.IndexByte(line, 0x1b)
	if i < 0 {
		return line
	}
	h.plainB = stripCSI(append(h.plainB[:0], line[:i]...), line[i:])
	return h.plainB
}

// stripCSI appends s to dst without its CSI sequences: ESC '[', parameter
// and intermediate bytes (0x20–0x3F), and a final byte (0x40–0x7E), as
// ECMA-48 defines them. A lone ESC, or one before another byte, is kept.
func stripCSI(dst, s []byte) []byte {
	for i := 0; i < len(s); i++ {
		if s[i] != 0x1b || i+1 >= len(s) || s[i+1] != '[' {
			dst = append(dst, s[i])
			continue
		}
		j := i + 2
		for j < len(s) && s[j] >= 0x20 && s[j] <= 0x3f {
			j++
		}
		if j < len(s) && s[j] >= 0x40 && s[j] <= 0x7e {
			i = j // the sequence, final byte included, is dropped
			continue
		}
		dst = append(dst, s[i])
	}
	return dst
}

func (h *Header) learn(sample [][]byte) {
	h.slots, h.pipe = nil, false
	var lines [][]byte
	for _, l := range sample {
		if bytes.IndexByte(l, 0x1b) >= 0 {
			l = stripCSI(nil, l) // see plain
		}
		if l = trimSpace(l); len(l) > 0 {
			lines = append(lines, l)
		}
	}
	if len(lines) == 0 {
		return
	}
	pipes := 0
	for _, l := range lines {
		if bytes.Count(l[:min(len(l), 160)], []byte("|")) >= 2 {
			pipes++
		}
	}
	h.pipe = 10*pipes >= 9*len(lines)
	items := make([][]headItem, len(lines))
	timeAt := make([]int, maxHeadItems+1)
	for i, l := range lines {
		items[i] = h.scan(l, nil)
		at := maxHeadItems
		for k, it := range items[i] {
			if it.kind == hTime || it.kind == hEpoch {
				at = k
				break
			}
		}
		timeAt[at]++
	}
	timePos := 0
	for k := 1; k < maxHeadItems; k++ {
		if timeAt[k] > timeAt[timePos] {
			timePos = k
		}
	}
	if timeAt[timePos] == 0 || timePos > 4 {
		return // no timestamp in the heads: not lines this format reads
	}
	cursor := make([]int, len(lines))
	alive := make([]bool, len(lines))
	for i := range alive {
		alive[i] = true
	}
	count := map[headKind]int{}
	for s := 0; s < maxHeadItems; s++ {
		n := 0
		clear(count)
		form := map[int]int{}
		for i := range lines {
			if !alive[i] {
				continue
			}
			n++
			k := hEnd
			if cursor[i] < len(items[i]) {
				it := items[i][cursor[i]]
				k = it.kind
				if k == hTime {
					form[it.form]++
				}
			}
			if s < timePos && k != hEnd {
				k = hAny
			}
			count[k]++
		}
		if n == 0 {
			break
		}
		best := hEnd
		for k := hEnd; k < nKinds; k++ {
			if count[k] > count[best] {
				best = k
			}
		}
		if best == hEnd || best == hWord {
			break
		}
		slot := headSlot{kind: best}
		if best == hTime {
			for f, c := range form {
				if c > form[slot.form] || c == form[slot.form] && f < slot.form {
					slot.form = f
				}
			}
		}
		switch share := float64(count[best]) / float64(n); {
		case share >= 0.9:
		case share >= 0.4 && s > timePos && best != hNum && best != hAny:
			slot.optional = true
		default:
			s = maxHeadItems
			continue
		}
		h.slots = append(h.slots, slot)
		for i := range lines {
			if !alive[i] {
				continue
			}
			if cursor[i] < len(items[i]) && (best == hAny || items[i][cursor[i]].kind == best &&
				(best != hTime || items[i][cursor[i]].form == slot.form)) {
				cursor[i]++
			} else if !slot.optional {
				alive[i] = false
			}
		}
	}
	h.name()
}

// name gives the slots their field names.
func (h *Header) name() {
	seen := map[string]int{}
	use := func(n string) string {
		seen[n]++
		if c := seen[n]; c > 1 {
			return n + "_" + string(rune('0'+min(c, 9)))
		}
		return n
	}
	nums := 0
	for i := range h.slots {
		s := &h.slots[i]
		switch s.kind {
		case hTime, hEpoch:
			s.name = use("time")
		case hLevel:
			s.name = use("level")
		case hNum:
			nums++
			if nums == 1 {
				s.name = use("pid")
			} else {
				s.name = use("thread")
			}
		case hBracket:
			s.name = use("thread")
		case hColon, hDotted, hCaps, hName:
			s.name = use("component")
		case hHost:
			s.name = use("host")
		case hAny:
			s.name = use("tag")
		}
	}
}

// scan classes the tokens at the head of line.
func (h *Header) scan(line []byte, items []headItem) []headItem {
	items = items[:0]
	p := 0
	timed := false
	for len(items) < maxHeadItems {
		p = h.skip(line, p)
		if p >= len(line) {
			break
		}
		it := h.token(line, p, -1)
		if it.kind == hTime || it.kind == hEpoch {
			timed = true
		}
		if it.kind == hWord && (timed || len(items) >= 4) {
			break
		}
		items = append(items, it)
		p = it.end
	}
	return items
}

// skip moves past spaces and, between '|' columns, one '|'.
func (h *Header) skip(line []byte, p int) int {
	for p < len(line) && line[p] == ' ' {
		p++
	}
	if h.pipe && p < len(line) && line[p] == '|' {
		p++
	}
	return p
}

// token reads the token at p and classes it; form ≥ 0 asks for that time
// form only, -1 for any, noTime for none.
func (h *Header) token(line []byte, p, form int) headItem {
	if form == noTime {
		// not a timestamp slot
	} else if f, ts, n, ok := matchHeadTimeForm(line[p:], form); ok {
		v0 := p + bytes.Index(line[p:p+n], ts)
		return headItem{kind: hTime, form: f, start: p, end: p + n, v0: v0, v1: v0 + len(ts)}
	}
	e := p
	switch {
	case h.pipe:
		for e < len(line) && line[e] != '|' {
			e++
		}
	case line[p] == '[':
		if k := bytes.IndexByte(line[p:min(len(line), p+96)], ']'); k > 0 {
			e = p + k + 1
		}
	}
	if e == p {
		for e < len(line) && line[e] != ' ' {
			e++
		}
	}
	it := headItem{start: p, end: e, v0: p, v1: e}
	it.kind = classify(line[p:e], h.pipe)
	switch it.kind {
	case hBracket:
		it.v0, it.v1 = p+1, e-1
	case hColon:
		it.v1 = e - 1
	case hLevel:
		for it.v0 < it.v1 && (line[it.v0] == '[' || line[it.v0] == '<') {
			it.v0++
		}
		for it.v1 > it.v0 && (line[it.v1-1] == ']' || line[it.v1-1] == ':' || line[it.v1-1] == '>') {
			it.v1--
		}
	}
	return it
}

const noTime = -2

func matchHeadTimeForm(b []byte, form int) (int, []byte, int, bool) {
	if form < 0 {
		return matchHeadTime(b)
	}
	return matchHeadTimeOf(b, headTimes[form:form+1], form)
}

// classify gives a header token its class.
func classify(t []byte, pipe bool) headKind {
	n := len(t)
	switch {
	case n == 0:
		return hWord
	case n == 1 && t[0] == '-':
		return hDash
	case isHeadLevel(t):
		return hLevel
	case t[0] == '[' && t[n-1] == ']' && n > 2:
		return hBracket
	}
	digits := 0
	for _, c := range t {
		if isDigit(c) {
			digits++
		}
	}
	if digits == n {
		if (n == 10 || n == 13) && t[0] >= '1' && t[0] <= '4' {
			return hEpoch
		}
		if n <= 9 {
			return hNum
		}
	}
	if pipe {
		if bytes.IndexByte(t, ' ') < 0 {
			return hName
		}
		return hWord
	}
	switch {
	case n >= 2 && t[n-1] == ':' && bytes.IndexByte(t, '=') < 0:
		return hColon
	case isDotted(t):
		return hDotted
	case isCaps(t):
		return hCaps
	case isHostLike(t, digits):
		return hHost
	}
	return hWord
}

// isHeadLevel: a level word (bare, in brackets, or with a colon), or one of
// the single letters V D I W E F A.
func isHeadLevel(t []byte) bool {
	if len(t) == 1 {
		return bytes.IndexByte([]byte("VDIWEFA"), t[0]) >= 0
	}
	if len(t) > 2 && (t[0] == '[' && t[len(t)-1] == ']' || t[0] == '<' && t[len(t)-1] == '>') {
		t = t[1 : len(t)-1]
	} else if t[len(t)-1] == ':' {
		t = t[:len(t)-1]
	}
	return isLevel(t) || bytes.EqualFold(t, severe)
}

var severe = []byte("SEVERE")

func isLetter(c byte) bool { return c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' }

// isDotted: a dotted name (quay.berth.Planner, crane-agent.exe).
func isDotted(t []byte) bool {
	if !isLetter(t[0]) || t[len(t)-1] == '.' || bytes.IndexByte(t, '.') < 0 {
		return false
	}
	for _, c := range t {
		if !(isLetter(c) || isDigit(c) || c == '.' || c == '_' || c == '-' || c == '$') {
			return false
		}
	}
	return true
}

// isCaps: an upper-case word (RAS, KERNEL, CBS).
func isCaps(t []byte) bool {
	if len(t) < 2 || len(t) > 16 || t[0] < 'A' || t[0] > 'Z' {
		return false
	}
	for _, c := range t {
		if !(c >= 'A' && c <= 'Z' || isDigit(c) || c == '_') {
			return false
		}
	}
	return true
}

// isHostLike: letters, digits and '-' with both letters and digits
// (quay-gw-2, R12-M0-N4).
func isHostLike(t []byte, digits int) bool {
	if len(t) < 3 || digits == 0 || digits == len(t) || !isLetter(t[0]) {
		return false
	}
	for _, c := range t {
		if !(isLetter(c) || isDigit(c) || c == '-' || c == '_') {
			return false
		}
	}
	return true
}
