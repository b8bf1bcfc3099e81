package cli

import (
	"encoding/json"
	"strings"
	"testing"

	"bitsift/internal/planted"
)

// The planted secrets and the log that holds them (package planted, shared
// with the screen's test in ui).
const (
	plantMail   = planted.Mail
	plantToken  = planted.Token
	plantNumber = planted.Number
)

var privacyLog = planted.Log

// TestRedactHidesPlantedSecretsEverywhere: under --redact, and under
// --redact-fields naming the fields that hold them, the planted e-mail,
// token and number appear in no output format, plan export, error message
// or companion field (a template keeps the words, a bucket the range).
func TestRedactHidesPlantedSecretsEverywhere(t *testing.T) {
	type output struct{ cmd, flag, value string }
	outputs := []output{
		{"report", "-o", "text"}, {"report", "-o", "json"}, {"report", "-o", "csv"},
		{"report", "-o", "markdown"}, {"report", "-o", "html"},
		{"plan", "-o", "text"}, {"plan", "-o", "json"}, {"plan", "-o", "html"},
		{"plan", "--emit", "jq"}, {"plan", "--emit", "otel"},
	}
	for _, c := range []struct {
		args  []string
		names bool
	}{
		{[]string{"--redact"}, true},
		{[]string{"--redact-fields", planted.Fields}, false},
	} {
		p := write(t, "berths.jsonl", privacyLog(c.names))
		for _, o := range outputs {
			args := append([]string{o.cmd, o.flag, o.value}, c.args...)
			code, out, errs := run(t, "", append(args, p)...)
			if code != 0 && code != 3 {
				t.Errorf("%v: exit %d: %s", args, code, errs)
			}
			for _, secret := range planted.Fragments {
				if strings.Contains(out, secret) || strings.Contains(errs, secret) {
					t.Errorf("%v: %q reached the output", args, secret)
				}
			}
			for _, companion := range []string{"fee~log", "msg~template"} {
				if strings.Contains(out, companion) {
					t.Errorf("%v: the companion %s of a redacted field was made", args, companion)
				}
			}
		}
	}
	// The plants are there to be found: without redaction each shows.
	p := write(t, "berths.jsonl", privacyLog(true))
	_, out, _ := run(t, "", "report", "-o", "json", p)
	for _, s := range []string{plantMail, plantToken, plantNumber, "fee~log", "msg~template"} {
		if !strings.Contains(out, s) {
			t.Errorf("without --redact %q is not in the report: the test plants nothing", s)
		}
	}
}

// TestWhereLeavesFilteredRecordsOut: a record left out by --where never
// reaches the model (lines = records + rejected + filtered), and under
// --redact nothing of it shows either.
func TestWhereLeavesFilteredRecordsOut(t *testing.T) {
	p := write(t, "berths.jsonl", privacyLog(false))
	code, out, errs := run(t, "", "report", "-o", "json", "--redact", "--where", "berth=3", p)
	if code != 0 && code != 3 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var r struct{ Records, Rejected, Lines, Filtered int }
	if err := json.Unmarshal([]byte(out), &r); err != nil {
		t.Fatal(err)
	}
	if r.Records+r.Rejected+r.Filtered != r.Lines || r.Filtered == 0 || r.Records == 0 {
		t.Errorf("records %d + rejected %d + filtered %d != lines %d", r.Records, r.Rejected, r.Filtered, r.Lines)
	}
	if strings.Contains(out, "skipper") || strings.Contains(out, plantMail) {
		t.Error("a raw value of a filtered record reached the output")
	}
}
