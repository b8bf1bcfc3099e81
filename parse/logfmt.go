package parse

func init() { Register("logfmt", func() Format { return &Logfmt{} }) }

// Logfmt reads key=value pairs separated by spaces. A value may be quoted
// ("a b", with \" \\ \n \t \r escapes); a bare key means true.
type Logfmt struct{}

// Name implements Format.
func (*Logfmt) Name() string { return "logfmt" }

// Sniff implements Format: the share of space-separated words that are
// key=value, scaled down when there are few.
func (*Logfmt) Sniff(line []byte) float64 {
	if len(line) == 0 || line[0] == '{' || line[0] == '<' {
		return 0
	}
	words, pairs := 0, 0
	inQuote := false
	start := true
	hasEq := false
	for i := 0; i < len(line); i++ {
		c := line[i]
		if inQuote {
			if c == '\\' {
				i++
			} else if c == '"' {
				inQuote = false
			}
			continue
		}
		switch {
		case c == ' ':
			if !start {
				words++
				if hasEq {
					pairs++
				}
			}
			start, hasEq = true, false
		case c == '=' && !start && !hasEq:
			hasEq = true
			if i+1 < len(line) && line[i+1] == '"' {
				inQuote = true
				i++
			}
		default:
			if c == '"' && start {
				return 0 // a quoted word that is no value: not logfmt
			}
			start = false
		}
	}
	if !start {
		words++
		if hasEq {
			pairs++
		}
	}
	if words == 0 || pairs < 2 {
		return 0
	}
	return 0.85 * float64(pairs) / float64(words)
}

// Parse implements Format. The line is copied into the record once and
// each key and plain value is a span of that copy (no copy per field, as
// the flat JSON scanner); a quoted value with escapes is unescaped after
// it, and a bare key's "true" too.
func (*Logfmt) Parse(line []byte, rec *Record) error {
	base := len(rec.buf)
	rec.buf = append(rec.buf, line...)
	// s stays the line's copy even when appends below move rec.buf.
	s := rec.buf[base:len(rec.buf):len(rec.buf)]
	b := int32(base)
	i, n := 0, len(s)
	pairs := false
	for {
		for i < n && (s[i] == ' ' || s[i] == '\t') {
			i++
		}
		if i >= n {
			break
		}
		ks := i
		for i < n && !logfmtKeyStop[s[i]] {
			i++
		}
		if i < n && s[i] == '"' {
			return reject("quote in logfmt key")
		}
		if i == ks {
			return reject("logfmt pair with an empty key")
		}
		k0, k1 := b+int32(ks), b+int32(i)
		if i >= n || s[i] != '=' {
			v0 := int32(len(rec.buf))
			rec.buf = append(rec.buf, "true"...)
			rec.spans = append(rec.spans, span{k0, k1, v0, v0 + 4})
			continue
		}
		i++ // '='
		pairs = true
		if i < n && s[i] == '"' {
			i++
			vs := i
			closed, escaped := false, false
			for i < n {
				c := s[i]
				if c == '"' {
					closed = true
					break
				}
				if c == '\\' && i+1 < n {
					escaped = true
					i++
				}
				i++
			}
			if !closed {
				return reject("unterminated quoted value in logfmt")
			}
			ve := i
			i++ // the closing quote
			if i < n && s[i] != ' ' && s[i] != '\t' {
				return reject("text right after a quoted logfmt value")
			}
			if !escaped {
				rec.spans = append(rec.spans, span{k0, k1, b + int32(vs), b + int32(ve)})
				continue
			}
			v0 := int32(len(rec.buf))
			rec.buf = unescapeLogfmt(rec.buf, s[vs:ve])
			rec.spans = append(rec.spans, span{k0, k1, v0, int32(len(rec.buf))})
			continue
		}
		vs := i
		for i < n && s[i] != ' ' && s[i] != '\t' {
			i++
		}
		rec.spans = append(rec.spans, span{k0, k1, b + int32(vs), b + int32(i)})
	}
	if !pairs {
		return reject("no key=value pair: not logfmt")
	}
	return nil
}

// logfmtKeyStop ends a key: its '=', a space or tab, or a quote (which no
// key may hold).
var logfmtKeyStop = [256]bool{'=': true, ' ': true, '\t': true, '"': true}

// unescapeLogfmt appends the quoted text q (without its quotes) to dst
// with its escapes read: \n, \t and \r are a newline, tab and return, and
// a backslash before any other byte is that byte.
func unescapeLogfmt(dst, q []byte) []byte {
	for i := 0; i < len(q); i++ {
		c := q[i]
		if c == '\\' && i+1 < len(q) {
			i++
			switch q[i] {
			case 'n':
				c = '\n'
			case 't':
				c = '\t'
			case 'r':
				c = '\r'
			default:
				c = q[i]
			}
		}
		dst = append(dst, c)
	}
	return dst
}
