package model

// TimelineBook keeps what a screen saw change, frame after frame, after it
// has left the window: each broken rule, flagged shift, field gone (seen in
// an earlier frame, in no record of the window now) and field new (absent
// from the first frame noted, present later), with the first and last
// frame it was seen in. A finding seen again after a frame without it is
// a new entry. At most TimelineMax entries are kept, the oldest dropped.
type TimelineBook struct {
	entries []TimelineEntry
	// last is the note number each entry was last seen at; seen the
	// fields ever present; first the fields of the first note.
	last  []int
	note  int
	seen  map[string]bool
	first map[string]bool
	// Examples of broken rules: given and target values, by entry.
	examples []RuleBreak
}

// Note records the findings of s, seen at the newest record, at.
func (b *TimelineBook) Note(s *Snapshot, at Trace) {
	if s == nil || s.Records == 0 {
		return
	}
	b.note++
	if b.seen == nil {
		b.seen, b.first = map[string]bool{}, map[string]bool{}
	}
	present := map[string]bool{}
	for i := range s.Fields {
		f := &s.Fields[i]
		if f.Present > 0 {
			present[f.Name] = true
			if b.note == 1 {
				b.first[f.Name] = true
			} else if !b.first[f.Name] && f.Synthetic == nil {
				b.mark(TimelineNew, f.Name, "", f.Present, at, RuleBreak{})
			}
			b.seen[f.Name] = true
		}
	}
	for name := range b.seen {
		if !present[name] {
			b.mark(TimelineGone, name, "", 0, at, RuleBreak{})
		}
	}
	if ch := s.Changes; ch != nil {
		for _, r := range ch.Broken {
			ex := RuleBreak{}
			if len(r.Examples) > 0 {
				ex = r.Examples[0]
			}
			b.mark(TimelineBroken, r.Target, r.Given, r.Violations, at, ex)
		}
		for _, sh := range ch.Shifts {
			if sh.Flagged {
				b.mark(TimelineShift, sh.Field, "", s.Records, at, RuleBreak{})
			}
		}
	}
}

// mark extends the entry of this finding seen at the last note, or starts
// one.
func (b *TimelineBook) mark(kind, field, given string, n int, at Trace, ex RuleBreak) {
	for i := len(b.entries) - 1; i >= 0; i-- {
		e := &b.entries[i]
		if e.Kind != kind || e.Field != field || e.Given != given {
			continue
		}
		if b.last[i] >= b.note-1 {
			e.Last, e.Count, b.last[i] = at, max(e.Count, n), b.note
			if ex.GivenValue != "" {
				b.examples[i] = ex
			}
			return
		}
		break
	}
	b.entries = append(b.entries, TimelineEntry{Kind: kind, Field: field, Given: given, First: at, Last: at, Count: n})
	b.last = append(b.last, b.note)
	b.examples = append(b.examples, ex)
	if len(b.entries) > TimelineMax {
		b.entries, b.last, b.examples = b.entries[1:], b.last[1:], b.examples[1:]
	}
}

// Entries returns the entries, oldest first (a copy).
func (b *TimelineBook) Entries() []TimelineEntry {
	return append([]TimelineEntry{}, b.entries...)
}

// Current says whether entry i was seen in the latest note.
func (b *TimelineBook) Current(i int) bool { return i < len(b.last) && b.last[i] == b.note }

// Example is a broken rule entry's newest example (zero when none).
func (b *TimelineBook) Example(i int) RuleBreak {
	if i < len(b.examples) {
		return b.examples[i]
	}
	return RuleBreak{}
}
