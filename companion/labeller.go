package companion

import "bitsift/parse"

// Labelling off the owner goroutine. A Set applies its companions to each
// record in input order (Apply), because a template's group depends on the
// messages before it. Most of the work does not: a bucket is a function of
// its value alone, and so is a message's masked text, the larger part of
// finding its template. A Labeller does that part on a goroutine of its own
// (the parallel parse workers in package ingest): it appends every
// companion field, a bucket's label as it is and a template's masked text
// in place of its id. The Set's Resolve then finishes each record in input
// order, turning the masked texts into group ids (and recording or
// replaying them). Labeller.Apply followed by Set.Resolve leaves a record
// exactly as Set.Apply does, and the Set's groups as Apply makes them
// (TestLabellerMatchesApply).

// Labeller appends a Set's companion fields to records on a goroutine of
// its own. It shares nothing with the Set, so each goroutine needs its own.
type Labeller struct {
	list []Companion // *Buckets copies; *Templates used only to mask
}

// Labeller returns a Labeller for the companions s has now, or nil when s
// has none (or one whose kind only s can apply). It must be made on the
// goroutine that owns s; it may then be used on any one goroutine.
func (s *Set) Labeller() *Labeller {
	if len(s.list) == 0 {
		return nil
	}
	l := &Labeller{}
	for _, c := range s.list {
		switch c := c.(type) {
		case *Buckets:
			l.list = append(l.list, NewBuckets(c.source))
		case *Templates:
			l.list = append(l.list, &Templates{source: c.source, name: c.name})
		default:
			return nil
		}
	}
	return l
}

// Apply appends rec's companion fields, in the Set's order: a bucket's
// label, a template's masked text (Set.Resolve turns it into the id).
func (l *Labeller) Apply(rec *parse.Record) {
	for _, c := range l.list {
		v, ok := rec.Get(c.Source())
		if !ok {
			continue
		}
		if t, ok := c.(*Templates); ok {
			t.mask(v)
			rec.AddKV(t.name, t.masked())
			continue
		}
		rec.AddKV(c.Name(), c.Value(v))
	}
}

// Resolve finishes a record a Labeller made from s: its companion fields
// are the fields from index from on. Records must be resolved in input
// order, on the goroutine that owns s.
func (s *Set) Resolve(rec *parse.Record, from int) {
	if !s.templates() {
		return // buckets are final as the Labeller wrote them
	}
	i := from
	for _, c := range s.list {
		if i >= rec.Len() || string(rec.Key(i)) != c.Name() {
			continue // the record has no source value for c
		}
		if t, ok := c.(*Templates); ok {
			s.resolveTemplate(t, rec, i)
		}
		i++
	}
}

// templates says whether s has a template companion.
func (s *Set) templates() bool {
	for _, c := range s.list {
		if _, ok := c.(*Templates); ok {
			return true
		}
	}
	return false
}

// resolveTemplate turns field i of rec, a message's masked text, into the
// value applyTemplate gives the message: its group's id, recorded or
// replayed, or the masked text itself past the cap.
func (s *Set) resolveTemplate(t *Templates, rec *parse.Record, i int) {
	masked := rec.Value(i)
	if rp := s.replay; rp != nil {
		ids := rp.ids[t.name]
		if j := rp.pos[t.name]; j < len(ids) {
			rp.pos[t.name] = j + 1
			if ids[j] > 0 {
				rec.SetValue(i, []byte(FormatID(int(ids[j]))))
			}
		}
		return
	}
	t.split(masked)
	g := t.groupWords()
	id := 0
	if g != nil {
		id, _ = ParseID(string(g.id))
		rec.SetValue(i, g.id)
	}
	if r := s.recording; r != nil {
		r.ids[t.name] = append(r.ids[t.name], uint32(id))
	}
}

// split sets t.words to the words of a masked text (masked): masked words
// hold no spaces or tabs, and masked joins them with one space, so this
// gives back the words mask made.
func (t *Templates) split(masked []byte) {
	t.buf = append(t.buf[:0], masked...)
	t.words = t.words[:0]
	start := 0
	for i := 0; i <= len(t.buf); i++ {
		if i == len(t.buf) || t.buf[i] == ' ' {
			if i > start {
				t.words = append(t.words, t.buf[start:i])
			}
			start = i + 1
		}
	}
}
