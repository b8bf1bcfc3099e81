package ingest

import (
	"fmt"
	"strings"
	"testing"
)

// TestRedactFieldNamesHoldingData: under --redact, the parts of a name
// that hold data are hashed like values, names that look like names stay.
// The examples are this test's own.
func TestRedactFieldNamesHoldingData(t *testing.T) {
	n := newNames()
	hash := func(s string) string { return "~" + strings.Repeat("H", 16) }
	for _, c := range []struct{ in, want string }{
		{"http.status", "http.status"},
		{"user_agent", "user_agent"},
		{"@timestamp", "@timestamp"},
		// Dots cannot tell an address from the path around it: the whole
		// dotted run around the @ goes.
		{"sessions.wren.holloway@quaymail.test.state", "~HHHHHHHHHHHHHHHH"},
		{"peers.10.4.0.32.rtt", "peers.~HHHHHHHHHHHHHHHH.rtt"},
		{"conn.fe80::1ff:fe23:4567:890a", "conn.~HHHHHHHHHHHHHHHH"},
		{"jobs.3f2504e0-4f89-11d3-9a0c-0305e82c3301.ms", "jobs.~HHHHHHHHHHHHHHHH.ms"},
		{"accounts.739152.balance", "accounts.~HHHHHHHHHHHHHHHH.balance"},
		{"grants.tk7f3a9c2e81b4d6", "grants.~HHHHHHHHHHHHHHHH"},
		{"v2.http2", "v2.http2"},
	} {
		if got := n.redact(c.in, hash); got != c.want {
			t.Errorf("%s: %s, want %s", c.in, got, c.want)
		}
	}
	// An object keyed by data: once it has more than manyKeys distinct
	// keys, each of them is hashed.
	for i := 0; i <= manyKeys; i++ {
		n.redact(fmt.Sprintf("quota.skipper%c.used", 'a'+i), hash)
	}
	if got := n.redact("quota.skipperz.used", hash); got != "quota.~HHHHHHHHHHHHHHHH.used" {
		t.Errorf("a key of an object with many keys: %s", got)
	}
	if got := n.redact("quota.skippera.used", hash); got != "quota.~HHHHHHHHHHHHHHHH.used" {
		t.Errorf("an earlier key of an object with many keys, seen again: %s", got)
	}
}
