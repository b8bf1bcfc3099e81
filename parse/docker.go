package parse

func init() { Register("docker", func() Format { return &Docker{} }) }

// Docker reads the JSON-file lines that Docker's default logging driver
// writes, {"log":"...","stream":"stdout","time":"..."}. Fields: time,
// stream, any other top-level member as it is, and the log text (its
// trailing newline dropped) read again as JSON or logfmt when it is one,
// else as the field log. Lines that Docker split (a log without a trailing
// newline) are not joined: each is its own record.
type Docker struct {
	outer JSON
	top   Record
	inner inner
}

// Name implements Format.
func (*Docker) Name() string { return "docker" }

// Sniff implements Format: above JSON's 0.9 when the line has the driver's
// keys.
func (d *Docker) Sniff(line []byte) float64 {
	if len(line) < 10 || line[0] != '{' {
		return 0
	}
	d.top.Reset()
	if d.outer.Parse(line, &d.top) != nil {
		return 0
	}
	_, log := d.top.Get("log")
	_, stream := d.top.Get("stream")
	_, tm := d.top.Get("time")
	if log && (stream || tm) {
		return 0.95
	}
	return 0
}

// Parse implements Format.
func (d *Docker) Parse(line []byte, rec *Record) error {
	d.top.Reset()
	if err := d.outer.Parse(line, &d.top); err != nil {
		return err
	}
	var log []byte
	found := false
	for i := 0; i < d.top.Len(); i++ {
		k := d.top.Key(i)
		if string(k) == "log" && !found {
			log, found = d.top.Value(i), true
			continue
		}
		rec.Add(k, d.top.Value(i))
	}
	if !found {
		return reject(`no "log" member in a Docker JSON-file line`)
	}
	if n := len(log); n > 0 && log[n-1] == '\n' {
		log = log[:n-1]
		if n := len(log); n > 0 && log[n-1] == '\r' {
			log = log[:n-1]
		}
	}
	d.inner.add(rec, "log", log, "time", "stream")
	return nil
}
