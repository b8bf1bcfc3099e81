package parse

import (
	"bytes"
	"fmt"
	"testing"
	"time"
)

// FuzzHeader learns a header from the seed lines, then reads arbitrary
// lines with it (and learns from the fuzzed line alone).
func FuzzHeader(f *testing.F) {
	h := &Header{}
	h.Learn(headerLines)
	for _, l := range headerLines {
		f.Add(l)
	}
	f.Fuzz(func(t *testing.T, line []byte) {
		fuzzParse(t, h, line)
		one := &Header{}
		one.Learn([][]byte{line})
		fuzzParse(t, one, line)
	})
}

// Lines of an invented quay, one per header shape (from memory of the
// shapes such services write; no copy at hand).
var headerLines = [][]byte{
	[]byte("2026-03-14 02:11:09,417 WARN [berth-io-3] quay.berth.Planner: berth 12 over capacity (41 of 40)"),
	[]byte("260314 021109 5531 INFO quay.ledger.Posting: posted batch 8812 (413 rows)"),
	[]byte("26/03/14 02:11:09 INFO tide.Cache: evicted 212 entries"),
	[]byte("2026-03-14 02:11:09,417 - WARN  [sync-7:BerthSync@212] - resync of berth 12 took 4100 ms"),
	[]byte("03-14 02:11:09.417  1702  1840 I QuayPower: shore power on at berth 12"),
	[]byte("20260314-2:11:09:417|Gate_Step|30002312|gate 4 opened for truck 771"),
	[]byte("[03.14 02:11:09] crane-agent.exe - relay7.quay.example:443 open through proxy 10.0.0.1:8080 HTTPS"),
	[]byte("- 1773454269 2026.03.14 R12-M0-N4 2026-03-14-02.11.09.417312 R12-M0-N4 RAS KERNEL INFO parity error corrected"),
	[]byte(`api.log.1 2026-03-14 02:11:09.417 2931 INFO quay.api [req-3f2a - - -] 10.1.4.7 "GET /v2/berths HTTP/1.1" status: 200 len: 1893`),
	[]byte("2026-03-14 02:11:09, Info                  CBS    Loaded servicing stack v6.1 with core"),
	[]byte("[Sat Mar 14 02:11:09 2026] [error] [client 10.1.4.7] File does not exist: /srv/berths"),
}

// Each shape, learned from its own lines, gives the header's fields, a
// time every TimeFinder reads as 2026-03-14 02:11:09 (the wanted values
// are the lines' own text, read by eye), and the message.
func TestHeaderShapes(t *testing.T) {
	want := []map[string]string{
		{"time": "2026-03-14 02:11:09,417", "level": "WARN", "thread": "berth-io-3", "component": "quay.berth.Planner", "msg": "berth 12 over capacity (41 of 40)"},
		{"time": "260314 021109", "pid": "5531", "level": "INFO", "component": "quay.ledger.Posting", "msg": "posted batch 8812 (413 rows)"},
		{"time": "26/03/14 02:11:09", "level": "INFO", "component": "tide.Cache", "msg": "evicted 212 entries"},
		{"time": "2026-03-14 02:11:09,417", "level": "WARN", "thread": "sync-7:BerthSync@212", "msg": "resync of berth 12 took 4100 ms"},
		{"time": "03-14 02:11:09.417", "pid": "1702", "thread": "1840", "level": "I", "component": "QuayPower", "msg": "shore power on at berth 12"},
		{"time": "20260314-2:11:09:417", "component": "Gate_Step", "pid": "30002312", "msg": "gate 4 opened for truck 771"},
		{"time": "03.14 02:11:09", "component": "crane-agent.exe", "msg": "relay7.quay.example:443 open through proxy 10.0.0.1:8080 HTTPS"},
		{"time": "1773454269", "time_3": "2026-03-14-02.11.09.417312", "host": "R12-M0-N4", "level": "INFO", "msg": "parity error corrected"},
		{"tag": "api.log.1", "time": "2026-03-14 02:11:09.417", "pid": "2931", "level": "INFO", "component": "quay.api", "thread": "req-3f2a - - -"},
		{"time": "2026-03-14 02:11:09", "level": "Info", "component": "CBS", "msg": "Loaded servicing stack v6.1 with core"},
		{"time": "Sat Mar 14 02:11:09 2026", "level": "error", "client": "10.1.4.7", "msg": "File does not exist: /srv/berths"},
	}
	ref := func() time.Time { return time.Date(2026, 3, 20, 0, 0, 0, 0, time.UTC) }
	for i, l := range headerLines {
		h := &Header{}
		h.Learn([][]byte{l, l, l})
		var rec Record
		if err := h.Parse(l, &rec); err != nil {
			t.Errorf("%s: %v", l, err)
			continue
		}
		got := fieldsOf(&rec)
		for k, v := range want[i] {
			if got[k] != v {
				t.Errorf("%s\n  %s = %q, want %q (all: %v)", l, k, got[k], v, got)
			}
		}
		tf := TimeFinder{Now: ref}
		ts, ok := tf.Find(&rec)
		if !ok || tf.Key() != "time" {
			t.Errorf("%s: no time (%v)", l, got)
			continue
		}
		at := time.Unix(0, ts).UTC()
		if at.Format("01-02 15:04") != "03-14 02:11" {
			t.Errorf("%s: time %v", l, at)
		}
	}
}

