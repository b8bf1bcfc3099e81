package parse

import (
	"bufio"
	"encoding/json"
	"strconv"
	"strings"
	"testing"

	"bitsift/internal/datasets"
)

// syslog.json.gz (brimdata/zed-sample-data, zeek-json/syslog.json.gz,
// CC BY-SA 4.0; see ../shared/datasets/README.md) holds Zeek records of
// syslog packets: "message" is the RFC 5424 text after the <PRI>, and
// "facility" and "severity" are Zeek's own decoding of the PRI. Rebuilding
// the PRI from those fields (LOCAL0 = 16, so INFO gives <134>) makes full
// RFC 5424 lines; the parser must read every one, agree with Zeek on
// facility and severity, and find host and app where the message has them
// (the third and fourth words, split here independently with strings.Fields,
// and the CEE payload's own "source" where there is one).
func TestSyslogJSONDataset(t *testing.T) {
	rc, err := Open(datasets.Path(t, "syslog.json.gz"))
	if err != nil {
		t.Fatal(err)
	}
	defer rc.Close()
	sev := map[string]int{"EMERG": 0, "ALERT": 1, "CRIT": 2, "ERR": 3, "WARNING": 4, "NOTICE": 5, "INFO": 6, "DEBUG": 7}
	p := &RFC5424{}
	var rec Record
	n, cees, hosts := 0, 0, map[string]int{}
	sc := bufio.NewScanner(rc)
	sc.Buffer(nil, 1<<20)
	for sc.Scan() {
		var z struct{ Facility, Severity, Message string }
		if err := json.Unmarshal(sc.Bytes(), &z); err != nil {
			t.Fatal(err)
		}
		if z.Facility != "LOCAL0" {
			t.Fatalf("facility %q: the README says LOCAL0 throughout", z.Facility)
		}
		s, ok := sev[z.Severity]
		if !ok {
			t.Fatalf("unknown Zeek severity %q", z.Severity)
		}
		line := "<" + strconv.Itoa(16*8+s) + ">" + z.Message
		rec.Reset()
		if err := p.Parse([]byte(line), &rec); err != nil {
			t.Fatalf("line %d: %v: %.120s", n+1, err, line)
		}
		got := fieldsOf(&rec)
		words := strings.Fields(z.Message)
		want := map[string]string{"facility": "local0", "severity": strings.ToLower(z.Severity),
			"host": words[2], "app": words[3]}
		for k, v := range want {
			if got[k] != v {
				t.Fatalf("line %d: %s = %q, want %q", n+1, k, got[k], v)
			}
		}
		// Messages with a CEE payload name their source host in it too.
		if _, cee, ok := strings.Cut(got["msg"], "@cee: "); ok {
			var c struct{ Source string }
			if json.Unmarshal([]byte(cee), &c) == nil && c.Source != "" && c.Source != got["host"] {
				t.Fatalf("line %d: host %q, CEE source %q", n+1, got["host"], c.Source)
			}
			cees++
		}
		hosts[got["host"]]++
		n++
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	// EXPECTED.json: syslog.json.gz has 2,378 records.
	if n != 2378 {
		t.Errorf("%d lines, want 2378", n)
	}
	t.Logf("%d lines (%d with a CEE source), hosts %v", n, cees, hosts)
}
