package ingest

import (
	"crypto/hmac"
	"crypto/sha256"
	"encoding/hex"
	"errors"
)

// MinRedactKey is the shortest redaction key accepted, in bytes.
const MinRedactKey = 16

// NewRedactorWithKey is NewRedactor with a key of the caller's (read from
// a file the user keeps, --redact-key), so that runs sharing it hash equal
// values alike and their profiles can be added. Anyone holding the key can
// test guesses of a value against its hash: keep it as a secret.
func NewRedactorWithKey(fields []string, key []byte) (*Redactor, error) {
	if len(key) < MinRedactKey {
		return nil, errors.New("ingest: the redaction key must be at least 16 bytes")
	}
	r, err := NewRedactor(fields)
	if err != nil {
		return nil, err
	}
	r.mac = hmac.New(sha256.New, key)
	return r, nil
}

func newRedactorFor(cfg Config) (*Redactor, error) {
	if cfg.RedactKey != nil {
		return NewRedactorWithKey(cfg.RedactFields, cfg.RedactKey)
	}
	return NewRedactor(cfg.RedactFields)
}

// RedactKeyID names a redaction key without revealing it: an HMAC of a
// fixed text under the key, cut to 64 bits. Profiles record it so that only
// profiles made with the same key are added. "" without a key of the
// caller's (a per-run random key is never shared).
func RedactKeyID(key []byte) string {
	if key == nil {
		return ""
	}
	m := hmac.New(sha256.New, key)
	m.Write([]byte("bitsift redaction key id"))
	return hex.EncodeToString(m.Sum(nil)[:8])
}
