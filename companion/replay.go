package companion

import "bitsift/parse"

// Recording and replaying template ids. bitsift annotate reads its input
// more than once; the later readings must give every record the template
// id the first reading gave it (a message can match a different group once
// the tree has grown), so the first reading records the ids Apply gives,
// in order, and the later ones replay them.

// Recording is the template ids one reading gave, per companion name, in
// the order Apply made them; 0 stands for a value past the cap (the
// message's masked text).
type Recording struct {
	ids map[string][]uint32
	pos map[string]int
}

// Record makes Apply note every template id it gives into r.
func (s *Set) Record(r *Recording) {
	if r.ids == nil {
		r.ids = map[string][]uint32{}
	}
	s.recording = r
}

// Replay makes Apply give the ids r holds, in order, instead of matching
// messages against the tree.
func (s *Set) Replay(r *Recording) {
	s.replay = &Recording{ids: r.ids, pos: map[string]int{}}
}

// applyTemplate appends the template companion t's value for v to rec,
// recording or replaying it.
func (s *Set) applyTemplate(t *Templates, v []byte, rec *parse.Record) {
	if rp := s.replay; rp != nil {
		ids := rp.ids[t.name]
		if i := rp.pos[t.name]; i < len(ids) {
			rp.pos[t.name] = i + 1
			if ids[i] > 0 {
				rec.AddString(t.name, FormatID(int(ids[i])))
				return
			}
		}
		t.mask(v)
		rec.AddKV(t.name, t.masked())
		return
	}
	val := t.Value(v)
	rec.AddKV(t.name, val)
	if r := s.recording; r != nil {
		id, _ := ParseID(string(val))
		r.ids[t.name] = append(r.ids[t.name], uint32(id))
	}
}
