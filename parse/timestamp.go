package parse

import (
	"strconv"
	"time"
)

// timeKeys are the field names tried, in order, when looking for a record's
// timestamp.
var timeKeys = []string{"time", "ts", "timestamp", "@timestamp", "t", "datetime", "date"}

// TimeFinder finds the timestamp field of a stream and reads it.
//
// The first record that has one of the usual time keys with a value in a
// known format fixes the field for the stream.
type TimeFinder struct {
	key    string
	layout int // index into the parsers below
	tried  int
}

// timeParsers read a value into Unix nanoseconds.
var timeParsers = []func(string) (int64, bool){
	func(s string) (int64, bool) { // RFC 3339 / ISO 8601
		t, err := time.Parse(time.RFC3339Nano, s)
		if err != nil {
			return 0, false
		}
		return t.UnixNano(), true
	},
	epochParser,
	func(s string) (int64, bool) { // date and time with a space, as prefixed lines write them
		t, err := time.Parse("2006-01-02 15:04:05Z07:00", s)
		if err != nil {
			t, err = time.Parse("2006-01-02 15:04:05", s)
		}
		if err != nil {
			return 0, false
		}
		return t.UnixNano(), true
	},
	func(s string) (int64, bool) { // NCSA access log time
		t, err := time.Parse("02/Jan/2006:15:04:05 -0700", s)
		if err != nil {
			return 0, false
		}
		return t.UnixNano(), true
	},
}

// epochParser reads epoch seconds, milliseconds, microseconds or
// nanoseconds, telling them apart by magnitude (values from 1973 to 2286).
func epochParser(s string) (int64, bool) {
	f, err := strconv.ParseFloat(s, 64)
	if err != nil || f <= 0 {
		return 0, false
	}
	switch {
	case f >= 1e17:
		return int64(f), true
	case f >= 1e14:
		return int64(f * 1e3), true
	case f >= 1e11:
		return int64(f * 1e6), true
	case f >= 1e8 && f < 1e10:
		return int64(f * 1e9), true
	}
	return 0, false
}

// Key is the timestamp field found, "" until one is.
func (tf *TimeFinder) Key() string { return tf.key }

// Find returns the record's time in Unix nanoseconds.
func (tf *TimeFinder) Find(rec *Record) (int64, bool) {
	if tf.key != "" {
		v, ok := rec.Get(tf.key)
		if !ok {
			return 0, false
		}
		return timeParsers[tf.layout](string(v))
	}
	if tf.tried > 100 {
		return 0, false
	}
	tf.tried++
	for _, k := range timeKeys {
		v, ok := rec.Get(k)
		if !ok {
			continue
		}
		for li, p := range timeParsers {
			if t, ok := p(string(v)); ok {
				tf.key, tf.layout = k, li
				return t, true
			}
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
