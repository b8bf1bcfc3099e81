package model

import (
	"fmt"
	"slices"
	"testing"

	"bitsift/parse"
)

// TestTopTies: the top values are the first of every value sorted by
// count, then text, whatever order the values came in; with many values
// tied at the cut, those of smaller text are kept (the running cut used to
// pass over a value tied with the last kept one).
func TestTopTies(t *testing.T) {
	m := New(Options{Window: Window{Kind: WindowAll}})
	var rec parse.Record
	var want []ValueCount
	// 60 values, ids in reverse text order, counts 1 to 3 with many ties.
	for i := 59; i >= 0; i-- {
		v := fmt.Sprintf("berth-%02d", i)
		c := 1 + i%3
		for range c {
			rec.Reset()
			rec.AddString("berth", v)
			m.Add(&rec, 0, 0)
		}
		want = append(want, ValueCount{Value: v, Count: c})
	}
	slices.SortFunc(want, func(a, b ValueCount) int {
		if a.Count != b.Count {
			return b.Count - a.Count
		}
		if a.Value < b.Value {
			return -1
		}
		return 1
	})
	got := m.top(m.fields[0], 10)
	if !slices.Equal(got, want[:10]) {
		t.Errorf("top 10:\n got %v\nwant %v", got, want[:10])
	}
}
