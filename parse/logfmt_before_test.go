package parse

import (
	"math/rand/v2"
	"os"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"testing"
)

// TestLogfmtAgreesWithBefore: the one-copy parser gives every line of the
// fuzz corpus and of random logfmt-like lines (quotes, escapes, bare keys,
// tabs, damage) the fields, or the rejection, of the field-by-field parser
// it replaced; the table and README tests check both against the format's
// published descriptions.
func TestLogfmtAgreesWithBefore(t *testing.T) {
	var lines [][]byte
	seeds, _ := filepath.Glob("testdata/fuzz/FuzzLogfmt/*")
	for _, p := range seeds {
		b, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		s := string(b)
		if i := strings.Index(s, "[]byte("); i >= 0 {
			if v, err := strconv.Unquote(strings.TrimSuffix(strings.TrimSpace(s[i+7:]), ")")); err == nil {
				lines = append(lines, []byte(v))
			}
		}
	}
	r := rand.New(rand.NewPCG(3, 9))
	parts := []string{`berth=b7`, `tons=12.5`, `ok`, `msg="crane 4 stopped"`, `note="say \"hi\""`, `esc="a\nb\tc\\d"`,
		`empty=""`, `eq=a=b`, `"q"=1`, `=x`, `open="half`, `t="x"y`, `tab=\t`, `end="\`, `u=é`, "\t", "  "}
	for n := 0; n < 20000; n++ {
		var b strings.Builder
		for i := r.IntN(7); i >= 0; i-- {
			b.WriteString(parts[r.IntN(len(parts))])
			b.WriteString([]string{" ", " ", "\t", ""}[r.IntN(4)])
		}
		line := []byte(b.String())
		if r.IntN(10) == 0 && len(line) > 1 {
			line = line[:r.IntN(len(line))]
		}
		lines = append(lines, line)
	}
	took := 0
	for _, line := range lines {
		if checkLogfmt(t, line) {
			took++
		}
	}
	if took < 5000 {
		t.Errorf("only %d of %d lines were logfmt", took, len(lines))
	}
}

// checkLogfmt compares Logfmt.Parse with logfmtBefore on line, after a
// field already in the record, and says whether the line was logfmt.
func checkLogfmt(t *testing.T, line []byte) bool {
	t.Helper()
	var got, want Record
	got.AddString("before", "x")
	want.AddString("before", "x")
	errGot := (&Logfmt{}).Parse(line, &got)
	errWant := logfmtBefore(line, &want)
	if (errGot == nil) != (errWant == nil) || errGot != nil && errGot.Error() != errWant.Error() {
		t.Fatalf("%q: error %v, before %v", line, errGot, errWant)
	}
	if errGot != nil {
		return false
	}
	if g, w := flatFields(&got), flatFields(&want); !reflect.DeepEqual(g, w) {
		t.Fatalf("%q: fields %q, before %q", line, g, w)
	}
	return true
}

// FuzzLogfmtAgrees compares the two parsers on any line.
func FuzzLogfmtAgrees(f *testing.F) {
	f.Add([]byte(`a=1 b="c \"d\"" e`))
	f.Fuzz(func(t *testing.T, line []byte) { checkLogfmt(t, line) })
}

// logfmtBefore is Logfmt.Parse as it was before it read the line in one
// copy (field by field), the reference for TestLogfmtAgreesWithBefore.
func logfmtBefore(line []byte, rec *Record) error {
	i := 0
	n := len(line)
	pairs := false
	for {
		for i < n && (line[i] == ' ' || line[i] == '\t') {
			i++
		}
		if i >= n {
			break
		}
		ks := i
		for i < n && line[i] != '=' && line[i] != ' ' && line[i] != '\t' {
			if line[i] == '"' {
				return reject("quote in logfmt key")
			}
			i++
		}
		key := line[ks:i]
		if len(key) == 0 {
			return reject("logfmt pair with an empty key")
		}
		if i >= n || line[i] != '=' {
			k0, v0 := rec.begin(key)
			rec.buf = append(rec.buf, "true"...)
			rec.end(k0, v0)
			continue
		}
		i++ // '='
		pairs = true
		k0, v0 := rec.begin(key)
		if i < n && line[i] == '"' {
			i++
			closed := false
			for i < n {
				c := line[i]
				if c == '"' {
					i++
					closed = true
					break
				}
				if c == '\\' && i+1 < n {
					i++
					switch line[i] {
					case 'n':
						c = '\n'
					case 't':
						c = '\t'
					case 'r':
						c = '\r'
					default:
						c = line[i]
					}
				}
				rec.buf = append(rec.buf, c)
				i++
			}
			if !closed {
				return reject("unterminated quoted value in logfmt")
			}
			if i < n && line[i] != ' ' && line[i] != '\t' {
				return reject("text right after a quoted logfmt value")
			}
		} else {
			vs := i
			for i < n && line[i] != ' ' && line[i] != '\t' {
				i++
			}
			rec.buf = append(rec.buf, line[vs:i]...)
		}
		rec.end(k0, v0)
	}
	if !pairs {
		return reject("no key=value pair: not logfmt")
	}
	return nil
}
