package model

import (
	"fmt"
	"math"
	"testing"
)

// TestSurpriseMutualPredictors: a level and a message template that each
// fix the other (a bijection, so each is the other's best predictor), and
// a thread independent of both. Against the window the four ERROR records
// among 196 INFO ones are the most surprising, at the surprisal of the
// forest's model worked out by hand: level a root, −log2(4/200); the
// template given the level, 0; the thread a root, −log2(50/200) = 2. Each
// field priced by its own best predictor gave every record 2 bits and
// ERROR no place at all.
func TestSurpriseMutualPredictors(t *testing.T) {
	m := New(Options{})
	errors := map[int]bool{10: true, 61: true, 112: true, 163: true} // one per thread
	for i := 0; i < 200; i++ {
		level, tmpl := "INFO", "berth <num> assigned"
		if errors[i] {
			level, tmpl = "ERROR", "planning failed for vessel <num>"
		}
		addRow(m, []string{"level", level, "tmpl", tmpl, "thread", fmt.Sprintf("io-%d", i%4)}, i)
	}
	s := m.Snapshot(SnapshotOptions{Deep: true, Surprising: 6})
	if s.Fields[s.Index("level")].BestGiven != "tmpl" || s.Fields[s.Index("tmpl")].BestGiven != "level" {
		t.Fatalf("best predictors %q and %q, want each other", s.Fields[s.Index("level")].BestGiven, s.Fields[s.Index("tmpl")].BestGiven)
	}
	sur := s.Changes.Surprising
	want := -math.Log2(4.0/200) + 2
	for i, r := range sur[:4] {
		if r.Record["level"] != "ERROR" || math.Abs(r.Bits-want) > 1e-9 {
			t.Errorf("#%d: line %d, %s, %.9f bits, want an ERROR record at %.9f", i, r.Line, r.Record["level"], r.Bits, want)
		}
	}
	if rest := -math.Log2(196.0/200) + 2; len(sur) < 5 || math.Abs(sur[4].Bits-rest) > 1e-9 {
		t.Errorf("#4: %+v, want an INFO record at %.9f bits", sur[4], rest)
	}
}
