package parse

import (
	"errors"
	"maps"
	"slices"
	"strings"
	"testing"
	"unicode/utf8"
)

// fieldsOf returns a record's fields as a map (the first of a repeated key).
func fieldsOf(rec *Record) map[string]string {
	m := map[string]string{}
	for i := 0; i < rec.Len(); i++ {
		k := string(rec.Key(i))
		if _, dup := m[k]; !dup {
			m[k] = string(rec.Value(i))
		}
	}
	return m
}

// parseCase is one line and the fields it must give, or the rejection
// reason it must give (a substring).
type parseCase struct {
	name   string
	line   string
	want   map[string]string
	reject string
}

func runParseCases(t *testing.T, f Format, cases []parseCase) {
	t.Helper()
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			var rec Record
			err := f.Parse([]byte(c.line), &rec)
			if c.reject != "" {
				if err == nil {
					t.Fatalf("parsed %q to %v, want rejection %q", c.line, fieldsOf(&rec), c.reject)
				}
				if !errors.Is(err, ErrNotRecord) || !strings.Contains(err.Error(), c.reject) {
					t.Fatalf("rejection %q, want one containing %q", err, c.reject)
				}
				return
			}
			if err != nil {
				t.Fatalf("rejected %q: %v", c.line, err)
			}
			got := fieldsOf(&rec)
			if !maps.Equal(got, c.want) {
				keys := slices.Sorted(maps.Keys(got))
				for _, k := range keys {
					if got[k] != c.want[k] {
						t.Errorf("%s = %q, want %q", k, got[k], c.want[k])
					}
				}
				for k, v := range c.want {
					if _, ok := got[k]; !ok {
						t.Errorf("%s missing, want %q", k, v)
					}
				}
			}
		})
	}
}

// fuzzParse checks what every parser must keep on any input: no panic, a
// rejection that says why, and fields whose spans lie inside the record.
func fuzzParse(t *testing.T, f Format, line []byte) {
	var rec Record
	s := f.Sniff(line)
	if s < 0 || s > 1 {
		t.Fatalf("Sniff = %v, outside 0..1", s)
	}
	err := f.Parse(line, &rec)
	if err != nil {
		if !errors.Is(err, ErrNotRecord) && !errors.Is(err, ErrPart) {
			t.Fatalf("error %v is not a rejection", err)
		}
		if err.Error() == "" {
			t.Fatal("rejection without a reason")
		}
		return
	}
	for i := 0; i < rec.Len(); i++ {
		_ = rec.Key(i)
		v := rec.Value(i)
		if utf8.Valid(line) && !utf8.Valid(v) && f.Name() != "json" {
			t.Fatalf("field %q: invalid UTF-8 from valid input", rec.Key(i))
		}
	}
}
