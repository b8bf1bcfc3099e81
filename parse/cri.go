package parse

func init() { Register("cri", func() Format { return &CRI{} }) }

// maxJoined bounds the text held from partial lines, so that a stream of P
// lines with no F cannot take memory without limit.
const maxJoined = DefaultMaxLine

// CRI reads container log lines as the Container Runtime Interface writes
// them (Kubernetes' /var/log/pods):
//
//	TIMESTAMP STREAM TAG MESSAGE
//
// where STREAM is stdout or stderr and TAG is F (full) or P (partial, more
// follows), perhaps with further ':'-separated flags. Fields: time, stream,
// and the message, read again as JSON or logfmt when it is one, else as the
// field log. P lines are held (Parse returns ErrPart) and joined, per
// stream, to the next F line of the same stream; the record takes the time
// of its first part.
type CRI struct {
	open  [2]criPart // stdout, stderr
	inner inner
}

type criPart struct {
	held bool
	time []byte
	text []byte
	over bool // text passed maxJoined and was cut
}

// Name implements Format.
func (*CRI) Name() string { return "cri" }

// Sniff implements Format.
func (*CRI) Sniff(line []byte) float64 {
	if _, _, _, _, err := criSplit(line); err != nil {
		return 0
	}
	return 0.95
}

// criSplit cuts a CRI line into its parts.
func criSplit(line []byte) (ts []byte, stream int, partial bool, msg []byte, err error) {
	ts, rest, more := token(line)
	if !more || !looksRFC3339(ts) {
		return nil, 0, false, nil, reject("no RFC 3339 timestamp at the start of a CRI line")
	}
	s, rest, more := token(rest)
	switch string(s) {
	case "stdout":
		stream = 0
	case "stderr":
		stream = 1
	default:
		return nil, 0, false, nil, reject("CRI stream is neither stdout nor stderr")
	}
	tag, msg, _ := token(rest)
	if !more || len(tag) == 0 || (tag[0] != 'F' && tag[0] != 'P') || (len(tag) > 1 && tag[1] != ':') {
		return nil, 0, false, nil, reject("CRI tag is neither F nor P")
	}
	return ts, stream, tag[0] == 'P', msg, nil
}

var streamNames = [2][]byte{[]byte("stdout"), []byte("stderr")}

// Parse implements Format and Joiner.
func (c *CRI) Parse(line []byte, rec *Record) error {
	ts, stream, partial, msg, err := criSplit(line)
	if err != nil {
		return err
	}
	p := &c.open[stream]
	if partial || p.held {
		if !p.held {
			p.held = true
			p.time = append(p.time[:0], ts...)
			p.text = p.text[:0]
			p.over = false
		}
		if len(p.text)+len(msg) > maxJoined {
			p.over = true
		} else {
			p.text = append(p.text, msg...)
		}
		if partial {
			return ErrPart
		}
		return c.emit(stream, rec)
	}
	c.fill(rec, ts, stream, msg)
	return nil
}

func (c *CRI) fill(rec *Record, ts []byte, stream int, msg []byte) {
	rec.AddKV("time", ts)
	rec.AddKV("stream", streamNames[stream])
	c.inner.add(rec, "log", msg, "time", "stream")
}

// emit makes the record of the open partial text of stream.
func (c *CRI) emit(stream int, rec *Record) error {
	p := &c.open[stream]
	p.held = false
	if p.over {
		return reject("CRI partial lines join to more than 1 MiB")
	}
	c.fill(rec, p.time, stream, p.text)
	return nil
}

// Flush implements Joiner: it gives the records left open at the end of a
// stream, stdout's first. Text past 1 MiB has been cut; the record keeps
// the rest rather than vanish.
func (c *CRI) Flush(rec *Record) bool {
	for s := range c.open {
		if p := &c.open[s]; p.held {
			p.held = false
			c.fill(rec, p.time, s, p.text)
			return true
		}
	}
	return false
}
