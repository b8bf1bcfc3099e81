package parse

func init() { Register("prefixed", func() Format { return &Prefixed{} }) }

// Prefixed reads lines with a timestamp, and a level or a source, in front
// of a JSON object or logfmt pairs, as many logging libraries and
// platforms write them:
//
//	2025-03-02T06:00:00Z INFO {"zone":"B","rh":71}
//	2025-03-02 06:00:00.120 [warn] zone=B rh=93
//	2025-03-02T06:00:00.120+00:00 router[web.2]: at=info zone=B status=200
//	2025-03-02T06:00:00Z zone=B rh=93
//
// The timestamp is RFC 3339, or a date (with '-' or, as Go's log package
// writes it, '/') and a time with a space between;
// the level is one of the usual words (any case), bare, in brackets or with
// a colon; a source is "app[proc]:", as platforms that gather many
// processes' output write it (fields app and proc). Fields: time, level or
// app and proc, and the body's own fields; a body that is neither JSON nor
// logfmt becomes the field msg. With neither a level nor a source the body
// must be JSON or logfmt: read as logfmt alone, the timestamp would be a
// key of its own, a new field on every line.
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
	word, after, _ := token(rest)
	lv := word
	if n := len(lv); n >= 2 && lv[0] == '[' && lv[n-1] == ']' {
		lv = lv[1 : n-1]
	} else if n >= 2 && lv[n-1] == ':' {
		lv = lv[:n-1]
	}
	app, proc, tagged := sourceTag(word)
	leveled := isLevel(lv)
	switch {
	case leveled || tagged:
		rest = after
		for len(rest) > 0 && rest[0] == ' ' {
			rest = rest[1:]
		}
	case !p.inner.read(rest):
		return false, reject("no level or source after the timestamp, and no JSON or logfmt")
	default:
		// The body, read once, is in p.inner's scratch.
		rec.AddKV("time", ts)
		return p.inner.copyOut(rec, "msg", rest, true, []string{"time"}), nil
	}
	rec.AddKV("time", ts)
	outer := []string{"time", "app", "proc"}
	if leveled {
		rec.AddKV("level", lv)
		outer = []string{"time", "level"}
	} else {
		rec.AddKV("app", app)
		rec.AddKV("proc", proc)
	}
	if len(rest) == 0 {
		return false, nil
	}
	return p.inner.add(rec, "msg", rest, outer...), nil
}

// sourceTag reads "app[proc]:", a process's name and instance.
func sourceTag(w []byte) (app, proc []byte, ok bool) {
	n := len(w)
	if n < 5 || w[n-1] != ':' || w[n-2] != ']' {
		return nil, nil, false
	}
	i := 0
	for i < n && w[i] != '[' {
		i++
	}
	if i == 0 || i >= n-3 {
		return nil, nil, false
	}
	return w[:i], w[i+1 : n-2], true
}

// dateT returns the line's first 19 bytes with the space between date and
// time replaced by 'T', in a buffer of its own.
func (p *Prefixed) dateT(line []byte) []byte {
	p.time = append(p.time[:0], line[:19]...)
	p.time[10] = 'T'
	if p.time[4] == '/' && p.time[7] == '/' {
		// Go's log package: "2006/01/02 15:04:05".
		p.time[4], p.time[7] = '-', '-'
	}
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
