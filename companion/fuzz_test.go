package companion

import (
	"fmt"
	"strings"
	"testing"
)

// The text rules of the companions on arbitrary input: masking never
// panics, keeps at most maxTemplateWords+1 words, and masks the same text
// alike; a template id always names a group whose text has the message's
// word count, and the same message gets the same id again.
func FuzzTemplate(f *testing.F) {
	for _, s := range []string{
		"berth 12 over capacity (41 of 40)", "relay7.quay.example:443 open through proxy 10.0.0.1:8080 HTTPS",
		`zone "north bay" is dry`, "label='x", "=\"", "<*> <num>", "\x00\xff \t", "a=b=c d=\"e f\" g",
		"session opened for user ops by (uid=0)", strings.Repeat("w ", 100),
	} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, msg string) {
		tp := NewTemplates("msg")
		tp.mask([]byte(msg))
		if len(tp.words) > maxTemplateWords+1 {
			t.Fatalf("%d words", len(tp.words))
		}
		first := string(tp.masked())
		// The words read back from the masked text (Resolve, after a
		// Labeller) are the words mask made.
		words := fmt.Sprintf("%q", tp.words)
		back := NewTemplates("msg")
		back.split([]byte(first))
		if got := fmt.Sprintf("%q", back.words); got != words {
			t.Fatalf("masked %q splits into %s, mask made %s", first, got, words)
		}
		tp.mask([]byte(msg))
		if again := string(tp.masked()); again != first {
			t.Fatalf("mask not deterministic: %q then %q", first, again)
		}
		id := string(tp.Value([]byte(msg)))
		n, ok := ParseID(id)
		if !ok {
			if tp.Groups() < maxTemplates {
				t.Fatalf("value %q is no id", id)
			}
			return
		}
		text, ok := tp.Text(n)
		if !ok || len(strings.Fields(text)) != len(strings.Fields(first)) && first != "" {
			t.Fatalf("id %s: text %q for masked %q", id, text, first)
		}
		if again := string(tp.Value([]byte(msg))); again != id {
			t.Fatalf("same message, ids %s then %s", id, again)
		}
	})
}

// A bucket label names an interval that holds the number (checked by
// reading the label's edges back), or NaN, a null, 0 or an infinity.
func FuzzBucket(f *testing.F) {
	for _, s := range []string{"0", "1.8", "-250", "1e308", "1e-320", "NaN", "-", "", "12ms", "+7", "5."} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, v string) {
		var b Buckets
		l := string(b.Value([]byte(v)))
		x, ok := parseNumber([]byte(v))
		switch {
		case !ok || isNull([]byte(v)):
			return
		case x == 0:
			if l != "0" {
				t.Fatalf("%q: label %q", v, l)
			}
			return
		case strings.Contains(l, "Inf"):
			return // past the largest double
		}
		inner := strings.Trim(l, "[]()")
		lo, hi, found := strings.Cut(inner, ",")
		a, ok1 := parseNumber([]byte(lo))
		z, ok2 := parseNumber([]byte(hi))
		if !found || !ok1 || !ok2 {
			t.Fatalf("%q: label %q unreadable", v, l)
		}
		if x > 0 && (x < a*(1-1e-12) || x >= z*(1+1e-12)) || x < 0 && (x <= a*(1+1e-12) || x > z*(1-1e-12)) {
			t.Fatalf("%q = %g outside %q", v, x, l)
		}
	})
}
