package parse

import (
	"encoding/binary"
	"math/bits"
	"unicode/utf8"
)

// MaxJSONDepth is how deeply objects and arrays may nest in a JSON line
// before the line is rejected; it bounds the parser's stack on hostile input.
const MaxJSONDepth = 64

func init() { Register("json", func() Format { return &JSON{} }) }

// JSON reads JSON Lines: one object per line. Nested objects are flattened
// with dots ({"http":{"status":200}} gives http.status=200); arrays and other
// non-string values keep their compact JSON text; strings lose their quotes
// and escapes.
//
// It is written by hand rather than on encoding/json because it must not
// allocate per field: it unescapes straight into the Record's buffer.
type JSON struct {
	key []byte // the dotted key prefix being built
}

// Name implements Format.
func (*JSON) Name() string { return "json" }

// Sniff implements Format.
func (*JSON) Sniff(line []byte) float64 {
	if len(line) >= 2 && line[0] == '{' && line[len(line)-1] == '}' {
		// Container JSON-file lines are JSON too, but their own format
		// scores higher on them.
		return 0.9
	}
	return 0
}

type jsonParser struct {
	s   []byte
	i   int
	rec *Record
	key *[]byte
}

// Parse implements Format.
func (j *JSON) Parse(line []byte, rec *Record) error {
	if j.flat(line, rec) {
		return nil
	}
	p := jsonParser{s: line, rec: rec, key: &j.key}
	j.key = j.key[:0]
	p.ws()
	if p.i >= len(p.s) || p.s[p.i] != '{' {
		return reject("not a JSON object")
	}
	if err := p.object(0); err != nil {
		return err
	}
	p.ws()
	if p.i != len(p.s) {
		return reject("text after the JSON object")
	}
	return nil
}

func (p *jsonParser) ws() {
	i := p.i
	for i < len(p.s) && jsonSpace[p.s[i]] {
		i++
	}
	p.i = i
}

var jsonSpace = [256]bool{' ': true, '\t': true, '\r': true, '\n': true}

// object parses {...} at p.i, emitting its members under the current prefix.
func (p *jsonParser) object(depth int) error {
	if depth >= MaxJSONDepth {
		return reject("JSON nested too deeply")
	}
	p.i++ // {
	p.ws()
	if p.i < len(p.s) && p.s[p.i] == '}' {
		p.i++
		if depth > 0 {
			// An empty nested object is a value of its own.
			k0, v0 := p.rec.begin(*p.key)
			p.rec.buf = append(p.rec.buf, '{', '}')
			p.rec.end(k0, v0)
		}
		return nil
	}
	prefix := len(*p.key)
	for {
		p.ws()
		if p.i >= len(p.s) || p.s[p.i] != '"' {
			return reject("expected a quoted key in JSON object")
		}
		*p.key = (*p.key)[:prefix]
		if prefix > 0 {
			*p.key = append(*p.key, '.')
		}
		var err error
		*p.key, err = p.str(*p.key)
		if err != nil {
			return err
		}
		p.ws()
		if p.i >= len(p.s) || p.s[p.i] != ':' {
			return reject("expected ':' after JSON key")
		}
		p.i++
		p.ws()
		if err := p.value(depth); err != nil {
			return err
		}
		p.ws()
		if p.i >= len(p.s) {
			return reject("unterminated JSON object")
		}
		switch p.s[p.i] {
		case ',':
			p.i++
		case '}':
			p.i++
			*p.key = (*p.key)[:prefix]
			return nil
		default:
			return reject("expected ',' or '}' in JSON object")
		}
	}
}

// value parses one member value and emits it under the current key.
func (p *jsonParser) value(depth int) error {
	if p.i >= len(p.s) {
		return reject("missing JSON value")
	}
	switch c := p.s[p.i]; {
	case c == '{':
		return p.object(depth + 1)
	case c == '"':
		k0, v0 := p.rec.begin(*p.key)
		var err error
		p.rec.buf, err = p.str(p.rec.buf)
		if err != nil {
			return err
		}
		p.rec.end(k0, v0)
		return nil
	case c == '[':
		k0, v0 := p.rec.begin(*p.key)
		if err := p.compact(depth + 1); err != nil {
			return err
		}
		p.rec.end(k0, v0)
		return nil
	default:
		start := p.i
		if err := p.scalar(); err != nil {
			return err
		}
		k0, v0 := p.rec.begin(*p.key)
		p.rec.buf = append(p.rec.buf, p.s[start:p.i]...)
		p.rec.end(k0, v0)
		return nil
	}
}

