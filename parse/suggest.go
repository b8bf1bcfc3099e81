package parse

import (
	"bytes"
	"strconv"
	"strings"
)

// SuggestPattern makes a --pattern expression from one line for a user to
// start from: the line's first words (up to four, the last of them before
// free text) each become a group named by what they look like (time,
// level, pid, component, host, or fN), and the rest becomes msg. It copies
// none of the line's text, only its shape.
func SuggestPattern(line []byte) string {
	words := bytes.Fields(line)
	var b strings.Builder
	b.WriteString("^")
	used := map[string]bool{}
	n := 0
	for i, w := range words {
		if i == 4 || i == len(words)-1 {
			break
		}
		name := ""
		switch k := classify(w, false); {
		case k == hLevel:
			name = "level"
		case k == hNum:
			name = "pid"
		case k == hColon || k == hDotted || k == hCaps:
			name = "component"
		case k == hHost:
			name = "host"
		case bytes.ContainsAny(w, ":/-") && bytes.IndexFunc(w, func(r rune) bool { return r >= '0' && r <= '9' }) >= 0:
			name = "time"
		}
		if name == "" || used[name] {
			name = "f" + strconv.Itoa(i+1)
		}
		used[name] = true
		if n > 0 {
			b.WriteString(`\s+`)
		}
		b.WriteString("(?P<" + name + `>\S+)`)
		n++
		if name == "component" {
			break // the message usually starts after the component
		}
	}
	if n > 0 {
		b.WriteString(`\s+`)
	}
	b.WriteString("(?P<msg>.*)$")
	return b.String()
}
