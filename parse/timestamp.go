package parse

import (
	"strconv"
	"strings"
	"time"
)

// timeKeys are the field names tried first, in order, when looking for a
// stream's timestamp. Only under these names is a bare number taken for an
// epoch time: elsewhere a number is far more often a size or a count.
//
// __REALTIME_TIMESTAMP is systemd's journal's (journalctl -o json): the
// time the journal received the entry, microseconds since 1970 as a
// decimal string (systemd.journal-fields(7), from memory), on every entry.
var timeKeys = []string{"time", "ts", "timestamp", "@timestamp", "t", "datetime", "date", "__REALTIME_TIMESTAMP"}

// timeSearchRecords is how many records TimeFinder looks at for a
// timestamp field before it concludes that the stream has none.
const timeSearchRecords = 100

// TimeFinder finds the timestamp field of a stream, and its format, and
// reads it.
//
// The first record that has a field whose value is in one of the formats
// below fixes the field and the format for the stream: the usual time keys
// (time, ts, timestamp, @timestamp, ...) are tried first, then every field,
// for the formats that cannot be mistaken for something else (all but epoch
// numbers). Formats:
//
//   - rfc3339: RFC 3339 and ISO 8601 extended, "2006-01-02T15:04:05Z07:00",
//     with or without fractional seconds (dot or comma), with a zone Z,
//     ±hh:mm or ±hhmm, or without one (then read as UTC); a space may stand
//     for the T.
//   - epoch: seconds, milliseconds, microseconds or nanoseconds since
//     1970, told apart by magnitude (each unit covers 1973 to 2286), with an
//     optional decimal fraction.
//   - syslog: the RFC 3164 "Jan _2 15:04:05" stamp, optionally with
//     fractional seconds; it has no year, which is inferred (see Now).
//   - access: the NCSA access-log stamp "02/Jan/2006:15:04:05 -0700", with
//     or without its square brackets.
//   - header: the forms line headers use (see headTimes): "260314 021109",
//     "26/03/14 02:11:09", "03-14 02:11:09.417", ctime, "Mar 14 02:11:09
//     2026", "2026-03-14-02.11.09.417312", "20260314-2:11:09:417", ...;
//     under the usual time keys only.
//
// Times without a zone are read as UTC: bitsift only uses differences
// between a stream's times (the duration window, replay pacing), and those
// do not depend on the zone.
type TimeFinder struct {
	// Now is the reference for inferring the year of syslog stamps: the
	// year of Now, unless that puts the stamp more than 31 days after Now,
	// then the year before (so December lines read in January fall in the
	// year they were written; common practice, no published rule). Nil
	// means time.Now.
	Now func() time.Time

	key    string
	layout *timeLayout
	tried  int
	ref    time.Time
	minute minuteCache // for the rfc3339 layout
	// headForm is the header form (headTimes) that read the last time,
	// tried first; the zero TimeFinder tries form 0 first, as before.
	headForm int
	memo     minuteMemo // for the access and header layouts
}

// timeLayout is one timestamp format.
type timeLayout struct {
	name string
	// strong: values in this format are not mistaken for other things, so
	// the format may be looked for in any field.
	strong bool
	parse  func(s string, ref time.Time) (int64, bool)
	// fast, when set, reads the common forms from bytes (done), leaving
	// the rest to parse.
	fast func(b []byte) (ns int64, done bool)
}

var (
	headerLayout = &timeLayout{name: "header", parse: parseHeadTime}
	accessLayout = &timeLayout{name: "access", strong: true, parse: parseAccess}
)

// timeLayouts are tried in order on each candidate value.
var timeLayouts = []*timeLayout{
	rfc3339Layout,
	accessLayout,
	{name: "syslog", strong: true, parse: parseSyslog},
	// The forms line headers use (header_time.go), under time keys only.
	headerLayout,
	{name: "epoch", parse: func(s string, _ time.Time) (int64, bool) { return parseEpoch(s) }},
}

// rfc3339Layout is read by a TimeFinder through its minuteCache, the
// same reads as its fast.
var rfc3339Layout = &timeLayout{name: "rfc3339", strong: true, parse: parseISO, fast: rfc3339Fast}

// isoLayouts are the ISO 8601 shapes parseISO accepts; time.Parse accepts a
// fractional second after the seconds even where the layout has none.
var isoLayouts = []string{
	"2006-01-02T15:04:05Z07:00",
	"2006-01-02T15:04:05Z0700",
	"2006-01-02T15:04:05",
	"2006-01-02 15:04:05Z07:00",
	"2006-01-02 15:04:05Z0700",
	"2006-01-02 15:04:05",
	"2006-01-02 15:04:05 Z07:00",
	"2006-01-02 15:04:05 -0700",
}

func parseISO(s string, _ time.Time) (int64, bool) {
	if len(s) < 19 || s[4] != '-' || s[7] != '-' || s[13] != ':' || !isDigit(s[0]) {
		return 0, false
	}
	for _, l := range isoLayouts {
		if t, err := time.Parse(l, s); err == nil {
			return t.UnixNano(), true
		}
	}
	return 0, false
}

