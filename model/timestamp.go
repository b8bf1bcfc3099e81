package model

// SetTimestamp marks the named field as the stream's timestamp. A
// timestamp says when a record came, not what happened: nearly every value
// is new, and the pairs it forms say nothing about the other fields (any
// field "depends" on a clock that never repeats). So it is left out of pair
// tracking and best predictors, and shown marked; its own entropy is still
// measured. A caller that wants it analysed does not call SetTimestamp.
func (m *Model) SetTimestamp(name string) {
	idx, ok := m.byName[name]
	if !ok {
		if idx = m.newField(name); idx < 0 {
			return
		}
	}
	m.fields[idx].timestamp = true
	m.untrack(idx)
}
