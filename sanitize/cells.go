package sanitize

import (
	"strconv"
	"strings"
)

// CSVCell makes a text cell safe for a CSV file that a spreadsheet may
// open: control characters are escaped (String), and a cell that starts
// with =, +, -, @, a tab or a carriage return, which a spreadsheet would
// take for a formula, gets a leading apostrophe (the usual CSV-injection
// defence, as OWASP describes it), unless it is a plain number such as -3,
// which a spreadsheet reads as the number it is, or that one character
// alone. Numbers written by bitsift itself are not text cells and are left
// alone.
func CSVCell(s string) string {
	if len(s) < 2 { // a lone sign or @ runs nothing (and "-" is how stdin is named)
		return String(s)
	}
	switch s[0] {
	case '=', '+', '-', '@', '\t', '\r':
		if _, err := strconv.ParseFloat(s, 64); err != nil {
			s = "'" + s
		}
	}
	return String(s)
}

// mdSpecial is every ASCII punctuation character Markdown may act on
// (CommonMark lets any of them be escaped with a backslash), and the
// colon, so that no "scheme://" is turned into a link by the GFM
// autolink extension.
const mdSpecial = "\\`*_{}[]()#+-.!|<>~&:"

// MarkdownCell makes text from a log safe in a Markdown table cell:
// control characters escaped (String), and every character Markdown acts
// on escaped with a backslash, so that no link, image, autolink, HTML tag,
// emphasis or table break comes from a value.
func MarkdownCell(s string) string {
	s = String(s)
	if !strings.ContainsAny(s, mdSpecial) {
		return s
	}
	var b strings.Builder
	b.Grow(len(s) + 8)
	for i := 0; i < len(s); i++ {
		c := s[i]
		if strings.IndexByte(mdSpecial, c) >= 0 {
			b.WriteByte('\\')
		}
		b.WriteByte(c)
	}
	return b.String()
}