func parseAccess(s string, _ time.Time) (int64, bool) {
	s = strings.TrimSuffix(strings.TrimPrefix(s, "["), "]")
	if len(s) < 20 || s[2] != '/' || s[6] != '/' || s[11] != ':' {
		return 0, false
	}
	t, err := time.Parse("02/Jan/2006:15:04:05 -0700", s)
	if err != nil {
		return 0, false
	}
	return t.UnixNano(), true
}

func parseSyslog(s string, ref time.Time) (int64, bool) {
	if len(s) < 15 || s[3] != ' ' || s[9] != ':' || s[12] != ':' {
		return 0, false
	}
	t, err := time.Parse(time.Stamp, s)
	if err != nil {
		return 0, false
	}
	y := ref.Year()
	at := time.Date(y, t.Month(), t.Day(), t.Hour(), t.Minute(), t.Second(), t.Nanosecond(), time.UTC)
	if at.After(ref.Add(31 * 24 * time.Hour)) {
		at = time.Date(y-1, t.Month(), t.Day(), t.Hour(), t.Minute(), t.Second(), t.Nanosecond(), time.UTC)
	}
	return at.UnixNano(), true
}

// parseEpoch reads epoch seconds, milliseconds, microseconds or
// nanoseconds, telling them apart by the magnitude of the integer part, with
// the fraction read exactly (no float rounding).
func parseEpoch(s string) (int64, bool) {
	ip, frac, _ := strings.Cut(s, ".")
	if len(ip) == 0 || len(ip) > 19 {
		return 0, false
	}
	n, err := strconv.ParseInt(ip, 10, 64)
	if err != nil || n <= 0 {
		return 0, false
	}
	for i := 0; i < len(frac); i++ {
		if !isDigit(frac[i]) {
			return 0, false
		}
	}
	var unit int64 // nanoseconds per unit
	switch {
	case n >= 1e17:
		unit = 1
	case n >= 1e14 && n < 1e16:
		unit = 1e3
	case n >= 1e11 && n < 1e13:
		unit = 1e6
	case n >= 1e8 && n < 1e10:
		unit = 1e9
	default:
		return 0, false
	}
	ns := n * unit
	for scale := unit / 10; scale > 0 && len(frac) > 0; scale /= 10 {
		ns += int64(frac[0]-'0') * scale
		frac = frac[1:]
	}
	return ns, true
}

func isDigit(c byte) bool { return c >= '0' && c <= '9' }

// Key is the timestamp field found, "" until one is.
func (tf *TimeFinder) Key() string { return tf.key }

// Format is the name of the timestamp format found ("rfc3339", "epoch",
// "syslog", "access"), "" until one is.
func (tf *TimeFinder) Format() string {
	if tf.layout == nil {
		return ""
	}
	return tf.layout.name
}

// Find returns the record's time in Unix nanoseconds.
func (tf *TimeFinder) Find(rec *Record) (int64, bool) {
	if tf.layout != nil {
		v, ok := rec.Get(tf.key)
		if !ok {
			return 0, false
		}
		if tf.layout == rfc3339Layout {
			if t, done := tf.minute.read(v); done {
				return t, true
			}
		} else if tf.layout.fast != nil {
			if t, done := tf.layout.fast(v); done {
				return t, true
			}
		} else if tf.layout == accessLayout {
			if t, ok := tf.memo.read(v, cutAccess); ok {
				return t, true
			}
			t, ok := parseAccess(string(v), tf.ref)
			if ok {
				tf.memo.learn(v, t, cutAccess)
			}
			return t, ok
		} else if tf.layout == headerLayout {
			if t, ok := tf.memo.read(v, cutHeadTime); ok {
				return t, true
			}
			t, form, ok := parseHeadTimeFrom(string(v), tf.ref, tf.headForm)
			if ok {
				tf.headForm = form
				tf.memo.learn(v, t, cutHeadTime)
			}
			return t, ok
		}
		return tf.layout.parse(string(v), tf.ref)
	}
	if tf.tried >= timeSearchRecords {
		return 0, false
	}
	tf.tried++
	tf.ref = time.Now()
	if tf.Now != nil {
		tf.ref = tf.Now()
	}
	for _, k := range timeKeys {
		if v, ok := rec.Get(k); ok {
			if t, ok := tf.try(k, string(v), false); ok {
				return t, true
			}
		}
	}
	for i := 0; i < rec.Len(); i++ {
		if t, ok := tf.try(string(rec.Key(i)), string(rec.Value(i)), true); ok {
			return t, true
		}
	}
	return 0, false
}

// try fixes key and the first layout that reads v; strongOnly limits the
// search to layouts that cannot be mistaken for other values.
func (tf *TimeFinder) try(key, v string, strongOnly bool) (int64, bool) {
	for _, l := range timeLayouts {
		if strongOnly && !l.strong {
			continue
		}
		if t, ok := l.parse(v, tf.ref); ok {
			tf.key, tf.layout = key, l
			return t, true
		}
	}
	return 0, false
}

// IsTimeKey says whether name is one of the usual timestamp field names.
func IsTimeKey(name string) bool {
	for _, k := range timeKeys {
		if k == name {
			return true
		}
	}
	return false
}
