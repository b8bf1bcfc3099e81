package model

import (
	"strconv"

	"bitsift/parse"
)

// WithWindow returns a new model over window w, built from the records this
// model holds, oldest first. A smaller window keeps the newest of them; a
// larger one starts with all of them and fills as records arrive (records
// that already left this model's window are gone and cannot come back).
// Seen and the left-out fields carry over; fields keep their order. It costs
// what adding the held records again costs, O(records × tracked pairs).
func (m *Model) WithWindow(w Window) *Model {
	m.unflattenAll()
	opt := m.opt
	opt.Window = w
	r := New(opt)
	// Fields bitsift made stay marked as made by it: unmarked, a
	// companion would pass for a field of the log (and be planned, and
	// predict its own source).
	for name, s := range m.synthetic {
		r.DeclareSynthetic(name, s)
	}
	for _, f := range m.fields {
		r.newField(f.name)
	}
	// Identifiers stay identifiers, so the replay does not build the pair
	// tables the classification would drop after the first records.
	for i, f := range m.fields {
		if f.ident {
			r.fields[i].ident = true
			r.untrack(i)
		}
	}
	for i, f := range r.fields {
		if !f.ident && !f.tracked && r.trackedCount() < r.opt.MaxPairFields {
			r.track(i)
		}
	}
	var rec parse.Record
	var scratch []byte
	for i := 0; i < m.st.n; i++ {
		rec.Reset()
		for j, id := range m.st.row(i) {
			if id == absent || j >= len(m.fields) {
				continue
			}
			if id == overflow {
				// The value was not kept; any value unseen so far
				// stands for it, as overflow values count once each.
				scratch = strconv.AppendInt(append(scratch[:0], "\x00overflow-"...), int64(i), 10)
				rec.Add([]byte(m.fields[j].name), scratch)
				continue
			}
			rec.AddString(m.fields[j].name, m.fields[j].replayValue(id))
		}
		meta := m.st.metaAt(i)
		r.Add(&rec, meta.line, meta.time)
	}
	r.seen = m.seen
	for k := range m.leftOut {
		r.leftOut[k] = struct{}{}
	}
	r.leftOutCount = m.leftOutCount
	r.Flush()
	return r
}
