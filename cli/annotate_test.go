package cli

import (
	"encoding/json"
	"strings"
	"testing"
)

// annotate writes one object per line, in order (a rejected line in its
// place), with the template's id and final text.
func TestAnnotateCommand(t *testing.T) {
	log := "Mar 14 02:11:09 quay-gw-2 gated(pam_unix)[4412]: session opened for user ops by (uid=0)\n" +
		"not a syslog line at all\n" +
		"Mar 14 02:11:10 quay-gw-2 gated(pam_unix)[4413]: session opened for user pilot by (uid=0)\n"
	code, out, errs := run(t, strings.Repeat(log, 10), "annotate", "-")
	if code != ExitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	lines := strings.Split(strings.TrimSpace(out), "\n")
	if len(lines) != 30 {
		t.Fatalf("%d objects for 30 lines", len(lines))
	}
	var first, second, third struct {
		File      string `json:"file"`
		Line      int64  `json:"line"`
		Rejected  string `json:"rejected"`
		Templates map[string]struct {
			ID   int    `json:"id"`
			Text string `json:"text"`
		} `json:"templates"`
		Fields map[string]string `json:"fields"`
	}
	for i, v := range []any{&first, &second, &third} {
		if err := json.Unmarshal([]byte(lines[i]), v); err != nil {
			t.Fatal(err)
		}
	}
	if first.File != "-" || first.Line != 1 || second.Line != 2 || second.Rejected == "" || third.Line != 3 {
		t.Errorf("order or file: %s", strings.Join(lines[:3], "\n"))
	}
	a, c := first.Templates["msg"], third.Templates["msg"]
	if a.ID == 0 || a.ID != c.ID || a.Text != "session opened for user <*> by (uid=<num>)" || first.Fields["app"] != "gated(pam_unix)" {
		t.Errorf("templates %+v %+v, fields %v", a, c, first.Fields)
	}
}

// A run that reads no record exits 2 and shows the first lines it could
// not read with a --pattern to start from; a forced format that fits badly
// warns.
func TestUnreadableRunHelps(t *testing.T) {
	code, _, errs := run(t, "berth twelve is clear\nthe tide turns at noon\n", "report", "-")
	if code != ExitUnreadable || !strings.Contains(errs, "line 1: berth twelve is clear") || !strings.Contains(errs, "--pattern '^(?P<") {
		t.Errorf("exit %d, stderr:\n%s", code, errs)
	}
	code, _, errs = run(t, "berth twelve is clear\nthe tide turns at noon\n", "report", "--format", "logfmt", "-")
	if code != ExitUnreadable || !strings.Contains(errs, "warning: --format logfmt fits these lines badly") {
		t.Errorf("exit %d, stderr:\n%s", code, errs)
	}
}

// Under --redact annotate keeps no raw copy of standard input, and writes
// no raw value of a redacted field.
func TestAnnotateRedact(t *testing.T) {
	if code, _, _ := run(t, "a=1 b=2\n", "annotate", "--redact", "-"); code != ExitUsage {
		t.Errorf("annotate --redact - exit %d, want %d", code, ExitUsage)
	}
	p := write(t, "quay.log", []byte(strings.Repeat("ship=Tern berth=12 msg=\"moored at berth 12\"\n", 20)))
	code, out, errs := run(t, "", "annotate", "--redact", p)
	if code != ExitOK || strings.Contains(out, "Tern") || strings.Contains(out, "moored") {
		t.Errorf("exit %d (%s), output:\n%s", code, errs, out)
	}
}
