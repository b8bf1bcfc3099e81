package parse

import "bytes"

// minuteMemo remembers, for the last time a layout read the slow way
// (time.Parse, or the header forms' expressions), its text before the
// seconds and after them (a zone), and the time of that minute: a stream's
// next times mostly share both, and are then that minute plus their
// seconds and fraction, read by hand. A layout's cut says where a value's
// seconds are, and declines values whose end every form of the layout does
// not read alike. Parsing each time was most of a klog report's CPU (a
// dozen expressions a record) and a tenth of an access log's.
type minuteMemo struct {
	before, after string
	base          int64 // the minute's time (Unix ns)
}

// secondsCut cuts a time's text at its seconds: the text before and after
// them, and the seconds and fraction in nanoseconds.
type secondsCut func(v []byte) (before, after []byte, ns int64, ok bool)

// read gives v's time if v is in the remembered minute.
func (c *minuteMemo) read(v []byte, cut secondsCut) (int64, bool) {
	if c.before == "" {
		return 0, false
	}
	before, after, ns, ok := cut(v)
	if !ok || string(before) != c.before || string(after) != c.after {
		return 0, false
	}
	return c.base + ns, true
}

// learn remembers the minute of v, read the slow way as t.
func (c *minuteMemo) learn(v []byte, t int64, cut secondsCut) {
	if before, after, ns, ok := cut(v); ok {
		c.before, c.after, c.base = string(before), string(after), t-ns
	}
}

// seconds reads the two digits after v's ':' at i-3 (i is the end of
// the seconds), as nanoseconds; false past 59, which time.Parse refuses.
func seconds(v []byte, i int) (int64, bool) {
	if i < 3 || i > len(v) || v[i-3] != ':' || !isDigit(v[i-2]) || !isDigit(v[i-1]) {
		return 0, false
	}
	sec := int64(v[i-2]-'0')*10 + int64(v[i-1]-'0')
	return sec * 1e9, sec <= 59
}

// cutHeadTime cuts a header time ending "…:ss" or "…:ss.fff" (or ",fff",
// up to 9 digits), which every header form reads alike; others (a year or
// a zone after the time) are declined.
func cutHeadTime(v []byte) (before, after []byte, ns int64, ok bool) {
	i := len(v) - 1
	for i >= 0 && isDigit(v[i]) {
		i--
	}
	end, frac := len(v), int64(0)
	if i >= 0 && (v[i] == '.' || v[i] == ',') {
		digits := v[i+1:]
		if len(digits) == 0 || len(digits) > 9 {
			return nil, nil, 0, false
		}
		for _, c := range digits {
			frac = frac*10 + int64(c-'0')
		}
		frac *= pow10[9-len(digits)]
		end = i
	}
	sec, ok := seconds(v, end)
	if !ok {
		return nil, nil, 0, false
	}
	return v[:end-2], nil, sec + frac, true
}

// cutAccess cuts an access stamp ("[10/Oct/2000:13:55:36 -0700]") at its
// seconds; the zone after them is compared. A stamp with a fraction after
// its seconds is declined.
func cutAccess(v []byte) (before, after []byte, ns int64, ok bool) {
	i := bytes.IndexByte(v, ' ')
	sec, ok := seconds(v, i)
	if !ok {
		return nil, nil, 0, false
	}
	return v[:i-2], v[i:], sec, true
}
