package parse

import (
	"strconv"
	"unicode/utf8"
)

func init() { Register("klog", func() Format { return &Klog{} }) }

// Klog reads the lines of glog and klog, the loggers of Kubernetes' own
// components (the API server, the kubelet, controllers) and of many Go
// and C++ services:
//
//	Lmmdd hh:mm:ss.uuuuuu threadid file:line] msg
//
// L is the level's letter (I, W, E or F), the date has no year (it is
// inferred as for syslog stamps), threadid is space-padded. The layout is
// the one glog's source documents at its header-writing function (quoted
// here from memory). Fields: level (the letter), time ("mmdd
// hh:mm:ss.uuuuuu"), thread, source ("file:line") and msg. klog's
// structured lines quote the message and follow it with key=value pairs
// ("Reconciled" berth="12" took="4ms"): msg is then the unquoted message,
// and each pair a field of its own.
type Klog struct {
	inner   inner
	scratch Record // for Sniff
}

// Name implements Format.
func (*Klog) Name() string { return "klog" }

// Sniff implements Format: no other format writes this header.
func (k *Klog) Sniff(line []byte) float64 {
	k.scratch.Reset()
	if k.Parse(line, &k.scratch) != nil {
		return 0
	}
	return 0.95
}

// Parse implements Format.
func (k *Klog) Parse(line []byte, rec *Record) error {
	// "I0314 02:11:09.417123": 21 bytes at least, with the fraction.
	if len(line) < 21 || !klogLevel(line[0]) || !allDigits(line[1:5]) || line[5] != ' ' ||
		!allDigits(line[6:8]) || line[8] != ':' || !allDigits(line[9:11]) || line[11] != ':' || !allDigits(line[12:14]) {
		return reject("no klog header (Lmmdd hh:mm:ss.uuuuuu) at the start of the line")
	}
	end := 14
	if line[end] == '.' {
		end++
		for end < len(line) && isDigit(line[end]) {
			end++
		}
	}
	p := end
	for p < len(line) && line[p] == ' ' {
		p++
	}
	t0 := p
	for p < len(line) && isDigit(line[p]) {
		p++
	}
	if p == t0 || p >= len(line) || line[p] != ' ' {
		return reject("no thread id after the klog timestamp")
	}
	thread := line[t0:p]
	p++
	s0 := p
	for p < len(line) && line[p] != ']' && line[p] != ' ' {
		p++
	}
	if p == s0 || p >= len(line) || line[p] != ']' {
		return reject("no file:line] after the klog thread id")
	}
	source := line[s0:p]
	msg := line[p+1:]
	if len(msg) > 0 && msg[0] == ' ' {
		msg = msg[1:]
	}
	rec.AddKV("level", line[:1])
	rec.AddKV("time", line[1:end])
	rec.AddKV("thread", thread)
	rec.AddKV("source", source)
	if text, rest, ok := klogQuoted(msg); ok {
		rec.AddKV("msg", text)
		for len(rest) > 0 && rest[0] == ' ' {
			rest = rest[1:]
		}
		if len(rest) > 0 {
			k.inner.addPairs(rec, "args", rest, "level", "time", "thread", "source", "msg")
		}
		return nil
	}
	rec.AddKV("msg", msg)
	return nil
}

func klogLevel(c byte) bool { return c == 'I' || c == 'W' || c == 'E' || c == 'F' }

// klogQuoted reads the Go-quoted string at the start of msg (a structured
// line's message): its text and what follows it. A string without a
// backslash is its bytes between the quotes; one with escapes is
// unquoted by strconv.
func klogQuoted(msg []byte) (text, rest []byte, ok bool) {
	if len(msg) < 2 || msg[0] != '"' {
		return nil, nil, false
	}
	escaped := false
	for i := 1; i < len(msg); i++ {
		switch msg[i] {
		case '\\':
			escaped = true
			i++
		case '"':
			if i+1 < len(msg) && msg[i+1] != ' ' {
				return nil, nil, false // a quote inside plain text
			}
			if !escaped {
				return msg[1:i], msg[i+1:], true
			}
			s, err := strconv.Unquote(string(msg[:i+1]))
			if err != nil || !utf8.ValidString(s) {
				return nil, nil, false // the message is kept as written
			}
			return []byte(s), msg[i+1:], true
		}
	}
	return nil, nil, false
}
