package model

import "testing"

// TestTimelineBook: a rule broken over two frames is one entry from the
// first to the last; seen again after a clean frame it is a second; a
// field that stops being seen is gone, one that comes late is new.
func TestTimelineBook(t *testing.T) {
	snap := func(broken bool, fields ...string) *Snapshot {
		s := &Snapshot{Records: 10, Changes: &Changes{}}
		for _, f := range fields {
			s.Fields = append(s.Fields, FieldStats{Name: f, Present: 10})
		}
		if broken {
			s.Changes.Broken = []BrokenRule{{Target: "berth", Given: "vessel", Violations: 3}}
		}
		return s
	}
	var b TimelineBook
	b.Note(snap(false, "vessel", "berth", "pilot"), Trace{Line: 100})
	b.Note(snap(true, "vessel", "berth", "pilot"), Trace{Line: 200})
	b.Note(snap(true, "vessel", "berth", "pilot"), Trace{Line: 300})
	b.Note(snap(false, "vessel", "berth", "tug"), Trace{Line: 400})
	b.Note(snap(true, "vessel", "berth", "tug"), Trace{Line: 500})
	type row struct {
		kind, field string
		first, last int64
	}
	want := []row{
		{TimelineBroken, "berth", 200, 300},
		{TimelineNew, "tug", 400, 500},
		{TimelineGone, "pilot", 400, 500},
		{TimelineBroken, "berth", 500, 500},
	}
	got := b.Entries()
	if len(got) != len(want) {
		t.Fatalf("entries %+v", got)
	}
	for i, w := range want {
		g := got[i]
		if g.Kind != w.kind || g.Field != w.field || g.First.Line != w.first || g.Last.Line != w.last {
			t.Errorf("entry %d: %+v, want %+v", i, g, w)
		}
	}
	if !b.Current(3) || b.Current(0) {
		t.Error("current entries wrong")
	}
}
