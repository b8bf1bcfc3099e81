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
