package model

// Synthetic describes a field that bitsift makes from another field, not
// one present in the log (a companion: numeric buckets, message templates).
type Synthetic struct {
	Source string // the log field it is made from
	Method string // how, in a few words, e.g. "log10 buckets, 4 per decade"
}

// DeclareSynthetic marks the field name as made by bitsift from another
// field. Call it before the first record with that field is added; the
// mark shows in snapshots as FieldStats.Synthetic.
func (m *Model) DeclareSynthetic(name string, s Synthetic) {
	if m.synthetic == nil {
		m.synthetic = make(map[string]Synthetic)
	}
	m.synthetic[name] = s
	if i, ok := m.byName[name]; ok {
		m.fields[i].synth = &s
	}
}
