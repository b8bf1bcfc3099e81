package model

import (
	"fmt"
	"regexp"
	"strings"
)

// CompanionSuffixes end the names of the fields bitsift makes
// (companion.BucketSuffix and TemplateSuffix, which a test keeps equal):
// ParseCond reads FIELD~log=VALUE as a condition on the companion.
var CompanionSuffixes = []string{"~log", "~template"}

// ParseCond reads one --where condition: FIELD=VALUE (equals), FIELD!=VALUE
// (does not equal; a record lacking the field does not equal it),
// FIELD~REGEXP (matches the Go regular expression, RE2 syntax) or
// FIELD!~REGEXP (does not match).
func ParseCond(s string) (Cond, error) {
	ops := []string{"!=", "!~", "=", "~"}
	best, at := "", -1
	// The name of a field bitsift makes holds a ~ (latency_ms~log,
	// msg~template): the operator is looked for after it.
	from := 0
	for _, suf := range CompanionSuffixes {
		if i := strings.Index(s, suf); i > 0 && !strings.ContainsAny(s[:i], "=!~") {
			if rest := s[i+len(suf):]; strings.HasPrefix(rest, "=") || strings.HasPrefix(rest, "!") || strings.HasPrefix(rest, "~") {
				from = i + len(suf)
				break
			}
		}
	}
	for _, op := range ops {
		if i := strings.Index(s[from:], op); i+from > 0 && i >= 0 {
			i += from
			if at < 0 || i < at || i == at && len(op) > len(best) {
				best, at = op, i
			}
		}
	}
	if at < 0 {
		return Cond{}, fmt.Errorf("--where %q: want FIELD=VALUE, FIELD!=VALUE, FIELD~REGEXP or FIELD!~REGEXP", s)
	}
	c := Cond{Field: s[:at], Value: s[at+len(best):], Not: best[0] == '!'}
	if strings.HasSuffix(best, "~") {
		re, err := regexp.Compile(c.Value)
		if err != nil {
			return Cond{}, fmt.Errorf("--where %q: %v", s, err)
		}
		c.Match = re
	}
	return c, nil
}

// Meets says whether a value (present false: the field is absent) meets
// the condition.
func (c Cond) Meets(value string, present bool) bool {
	var ok bool
	switch {
	case c.Absent:
		ok = !present
	case !present:
		ok = false
	case c.Match != nil:
		ok = c.Match.MatchString(value)
	default:
		ok = value == c.Value
	}
	return ok != c.Not
}
