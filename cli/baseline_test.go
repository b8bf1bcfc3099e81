package cli

import (
	"encoding/json"
	"strings"
	"testing"

	"bitsift/demo"
)

// TestReplayWatchBaselineJSON: replay and watch take --baseline and, off a
// terminal, print -o json with the broken rule of the demo incident
// (route determines upstream until hosts qs-api-07/08 misroute, package
// demo); a baseline of another stream is refused.
func TestReplayWatchBaselineJSON(t *testing.T) {
	if testing.Short() {
		t.Skip("reads 160,000 demo lines")
	}
	g := demo.New(1, 0)
	lines := make([]string, 100_000)
	for i := range lines {
		lines[i] = string(g.Append(nil)) + "\n"
	}
	code, base, errs := run(t, strings.Join(lines[:60_000], ""), "report", "-o", "json", "-")
	if code != 0 {
		t.Fatalf("baseline: exit %d: %s", code, errs)
	}
	bp := write(t, "base.json", []byte(base))
	inc := write(t, "incident.jsonl", []byte(strings.Join(lines[70_000:100_000], "")))
	for _, args := range [][]string{
		{"replay", "-o", "json", "--baseline", bp, inc},
		{"watch", "--from-start", "--idle", "1s", "-o", "json", "--baseline", bp, inc},
	} {
		code, out, errs := run(t, "", args...)
		if code != 0 {
			t.Fatalf("%v: exit %d: %s", args, code, errs)
		}
		var r struct {
			Baseline *struct{ Source string }
			Broken   []struct{ Target, Given string }
		}
		if err := json.Unmarshal([]byte(out), &r); err != nil {
			t.Fatalf("%v: %v", args, err)
		}
		if r.Baseline == nil || len(r.Broken) == 0 || r.Broken[0].Target != "upstream" || r.Broken[0].Given != "route" {
			t.Errorf("%v: baseline %+v broken %+v", args[0], r.Baseline, r.Broken)
		}
	}
	other := write(t, "other.jsonl", []byte(strings.Repeat(`{"colour":"teal","knots":12}`+"\n", 50)))
	code, _, errs = run(t, "", "replay", "--baseline", bp, other)
	if code != ExitUsage || !strings.Contains(errs, "shares 0 of its") {
		t.Errorf("unrelated baseline: exit %d (%s), want %d and a refusal", code, errs, ExitUsage)
	}
}
