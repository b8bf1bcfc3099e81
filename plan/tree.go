package plan

import (
	"bytes"
	"encoding/json"
	"errors"
	"io"
	"unicode/utf8"
)

// node is one member of a JSON object, as the line wrote it: a leaf keeps
// its value's compact JSON text, an object its members in order. The parser
// flattens {"http":{"status":200}} to the key "http.status", and a flat key
// such as Zeek's "id.orig_h" looks the same once flattened; the tree tells
// them apart, for the jq and OpenTelemetry exports.
type node struct {
	key  string
	raw  []byte // leaf value; nil for an object
	kids []node
}

// parseTree reads one JSON object line with encoding/json.
func parseTree(line []byte) ([]node, error) {
	kids, err := object(line)
	if err != nil {
		return nil, err
	}
	return kids, nil
}

func object(text []byte) ([]node, error) {
	dec := json.NewDecoder(bytes.NewReader(text))
	dec.UseNumber()
	if t, err := dec.Token(); err != nil || t != json.Delim('{') {
		return nil, errors.New("not a JSON object")
	}
	var kids []node
	for dec.More() {
		t, err := dec.Token()
		if err != nil {
			return nil, err
		}
		key, _ := t.(string)
		var raw json.RawMessage
		if err := dec.Decode(&raw); err != nil {
			return nil, err
		}
		n := node{key: key}
		if len(raw) > 0 && raw[0] == '{' && !emptyObject(raw) {
			if n.kids, err = object(raw); err != nil {
				return nil, err
			}
		} else {
			var b bytes.Buffer
			if err := json.Compact(&b, raw); err != nil {
				return nil, err
			}
			n.raw = b.Bytes()
		}
		kids = append(kids, n)
	}
	if _, err := dec.Token(); err != nil {
		return nil, err
	}
	if _, err := dec.Token(); err != io.EOF {
		return nil, errors.New("text after the JSON object")
	}
	return kids, nil
}

func emptyObject(raw []byte) bool {
	return len(bytes.TrimSpace(raw[1:len(raw)-1])) == 0
}

// walk calls fn with each leaf's flattened key, path and value text.
func walk(kids []node, prefix string, path []string, fn func(key string, path []string, raw []byte)) {
	for _, k := range kids {
		key := k.key
		if prefix != "" {
			key = prefix + "." + k.key
		}
		p := append(path[:len(path):len(path)], k.key)
		if k.raw != nil {
			fn(key, p, k.raw)
		} else {
			walk(k.kids, key, p, fn)
		}
	}
}

// appendTree writes the object compactly, leaving out the leaves whose
// flattened key drop holds. An object whose members are all left out is
// left out too (the jq program deletes it the same way), while an object
// that was empty in the line stays: restore tells the two apart because
// only a rebuilt member brings an object back.
func appendTree(dst []byte, kids []node, prefix string, drop map[string]bool) []byte {
	dst = append(dst, '{')
	first := true
	for _, k := range kids {
		key := k.key
		if prefix != "" {
			key = prefix + "." + k.key
		}
		if k.raw != nil && drop[key] || k.raw == nil && drop != nil && !keepsAny(k.kids, key, drop) {
			continue
		}
		if !first {
			dst = append(dst, ',')
		}
		first = false
		dst = appendJSONString(dst, k.key)
		dst = append(dst, ':')
		if k.raw != nil {
			dst = append(dst, k.raw...)
		} else {
			dst = appendTree(dst, k.kids, key, drop)
		}
	}
	return append(dst, '}')
}

// keepsAny says whether any leaf under kids survives drop.
func keepsAny(kids []node, prefix string, drop map[string]bool) bool {
	for _, k := range kids {
		key := prefix + "." + k.key
		if k.raw != nil && !drop[key] || k.raw == nil && keepsAny(k.kids, key, drop) {
			return true
		}
	}
	return false
}

// appendJSONString writes s as a JSON string, escaping only what JSON
// requires (quote, backslash, control characters) and invalid UTF-8.
func appendJSONString(dst []byte, s string) []byte {
	const hex = "0123456789abcdef"
	dst = append(dst, '"')
	for i := 0; i < len(s); {
		c := s[i]
		switch {
		case c == '"' || c == '\\':
			dst = append(dst, '\\', c)
			i++
		case c < 0x20:
			dst = append(dst, '\\', 'u', '0', '0', hex[c>>4], hex[c&0xf])
			i++
		case c < utf8.RuneSelf:
			dst = append(dst, c)
			i++
		default:
			r, size := utf8.DecodeRuneInString(s[i:])
			if r == utf8.RuneError && size == 1 {
				dst = append(dst, `\ufffd`...)
			} else {
				dst = append(dst, s[i:i+size]...)
			}
			i += size
		}
	}
	return append(dst, '"')
}
