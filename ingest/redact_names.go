package ingest

import (
	"regexp"
	"strings"
)

// Field names can hold data too: a JSON object keyed by user data
// (`sessions.<an e-mail>.state`, `quota.<account>`) flattens into names
// that carry the very values --redact hides. Under --redact, the parts of a
// name that look like data are hashed like values (the same keyed hash, so
// equal parts stay equal): e-mail addresses, IPv4 and IPv6 addresses and
// UUIDs wherever they occur in the name, and any dot-separated segment that
// holds a long number (6 digits or more), a long hexadecimal run (8 or more,
// with a digit), or a long mixed token (12 characters or more with 3 digits
// or more); and every segment under a parent whose distinct keys pass
// manyKeys (an object keyed by data: its keys are many and distinct). What
// stays: names that look like names (`http.status`, `user_agent`).
//
// The rules are this tool's own (common practice for spotting data in
// text; no published source). The count of distinct keys starts from the
// detection sample, so an object with many keys there has all its keys
// hashed from the first record; one that grows past manyKeys later has
// its keys hashed from then on, so up to manyKeys of its earlier keys that
// look like names (not like the data above) may have been shown.
const manyKeys = 16

var (
	nameEmail = regexp.MustCompile(`[A-Za-z0-9_%+'-]+(?:\.[A-Za-z0-9_%+'-]+)*@[A-Za-z0-9-]+(?:\.[A-Za-z0-9-]+)*`)
	nameIPv4  = regexp.MustCompile(`(?:^|[^0-9])(\d{1,3}(?:\.\d{1,3}){3})(?:[^0-9]|$)`)
	nameIPv6  = regexp.MustCompile(`[0-9A-Fa-f]{0,4}(?::[0-9A-Fa-f]{0,4}){2,7}`)
	nameUUID  = regexp.MustCompile(`[0-9A-Fa-f]{8}-[0-9A-Fa-f]{4}-[0-9A-Fa-f]{4}-[0-9A-Fa-f]{4}-[0-9A-Fa-f]{12}`)
)

// names hashes the data in field names (only under --redact).
type names struct {
	children map[string]map[string]struct{} // parent → its distinct keys, up to manyKeys+1
	many     map[string]bool                // parents past manyKeys
	cache    map[string]string
}

func newNames() *names {
	return &names{children: map[string]map[string]struct{}{}, many: map[string]bool{}, cache: map[string]string{}}
}

// observe counts the key under its parent.
func (n *names) observe(key string) {
	for i := len(key) - 1; i > 0; i-- {
		if key[i] != '.' {
			continue
		}
		parent, child := key[:i], key[i+1:]
		if j := strings.IndexByte(child, '.'); j >= 0 {
			child = child[:j]
		}
		if n.many[parent] {
			continue
		}
		set := n.children[parent]
		if set == nil {
			if len(n.children) >= 1<<14 {
				continue // bounded: names past this many parents are judged by their look alone
			}
			set = map[string]struct{}{}
			n.children[parent] = set
		}
		set[child] = struct{}{}
		if len(set) > manyKeys {
			n.many[parent] = true
			delete(n.children, parent)
			clear(n.cache)
		}
	}
}

// redact gives the name with its data hashed by hash.
func (n *names) redact(key string, hash func(string) string) string {
	if out, ok := n.cache[key]; ok {
		return out // seen before: observing it again would add nothing
	}
	n.observe(key)
	out := key
	// Spans that may contain dots first: each becomes one opaque part.
	for _, re := range []*regexp.Regexp{nameEmail, nameUUID, nameIPv6} {
		out = re.ReplaceAllStringFunc(out, hash)
	}
	out = replaceGroup(nameIPv4, out, hash)
	segs := strings.Split(out, ".")
	// A segment under a parent with many keys is hashed; the parent is
	// looked up by the raw name's prefix when no span above changed it.
	rawSegs := strings.Split(key, ".")
	for i, s := range segs {
		if s == "" || s[0] == '~' && len(s) == 17 {
			continue
		}
		under := i > 0 && len(rawSegs) == len(segs) && n.many[strings.Join(rawSegs[:i], ".")]
		if under || dataLike(s) {
			segs[i] = hash(s)
		}
	}
	out = strings.Join(segs, ".")
	if len(n.cache) < 1<<16 {
		n.cache[key] = out
	}
	return out
}

// replaceGroup replaces the first group of each match of re.
func replaceGroup(re *regexp.Regexp, s string, f func(string) string) string {
	for {
		m := re.FindStringSubmatchIndex(s)
		if m == nil {
			return s
		}
		s = s[:m[2]] + f(s[m[2]:m[3]]) + s[m[3]:]
	}
}

// dataLike says whether a name segment looks like a value: a long number,
// a long hexadecimal run with a digit, or a long token with several digits.
func dataLike(s string) bool {
	digits, run, hexRun, hexDigit := 0, 0, 0, false
	for i := 0; i < len(s); i++ {
		c := s[i]
		isDigit := c >= '0' && c <= '9'
		isHex := isDigit || c >= 'a' && c <= 'f' || c >= 'A' && c <= 'F'
		if isDigit {
			digits++
			run++
			if run >= 6 {
				return true
			}
		} else {
			run = 0
		}
		if isHex {
			hexRun++
			hexDigit = hexDigit || isDigit
			if hexRun >= 8 && hexDigit {
				return true
			}
		} else {
			hexRun, hexDigit = 0, false
		}
	}
	return len(s) >= 12 && digits >= 3
}
