package parse

import (
	"fmt"
	"math/rand/v2"
	"strings"
	"testing"
	"time"
)

// TestHeadTimeFastPath: a TimeFinder reading a stream of header times (each
// form of headTimes, written by Go's time.Format with its own layout, with
// fractions of 0 to 9 digits after '.' or ',', times moving a few seconds
// at a time across minutes, hours and the year's end) gives, value by
// value, the time parseHeadTime gives: the remembered form and minute
// change nothing but the cost.
func TestHeadTimeFastPath(t *testing.T) {
	rnd := rand.New(rand.NewPCG(3, 4))
	ref := time.Date(2026, 1, 3, 0, 0, 0, 0, time.UTC)
	for form, h := range headTimes {
		tf := TimeFinder{Now: func() time.Time { return ref }}
		at := time.Date(2025, 12, 31, 23, 58, 50, 0, time.UTC)
		n := 0
		for i := 0; i < 400; i++ {
			at = at.Add(time.Duration(rnd.IntN(9000)) * time.Millisecond)
			v := at.Format(h.layouts[0])
			if !strings.HasSuffix(h.layouts[0], "2006") && !strings.HasSuffix(h.layouts[0], "01.02") {
				if d := rnd.IntN(10); d > 0 {
					sep := "."
					if rnd.IntN(2) == 0 {
						sep = ","
					}
					v += sep + fmt.Sprintf("%09d", at.Nanosecond()+rnd.IntN(1000))[:d]
				}
			}
			want, wok := parseHeadTime(v, ref)
			if !wok {
				continue // a layout this form's expression does not take
			}
			n++
			var rec Record
			rec.AddString("time", v)
			got, ok := tf.Find(&rec)
			if !ok || got != want {
				t.Fatalf("form %s, value %q: %v %v, parseHeadTime %v", h.name, v, time.Unix(0, got).UTC(), ok, time.Unix(0, want).UTC())
			}
		}
		if n < 30 {
			t.Errorf("form %d (%s): only %d values read", form, h.name, n)
		}
	}
}

// TestAccessTimeFastPath: a TimeFinder reading a stream of access-log
// stamps (with and without brackets, the zone changing now and then,
// times moving across minutes and the year's end, some with a fraction or
// a leap second) gives, value by value, the time parseAccess gives.
func TestAccessTimeFastPath(t *testing.T) {
	rnd := rand.New(rand.NewPCG(5, 6))
	for _, bracket := range []bool{true, false} {
		tf := TimeFinder{}
		at := time.Date(2025, 12, 31, 23, 57, 0, 0, time.UTC)
		zone := time.FixedZone("", -7*3600)
		n := 0
		for i := 0; i < 3000; i++ {
			at = at.Add(time.Duration(rnd.IntN(4000)) * time.Millisecond)
			if rnd.IntN(200) == 0 {
				zone = time.FixedZone("", (rnd.IntN(27)-12)*3600)
			}
			v := at.In(zone).Format("02/Jan/2006:15:04:05 -0700")
			switch rnd.IntN(50) {
			case 0:
				v = v[:20] + ".5" + v[20:] // a fraction: the slow way
			case 1:
				v = v[:18] + "60" + v[20:] // a leap second: refused both ways
			}
			if bracket {
				v = "[" + v + "]"
			}
			want, wok := parseAccess(v, time.Time{})
			var rec Record
			rec.AddString("time", v)
			got, ok := tf.Find(&rec)
			if ok != wok || got != want {
				t.Fatalf("%q: %v %v, parseAccess %v %v", v, time.Unix(0, got).UTC(), ok, time.Unix(0, want).UTC(), wok)
			}
			if ok {
				n++
			}
		}
		if n < 2800 || tf.Format() != "access" {
			t.Errorf("bracket %v: %d read, layout %s", bracket, n, tf.Format())
		}
	}
}
