package parse

import "bytes"

// parse reads line into rec with the learned header; n is the number of
// header fields it found.
func (h *Header) parse(line []byte, rec *Record) (n int, err error) {
	if len(h.slots) == 0 {
		return 0, reject("no line header learned (the sample's lines have no timestamp)")
	}
	m := rec.mark()
	p := 0
	timed := false
	for _, s := range h.slots {
		q := h.skip(line, p)
		if q >= len(line) {
			break
		}
		form := noTime
		if s.kind == hTime {
			form = s.form
		}
		it := h.token(line, q, form)
		if s.kind != hAny && it.kind != s.kind {
			if s.optional {
				continue
			}
			break
		}
		p = it.end
		if s.kind == hTime || s.kind == hEpoch {
			timed = true
		}
		if s.name == "" {
			continue
		}
		n++
		v := line[it.v0:it.v1]
		if it.kind == hBracket {
			if k, val, ok := bracketPair(v); ok {
				if _, dup := rec.Get(string(k)); !dup && !reservedKey(k) {
					rec.Add(k, val)
					continue
				}
			}
		}
		rec.AddKV(s.name, v)
	}
	if !timed {
		rec.rollback(m)
		return 0, reject("no timestamp where the lines' header has one (" + h.Slots() + ")")
	}
	msg := trimSpace(line[h.skip(line, p):])
	if len(msg) > 0 {
		rec.AddKV("msg", msg)
		trailingPairs(msg, rec)
	}
	return n, nil
}

// bracketPair reads "word value" (client 10.1.4.7) as a pair.
func bracketPair(b []byte) (k, v []byte, ok bool) {
	sp := bytes.IndexByte(b, ' ')
	if sp < 2 || sp == len(b)-1 || bytes.IndexByte(b[sp+1:], ' ') >= 0 {
		return nil, nil, false
	}
	for _, c := range b[:sp] {
		if c < 'a' || c > 'z' {
			return nil, nil, false
		}
	}
	return b[:sp], b[sp+1:], true
}

func reservedKey(k []byte) bool {
	switch string(k) {
	case "time", "level", "pid", "thread", "component", "host", "msg", "tag":
		return true
	}
	return false
}

// trailingPairs adds the key=value words that end msg as fields of their
// own (up to 16), in their order, unless the record has the key already.
func trailingPairs(msg []byte, rec *Record) {
	const max = 16
	var at [max][3]int // key start, '=' index, end
	n := 0
	end := len(msg)
	for n < max && end > 0 {
		s := bytes.LastIndexByte(msg[:end], ' ') + 1
		w := msg[s:end]
		eq := bytes.IndexByte(w, '=')
		if eq < 1 || eq == len(w)-1 || !isLetter(w[0]) || bytes.IndexByte(w[eq+1:], '=') >= 0 || bytes.IndexByte(w, '"') >= 0 {
			break
		}
		for _, c := range w[:eq] {
			if !(isLetter(c) || isDigit(c) || c == '_' || c == '.' || c == '-') {
				return
			}
		}
		at[n] = [3]int{s, s + eq, end}
		n++
		if s == 0 {
			break
		}
		end = s - 1
		for end > 0 && msg[end-1] == ' ' {
			end--
		}
	}
	for i := n - 1; i >= 0; i-- {
		k := msg[at[i][0]:at[i][1]]
		if _, dup := rec.Get(string(k)); dup || reservedKey(k) {
			continue
		}
		rec.Add(k, msg[at[i][1]+1:at[i][2]])
	}
}
