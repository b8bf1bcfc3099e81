package cli

import (
	"encoding/json"
	"os/exec"
	"strings"
	"testing"
)

// jqCount counts the lines of path that jq's filter selects: the recount
// is jq's, not bitsift's.
func jqCount(t *testing.T, path, filter string) int {
	t.Helper()
	out, err := exec.Command("jq", "-c", "select("+filter+")", path).Output()
	if err != nil {
		t.Fatalf("jq %s: %v", filter, err)
	}
	return strings.Count(string(out), "\n")
}

// TestNarrowAgreesWithJQ: --where (=, !=, ~, !~, several), --since/--until
// and --by count the same records as jq selecting the same subset of the
// demo stream.
func TestNarrowAgreesWithJQ(t *testing.T) {
	if _, err := exec.LookPath("jq"); err != nil {
		t.Skip("jq not installed (apt-get install jq; CI installs it)")
	}
	path := write(t, "quay.jsonl", demoLines(20_000))
	report := func(args ...string) (records, filtered int64, groups map[string]int) {
		t.Helper()
		code, out, errs := run(t, "", append([]string{"report", "-o", "json"}, append(args, path)...)...)
		if code != 0 {
			t.Fatalf("%v: exit %d: %s", args, code, errs)
		}
		var r struct {
			Records  int64
			Filtered int64
			Groups   []struct {
				Value   string
				Records int
			}
		}
		if err := json.Unmarshal([]byte(out), &r); err != nil {
			t.Fatal(err)
		}
		groups = map[string]int{}
		for _, g := range r.Groups {
			groups[g.Value] = g.Records
		}
		return r.Records, r.Filtered, groups
	}
	for _, c := range []struct {
		args []string
		jq   string
	}{
		{[]string{"--where", "host=qs-api-07"}, `.host == "qs-api-07"`},
		{[]string{"--where", "upstream!=ledger"}, `.upstream != "ledger"`},
		{[]string{"--where", "route~^/v1/tickets"}, `.route | test("^/v1/tickets")`},
		{[]string{"--where", "route!~berths", "--where", "status=200"}, `(.route | test("berths") | not) and .status == 200`},
		{[]string{"--where", "refund_reason~."}, `.refund_reason != null`},
		// A field bitsift makes: latency_ms~log's bucket [18,32) holds
		// 18 <= latency_ms < 32 (companion/buckets.go: edges 10, 18, 32, 56).
		{[]string{"--where", "latency_ms~log=[18,32)"}, `.latency_ms >= 18 and .latency_ms < 32`},
		{[]string{"--since", "2026-03-14T06:00:03Z", "--until", "2026-03-14 06:00:07.5"}, `.ts >= "2026-03-14T06:00:03" and .ts < "2026-03-14T06:00:07.5"`},
		{[]string{"--where", "level=error", "--since", "2026-03-14T06:00:05Z"}, `.level == "error" and .ts >= "2026-03-14T06:00:05"`},
	} {
		want := jqCount(t, path, c.jq)
		got, filtered, _ := report(c.args...)
		if got != int64(want) || got+filtered != 20_000 {
			t.Errorf("%v: %d records, %d left out; jq counts %d", c.args, got, filtered, want)
		}
	}
	_, _, groups := report("--by", "zone", "--where", "method=POST")
	if len(groups) != 3 {
		t.Errorf("--by zone: groups %v, want 3", groups)
	}
	for zone, n := range groups {
		if want := jqCount(t, path, `.zone == "`+zone+`" and .method == "POST"`); n != want {
			t.Errorf("--by zone, %s: %d records, jq counts %d", zone, n, want)
		}
	}
	if code, _, errs := run(t, "", "report", "--where", "nonsense", path); code != ExitUsage || !strings.Contains(errs, "FIELD=VALUE") {
		t.Errorf("a bad --where: exit %d (%s)", code, errs)
	}
}
