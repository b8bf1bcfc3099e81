package model

import "testing"

// TestParseCondCompanionNames: the name of a field bitsift makes holds a
// ~, which is also the regular-expression operator; a condition on such a
// field reads as one, and a plain regular expression still does.
func TestParseCondCompanionNames(t *testing.T) {
	for _, tc := range []struct {
		in, field, value string
		not, re          bool
	}{
		{"latency_ms~log=[18,32)", "latency_ms~log", "[18,32)", false, false},
		{"latency_ms~log!=[18,32)", "latency_ms~log", "[18,32)", true, false},
		{"msg~template~^#1$", "msg~template", "^#1$", false, true},
		{"msg~template!~#2", "msg~template", "#2", true, true},
		{"route~^/v1/tickets", "route", "^/v1/tickets", false, true},
		{"msg~login failed", "msg", "login failed", false, true},
		{"host=qs~log", "host", "qs~log", false, false},
		{"a=b=c", "a", "b=c", false, false},
		{"note=x~log=y", "note", "x~log=y", false, false},
	} {
		c, err := ParseCond(tc.in)
		if err != nil {
			t.Fatalf("%q: %v", tc.in, err)
		}
		if c.Field != tc.field || c.Value != tc.value || c.Not != tc.not || (c.Match != nil) != tc.re {
			t.Errorf("%q: field %q value %q not %v regexp %v; want %q %q %v %v", tc.in, c.Field, c.Value, c.Not, c.Match != nil, tc.field, tc.value, tc.not, tc.re)
		}
	}
}
