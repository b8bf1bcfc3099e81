package parse

// span locates one field of a Record inside its buffer: key is buf[k0:k1],
// value is buf[v0:v1].
type span struct{ k0, k1, v0, v1 int32 }

// Record is one parsed log line: an ordered list of key/value pairs.
//
// Keys and values are copied into a buffer that the Record owns and reuses,
// so a parser that fills the same Record line after line allocates nothing
// once the buffer has grown to the longest line. Slices returned by Key and
// Value are valid until the next Reset.
type Record struct {
	buf   []byte
	spans []span
	// DupKeys: the line gave a key twice at one level; the last value is
	// kept (see parse/json_dup.go).
	DupKeys bool
	// KeysRepeat: the record's keys are, in order, those of the record
	// handed on just before it. Set by a reader that compared them (the
	// pipeline's workers, with SameKeys), so that the model need not;
	// false when not known.
	KeysRepeat bool
}

// Reset empties the record, keeping its buffers for reuse.
func (r *Record) Reset() {
	r.buf = r.buf[:0]
	r.spans = r.spans[:0]
	r.DupKeys = false
	r.KeysRepeat = false
}

// Len is the number of fields in the record.
func (r *Record) Len() int { return len(r.spans) }

// Key is the name of field i.
func (r *Record) Key(i int) []byte { s := r.spans[i]; return r.buf[s.k0:s.k1] }

// Value is the value of field i, as text.
func (r *Record) Value(i int) []byte { s := r.spans[i]; return r.buf[s.v0:s.v1] }

// Add appends a field, copying key and value.
func (r *Record) Add(key, value []byte) {
	k0 := int32(len(r.buf))
	r.buf = append(r.buf, key...)
	v0 := int32(len(r.buf))
	r.buf = append(r.buf, value...)
	r.spans = append(r.spans, span{k0, v0, v0, int32(len(r.buf))})
}

// AddString appends a field from strings.
func (r *Record) AddString(key, value string) {
	k0 := int32(len(r.buf))
	r.buf = append(r.buf, key...)
	v0 := int32(len(r.buf))
	r.buf = append(r.buf, value...)
	r.spans = append(r.spans, span{k0, v0, v0, int32(len(r.buf))})
}

// begin starts a field whose key is key; the value is then appended to
// r.buf by the caller and closed with end. It lets parsers unescape a value
// straight into the record's buffer.
func (r *Record) begin(key []byte) (k0, v0 int32) {
	k0 = int32(len(r.buf))
	r.buf = append(r.buf, key...)
	return k0, int32(len(r.buf))
}

func (r *Record) end(k0, v0 int32) {
	r.spans = append(r.spans, span{k0, v0, v0, int32(len(r.buf))})
}

// Get returns the value of the first field named key. Keys of another
// length are passed over on their spans alone (companions and the time
// finder call it on every record).
func (r *Record) Get(key string) ([]byte, bool) {
	n := int32(len(key))
	for _, s := range r.spans {
		if s.k1-s.k0 == n && string(r.buf[s.k0:s.k1]) == key {
			return r.buf[s.v0:s.v1], true
		}
	}
	return nil, false
}

// CopyFrom makes r a deep copy of o.
func (r *Record) CopyFrom(o *Record) {
	r.buf = append(r.buf[:0], o.buf...)
	r.spans = append(r.spans[:0], o.spans...)
	r.DupKeys = o.DupKeys
	r.KeysRepeat = o.KeysRepeat
}

// AddKV appends a field whose key is a string, copying both; it spares
// callers a conversion (and its allocation) of either.
func (r *Record) AddKV(key string, value []byte) {
	k0 := int32(len(r.buf))
	r.buf = append(r.buf, key...)
	v0 := int32(len(r.buf))
	r.buf = append(r.buf, value...)
	r.spans = append(r.spans, span{k0, v0, v0, int32(len(r.buf))})
}

// SetValue replaces the value of field i by a copy of v. The old value's
// text stays in the buffer, unused, until the next Reset.
func (r *Record) SetValue(i int, v []byte) {
	v0 := int32(len(r.buf))
	r.buf = append(r.buf, v...)
	r.spans[i].v0, r.spans[i].v1 = v0, int32(len(r.buf))
}

// mark is a point in a record to roll back to.
type mark struct{ buf, spans int }

// mark returns the record's current end.
func (r *Record) mark() mark { return mark{len(r.buf), len(r.spans)} }

// rollback drops every field added after m.
func (r *Record) rollback(m mark) {
	r.buf = r.buf[:m.buf]
	r.spans = r.spans[:m.spans]
}

// SameKeys says whether r and o have the same keys in the same order.
// Records of one stream mostly do, and the model then maps the keys to
// its fields once for a run of such records.
//
// Keys are short: one of up to 16 bytes is compared by its Words (a call
// to compare each was most of its cost).
func (r *Record) SameKeys(o *Record) bool {
	if len(r.spans) != len(o.spans) {
		return false
	}
	for i, s := range r.spans {
		t := o.spans[i]
		n := s.k1 - s.k0
		if n != t.k1-t.k0 {
			return false
		}
		a, b := r.buf[s.k0:s.k1], o.buf[t.k0:t.k1]
		if n > 16 {
			if string(a) != string(b) {
				return false
			}
			continue
		}
		a0, a1 := Words(a)
		b0, b1 := Words(b)
		if a0 != b0 || a1 != b1 {
			return false
		}
	}
	return true
}
