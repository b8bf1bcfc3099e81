package ingest

import (
	"crypto/hmac"
	"crypto/rand"
	"crypto/sha256"
	"encoding/base32"
	"hash"

	"bitsift/parse"
)

// Redactor replaces field values by a keyed hash (HMAC-SHA256 with a key
// drawn at random for each run, cut to 80 bits), so that equal values stay
// equal and different values stay different (but for a collision chance of
// about n²/2^81) while the values themselves are never kept or shown.
// Entropy depends only on which values are equal, so every figure is
// unchanged; screens and exports show the hashes. The key is never written
// anywhere, so hashes cannot be matched across runs.
type Redactor struct {
	fields map[string]bool // nil: every field
	mac    hash.Hash
	sum    []byte
	out    []byte
	rec    parse.Record
}

var b32 = base32.StdEncoding.WithPadding(base32.NoPadding)

// NewRedactor redacts the named fields, or every field when fields is
// empty.
func NewRedactor(fields []string) (*Redactor, error) {
	key := make([]byte, 32)
	if _, err := rand.Read(key); err != nil {
		return nil, err
	}
	r := &Redactor{mac: hmac.New(sha256.New, key)}
	if len(fields) > 0 {
		r.fields = make(map[string]bool, len(fields))
		for _, f := range fields {
			r.fields[f] = true
		}
	}
	return r, nil
}

// Apply rewrites rec in place, hashing the values of the redacted fields.
func (r *Redactor) Apply(rec *parse.Record) {
	r.rec.Reset()
	for i := 0; i < rec.Len(); i++ {
		k, v := rec.Key(i), rec.Value(i)
		if r.fields != nil && !r.fields[string(k)] {
			r.rec.Add(k, v)
			continue
		}
		r.mac.Reset()
		r.mac.Write(v)
		r.sum = r.mac.Sum(r.sum[:0])
		r.out = append(r.out[:0], '~')
		r.out = b32.AppendEncode(r.out, r.sum[:10])
		r.rec.Add(k, r.out)
	}
	rec.CopyFrom(&r.rec)
}

// Redacting says whether a field's values are redacted.
func (r *Redactor) Redacting(field string) bool {
	return r != nil && (r.fields == nil || r.fields[field])
}

// Redacting says whether the Ingester replaces values by keyed hashes, in
// which case nothing may keep the raw lines either.
func (in *Ingester) Redacting() bool { return in.redact != nil }
