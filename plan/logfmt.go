package plan

import "bitsift/parse"

// appendLogfmt writes rec as a logfmt line, leaving out the keys drop
// holds. A value is quoted when it is empty or holds a space, a quote, an
// equals sign, a backslash or a control character, with the escapes the
// logfmt parser reads back (\" \\ \n \t \r).
func appendLogfmt(dst []byte, rec *parse.Record, drop map[string]bool) []byte {
	first := true
	for i := 0; i < rec.Len(); i++ {
		k := rec.Key(i)
		if drop[string(k)] {
			continue
		}
		if !first {
			dst = append(dst, ' ')
		}
		first = false
		dst = append(dst, k...)
		dst = append(dst, '=')
		dst = appendLogfmtValue(dst, rec.Value(i))
	}
	return dst
}

func appendLogfmtValue(dst, v []byte) []byte {
	if !needsQuote(v) {
		return append(dst, v...)
	}
	dst = append(dst, '"')
	for _, c := range v {
		switch c {
		case '"', '\\':
			dst = append(dst, '\\', c)
		case '\n':
			dst = append(dst, '\\', 'n')
		case '\t':
			dst = append(dst, '\\', 't')
		case '\r':
			dst = append(dst, '\\', 'r')
		default:
			dst = append(dst, c)
		}
	}
	return append(dst, '"')
}

func needsQuote(v []byte) bool {
	if len(v) == 0 {
		return true
	}
	for _, c := range v {
		if c <= ' ' || c == '"' || c == '=' || c == '\\' || c == 0x7f {
			return true
		}
	}
	return false
}
