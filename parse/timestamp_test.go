package parse

import (
	"testing"
	"time"
)

func TestTimeFinderFormats(t *testing.T) {
	// Expected Unix times were computed with GNU date
	// (`date -u -d STAMP +%s.%N`), a tool outside this code.
	now := func() time.Time { return time.Date(2024, 11, 1, 0, 0, 0, 0, time.UTC) }
	tests := []struct {
		name, key, value string
		format           string
		want             int64
	}{
		// RFC 3339 section 5.8 examples.
		{"rfc3339 fraction Z", "time", "1985-04-12T23:20:50.52Z", "rfc3339", 482196050520000000},
		{"rfc3339 offset", "ts", "1996-12-19T16:39:57-08:00", "rfc3339", 851042397000000000},
		{"rfc3339 odd offset", "ts", "1937-01-01T12:00:27.87+00:20", "rfc3339", -1041337172130000000},
		{"iso no zone is UTC", "when", "1985-04-12T23:20:50.52", "rfc3339", 482196050520000000},
		{"iso space and comma", "timestamp", "1985-04-12 23:20:50,52", "rfc3339", 482196050520000000},
		{"iso basic offset", "ts", "1996-12-19T16:39:57-0800", "rfc3339", 851042397000000000},
		// The Common Log Format example of the Apache httpd log-files
		// documentation: [10/Oct/2000:13:55:36 -0700].
		{"access bracketed", "time", "[10/Oct/2000:13:55:36 -0700]", "access", 971211336000000000},
		{"access in any field", "stamp", "10/Oct/2000:13:55:36 -0700", "access", 971211336000000000},
		// RFC 3164 section 5.4 example stamp "Oct 11 22:14:15"; the year
		// is inferred from Now (2024-11-01): 2024.
		{"syslog", "timestamp", "Oct 11 22:14:15", "syslog", 1728684855000000000},
		// 1985-04-12T23:20:50.52Z in each epoch unit.
		{"epoch s", "ts", "482196050", "epoch", 482196050000000000},
		{"epoch s fraction", "ts", "482196050.52", "epoch", 482196050520000000},
		{"epoch ms", "ts", "482196050520", "epoch", 482196050520000000},
		{"epoch us", "ts", "482196050520000", "epoch", 482196050520000000},
		{"epoch ns", "ts", "482196050520000000", "epoch", 482196050520000000},
		{"epoch ms fraction", "time", "482196050520.5", "epoch", 482196050520500000},
		// systemd's journal (journalctl -o json): microseconds as a string.
		{"journal", "__REALTIME_TIMESTAMP", "482196050520000", "epoch", 482196050520000000},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			var rec Record
			rec.AddString("level", "info")
			rec.AddString("bytes", "1234567890") // a number, not under a time key
			rec.AddString(tt.key, tt.value)
			tf := TimeFinder{Now: now}
			got, ok := tf.Find(&rec)
			if !ok || got != tt.want {
				t.Fatalf("Find(%q=%q) = %d, %v; want %d", tt.key, tt.value, got, ok, tt.want)
			}
			if tf.Key() != tt.key || tf.Format() != tt.format {
				t.Errorf("field %q format %q; want %q %q", tf.Key(), tf.Format(), tt.key, tt.format)
			}
		})
	}
}

func TestTimeFinderSyslogYear(t *testing.T) {
	// December lines read in early January belong to the year before
	// (common practice, see TimeFinder.Now); expected values from GNU date.
	tests := []struct {
		name  string
		now   time.Time
		stamp string
		want  int64
	}{
		{"same year", time.Date(2024, 11, 1, 0, 0, 0, 0, time.UTC), "Oct 11 22:14:15", 1728684855000000000},
		{"year before", time.Date(2024, 1, 2, 0, 0, 0, 0, time.UTC), "Oct 11 22:14:15", 1697062455000000000},
		{"slightly ahead stays", time.Date(2024, 10, 1, 0, 0, 0, 0, time.UTC), "Oct 11 22:14:15", 1728684855000000000},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			tf := TimeFinder{Now: func() time.Time { return tt.now }}
			var rec Record
			rec.AddString("timestamp", tt.stamp)
			if got, ok := tf.Find(&rec); !ok || got != tt.want {
				t.Fatalf("got %d %v, want %d", got, ok, tt.want)
			}
		})
	}
}

func TestTimeFinderFixesFieldPerStream(t *testing.T) {
	tf := TimeFinder{}
	var rec Record
	rec.AddString("msg", "hello")
	rec.AddString("ts", "2024-01-02T03:04:05Z")
	if _, ok := tf.Find(&rec); !ok {
		t.Fatal("first record: no time")
	}
	rec.Reset()
	rec.AddString("time", "2024-01-02T03:04:06Z") // another key: not this stream's
	if _, ok := tf.Find(&rec); ok {
		t.Error("a record without the stream's time field got a time")
	}
	rec.Reset()
	rec.AddString("ts", "not a time")
	if _, ok := tf.Find(&rec); ok {
		t.Error("an unreadable value got a time")
	}
}

func TestTimeFinderGivesUp(t *testing.T) {
	tf := TimeFinder{}
	var rec Record
	rec.AddString("size", "1700000000") // epoch-shaped, but not under a time key
	for i := 0; i < 2*timeSearchRecords; i++ {
		if _, ok := tf.Find(&rec); ok {
			t.Fatal("a number outside the time keys was taken for a time")
		}
	}
	if tf.Key() != "" {
		t.Errorf("key %q", tf.Key())
	}
}
