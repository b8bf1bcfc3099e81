package parse

func init() { Register("rfc3164", func() Format { return &RFC3164{} }) }

// RFC3164 reads BSD syslog lines (RFC 3164), with or without the <PRI> in
// front, as syslog daemons write them to files:
//
//	[<PRI>]Mmm dd hh:mm:ss HOST TAG[PID]: MSG
//
// giving facility and severity (when there is a PRI), time (as written: the
// format has no year), host, app (the TAG), pid and msg. An RFC 3339
// timestamp in place of "Mmm dd hh:mm:ss" is accepted too, as many daemons
// write one. A line whose MSG has no "TAG:" in front keeps it all as msg.
type RFC3164 struct {
	scratch Record // for Sniff
}

// Name implements Format.
func (*RFC3164) Name() string { return "rfc3164" }

// Sniff implements Format.
func (p *RFC3164) Sniff(line []byte) float64 {
	if len(line) < 16 {
		return 0
	}
	p.scratch.Reset()
	if p.Parse(line, &p.scratch) != nil {
		return 0
	}
	if _, ok := p.scratch.Get("app"); ok {
		return 0.9
	}
	return 0.6
}

// Parse implements Format.
func (*RFC3164) Parse(line []byte, rec *Record) error {
	rest := line
	if n, r, ok := pri(line); ok {
		addPRI(rec, n)
		rest = r
	}
	var ts []byte
	switch {
	case len(rest) >= 15 && isMonth(rest[:3]) && bsdStamp(rest[3:15]):
		ts, rest = rest[:15], rest[15:]
	case looksRFC3339(rest):
		i := 19
		for i < len(rest) && rest[i] != ' ' {
			i++
		}
		ts, rest = rest[:i], rest[i:]
	default:
		return reject("no RFC 3164 timestamp (Mmm dd hh:mm:ss)")
	}
	if len(rest) < 2 || rest[0] != ' ' || rest[1] == ' ' {
		return reject("no host after the RFC 3164 timestamp")
	}
	rec.AddKV("time", ts)
	host, rest, more := token(rest[1:])
	rec.AddKV("host", host)
	if !more || len(rest) == 0 {
		return nil
	}
	// TAG: up to 32 alphanumerics per RFC 3164 4.1.3, but real daemons use
	// '-', '_', '.', '/' too; it ends at '[' or ':'.
	i := 0
	for i < len(rest) && i <= 48 && tagByte(rest[i]) {
		i++
	}
	if i > 0 && i < len(rest) && rest[i] == ' ' {
		// A tag with spaces ("Quay Desk[212]:") counts only with its
		// [PID] after it, so that a message's first words stay the message.
		i = spacedTag(rest, i)
	}
	tagEnd := i
	var pid []byte
	if i > 0 && i < len(rest) && rest[i] == '[' {
		j := i + 1
		for j < len(rest) && rest[j] != ']' && rest[j] != ' ' {
			j++
		}
		if j < len(rest) && rest[j] == ']' {
			pid = rest[i+1 : j]
			i = j + 1
		}
	}
	if i > 0 && i < len(rest) && rest[i] == ':' && (i+1 == len(rest) || rest[i+1] == ' ') {
		rec.AddKV("app", rest[:tagEnd])
		if len(pid) > 0 {
			rec.AddKV("pid", pid)
		}
		rest = rest[i+1:]
		if len(rest) > 0 {
			rest = rest[1:]
		}
	}
	if len(rest) > 0 {
		rec.AddKV("msg", rest)
	}
	return nil
}

// tagByte: RFC 3164 4.1.3 allows alphanumerics; daemons also write '-',
// '_', '.', '/', '@' and parentheses ("gated(pam_unix)").
func tagByte(c byte) bool {
	return c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c >= '0' && c <= '9' ||
		c == '-' || c == '_' || c == '.' || c == '/' || c == '@' || c == '(' || c == ')'
}

// spacedTag extends a tag that stopped at a space at i over further words
// when a "[PID]:" follows within 48 bytes; otherwise it returns i.
func spacedTag(rest []byte, i int) int {
	j := i
	for j < len(rest) && j <= 48 && (tagByte(rest[j]) || rest[j] == ' ') {
		j++
	}
	if j < len(rest) && rest[j] == '[' && rest[j-1] != ' ' {
		k := j + 1
		for k < len(rest) && isDigit(rest[k]) {
			k++
		}
		if k > j+1 && k+1 < len(rest) && rest[k] == ']' && rest[k+1] == ':' {
			return j
		}
	}
	return i
}

var months = [12]string{"Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec"}

func isMonth(b []byte) bool {
	for _, m := range months {
		if string(b) == m {
			return true
		}
	}
	return false
}

// bsdStamp checks " dd hh:mm:ss" (day space-padded or zero-padded).
func bsdStamp(b []byte) bool {
	if b[0] != ' ' || !(b[1] == ' ' || b[1] >= '0' && b[1] <= '3') || b[2] < '0' || b[2] > '9' || b[3] != ' ' {
		return false
	}
	for i, c := range b[4:] {
		if i == 2 || i == 5 {
			if c != ':' {
				return false
			}
		} else if c < '0' || c > '9' {
			return false
		}
	}
	return true
}
