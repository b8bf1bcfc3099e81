package sanitize

import "testing"

// The formula prefixes are those the OWASP "CSV Injection" page lists
// (=, +, -, @, tab, carriage return; from memory). A plain number keeps its
// sign: a spreadsheet reads it as the number it is.
func TestCSVCell(t *testing.T) {
	for in, want := range map[string]string{
		"":                "",
		"plain":           "plain",
		`=HYPERLINK("x")`: `'=HYPERLINK("x")`,
		"+1+2":            "'+1+2",
		"-2+3":            "'-2+3",
		"@SUM(A1)":        "'@SUM(A1)",
		"\t=1":            `'\t=1`,
		"\r=1":            `'\r=1`,
		"-":               "-",
		"-7":              "-7",
		"+1.5e3":          "+1.5e3",
		"a\x1b[31mred":    `a\x1b[31mred`,
	} {
		if got := CSVCell(in); got != want {
			t.Errorf("CSVCell(%q) = %q, want %q", in, got, want)
		}
	}
}
