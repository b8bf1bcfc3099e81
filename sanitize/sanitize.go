// Package sanitize makes untrusted text from logs safe to draw on a
// terminal: control characters and escape sequences are shown escaped
// (ESC as \x1b, BEL as \a, ...) rather than sent, invalid UTF-8 becomes
// U+FFFD, and widths are measured in terminal cells, so wide and zero-width
// characters line up.
package sanitize

import (
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"

	"github.com/charmbracelet/x/ansi"
)

// String returns s with every control character (C0, DEL, C1) and every
// format or line-separator character written as a Go-style escape, and
// invalid UTF-8 replaced. The result holds no byte that a terminal acts on.
func String(s string) string {
	if safe(s) {
		return s
	}
	var b strings.Builder
	b.Grow(len(s) + 8)
	for i := 0; i < len(s); {
		r, size := utf8.DecodeRuneInString(s[i:])
		i += size
		switch {
		case r == utf8.RuneError && size == 1:
			b.WriteRune(utf8.RuneError)
		case r == '\n':
			b.WriteString(`\n`)
		case r == '\t':
			b.WriteString(`\t`)
		case r == '\r':
			b.WriteString(`\r`)
		case r == 0x07:
			b.WriteString(`\a`)
		case r < 0x20 || r == 0x7f || (r >= 0x80 && r < 0xa0):
			b.WriteString(`\x`)
			if r < 0x10 {
				b.WriteByte('0')
			}
			b.WriteString(strconv.FormatInt(int64(r), 16))
		case unicode.Is(unicode.Cf, r) || r == 0x2028 || r == 0x2029:
			// Bidi overrides and other invisible format characters can
			// make a value read as something it is not.
			b.WriteString(`\u`)
			b.WriteString(strconv.FormatInt(int64(r)|0x10000, 16)[1:])
		default:
			b.WriteRune(r)
		}
	}
	return b.String()
}

func safe(s string) bool {
	for i := 0; i < len(s); i++ {
		c := s[i]
		if c < 0x20 || c >= 0x7f {
			return false
		}
	}
	return true
}

// Width is the number of terminal cells s takes (s must be sanitised).
func Width(s string) int { return ansi.StringWidth(s) }

// Fit sanitises s and cuts it to at most w cells, marking a cut with "…".
func Fit(s string, w int) string {
	s = String(s)
	if w <= 0 {
		return ""
	}
	if ansi.StringWidth(s) <= w {
		return s
	}
	return ansi.Truncate(s, w, "…")
}

// Pad sanitises s and fits it to exactly w cells, padding on the right.
func Pad(s string, w int) string {
	s = Fit(s, w)
	if n := ansi.StringWidth(s); n < w {
		s += strings.Repeat(" ", w-n)
	}
	return s
}
