package parse

import "encoding/binary"

// Words is a value of up to 16 bytes as two words that, with its length,
// tell it exactly: two overlapping loads of 8 (or 4) bytes cover every
// byte, and a value of 1 to 3 bytes is its first, middle and last bytes.
// Comparing two short values (keys, field values) this way is two word
// compares, not a call; the model's value tables and the companions' memo
// hash them.
func Words(v []byte) (a, b uint64) {
	n := len(v)
	switch {
	case n >= 8:
		return binary.LittleEndian.Uint64(v), binary.LittleEndian.Uint64(v[n-8:])
	case n >= 4:
		return uint64(binary.LittleEndian.Uint32(v)), uint64(binary.LittleEndian.Uint32(v[n-4:]))
	case n > 0:
		return uint64(v[0])<<16 | uint64(v[n>>1])<<8 | uint64(v[n-1]), 0
	}
	return 0, 0
}
