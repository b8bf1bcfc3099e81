package parse

func init() { Register("prefixed", func() Format { return &Prefixed{} }) }

// Prefixed reads lines with a timestamp and a level in front of a JSON
// object or logfmt pairs, as many logging libraries write them:
//
//	2025-03-02T06:00:00Z INFO {"zone":"B","rh":71}
//	2025-03-02 06:00:00.120 [warn] zone=B rh=93
//
// The timestamp is RFC 3339, or a date and a time with a space between;
// the level is one of the usual words (any case), bare, in brackets or with
// a colon. Fields: time, level, and the body's own fields; a body that is
// neither JSON nor logfmt becomes the field msg.
type Prefixed struct {
	time    []byte
	inner   inner
	scratch Record // for Sniff
}

// Name implements Format.
func (*Prefixed) Name() string { return "prefixed" }

// Sniff implements Format: sure when the body is structured, less so when
// it is plain text (BSD syslog with an RFC 3339 time looks alike).
func (p *Prefixed) Sniff(line []byte) float64 {
	p.scratch.Reset()
	structured, err := p.parse(line, &p.scratch)
	switch {
	case err != nil:
		return 0
	case structured:
		return 0.95
	}
	return 0.65
}

// Parse implements Format.
func (p *Prefixed) Parse(line []byte, rec *Record) error {
	_, err := p.parse(line, rec)
	return err
}

func (p *Prefixed) parse(line []byte, rec *Record) (structured bool, err error) {
	var ts, rest []byte
	switch {
	case looksRFC3339(line):
		ts, rest, _ = token(line)
	case len(line) >= 19 && line[10] == ' ' && looksRFC3339(p.dateT(line)):
		ts, rest, _ = token(line[11:])
		ts = line[:11+len(ts)]
	default:
		return false, reject("no timestamp at the start of the line")
	}
	for len(rest) > 0 && rest[0] == ' ' {
		rest = rest[1:]
	}
	lv, rest, _ := token(rest)
	if n := len(lv); n >= 2 && lv[0] == '[' && lv[n-1] == ']' {
		lv = lv[1 : n-1]
	} else if n >= 2 && lv[n-1] == ':' {
		lv = lv[:n-1]
	}
	if !isLevel(lv) {
		return false, reject("no level after the timestamp")
	}
	for len(rest) > 0 && rest[0] == ' ' {
		rest = rest[1:]
	}
	rec.AddKV("time", ts)
	rec.AddKV("level", lv)
	if len(rest) == 0 {
		return false, nil
	}
	return p.inner.add(rec, "msg", rest, "time", "level"), nil
}

// dateT returns the line's first 19 bytes with the space between date and
// time replaced by 'T', in a buffer of its own.
func (p *Prefixed) dateT(line []byte) []byte {
	p.time = append(p.time[:0], line[:19]...)
	p.time[10] = 'T'
	return p.time
}

// levels are the level words recognised, lower case.
var levels = []string{"trace", "debug", "info", "notice", "warn", "warning", "error", "err",
	"fatal", "crit", "critical", "alert", "emerg", "panic", "dbg", "inf", "wrn", "erro", "eror"}

func isLevel(b []byte) bool {
	if len(b) < 3 || len(b) > 8 {
		return false
	}
	var low [8]byte
	for i, c := range b {
		if c >= 'A' && c <= 'Z' {
			c += 'a' - 'A'
		}
		low[i] = c
	}
	for _, l := range levels {
		if string(low[:len(b)]) == l {
			return true
		}
	}
	return false
}
