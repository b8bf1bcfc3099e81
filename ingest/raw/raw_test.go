package raw

import (
	"strings"
	"testing"
)

// TestRing: the keeper holds the newest lines, in order, within its
// caps, with their sources and numbers; a clone is independent; lines are
// found by (source, number) and newest first.
func TestRing(t *testing.T) {
	s := New(3)
	for i, l := range []string{"a", "", "b", "c", "d", "e"} {
		s.Put("f1", int64(i+1), []byte(l))
	}
	c := s.Clone()
	s.Put("f2", 1, []byte("f"))
	var got []string
	c.Each(func(l []byte) { got = append(got, string(l)) })
	if strings.Join(got, ",") != "c,d,e" {
		t.Errorf("clone holds %v, want c,d,e", got)
	}
	if l, ok := s.Line("f1", 5); !ok || string(l) != "d" {
		t.Errorf("line f1:5 = %q %v, want d", l, ok)
	}
	if _, ok := s.Line("f1", 4); ok {
		t.Error("line f1:4 (c) still found after it left")
	}
	if nw := s.Newest(2); len(nw) != 2 || string(nw[0].Text) != "e" || nw[1].Source != "f2" || nw[1].Num != 1 {
		t.Errorf("newest 2: %+v", nw)
	}
	s.Keep(1)
	got = nil
	s.Each(func(l []byte) { got = append(got, string(l)) })
	if strings.Join(got, ",") != "f" || s.bytes != 1 {
		t.Errorf("after Keep(1): %v (%d bytes)", got, s.bytes)
	}
	c.Add([]byte("g"))
	if c.Len() != 3 {
		t.Errorf("clone grew to %d lines", c.Len())
	}
}
