package ingest

import (
	"fmt"
	"strings"
	"testing"
)

// Process ids, ids and epoch times get no ~log bucket however many values
// they have; a latency does. --template forces a template on a field the
// rules would pass over.
func TestNoBucketsOnIDs(t *testing.T) {
	var b strings.Builder
	for i := 0; i < 200; i++ {
		fmt.Fprintf(&b, "ts=%d pid=%d berth_id=%d size=%d code=%s\n", 1773454269+i*7, 1000+i*13, 5000+i*31, 10+i*i%9973, []string{"a", "b", "c", "d", "e"}[i%5])
	}
	s := ingestText(t, Config{Templates: []string{"code"}}, b.String())
	for _, n := range []string{"ts~log", "pid~log", "berth_id~log"} {
		if s.Index(n) >= 0 {
			t.Errorf("companion %s made", n)
		}
	}
	if s.Index("size~log") < 0 {
		t.Error("no size~log")
	}
	if s.Index("code~template") < 0 {
		t.Error("--template code made no code~template")
	}
}

// A group's records are counted under one value although its text changes
// as later messages widen it; the snapshot shows the id with the current
// text.
func TestTemplateIDStable(t *testing.T) {
	var b strings.Builder
	for i := 0; i < 300; i++ {
		// The fifth word varies only from line 100 on: the text widens.
		who := "ops"
		if i >= 100 {
			who = []string{"ops", "pilot", "warden"}[i%3]
		}
		fmt.Fprintf(&b, "zone=north msg=\"crane %d moved to berth by %s today\"\n", i%9, who)
	}
	s := ingestText(t, Config{}, b.String())
	f := s.Fields[s.Index("msg~template")]
	if f.Distinct != 1 || f.Top[0].Count != 300 || f.Top[0].Value != "#1 crane <num> moved to berth by <*> today" {
		t.Errorf("template values %+v (distinct %d)", f.Top, f.Distinct)
	}
}
