package parse

import "bytes"

func init() { Register("access", func() Format { return &Access{} }) }

// Access reads web server access logs in the NCSA common and combined
// formats:
//
//	HOST IDENT USER [TIME] "METHOD PATH PROTOCOL" STATUS BYTES ["REFERER" "AGENT"]
//
// giving host, ident, user, time, method, path, protocol, status, bytes
// and, for combined lines, referer and agent. Values are kept as written
// ("-" included). Inside quotes, \" and \\ are escapes, as Apache writes
// them. A request that is not exactly three words, or a quote left open, is
// rejected with the reason rather than guessed at.
type Access struct {
	scratch Record // for Sniff
}

// Name implements Format.
func (*Access) Name() string { return "access" }

// Sniff implements Format. A line that fails only in its request or quotes
// still scores a little, so one bad line does not hide a stream's format.
func (a *Access) Sniff(line []byte) float64 {
	a.scratch.Reset()
	err := a.Parse(line, &a.scratch)
	switch {
	case err == nil && a.scratch.Len() == 11:
		return 0.95
	case err == nil:
		return 0.9
	case a.scratch.Len() >= 4: // got as far as the time
		return 0.3
	}
	return 0
}

// Parse implements Format.
func (*Access) Parse(line []byte, rec *Record) error {
	rest := line
	for _, key := range [...]string{"host", "ident", "user"} {
		var tok []byte
		var more bool
		tok, rest, more = token(rest)
		if len(tok) == 0 || !more {
			return reject("access log line does not start with HOST IDENT USER")
		}
		rec.AddKV(key, tok)
	}
	if len(rest) == 0 || rest[0] != '[' {
		return reject("no [time] in access log line")
	}
	end := bytes.IndexByte(rest, ']')
	if end < 0 {
		return reject("unclosed [time] in access log line")
	}
	rec.AddKV("time", rest[1:end])
	rest = rest[end+1:]
	if len(rest) < 2 || rest[0] != ' ' || rest[1] != '"' {
		return reject(`no quoted request after the time`)
	}
	req, rest, ok := quoted(rest[1:])
	if !ok {
		return reject("unclosed quote in the request")
	}
	method, r, more := token(req)
	path, proto, more2 := token(r)
	if !more || !more2 || len(method) == 0 || len(path) == 0 || len(proto) == 0 || bytes.IndexByte(proto, ' ') >= 0 {
		return reject(`broken request (want "METHOD PATH PROTOCOL")`)
	}
	addUnescaped(rec, "method", method)
	addUnescaped(rec, "path", path)
	addUnescaped(rec, "protocol", proto)
	if len(rest) < 5 || rest[0] != ' ' || !allDigits(rest[1:4]) || rest[4] != ' ' {
		return reject("status is not three digits")
	}
	rec.AddKV("status", rest[1:4])
	size, rest, more := token(rest[5:])
	if len(size) == 0 || !(allDigits(size) || len(size) == 1 && size[0] == '-') {
		return reject("bytes is neither a number nor -")
	}
	rec.AddKV("bytes", size)
	if !more {
		return nil
	}
	for _, key := range [...]string{"referer", "agent"} {
		if len(rest) == 0 || rest[0] != '"' {
			return reject("expected a quoted " + key)
		}
		var v []byte
		v, rest, ok = quoted(rest)
		if !ok {
			return reject("unclosed quote in the " + key)
		}
		addUnescaped(rec, key, v)
		if key == "referer" {
			if len(rest) == 0 || rest[0] != ' ' {
				return reject("expected a space after the referer")
			}
			rest = rest[1:]
		}
	}
	if len(rest) > 0 {
		return reject("text after the agent")
	}
	return nil
}

// quoted reads a "..." value at the start of b (b[0] == '"'), returning it
// still escaped, and the rest after the closing quote.
func quoted(b []byte) (v, rest []byte, ok bool) {
	for i := 1; i < len(b); i++ {
		switch b[i] {
		case '\\':
			i++
		case '"':
			return b[1:i], b[i+1:], true
		}
	}
	return nil, nil, false
}

// addUnescaped adds key=v with \" and \\ unescaped.
func addUnescaped(rec *Record, key string, v []byte) {
	if !hasBackslash(v) {
		rec.AddKV(key, v)
		return
	}
	k0, _ := rec.begin(nil)
	rec.buf = append(rec.buf, key...)
	v0 := int32(len(rec.buf))
	for i := 0; i < len(v); i++ {
		c := v[i]
		if c == '\\' && i+1 < len(v) && (v[i+1] == '"' || v[i+1] == '\\') {
			i++
			c = v[i]
		}
		rec.buf = append(rec.buf, c)
	}
	rec.end(k0, v0)
}

func hasBackslash(b []byte) bool { return bytes.IndexByte(b, '\\') >= 0 }