// A trailing comma stays out of the time; bare words do not start a
// header; trailing key=value pairs become fields.
func TestHeaderDetails(t *testing.T) {
	h := &Header{}
	lines := [][]byte{
		[]byte("2026-03-14 02:11:09, Info CBS moored ship=Tern berth=12"),
		[]byte("2026-03-14 02:11:10, Info CBS cast off ship=Gull berth=3"),
	}
	h.Learn(lines)
	var rec Record
	if err := h.Parse(lines[0], &rec); err != nil {
		t.Fatal(err)
	}
	got := fieldsOf(&rec)
	if got["time"] != "2026-03-14 02:11:09" || got["ship"] != "Tern" || got["berth"] != "12" {
		t.Errorf("fields %v", got)
	}
	rec.Reset()
	if err := h.Parse([]byte("\tat quay.berth.Planner.plan(Planner.java:212)"), &rec); err == nil {
		t.Errorf("a line without the header's time read as %v", fieldsOf(&rec))
	}
	words := &Header{}
	words.Learn([][]byte{[]byte("just some words here"), []byte("and more words")})
	if words.Sniff([]byte("just some words here")) != 0 || !bytes.Equal([]byte(words.Slots()), []byte(" msg")) {
		t.Errorf("bare words learned a header: %q", words.Slots())
	}
}

// Tags with parentheses or spaces keep app and pid (lines from memory of
// PAM and desktop syslog lines; an invented quay).
func TestRFC3164Tags(t *testing.T) {
	for _, c := range []struct{ line, app, pid, msg string }{
		{"Mar 14 02:11:09 quay-gw-2 gated(pam_unix)[4412]: session opened for user ops by (uid=0)", "gated(pam_unix)", "4412", "session opened for user ops by (uid=0)"},
		{"Mar 14 02:11:09 quay-desk Quay Desk[212]: window shown", "Quay Desk", "212", "window shown"},
		{"Mar 14 02:11:09 quay-desk kernel: berth sensor 4 online", "kernel", "", "berth sensor 4 online"},
		{"Mar 14 02:11:09 quay-desk nothing like a tag here", "", "", "nothing like a tag here"},
	} {
		var rec Record
		if err := (&RFC3164{}).Parse([]byte(c.line), &rec); err != nil {
			t.Fatal(err)
		}
		got := fieldsOf(&rec)
		if got["app"] != c.app || got["pid"] != c.pid || got["msg"] != c.msg {
			t.Errorf("%s: %v", c.line, got)
		}
	}
}

// TestHeaderColours: each header shape with its level (or, lacking one,
// its first word) wrapped in ANSI colour codes, and an 8-bit colour and a
// reset around the message, reads as the plain line does, learned from
// coloured lines; a lone ESC stays in the message.
func TestHeaderColours(t *testing.T) {
	for _, l := range headerLines {
		var coloured []byte
		for _, word := range []string{" WARN ", " INFO ", " I ", " Info ", "[error]"} {
			if i := bytes.Index(l, []byte(word)); i >= 0 {
				coloured = append(append(append(append([]byte{}, l[:i]...), "\x1b[1;33m"...), word...), "\x1b[0m"...)
				coloured = append(coloured, l[i+len(word):]...)
				break
			}
		}
		if coloured == nil {
			coloured = append([]byte("\x1b[2m"), l...)
		}
		coloured = append(append(coloured, " \x1b[38;5;208mdone\x1b[m \x1b"...), 'x')
		plainLine := append(append([]byte{}, l...), " done \x1bx"...)
		h, hc := &Header{}, &Header{}
		h.Learn([][]byte{plainLine, plainLine})
		hc.Learn([][]byte{coloured, coloured})
		var want, got Record
		errW, errG := h.Parse(plainLine, &want), hc.Parse(coloured, &got)
		if (errW == nil) != (errG == nil) || fmt.Sprint(fieldsOf(&want)) != fmt.Sprint(fieldsOf(&got)) {
			t.Errorf("%q:\n  got  %v (%v)\n  want %v (%v)", coloured, fieldsOf(&got), errG, fieldsOf(&want), errW)
		}
		if hc.Sniff(coloured) != h.Sniff(plainLine) {
			t.Errorf("%q: sniffs %.2f, the plain line %.2f", coloured, hc.Sniff(coloured), h.Sniff(plainLine))
		}
	}
}
