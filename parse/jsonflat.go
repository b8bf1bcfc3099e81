package parse

// The flat scanner: the common shape of a JSON log line is one object of
// string, number, true/false/null members, no nesting, no escapes. For such
// a line the record's buffer takes the whole line in one copy and each
// field is a span of it, so nothing is copied per field and no key prefix
// is built. Anything else (nesting, arrays, escapes, a repeated key, a line
// the full parser would reject) makes it give up and roll the record back,
// and the full parser reads the line: the two agree on every line the flat
// scanner takes (TestJSONFlatAgreesWithFull).
//
// A repeated key always goes to the full parser, which alone decides which
// of the values counts.

// flat reads line into rec if it has the flat shape, and says whether it
// did; when it did not, rec is as it was.
func (j *JSON) flat(line []byte, rec *Record) bool {
	m := rec.mark()
	base := len(rec.buf)
	rec.buf = append(rec.buf, line...)
	s := rec.buf[base:]
	if !scanFlat(s, rec, int32(base), m.spans) {
		rec.rollback(m)
		return false
	}
	return true
}

// scanFlat adds the fields of the flat object s, which starts at offset
// base of rec.buf; first is the record's first span of this line.
func scanFlat(s []byte, rec *Record, base int32, first int) bool {
	i := skipWS(s, 0)
	if i >= len(s) || s[i] != '{' {
		return false
	}
	i = skipWS(s, i+1)
	if i < len(s) && s[i] == '}' {
		return skipWS(s, i+1) == len(s)
	}
	// seen has the bit keySig of each key read so far set: comparing every
	// key with every earlier one was half of the scan on 14-field lines.
	var seen [2]uint64
	for {
		if i >= len(s) || s[i] != '"' {
			return false
		}
		k0 := i + 1
		k1 := plainRun(s, k0)
		if k1 >= len(s) || s[k1] != '"' {
			return false // an escape, or unterminated
		}
		i = skipWS(s, k1+1)
		if i >= len(s) || s[i] != ':' {
			return false
		}
		i = skipWS(s, i+1)
		if i >= len(s) {
			return false
		}
		var v0, v1 int
		switch c := s[i]; c {
		case '{', '[':
			return false // nesting: the full parser flattens it
		case '"':
			v0 = i + 1
			v1 = plainRun(s, v0)
			if v1 >= len(s) || s[v1] != '"' {
				return false
			}
			i = v1 + 1
		default:
			v0 = i
			for i < len(s) && !scalarStop[s[i]] {
				i++
			}
			v1 = i
			if !flatScalar(s[v0:v1]) {
				return false
			}
		}
		key := s[k0:k1]
		// A repeated key has the signature of the key it repeats: only a
		// signature seen before on this line is compared key by key.
		if sig := keySig(key); seen[sig>>6]&(1<<(sig&63)) == 0 {
			seen[sig>>6] |= 1 << (sig & 63)
		} else {
			for _, sp := range rec.spans[first:] {
				if string(rec.buf[sp.k0:sp.k1]) == string(key) {
					return false // a repeated key
				}
			}
		}
		rec.spans = append(rec.spans, span{base + int32(k0), base + int32(k1), base + int32(v0), base + int32(v1)})
		i = skipWS(s, i)
		if i >= len(s) {
			return false
		}
		switch s[i] {
		case ',':
			i = skipWS(s, i+1)
		case '}':
			return skipWS(s, i+1) == len(s)
		default:
			return false
		}
	}
}

// scalarStop ends a number or literal, as the full parser's scalar does.
var scalarStop = [256]bool{',': true, '}': true, ']': true, ' ': true, '\t': true, '\r': true, '\n': true}

// flatScalar says whether w is a value the full parser's scalar accepts.
func flatScalar(w []byte) bool {
	switch string(w) {
	case "true", "false", "null":
		return true
	}
	if len(w) == 0 {
		return false
	}
	for _, c := range w {
		if !(c >= '0' && c <= '9' || c == '-' || c == '+' || c == '.' || c == 'e' || c == 'E') {
			return false
		}
	}
	return true
}

func skipWS(s []byte, i int) int {
	for i < len(s) && jsonSpace[s[i]] {
		i++
	}
	return i
}

// keySig is a 7-bit signature of a key, from its length and its first and
// last bytes (equal keys have equal signatures).
func keySig(k []byte) uint {
	h := uint(len(k)) * 0x9E3779B1
	if len(k) > 0 {
		h ^= uint(k[0])*131 ^ uint(k[len(k)-1])*7919
	}
	return (h ^ h>>7 ^ h>>14) & 127
}