// scalar skips a number, true, false or null, checking its shape loosely.
func (p *jsonParser) scalar() error {
	start := p.i
	for p.i < len(p.s) {
		c := p.s[p.i]
		if c == ',' || c == '}' || c == ']' || c == ' ' || c == '\t' || c == '\r' || c == '\n' {
			break
		}
		p.i++
	}
	w := p.s[start:p.i]
	switch string(w) {
	case "true", "false", "null":
		return nil
	}
	if len(w) == 0 {
		return reject("missing JSON value")
	}
	for _, c := range w {
		if !(c >= '0' && c <= '9' || c == '-' || c == '+' || c == '.' || c == 'e' || c == 'E') {
			return reject("invalid JSON value")
		}
	}
	return nil
}

// compact appends the array or object at p.i to the record buffer as compact
// JSON text (whitespace outside strings removed).
func (p *jsonParser) compact(depth int) error {
	stack := 0
	for p.i < len(p.s) {
		c := p.s[p.i]
		switch c {
		case '[', '{':
			stack++
			if depth+stack > MaxJSONDepth+1 {
				return reject("JSON nested too deeply")
			}
		case ']', '}':
			stack--
		case ' ', '\t', '\r', '\n':
			p.i++
			continue
		case '"':
			start := p.i
			if err := p.skipString(); err != nil {
				return err
			}
			p.rec.buf = append(p.rec.buf, p.s[start:p.i]...)
			continue
		}
		p.rec.buf = append(p.rec.buf, c)
		p.i++
		if stack == 0 {
			return nil
		}
	}
	return reject("unterminated JSON array")
}

func (p *jsonParser) skipString() error {
	p.i++
	for p.i < len(p.s) {
		switch p.s[p.i] {
		case '\\':
			p.i += 2
		case '"':
			p.i++
			return nil
		default:
			p.i++
		}
	}
	return reject("unterminated JSON string")
}

// strStop marks the bytes that end the plain run of a JSON string: the
// closing quote and the escape character.
var strStop = [256]bool{'"': true, '\\': true}

// plainRun returns the index of the first quote or backslash in s at or
// after i (len(s) if none), eight bytes at a time: a word has a byte b iff
// (x^b·0x01…01 − 0x01…01) &^ (x^b·0x01…01) has a high bit set, and the
// lowest such bit marks the first one.
func plainRun(s []byte, i int) int {
	const lo, hi = 0x0101010101010101, 0x8080808080808080
	for i+8 <= len(s) {
		x := binary.LittleEndian.Uint64(s[i:])
		q, b := x^(lo*'"'), x^(lo*'\\')
		if m := ((q - lo) &^ q & hi) | ((b - lo) &^ b & hi); m != 0 {
			return i + bits.TrailingZeros64(m)>>3
		}
		i += 8
	}
	for i < len(s) && !strStop[s[i]] {
		i++
	}
	return i
}

// str parses the string at p.i and appends its unescaped text to dst. The
// scan works on locals (not p.i) so that the compiler keeps them in
// registers: this loop is most of the cost of a JSON line.
func (p *jsonParser) str(dst []byte) ([]byte, error) {
	s := p.s
	i := p.i + 1 // opening quote
	for {
		start := i
		i = plainRun(s, i)
		dst = append(dst, s[start:i]...)
		if i >= len(s) {
			p.i = i
			return dst, reject("unterminated JSON string")
		}
		if s[i] == '"' {
			p.i = i + 1
			return dst, nil
		}
		// backslash
		if i+1 >= len(s) {
			p.i = i
			return dst, reject("unterminated JSON string")
		}
		e := s[i+1]
		i += 2
		switch e {
		case '"', '\\', '/':
			dst = append(dst, e)
		case 'b':
			dst = append(dst, '\b')
		case 'f':
			dst = append(dst, '\f')
		case 'n':
			dst = append(dst, '\n')
		case 'r':
			dst = append(dst, '\r')
		case 't':
			dst = append(dst, '\t')
		case 'u':
			p.i = i
			r, ok := p.hex4()
			if !ok {
				return dst, reject("invalid \\u escape in JSON string")
			}
			if r >= 0xD800 && r < 0xDC00 && p.i+1 < len(s) && s[p.i] == '\\' && s[p.i+1] == 'u' {
				save := p.i
				p.i += 2
				if lo, ok := p.hex4(); ok && lo >= 0xDC00 && lo < 0xE000 {
					r = 0x10000 + (r-0xD800)<<10 + (lo - 0xDC00)
				} else {
					p.i = save
				}
			}
			i = p.i
			dst = utf8.AppendRune(dst, r)
		default:
			p.i = i
			return dst, reject("invalid escape in JSON string")
		}
	}
}

func (p *jsonParser) hex4() (rune, bool) {
	if p.i+4 > len(p.s) {
		return 0, false
	}
	var r rune
	for _, c := range p.s[p.i : p.i+4] {
		r <<= 4
		switch {
		case c >= '0' && c <= '9':
			r |= rune(c - '0')
		case c >= 'a' && c <= 'f':
			r |= rune(c-'a') + 10
		case c >= 'A' && c <= 'F':
			r |= rune(c-'A') + 10
		default:
			return 0, false
		}
	}
	p.i += 4
	return r, true
}
