package model

import (
	"encoding/json"
	"fmt"
	"testing"
)

// TestProfileRulesHashedGiven: a host field that looked like an identifier
// over the first records (every host new) has its values kept as hashes
// from then on; later it repeats, and fixes the status (the old code made
// the rule status ← host, every host listed as ""). The profile lists no
// rule given host, and two models fed the same records give the same
// profile, byte for byte (the mapping's order once came from a Go map).
func TestProfileRulesHashedGiven(t *testing.T) {
	build := func() ([]byte, *Profile) {
		m := New(Options{})
		for i := 0; i < 120000; i++ {
			h := i % 300
			if i < 6000 {
				h = 1000 + i // unique: the host is an identifier, then hashed
			}
			addRow(m, []string{"host", fmt.Sprintf("10.0.%d.%d", h/250, h%250), "agent", fmt.Sprintf("probe/%d", h%5),
				"status", []string{"200", "200", "404"}[i%3]}, i)
		}
		m.Flush()
		s := m.Snapshot(SnapshotOptions{Profile: true})
		b, err := json.Marshal(s.Profile)
		if err != nil {
			t.Fatal(err)
		}
		return b, s.Profile
	}
	a, p := build()
	if s := p.Field("host"); s == nil {
		t.Fatal("no host field")
	}
	for _, r := range p.Rules {
		if r.Given == "host" {
			t.Errorf("rule %s given host, whose values are hashes: %+v", r.Target, r.Map[:min(3, len(r.Map))])
		}
	}
	for range 3 {
		if b, _ := build(); string(b) != string(a) {
			t.Fatal("two models fed the same records give different profiles")
		}
	}
}
