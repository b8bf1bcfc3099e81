package cli

import (
	"encoding/json"
	"fmt"
	"strings"
	"testing"
)

// The planted secrets: an e-mail address, a token and a number, written
// into values, into free text that gets a template, into a number field
// that gets buckets and (for --redact) into field names.
const (
	plantMail   = "wren.holloway@quaymail.test"
	plantToken  = "tk7f3a9c2e81b4d6"
	plantNumber = "739152"
)

// privacyLog is a JSON log of a harbour's berth bookings with the secrets
// planted; names adds fields whose names hold them.
func privacyLog(names bool) []byte {
	var b strings.Builder
	verbs := []string{"booked", "released", "moved", "held"}
	for i := 0; i < 400; i++ {
		user, token, fee := fmt.Sprintf("skipper%d@quaymail.test", i%37), fmt.Sprintf("tk%014x", i*7919), fmt.Sprint(1000+i*37)
		if i%5 == 0 {
			user, token, fee = plantMail, plantToken, plantNumber
		}
		msg := fmt.Sprintf("berth %d %s for %s with %s fee %s", i%12, verbs[i%4], user, token, fee)
		fmt.Fprintf(&b, `{"berth":%d,"user":%q,"token":%q,"fee":%s,"msg":%q`, i%12, user, token, fee, msg)
		if names {
			fmt.Fprintf(&b, `,"sessions":{%q:{"state":"open"},"skipper%d@quaymail.test":{"state":"shut"}},"grants":{%q:1},"limits":{%q:%d}`,
				plantMail, i%23, plantToken, plantNumber, i%3)
		}
		b.WriteString("}\n")
		if i == 7 {
			fmt.Fprintf(&b, "{\"user\":%q,\"token\":%q,\"fee\":%s broken\n", plantMail, plantToken, plantNumber)
		}
	}
	return []byte(b.String())
}

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
		{[]string{"--redact-fields", "user,token,fee,msg"}, false},
	} {
		p := write(t, "berths.jsonl", privacyLog(c.names))
		for _, o := range outputs {
			args := append([]string{o.cmd, o.flag, o.value}, c.args...)
			code, out, errs := run(t, "", append(args, p)...)
			if code != 0 && code != 3 {
				t.Errorf("%v: exit %d: %s", args, code, errs)
			}
			for _, secret := range []string{plantMail, plantToken, plantNumber, "wren", "holloway"} {
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
