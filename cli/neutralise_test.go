package cli

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// hostileNames are field names and values that try to act on their
// reader: a spreadsheet formula, terminal escapes (ESC, BEL, CSI as a C1
// control, NUL), a bidirectional override, and Markdown links and images.
// (The formula and link shapes are the usual CSV-injection and Markdown
// examples, written from memory.)
var hostileNames = []string{
	`=HYPERLINK("http://evil.test","x")`, "+cmd", "-2+3", "@SUM(A1)", "\tpad", "\rret",
	"esc\x1b[2Jclear", "bell\x07", "csi\u009b31m", "nul\x00byte", "bidi\u202eevil", "[click](http://evil.test)",
	"![img](http://evil.test/x.png)", "<http://evil.test>",
}

// TestOutputsNeutraliseHostileText: CSV cells that start with = + - @ tab
// or CR are neutralised; no output meant for people (text, Markdown, CSV)
// carries a raw ESC, BEL, C1 control, NUL or bidi override; Markdown turns
// no value into a link or an image.
func TestOutputsNeutraliseHostileText(t *testing.T) {
	var b strings.Builder
	for i := 0; i < 300; i++ {
		b.WriteString("{")
		for j, n := range hostileNames {
			if j > 0 {
				b.WriteString(",")
			}
			// The field named n takes few values; "berth" determines it,
			// so the names show as fields and as best predictors.
			k, _ := json.Marshal(n)
			v, _ := json.Marshal(fmt.Sprintf("%s%d", hostileNames[(j+i%3)%len(hostileNames)], i%3))
			fmt.Fprintf(&b, "%s:%s", k, v)
		}
		fmt.Fprintf(&b, ",\"berth\":%d}\n", i%3)
	}
	p := write(t, "hostile-names.jsonl", []byte(b.String()))
	for _, format := range []string{"text", "markdown", "csv"} {
		code, out, errs := run(t, "", "report", "-o", format, p)
		if code != 0 {
			t.Fatalf("%s: exit %d: %s", format, code, errs)
		}
		for _, bad := range []string{"\x1b", "\x07", "\x00", "\u009b", "\u202e", "\u0085"} {
			if strings.Contains(out, bad) {
				t.Errorf("%s: a raw %q in the output", format, bad)
			}
		}
		switch format {
		case "csv":
			cr := csv.NewReader(strings.NewReader(out))
			cr.FieldsPerRecord = -1 // the fields, then the change rows
			rows, err := cr.ReadAll()
			if err != nil {
				t.Fatalf("csv: %v", err)
			}
			for _, row := range rows[1:] {
				for _, cell := range row {
					if _, err := strconv.ParseFloat(cell, 64); err == nil {
						continue // a number bitsift wrote
					}
					if cell != "" && strings.ContainsRune("=+-@\t\r", rune(cell[0])) {
						t.Errorf("csv: cell %q starts with a formula character", cell)
					}
				}
			}
			if !strings.Contains(out, `'=HYPERLINK`) {
				t.Errorf("csv: the formula field is not there, neutralised:\n%s", out)
			}
		case "markdown":
			// What Markdown reads: backslash-escaped characters are text.
			plain := regexp.MustCompile(`\\[[:punct:]]`).ReplaceAllString(out, "")
			for _, link := range []string{"](", "![", "<http", "http:"} {
				if strings.Contains(plain, link) {
					t.Errorf("markdown: %q left as Markdown would read it:\n%s", link, out)
				}
			}
		}
	}
}
