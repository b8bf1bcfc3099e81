package ingest

import "bitsift/parse"

// ValueCompanion is a companion field whose value is a function of its
// source field's value alone (numeric buckets), so that it can be made
// from count tables instead of records (bitsift sql). Templates are left
// out: a template tree learns from the messages it sees, in order.
type ValueCompanion struct {
	Name, Source, Method string
	Value                func(v []byte) string
}

// ValueCompanions applies the companion rules to sample records (as the
// first records of a stream) and returns the companions that are functions
// of a value.
func ValueCompanions(sample []*parse.Record) []ValueCompanion {
	var out []ValueCompanion
	for _, c := range chooseCompanions(sample).list {
		if c.kind != bucketCompanion {
			continue
		}
		b := &buckets{}
		out = append(out, ValueCompanion{Name: c.name, Source: c.source, Method: c.method(), Value: b.label})
	}
	return out
}
