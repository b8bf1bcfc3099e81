package parse

import "encoding/binary"

// rfc3339Fast reads the RFC 3339 timestamps most JSON logs carry
// ("2026-03-14T06:00:00.000500Z", "...+02:00") straight from the record's
// bytes, and the ISO 8601 forms line headers use ("2026-03-14
// 06:00:00,417": a space for the T, a comma before the fraction, no zone,
// or a zone without its colon). It is written by hand because time.Parse
// takes a string, so each record's time would cost an allocation besides
// the parse: together a sixth of a pipeline worker's instructions on the
// demo lines; and parseISO tries its layouts in turn, so a header time
// cost five failed parses, each making an error, before the one that
// read it (a third of a Java log's CPU). It accepts only what parseISO
// accepts, and gives the same instant (TestRFC3339FastAgrees,
// FuzzRFC3339Fast); done is false for anything else, which then goes to
// parseISO as before.
func rfc3339Fast(b []byte) (ns int64, done bool) {
	base, ok := rfc3339Minute(b)
	if !ok {
		return 0, false
	}
	return rfc3339Rest(b, base)
}

// rfc3339Minute reads b's first 16 bytes, "2026-03-14T06:00", as seconds
// since 1970 (before the zone's offset), when b is long enough to be read
// by rfc3339Fast.
func rfc3339Minute(b []byte) (int64, bool) {
	if len(b) < 19 || b[4] != '-' || b[7] != '-' || (b[10] != 'T' && b[10] != ' ') || b[13] != ':' {
		return 0, false
	}
	y1, ok1 := two(b[0], b[1])
	y2, ok2 := two(b[2], b[3])
	month, ok3 := two(b[5], b[6])
	day, ok4 := two(b[8], b[9])
	hour, ok5 := two(b[11], b[12])
	minute, ok6 := two(b[14], b[15])
	year := y1*100 + y2
	// Years whose nanoseconds fit an int64 (UnixNano is undefined past them).
	if !(ok1 && ok2 && ok3 && ok4 && ok5 && ok6) || year < 1678 || year > 2261 ||
		month < 1 || month > 12 || day < 1 || day > daysInMonth(month, year) || hour > 23 || minute > 59 {
		return 0, false
	}
	return daysFromCivil(year, month, day)*86400 + int64(hour*3600+minute*60), true
}

// rfc3339Rest reads the rest of b (":05.000500Z") after its minute, whose
// seconds are base.
func rfc3339Rest(b []byte, base int64) (ns int64, done bool) {
	if len(b) < 19 || b[16] != ':' {
		return 0, false
	}
	sec, ok := two(b[17], b[18])
	if !ok || sec > 59 {
		return 0, false
	}
	rest := b[19:]
	nsec := int64(0)
	if len(rest) >= 2 && (rest[0] == '.' || rest[0] == ',') && isDigit(rest[1]) {
		n := 1
		for ; n < len(rest) && isDigit(rest[n]); n++ {
			if n <= 9 {
				nsec = nsec*10 + int64(rest[n]-'0')
			}
		}
		if n <= 9 {
			nsec *= pow10[10-n] // fewer than 9 digits
		}
		rest = rest[n:]
	}
	offset := 0
	switch {
	case len(rest) == 0: // no zone: UTC, as parseISO reads it
	case len(rest) == 1 && rest[0] == 'Z':
	case (len(rest) == 6 && rest[3] == ':' || len(rest) == 5) && (rest[0] == '+' || rest[0] == '-'):
		m := 3 // "+hh:mm", or "+hhmm"
		if len(rest) == 6 {
			m = 4
		}
		hh, ok1 := two(rest[1], rest[2])
		mm, ok2 := two(rest[m], rest[m+1])
		if !ok1 || !ok2 || hh > 23 || mm > 59 {
			return 0, false
		}
		offset = (hh*60 + mm) * 60
		if rest[0] == '-' {
			offset = -offset
		}
	default:
		return 0, false
	}
	s := base + int64(sec-offset)
	return s*1e9 + nsec, true
}

// minuteCache remembers the minute of the last time rfc3339Fast read: a
// stream's times mostly share it, and then only the seconds, fraction and
// zone are read (the minute's five numbers and its date were a third of
// the fast path's time on the demo's lines). Its reads are rfc3339Fast's
// (TestMinuteCacheAgrees).
type minuteCache struct {
	w0, w1 uint64 // the value's first 16 bytes
	base   int64  // their seconds (rfc3339Minute)
	ok     bool
}

func (c *minuteCache) read(b []byte) (int64, bool) {
	if len(b) < 19 {
		return 0, false
	}
	w0, w1 := binary.LittleEndian.Uint64(b), binary.LittleEndian.Uint64(b[8:])
	if !c.ok || w0 != c.w0 || w1 != c.w1 {
		base, ok := rfc3339Minute(b)
		if !ok {
			return 0, false
		}
		c.w0, c.w1, c.base, c.ok = w0, w1, base, true
	}
	return rfc3339Rest(b, c.base)
}

// two reads two decimal digits.
func two(a, b byte) (int, bool) {
	a, b = a-'0', b-'0'
	return int(a)*10 + int(b), a < 10 && b < 10
}

var pow10 = [...]int64{1, 10, 100, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9}

func daysInMonth(m, y int) int {
	switch m {
	case 2:
		if y%4 == 0 && (y%100 != 0 || y%400 == 0) {
			return 29
		}
		return 28
	case 4, 6, 9, 11:
		return 30
	}
	return 31
}

// daysFromCivil is the number of days from 1970-01-01 to y-m-d in the
// proleptic Gregorian calendar (H. Hinnant, "chrono-Compatible Low-Level
// Date Algorithms", days_from_civil).
func daysFromCivil(y, m, d int) int64 {
	if m <= 2 {
		y--
	}
	era := y / 400 // y ≥ 1677 here: no negative division
	yoe := y - era*400
	mp := (m + 9) % 12
	doy := (153*mp+2)/5 + d - 1
	doe := yoe*365 + yoe/4 - yoe/100 + doy
	return int64(era)*146097 + int64(doe) - 719468
}
