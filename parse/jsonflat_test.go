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

// fullJSON parses line with the full parser only.
func fullJSON(line []byte, rec *Record) error {
	var j JSON
	return j.full(line, rec)
}

func flatFields(r *Record) [][2]string {
	var out [][2]string
	for i := 0; i < r.Len(); i++ {
		out = append(out, [2]string{string(r.Key(i)), string(r.Value(i))})
	}
	return out
}

// checkFlat: where the flat scanner takes a line, the full parser gives the
// same fields; where it does not, the record is left as it was.
func checkFlat(t *testing.T, line []byte) (took bool) {
	t.Helper()
	var flat, full Record
	flat.AddString("before", "x") // the flat scanner must not touch it
	took = (&JSON{}).flat(line, &flat)
	if !took {
		if flat.Len() != 1 || string(flat.Value(0)) != "x" || len(flat.buf) != len("beforex") {
			t.Fatalf("%q: the flat scanner gave up but left the record changed: %v", line, flatFields(&flat))
		}
		return false
	}
	if err := fullJSON(line, &full); err != nil {
		t.Fatalf("%q: the flat scanner took a line the full parser rejects (%v)", line, err)
	}
	if got, want := flatFields(&flat)[1:], flatFields(&full); !reflect.DeepEqual(got, want) && len(got)+len(want) > 0 {
		t.Fatalf("%q: flat %v, full %v", line, got, want)
	}
	return true
}

// TestJSONFlatAgreesWithFull runs the flat scanner and the full parser on
// the fuzz corpus and on random lines, flat and not (nesting, escapes,
// repeated keys, damaged text), and checks they agree wherever the flat one
// takes the line, and that it takes the plain flat ones.
func TestJSONFlatAgreesWithFull(t *testing.T) {
	seeds, _ := filepath.Glob("testdata/fuzz/FuzzJSON/*")
	for _, p := range seeds {
		b, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		s := string(b)
		if i := strings.Index(s, "[]byte("); i >= 0 {
			if v, err := strconv.Unquote(strings.TrimSuffix(strings.TrimSpace(s[i+7:]), ")")); err == nil {
				checkFlat(t, []byte(v))
			}
		}
	}
	r := rand.New(rand.NewPCG(5, 5))
	parts := []string{`"berth":"b7"`, `"tons":12.5`, `"ok":true`, `"crane":null`, `"n":-3e2`, `"cargo":"crates of \"figs\""`,
		`"pos":{"x":1}`, `"tags":["a","b"]`, `"berth":"b9"`, ` "pad" : "x" `, `"":""`, `"u":"\u00e9"`, `"bad":tru`, `"q":"é"`}
	took := 0
	for n := 0; n < 20000; n++ {
		var b strings.Builder
		b.WriteString("{")
		k := r.IntN(6)
		for i := 0; i < k; i++ {
			if i > 0 {
				b.WriteString(",")
			}
			b.WriteString(parts[r.IntN(len(parts))])
		}
		b.WriteString("}")
		line := []byte(b.String())
		if r.IntN(10) == 0 && len(line) > 2 {
			line = line[:r.IntN(len(line))] // damaged
		}
		if checkFlat(t, line) {
			took++
		}
	}
	if took < 2000 {
		t.Errorf("the flat scanner took only %d of 20000 lines", took)
	}
	if !checkFlat(t, []byte(`{"ts":"2026-03-14T06:00:00Z","level":"info","latency_ms":18.1}`)) {
		t.Error("a plain flat line went to the full parser")
	}
}

// FuzzJSONFlat checks the flat scanner against the full parser on any line.
func FuzzJSONFlat(f *testing.F) {
	f.Add([]byte(`{"a":"b","c":1}`))
	f.Add([]byte(`{"a":"b","a":"c"}`))
	f.Fuzz(func(t *testing.T, line []byte) { checkFlat(t, line) })
}

// Keys whose signatures (keySig) collide are still told apart, and a
// repeated key is still found after a collision: the flat scanner takes
// the first line and leaves the second to the full parser.
func TestJSONFlatKeySignatures(t *testing.T) {
	bySig := map[uint]string{}
	var a, b string
	for i := 0; a == ""; i++ {
		k := "k" + strconv.Itoa(i)
		if o, ok := bySig[keySig([]byte(k))]; ok {
			a, b = o, k
		}
		bySig[keySig([]byte(k))] = k
	}
	distinct := `{"` + a + `":"1","` + b + `":"2","berth":"b7"}`
	if !checkFlat(t, []byte(distinct)) {
		t.Errorf("%s: keys %s and %s share a signature but differ; the flat scanner should take it", distinct, a, b)
	}
	repeated := `{"` + a + `":"1","` + b + `":"2","` + b + `":"3"}`
	if checkFlat(t, []byte(repeated)) {
		t.Errorf("%s: the flat scanner took a repeated key", repeated)
	}
}
