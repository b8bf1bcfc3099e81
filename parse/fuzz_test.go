package parse

import (
	"testing"
	"unicode/utf8"
)

// fuzzFormat checks what must hold for every input: no panic, and a
// rejection always has a reason.
func fuzzFormat(f *testing.F, mk func() Format, seeds ...string) {
	for _, s := range seeds {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, line []byte) {
		format := mk()
		var rec Record
		err := format.Parse(line, &rec)
		if err != nil && err.Error() == "" {
			t.Fatalf("rejection without a reason for %q", line)
		}
		_ = format.Sniff(line)
		for i := 0; i < rec.Len(); i++ {
			_, _ = rec.Key(i), rec.Value(i)
		}
		_ = utf8.Valid(line)
	})
}

func FuzzJSON(f *testing.F) {
	fuzzFormat(f, func() Format { return &JSON{} },
		`{"a":1,"b":{"c":[1,2,{"d":"e"}]},"s":"\u00e9\n"}`, `{"a":"\ud800"}`, `{`, `{"a":[[[[`, `{"a":"x\`)
}

func FuzzLogfmt(f *testing.F) {
	fuzzFormat(f, func() Format { return &Logfmt{} },
		`a=1 b="x y" c`, `a="unterminated`, `="x"`, `a=\"`, `k="v\"`)
}
