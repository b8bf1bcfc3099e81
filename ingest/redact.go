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
	names  *names          // every field: names are redacted too
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
	} else {
		r.names = newNames()
	}
	return r, nil
}

// hash gives the keyed hash of v as shown: "~" and 16 base32 characters.
func (r *Redactor) hash(v []byte) []byte {
	r.mac.Reset()
	r.mac.Write(v)
	r.sum = r.mac.Sum(r.sum[:0])
	r.out = b32.AppendEncode(append(r.out[:0], '~'), r.sum[:10])
	return r.out
}

func (r *Redactor) hashString(s string) string { return string(r.hash([]byte(s))) }

// Observe counts the keys of a record of the detection sample before any
// record is redacted, so that an object keyed by data in the sample has
// every key hashed from the first record on.
func (r *Redactor) Observe(rec *parse.Record) {
	if r.names == nil {
		return
	}
	for i := 0; i < rec.Len(); i++ {
		r.names.observe(string(rec.Key(i)))
	}
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
		if r.names != nil {
			k = []byte(r.names.redact(string(k), r.hashString))
		}
		r.rec.Add(k, r.hash(v))
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
