// Package hostile writes log streams meant to break a log reader: binary
// garbage, NUL bytes, invalid UTF-8, terminal escape sequences in values and
// keys, JSON nested past the cap, lines past --max-line, CRLF endings, a
// flood of distinct field names, blank lines and an unterminated last line,
// mixed with well-formed JSON records. Tests use it to check that every line
// is counted and nothing reaches the terminal.
package hostile

import (
	"bytes"
	"fmt"
	"math/rand/v2"
	"strings"
)

// Title is the terminal title the escape sequences in the stream try to set.
const Title = "PWNED-BY-LOG"

// Lines returns n lines (the last without a newline) and how many of them
// are well-formed JSON records that a reader must accept. maxLine is the
// line limit the reader uses; some lines exceed it.
func Lines(n int, maxLine int) (data []byte, good int) {
	r := rand.New(rand.NewPCG(42, 42))
	var b bytes.Buffer
	for i := 0; i < n; i++ {
		last := i == n-1
		switch k := i % 20; {
		case k == 0:
			b.Write(garbage(r))
		case k == 1:
			// A raw NUL byte inside a JSON string breaks RFC 8259, but
			// log writers do emit such lines: readers are expected to
			// take them (the value is shown escaped).
			fmt.Fprintf(&b, `{"msg":"nul\u0000inside","raw":"a%cb","n":%d}`, 0, i)
			good++
		case k == 2:
			fmt.Fprintf(&b, "{\"bad_utf8\":\"\xff\xfe\xfd\",\"n\":%d}", i)
			good++
		case k == 3:
			fmt.Fprintf(&b, `{"title":"\u001b]0;%s\u0007","clear":"\u001b[2J\u001b[H","bell":"\u0007","n":%d}`, Title, i)
			good++
		case k == 4:
			b.WriteString(strings.Repeat(`{"d":`, 200) + "1" + strings.Repeat("}", 200))
		case k == 5:
			b.WriteString(`{"big":"` + strings.Repeat("x", maxLine+10) + `"}`)
		case k == 6:
			fmt.Fprintf(&b, "{\"crlf\":true,\"n\":%d}\r", i)
			good++
		case k == 7:
			// Many distinct field names across the stream.
			b.WriteByte('{')
			for j := 0; j < 100; j++ {
				if j > 0 {
					b.WriteByte(',')
				}
				fmt.Fprintf(&b, `"f%d_%d":%d`, i, j, j)
			}
			b.WriteByte('}')
			good++
		case k == 8:
			// blank
		case k == 9:
			b.WriteString("\x1b[31mred text and \x1b]0;" + Title + "\x07 not json")
		case k == 10:
			fmt.Fprintf(&b, "{\"\x1b[1mkey\x1b[0m\":\"v\",\"n\":%d}", i)
			good++
		default:
			fmt.Fprintf(&b, `{"svc":"tidewatch","level":"%s","gauge":"g-%d","n":%d}`,
				[]string{"info", "warn", "error"}[r.IntN(3)], r.IntN(40), i)
			good++
		}
		if !last {
			b.WriteByte('\n')
		}
	}
	return b.Bytes(), good
}

func garbage(r *rand.Rand) []byte {
	g := make([]byte, 20+r.IntN(200))
	for i := range g {
		g[i] = byte(r.IntN(256))
		if g[i] == '\n' {
			g[i] = 0
		}
	}
	return g
}
