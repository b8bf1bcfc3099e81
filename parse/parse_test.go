package parse

import (
	"errors"
	"strings"
	"testing"
)

func fields(r *Record) string {
	var b strings.Builder
	for i := 0; i < r.Len(); i++ {
		if i > 0 {
			b.WriteByte(' ')
		}
		b.Write(r.Key(i))
		b.WriteByte('=')
		b.Write(r.Value(i))
	}
	return b.String()
}

// The expected values follow RFC 8259 (JSON) for escapes and the flattening
// rules of the issue: dotted keys, compact JSON text for arrays and
// non-string scalars.
func TestJSON(t *testing.T) {
	for _, c := range []struct{ in, want, reject string }{
		{in: `{"a":"x","b":2}`, want: "a=x b=2"},
		{in: `{"http":{"status":200,"route":"/v1"}}`, want: "http.status=200 http.route=/v1"},
		{in: `{"tags":[ "a", 1, {"k" : true} ],"ok":true,"n":null}`, want: `tags=["a",1,{"k":true}] ok=true n=null`},
		{in: `{"s":"tab\there \"q\" \u00e9 \ud83d\ude00"}`, want: "s=tab\there \"q\" é 😀"},
		{in: `  {"x" : -1.5e3 }  `, want: "x=-1.5e3"},
		{in: `{"e":{}}`, want: "e={}"},
		{in: `{}`, want: ""},
		{in: `[1,2]`, reject: "not a JSON object"},
		{in: `{"a":"x"`, reject: "unterminated JSON object"},
		{in: `{"a":"x}`, reject: "unterminated JSON string"},
		{in: `{"a":x}`, reject: "invalid JSON value"},
		{in: `{"a":1} trailing`, reject: "text after the JSON object"},
		{in: `{a:1}`, reject: "expected a quoted key in JSON object"},
		{in: strings.Repeat(`{"a":`, 100) + "1" + strings.Repeat("}", 100), reject: "JSON nested too deeply"},
	} {
		var rec Record
		err := (&JSON{}).Parse([]byte(c.in), &rec)
		if c.reject != "" {
			if err == nil || err.Error() != c.reject || !errors.Is(err, ErrNotRecord) {
				t.Errorf("%s: err %v, want %q", c.in, err, c.reject)
			}
			continue
		}
		if err != nil {
			t.Errorf("%s: %v", c.in, err)
			continue
		}
		if got := fields(&rec); got != c.want {
			t.Errorf("%s:\n got %s\nwant %s", c.in, got, c.want)
		}
	}
}

// logfmt as described by its originators (brandur.org/logfmt) and the
// go-logfmt package's documentation: bare keys are true, values may be
// quoted with backslash escapes.
func TestLogfmt(t *testing.T) {
	for _, c := range []struct{ in, want, reject string }{
		{in: `level=info msg="tide table loaded" rows=42`, want: "level=info msg=tide table loaded rows=42"},
		{in: `a=1 debug b=`, want: "a=1 debug=true b="},
		{in: `q="say \"hi\"\n"`, want: "q=say \"hi\"\n"},
		{in: "a=1\tb=2", want: "a=1 b=2"},
		{in: `msg="open`, reject: "unterminated quoted value in logfmt"},
		{in: `=x a=1`, reject: "logfmt pair with an empty key"},
		{in: `just some words`, reject: "no key=value pair: not logfmt"},
	} {
		var rec Record
		err := (&Logfmt{}).Parse([]byte(c.in), &rec)
		if c.reject != "" {
			if err == nil || err.Error() != c.reject {
				t.Errorf("%s: err %v, want %q", c.in, err, c.reject)
			}
			continue
		}
		if err != nil {
			t.Errorf("%s: %v", c.in, err)
			continue
		}
		if got := fields(&rec); got != c.want {
			t.Errorf("%s:\n got %s\nwant %s", c.in, got, c.want)
		}
	}
}

func TestDetect(t *testing.T) {
	for _, c := range []struct {
		name  string
		lines []string
	}{
		{"json", []string{`{"a":1}`, `{"a":2,"b":"x y"}`, ``}},
		{"logfmt", []string{`ts=1 level=info msg="a b"`, `ts=2 level=warn msg=c`}},
	} {
		var sample [][]byte
		for _, l := range c.lines {
			sample = append(sample, []byte(l))
		}
		d, err := Detect(sample)
		if err != nil || d.Format.Name() != c.name || d.Confidence <= 0.5 {
			t.Errorf("%s: detected %v (%.2f), %v", c.name, d.Format, d.Confidence, err)
		}
	}
}

// TestNoAllocs: the hot path allocates nothing per field once buffers grew.
func TestNoAllocs(t *testing.T) {
	j := []byte(`{"ts":"2026-03-14T06:00:00Z","host":"qs-api-01","http":{"status":200,"ms":12.5},"tags":["a","b"],"msg":"ok \"x\""}`)
	l := []byte(`ts=2026-03-14T06:00:00Z host=qs-api-01 status=200 ms=12.5 msg="ok \"x\"" debug`)
	var rec Record
	for _, c := range []struct {
		f    Format
		line []byte
	}{{&JSON{}, j}, {&Logfmt{}, l}} {
		allocs := testing.AllocsPerRun(100, func() {
			rec.Reset()
			if err := c.f.Parse(c.line, &rec); err != nil {
				t.Fatal(err)
			}
		})
		if allocs != 0 {
			t.Errorf("%s: %.1f allocations per line", c.f.Name(), allocs)
		}
	}
}

func TestLines(t *testing.T) {
	in := "a\r\nbb\n\nccc\nlonglonglong\nlast"
	l := NewLines(strings.NewReader(in), 8)
	var got []string
	for {
		line, n, err := l.Next()
		if err != nil && !errors.Is(err, ErrLineTooLong) {
			break
		}
		if errors.Is(err, ErrLineTooLong) {
			got = append(got, "TOO-LONG")
			continue
		}
		got = append(got, string(line))
		_ = n
	}
	want := "a|bb||ccc|TOO-LONG|last"
	if strings.Join(got, "|") != want || !l.Partial {
		t.Errorf("lines %q (partial %v), want %q and a partial last line", strings.Join(got, "|"), l.Partial, want)
	}
}
