package parse

import (
	"testing"
	"time"
)

// TestKlog: lines in the layout glog's source documents for its header
// ("Lmmdd hh:mm:ss.uuuuuu threadid file:line] msg") and in klog's
// structured form (a quoted message, then key="value" pairs), both written
// from memory of those projects' documentation; and lines that are not
// klog. The wanted values are the lines' own text, read by eye.
func TestKlog(t *testing.T) {
	ref := func() time.Time { return time.Date(2026, 3, 20, 0, 0, 0, 0, time.UTC) }
	for _, c := range []struct {
		line string
		want map[string]string
		at   string // the time TimeFinder reads
	}{
		{"I0314 02:11:09.417123    1234 berth_controller.go:88] berth 12 reconciled",
			map[string]string{"level": "I", "time": "0314 02:11:09.417123", "thread": "1234", "source": "berth_controller.go:88", "msg": "berth 12 reconciled"},
			"2026-03-14T02:11:09.417123Z"},
		{`E0314 02:11:10.000001       7 ledger.go:201] "Posting failed" batch="8812" rows=413 err="connection reset"`,
			map[string]string{"level": "E", "thread": "7", "source": "ledger.go:201", "msg": "Posting failed", "batch": "8812", "rows": "413", "err": "connection reset"},
			"2026-03-14T02:11:10.000001Z"},
		{`W1231 23:59:59.999999 42 tide.go:9] "Late \"tide\" table\n" source="harbour"`,
			map[string]string{"level": "W", "msg": "Late \"tide\" table\n", "log.source": "harbour", "source": "tide.go:9"},
			"2025-12-31T23:59:59.999999Z"}, // December read in March: last year
		{"F0314 02:11:11.5 9 main.go:61] ", map[string]string{"level": "F", "msg": ""}, "2026-03-14T02:11:11.5Z"},
	} {
		var rec Record
		if err := (&Klog{}).Parse([]byte(c.line), &rec); err != nil {
			t.Errorf("%s: %v", c.line, err)
			continue
		}
		got := fieldsOf(&rec)
		for k, v := range c.want {
			if got[k] != v {
				t.Errorf("%s\n  %s = %q, want %q (all: %v)", c.line, k, got[k], v, got)
			}
		}
		tf := TimeFinder{Now: ref}
		ns, ok := tf.Find(&rec)
		if at := time.Unix(0, ns).UTC().Format(time.RFC3339Nano); !ok || tf.Key() != "time" || at != c.at {
			t.Errorf("%s: time %s (%v, key %q), want %s", c.line, at, ok, tf.Key(), c.at)
		}
	}
	for _, l := range []string{
		"I0314 02:11:09.417123 berth.go:88] no thread id",
		"X0314 02:11:09.417123 12 berth.go:88] level X",
		"I0314 02:11:09.417123 12 berth.go:88 no bracket",
		"2026-03-14 02:11:09 INFO berth 12 reconciled",
		"Info: 0314 02:11:09",
	} {
		var rec Record
		if err := (&Klog{}).Parse([]byte(l), &rec); err == nil {
			t.Errorf("%q read as %v", l, fieldsOf(&rec))
		}
	}
}
