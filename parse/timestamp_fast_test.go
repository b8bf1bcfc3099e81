package parse

import (
	"fmt"
	"math/rand/v2"
	"testing"
	"time"
)

// checkRFC3339Fast: where rfc3339Fast reads a value, the "rfc3339"
// layout's parse (time.Parse, Go's standard library, the reference) reads
// it too, as the same instant. It says whether the fast path read it.
func checkRFC3339Fast(t *testing.T, s string) bool {
	t.Helper()
	got, done := rfc3339Fast([]byte(s))
	if !done {
		return false
	}
	want, ok := parseISO(s, time.Time{})
	if !ok || got != want {
		t.Fatalf("%q: fast %d, time.Parse %d (%v)", s, got, want, ok)
	}
	return true
}

// TestRFC3339FastAgrees: RFC 3339's own examples (section 5.8; its leap
// second is refused, as time.Parse refuses it, and its +00:20 offset
// read), random instants from 1678 to 2261 with a T or a space, 0 to 12
// fraction digits after '.' or ',', and offsets with or without a colon
// or none, and damaged ones (month 13, 30 February, hour 24, a comma, a
// lower-case t, a short offset), all against time.Parse.
func TestRFC3339FastAgrees(t *testing.T) {
	for _, c := range []struct {
		s    string
		fast bool
	}{
		{"1985-04-12T23:20:50.52Z", true}, {"1996-12-19T16:39:57-08:00", true},
		{"1990-12-31T23:59:60Z", false}, {"1990-12-31T15:59:60-08:00", false},
		{"1937-01-01T12:00:27.87+00:20", true}, {"2026-03-14T06:00:00.000500Z", true},
		{"2026-03-14 06:00:00,417", true}, {"2026-03-14 06:00:00.417", true}, {"2026-03-14T06:00:00", true},
		{"2026-03-14T06:00:00.5-0730", true}, {"2026-03-14 06:00:00 +0200", false}, {"2026-03-14 06:00:00+07", false},
	} {
		if got := checkRFC3339Fast(t, c.s); got != c.fast {
			t.Errorf("%q: read by the fast path %v, want %v", c.s, got, c.fast)
		}
	}
	r := rand.New(rand.NewPCG(4, 4))
	damage := []func(string) string{
		func(s string) string { return s[:5] + "13" + s[7:] },
		func(s string) string { return s[:5] + "02-30" + s[10:] },
		func(s string) string { return s[:5] + "02-29" + s[10:] },
		func(s string) string { return s[:11] + "24" + s[13:] },
		func(s string) string { return s[:19] + "," + s[20:] },
		func(s string) string { return s[:10] + "t" + s[11:] },
		func(s string) string { return s[:len(s)-1] },
		func(s string) string { return s + " " },
		func(s string) string { return s[:17] + "6" + s[18:] },
		func(s string) string { return s[:19] + "." + s[19:] },
	}
	read := 0
	for n := 0; n < 50000; n++ {
		sec := r.Int64N(time.Date(2262, 1, 1, 0, 0, 0, 0, time.UTC).Unix()-time.Date(1678, 1, 1, 0, 0, 0, 0, time.UTC).Unix()) +
			time.Date(1678, 1, 1, 0, 0, 0, 0, time.UTC).Unix()
		tm := time.Unix(sec, 0).UTC()
		s := tm.Format("2006-01-02T15:04:05")
		if r.IntN(3) == 0 {
			s = tm.Format("2006-01-02 15:04:05") // as line headers write it
		}
		if d := r.IntN(13); d > 0 {
			s += string(".,"[r.IntN(2)])
			for range d {
				s += fmt.Sprint(r.IntN(10))
			}
		}
		switch r.IntN(5) {
		case 0:
			s += "Z"
		case 1: // no zone
		case 2:
			s += fmt.Sprintf("%c%02d%02d", "+-"[r.IntN(2)], r.IntN(25), r.IntN(61))
		default:
			s += fmt.Sprintf("%c%02d:%02d", "+-"[r.IntN(2)], r.IntN(25), r.IntN(61))
		}
		if r.IntN(4) == 0 && len(s) > 20 {
			s = damage[r.IntN(len(damage))](s)
		}
		if checkRFC3339Fast(t, s) {
			read++
		}
	}
	if read < 30000 {
		t.Errorf("the fast path read %d of 50000 values", read)
	}
}

// FuzzRFC3339Fast checks the fast path against time.Parse on any value.
func FuzzRFC3339Fast(f *testing.F) {
	f.Add("2026-03-14T06:00:00.000500Z")
	f.Add("1996-12-19T16:39:57-08:00")
	f.Fuzz(func(t *testing.T, s string) { checkRFC3339Fast(t, s) })
}

// TestMinuteCacheAgrees: a TimeFinder's minute cache reads a stream of
// times (most sharing their minute with the one before, some damaged in
// the minute or after it) as rfc3339Fast reads each alone, and so as
// time.Parse does (checkRFC3339Fast).
func TestMinuteCacheAgrees(t *testing.T) {
	r := rand.New(rand.NewPCG(5, 6))
	var c minuteCache
	at := time.Date(2026, 2, 28, 23, 58, 0, 0, time.UTC)
	for n := 0; n < 100000; n++ {
		at = at.Add(time.Duration(r.IntN(3000)) * time.Millisecond)
		s := at.Format("2006-01-02T15:04:05.000000Z07:00")
		switch r.IntN(12) {
		case 0:
			s = s[:r.IntN(len(s))] + string("0:-T.Z+9x"[r.IntN(9)]) + s[r.IntN(len(s)):]
		case 1:
			s = s[:len(s)-1] + "+01:30"
		case 2:
			s = s[:16] + ":60Z"
		}
		got, ok := c.read([]byte(s))
		want, wantOK := rfc3339Fast([]byte(s))
		if ok != wantOK || got != want {
			t.Fatalf("%q: cached %d %v, alone %d %v", s, got, ok, want, wantOK)
		}
		checkRFC3339Fast(t, s)
	}
}
