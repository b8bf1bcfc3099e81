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

// Parse implements Format.
func (*Logfmt) Parse(line []byte, rec *Record) error {
	i := 0
	n := len(line)
	pairs := false
	for {
		for i < n && (line[i] == ' ' || line[i] == '\t') {
			i++
		}
		if i >= n {
			break
		}
		ks := i
		for i < n && line[i] != '=' && line[i] != ' ' && line[i] != '\t' {
			if line[i] == '"' {
				return reject("quote in logfmt key")
			}
			i++
		}
		key := line[ks:i]
		if len(key) == 0 {
			return reject("logfmt pair with an empty key")
		}
		if i >= n || line[i] != '=' {
			k0, v0 := rec.begin(key)
			rec.buf = append(rec.buf, "true"...)
			rec.end(k0, v0)
			continue
		}
		i++ // '='
		pairs = true
		k0, v0 := rec.begin(key)
		if i < n && line[i] == '"' {
			i++
			closed := false
			for i < n {
				c := line[i]
				if c == '"' {
					i++
					closed = true
					break
				}
				if c == '\\' && i+1 < n {
					i++
					switch line[i] {
					case 'n':
						c = '\n'
					case 't':
						c = '\t'
					case 'r':
						c = '\r'
					default:
						c = line[i]
					}
				}
				rec.buf = append(rec.buf, c)
				i++
			}
			if !closed {
				return reject("unterminated quoted value in logfmt")
			}
			if i < n && line[i] != ' ' && line[i] != '\t' {
				return reject("text right after a quoted logfmt value")
			}
		} else {
			vs := i
			for i < n && line[i] != ' ' && line[i] != '\t' {
				i++
			}
			rec.buf = append(rec.buf, line[vs:i]...)
		}
		rec.end(k0, v0)
	}
	if !pairs {
		return reject("no key=value pair: not logfmt")
	}
	return nil
}
