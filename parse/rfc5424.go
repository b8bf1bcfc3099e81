package parse

func init() { Register("rfc5424", func() Format { return &RFC5424{} }) }

// RFC5424 reads syslog lines in the RFC 5424 format:
//
//	<PRI>VERSION TIMESTAMP HOSTNAME APP-NAME PROCID MSGID STRUCTURED-DATA [MSG]
//
// giving the fields facility and severity (names, from PRI), time, host,
// app, procid, msgid and msg. Each structured-data parameter becomes a field
// named SD-ID.PARAM-NAME (an element without parameters gives SD-ID=true).
// A NILVALUE "-" gives no field. A UTF-8 byte order mark in front of MSG is
// dropped.
type RFC5424 struct {
	key     []byte // SD-ID.PARAM-NAME being built
	scratch Record // for Sniff
}

// Name implements Format.
func (*RFC5424) Name() string { return "rfc5424" }

// Sniff implements Format: a line that parses is unmistakable.
func (p *RFC5424) Sniff(line []byte) float64 {
	if len(line) < 4 || line[0] != '<' {
		return 0
	}
	p.scratch.Reset()
	if p.Parse(line, &p.scratch) != nil {
		return 0
	}
	return 0.95
}

// Parse implements Format.
func (p *RFC5424) Parse(line []byte, rec *Record) error {
	n, rest, ok := pri(line)
	if !ok {
		return reject("no syslog <PRI> at the start")
	}
	ver, rest, more := token(rest)
	if !more || len(ver) == 0 || len(ver) > 3 || ver[0] < '1' || ver[0] > '9' || !allDigits(ver) {
		return reject("no RFC 5424 version after <PRI>")
	}
	addPRI(rec, n)
	names := [...]string{"time", "host", "app", "procid", "msgid"}
	for i, key := range names {
		var tok []byte
		tok, rest, more = token(rest)
		if len(tok) == 0 {
			return reject("empty RFC 5424 header field (" + key + ")")
		}
		if !more {
			return reject("RFC 5424 header ends before structured data")
		}
		if i == 0 && !(len(tok) == 1 && tok[0] == '-') && !looksRFC3339(tok) {
			return reject("RFC 5424 timestamp is not RFC 3339")
		}
		addUnlessNil(rec, key, tok)
	}
	rest, err := p.structuredData(rest, rec)
	if err != nil {
		return err
	}
	if len(rest) == 0 {
		return nil
	}
	if rest[0] != ' ' {
		return reject("text right after RFC 5424 structured data")
	}
	msg := rest[1:]
	if len(msg) >= 3 && msg[0] == 0xEF && msg[1] == 0xBB && msg[2] == 0xBF {
		msg = msg[3:]
	}
	if len(msg) > 0 {
		rec.AddKV("msg", msg)
	}
	return nil
}

// structuredData reads "-" or one or more [SD-ID PARAM="VALUE" ...]
// elements and returns what follows.
func (p *RFC5424) structuredData(b []byte, rec *Record) ([]byte, error) {
	if len(b) == 0 {
		return nil, reject("RFC 5424 structured data missing")
	}
	if b[0] == '-' {
		return b[1:], nil
	}
	if b[0] != '[' {
		return nil, reject("RFC 5424 structured data is neither - nor [")
	}
	for len(b) > 0 && b[0] == '[' {
		i := 1
		for i < len(b) && sdName(b[i]) {
			i++
		}
		if i == 1 {
			return nil, reject("empty SD-ID in RFC 5424 structured data")
		}
		id := b[1:i]
		params := 0
		for {
			if i >= len(b) {
				return nil, reject("unterminated RFC 5424 structured data element")
			}
			if b[i] == ']' {
				i++
				break
			}
			if b[i] != ' ' {
				return nil, reject("bad character in RFC 5424 structured data")
			}
			i++
			ns := i
			for i < len(b) && sdName(b[i]) {
				i++
			}
			if i == ns || i+1 >= len(b) || b[i] != '=' || b[i+1] != '"' {
				return nil, reject(`RFC 5424 SD parameter is not NAME="VALUE"`)
			}
			p.key = append(append(append(p.key[:0], id...), '.'), b[ns:i]...)
			i += 2
			k0, v0 := rec.begin(p.key)
			closed := false
			for i < len(b) {
				c := b[i]
				if c == '"' {
					closed = true
					i++
					break
				}
				// RFC 5424 6.3.3: \" \\ \] are escapes; any other
				// backslash is kept as it is.
				if c == '\\' && i+1 < len(b) && (b[i+1] == '"' || b[i+1] == '\\' || b[i+1] == ']') {
					i++
					c = b[i]
				}
				rec.buf = append(rec.buf, c)
				i++
			}
			if !closed {
				return nil, reject("unterminated RFC 5424 SD parameter value")
			}
			rec.end(k0, v0)
			params++
		}
		if params == 0 {
			rec.Add(id, trueText)
		}
		b = b[i:]
	}
	return b, nil
}

var trueText = []byte("true")

// sdName says whether c may appear in an SD-NAME: printable US-ASCII except
// '=', space, ']' and '"' (RFC 5424 section 6).
func sdName(c byte) bool {
	return c > ' ' && c < 127 && c != '=' && c != ']' && c != '"'
}

func allDigits(b []byte) bool {
	for _, c := range b {
		if c < '0' || c > '9' {
			return false
		}
	}
	return len(b) > 0
}

// looksRFC3339 checks the shape YYYY-MM-DDTHH:MM:SS of an RFC 3339
// timestamp's start, cheaply; the rest (fraction, offset) is not checked.
func looksRFC3339(b []byte) bool {
	if len(b) < 19 {
		return false
	}
	for i, c := range b[:19] {
		switch i {
		case 4, 7:
			if c != '-' {
				return false
			}
		case 10:
			if c != 'T' && c != 't' {
				return false
			}
		case 13, 16:
			if c != ':' {
				return false
			}
		default:
			if c < '0' || c > '9' {
				return false
			}
		}
	}
	return true
}
