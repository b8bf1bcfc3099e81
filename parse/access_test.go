package parse

import "testing"

func TestAccess(t *testing.T) {
	// The common-format line is the example in the Apache HTTP Server
	// documentation, "Log Files", Common Log Format (from memory); the
	// combined line is the same with that page's referer and agent.
	common := map[string]string{"host": "127.0.0.1", "ident": "-", "user": "frank",
		"time": "10/Oct/2000:13:55:36 -0700", "method": "GET", "path": "/apache_pb.gif",
		"protocol": "HTTP/1.0", "status": "200", "bytes": "2326"}
	combined := map[string]string{"referer": "http://www.example.com/start.html",
		"agent": "Mozilla/4.08 [en] (Win98; I ;Nav)"}
	for k, v := range common {
		combined[k] = v
	}
	runParseCases(t, &Access{}, []parseCase{
		{name: "common", line: `127.0.0.1 - frank [10/Oct/2000:13:55:36 -0700] "GET /apache_pb.gif HTTP/1.0" 200 2326`, want: common},
		{name: "combined", line: `127.0.0.1 - frank [10/Oct/2000:13:55:36 -0700] "GET /apache_pb.gif HTTP/1.0" 200 2326 "http://www.example.com/start.html" "Mozilla/4.08 [en] (Win98; I ;Nav)"`, want: combined},
		{name: "escaped quote in agent",
			line: `10.4.0.9 - - [02/Mar/2025:06:00:00 +0000] "POST /v1/readings HTTP/1.1" 204 - "-" "probe \"gh\" 2.1"`,
			want: map[string]string{"host": "10.4.0.9", "ident": "-", "user": "-", "time": "02/Mar/2025:06:00:00 +0000",
				"method": "POST", "path": "/v1/readings", "protocol": "HTTP/1.1", "status": "204", "bytes": "-",
				"referer": "-", "agent": `probe "gh" 2.1`}},
		{name: "unclosed agent quote", line: `10.4.0.9 - - [02/Mar/2025:06:00:00 +0000] "GET / HTTP/1.1" 200 5 "-" "probe 2.1`, reject: "unclosed quote in the agent"},
		{name: "empty request", line: `10.4.0.9 - - [02/Mar/2025:06:00:00 +0000] "-" 408 -`, reject: "broken request"},
		{name: "request with a space in the path", line: `10.4.0.9 - - [02/Mar/2025:06:00:00 +0000] "GET /a b HTTP/1.1" 200 5`, reject: "broken request"},
		{name: "unclosed request", line: `10.4.0.9 - - [02/Mar/2025:06:00:00 +0000] "GET / HTTP/1.1 200 5`, reject: "unclosed quote in the request"},
		{name: "status not digits", line: `10.4.0.9 - - [02/Mar/2025:06:00:00 +0000] "GET / HTTP/1.1" OK 5`, reject: "status"},
		{name: "no time", line: `10.4.0.9 - - "GET / HTTP/1.1" 200 5`, reject: "time"},
		{name: "trailing text", line: `10.4.0.9 - - [02/Mar/2025:06:00:00 +0000] "GET / HTTP/1.1" 200 5 "-" "a" extra`, reject: "after the agent"},
		{name: "not an access log", line: `level=info msg=hello`, reject: "HOST IDENT USER"},
	})
}

func TestAccessTime(t *testing.T) {
	// 10/Oct/2000:13:55:36 -0700 is 2000-10-10T20:55:36Z, 971211336 s after
	// the epoch (date -d '2000-10-10T20:55:36Z' +%s).
	var rec Record
	rec.AddString("time", "10/Oct/2000:13:55:36 -0700")
	var tf TimeFinder
	got, ok := tf.Find(&rec)
	if !ok || got != 971211336e9 {
		t.Fatalf("time = %d, %v; want 971211336e9", got, ok)
	}
}
