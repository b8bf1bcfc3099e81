package parse

import "testing"

// The examples printed in RFC 5424 section 6.5, typed from memory (not
// quoted from a copy), and the fields the RFC's text says they carry.
func TestRFC5424Examples(t *testing.T) {
	runParseCases(t, &RFC5424{}, []parseCase{
		{name: "example 1: no structured data, BOM before MSG",
			line: "<34>1 2003-10-11T22:14:15.003Z mymachine.example.com su - ID47 - \xEF\xBB\xBF'su root' failed for lonvick on /dev/pts/8",
			// RFC 5424 6.5: facility 4 (security/authorization), severity 2
			// (critical), PROCID unknown (NILVALUE).
			want: map[string]string{"facility": "auth", "severity": "crit", "time": "2003-10-11T22:14:15.003Z",
				"host": "mymachine.example.com", "app": "su", "msgid": "ID47",
				"msg": "'su root' failed for lonvick on /dev/pts/8"}},
		{name: "example 2: IP address host, no MSGID",
			line: "<165>1 2003-08-24T05:14:15.000003-07:00 192.0.2.1 myproc 8710 - - %% It's time to make the do-nothing.",
			// RFC 5424 6.5: facility 20 (local4), severity 5 (notice).
			want: map[string]string{"facility": "local4", "severity": "notice", "time": "2003-08-24T05:14:15.000003-07:00",
				"host": "192.0.2.1", "app": "myproc", "procid": "8710", "msg": "%% It's time to make the do-nothing."}},
		{name: "example 3: structured data and MSG",
			line: `<165>1 2003-10-11T22:14:15.003Z mymachine.example.com evntslog - ID47 [exampleSDID@32473 iut="3" eventSource="Application" eventID="1011"] ` + "\xEF\xBB\xBF" + `An application event log entry...`,
			want: map[string]string{"facility": "local4", "severity": "notice", "time": "2003-10-11T22:14:15.003Z",
				"host": "mymachine.example.com", "app": "evntslog", "msgid": "ID47",
				"exampleSDID@32473.iut": "3", "exampleSDID@32473.eventSource": "Application",
				"exampleSDID@32473.eventID": "1011", "msg": "An application event log entry..."}},
		{name: "example 4: two SD elements, no MSG",
			line: `<165>1 2003-10-11T22:14:15.003Z mymachine.example.com evntslog - ID47 [exampleSDID@32473 iut="3" eventSource="Application" eventID="1011"][examplePriority@32473 class="high"]`,
			want: map[string]string{"facility": "local4", "severity": "notice", "time": "2003-10-11T22:14:15.003Z",
				"host": "mymachine.example.com", "app": "evntslog", "msgid": "ID47",
				"exampleSDID@32473.iut": "3", "exampleSDID@32473.eventSource": "Application",
				"exampleSDID@32473.eventID": "1011", "examplePriority@32473.class": "high"}},
		// RFC 5424 6.3.3: inside PARAM-VALUE, \" \\ and \] are escapes.
		{name: "escapes in an SD value",
			line: `<14>1 2025-03-02T06:00:00Z glasshouse-7 misting - - [w@32473 note="say \"hi\" \\ [ok\]" hall="B"]`,
			want: map[string]string{"facility": "user", "severity": "info", "time": "2025-03-02T06:00:00Z",
				"host": "glasshouse-7", "app": "misting", "w@32473.note": `say "hi" \ [ok]`, "w@32473.hall": "B"}},
		{name: "all NILVALUE", line: "<0>1 - - - - - -",
			want: map[string]string{"facility": "kern", "severity": "emerg"}},
		{name: "SD element without parameters", line: "<191>1 - h a - - [timeQuality] m",
			want: map[string]string{"facility": "local7", "severity": "debug", "host": "h", "app": "a", "timeQuality": "true", "msg": "m"}},
		{name: "PRI too large", line: "<192>1 - - - - - -", reject: "PRI"},
		{name: "leading zero in PRI", line: "<01>1 - - - - - -", reject: "PRI"},
		{name: "BSD line", line: "<34>Oct 11 22:14:15 mymachine su: 'su root' failed", reject: "version"},
		{name: "unterminated SD", line: `<14>1 - h a - - [w@1 a="b"`, reject: "unterminated"},
		{name: "unquoted SD value", line: `<14>1 - h a - - [w@1 a=b]`, reject: "NAME"},
		{name: "double space", line: `<14>1 -  h a - - -`, reject: "empty"},
		{name: "short header", line: `<14>1 - h a`, reject: "structured data"},
		{name: "bad timestamp", line: `<14>1 yesterday h a - - -`, reject: "RFC 3339"},
	})
}

// The examples in RFC 3164 section 5.4, typed from memory (not quoted from a
// copy).
func TestRFC3164Examples(t *testing.T) {
	runParseCases(t, &RFC3164{}, []parseCase{
		{name: "example 1",
			line: "<34>Oct 11 22:14:15 mymachine su: 'su root' failed for lonvick on /dev/pts/8",
			// RFC 3164 5.4: facility 4, severity 2, HOSTNAME mymachine, TAG su.
			want: map[string]string{"facility": "auth", "severity": "crit", "time": "Oct 11 22:14:15",
				"host": "mymachine", "app": "su", "msg": "'su root' failed for lonvick on /dev/pts/8"}},
		{name: "example 2: space-padded day, no TAG",
			line: "<13>Feb  5 17:32:18 10.0.0.99 Use the BFG!",
			// RFC 3164 5.4: facility 1 (user), severity 5 (notice), host
			// 10.0.0.99; the message has no TAG, so it stays whole.
			want: map[string]string{"facility": "user", "severity": "notice", "time": "Feb  5 17:32:18",
				"host": "10.0.0.99", "msg": "Use the BFG!"}},
		// RFC 3164 5.4's fourth example puts a year first; the RFC shows it
		// as a message a relay must treat as having no valid TIMESTAMP.
		{name: "example 4: year before the month",
			line:   "<0>1990 Oct 22 10:52:01 TZ-6 scapegoat.dmz.example.org 10.1.2.3 sched[0]: That's All Folks!",
			reject: "timestamp"},
		{name: "no PRI, with pid",
			line: "Mar  2 06:00:01 glasshouse-7 misting[2211]: valve 3 open for 40s",
			want: map[string]string{"time": "Mar  2 06:00:01", "host": "glasshouse-7", "app": "misting",
				"pid": "2211", "msg": "valve 3 open for 40s"}},
		{name: "RFC 3339 timestamp",
			line: "2025-03-02T06:00:01.5+01:00 glasshouse-7 fan-ctl: duty 40%",
			want: map[string]string{"time": "2025-03-02T06:00:01.5+01:00", "host": "glasshouse-7", "app": "fan-ctl", "msg": "duty 40%"}},
		{name: "host only", line: "Mar  2 06:00:01 glasshouse-7",
			want: map[string]string{"time": "Mar  2 06:00:01", "host": "glasshouse-7"}},
		{name: "empty message after tag", line: "Mar  2 06:00:01 gh misting:",
			want: map[string]string{"time": "Mar  2 06:00:01", "host": "gh", "app": "misting"}},
		{name: "no host", line: "Mar  2 06:00:01", reject: "host"},
		{name: "bad month", line: "Mzr  2 06:00:01 gh x: y", reject: "timestamp"},
	})
}
