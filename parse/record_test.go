package parse

import "testing"

// SetValue replaces one value and leaves the other fields as they were.
func TestRecordSetValue(t *testing.T) {
	var r Record
	r.AddString("msg", "gate 4 opened")
	r.AddString("msg~template", "gate <num> opened")
	r.AddString("crane", "c7")
	r.SetValue(1, []byte("#12"))
	want := [][2]string{{"msg", "gate 4 opened"}, {"msg~template", "#12"}, {"crane", "c7"}}
	for i, kv := range want {
		if string(r.Key(i)) != kv[0] || string(r.Value(i)) != kv[1] {
			t.Errorf("field %d = %s=%s, want %s=%s", i, r.Key(i), r.Value(i), kv[0], kv[1])
		}
	}
	var c Record
	c.CopyFrom(&r)
	if v, _ := c.Get("msg~template"); string(v) != "#12" {
		t.Errorf("copy: %s", v)
	}
}

// TestSameKeys: the same keys in the same order, whatever the values; a
// key of another length or text, another order or count, is not the same.
func TestSameKeys(t *testing.T) {
	rec := func(kv ...string) *Record {
		r := &Record{}
		for i := 0; i+1 < len(kv); i += 2 {
			r.AddString(kv[i], kv[i+1])
		}
		return r
	}
	a := rec("berth", "b1", "crane", "c2")
	for _, c := range []struct {
		b    *Record
		same bool
	}{
		{rec("berth", "b9999", "crane", ""), true},
		{rec("crane", "c2", "berth", "b1"), false},
		{rec("berth", "b1"), false},
		{rec("berth", "b1", "crane", "c2", "tide", "4"), false},
		{rec("berth", "b1", "cranf", "c2"), false},
		{rec("berth", "b1", "cran", "ec2"), false},
	} {
		if got := a.SameKeys(c.b); got != c.same || c.b.SameKeys(a) != c.same {
			t.Errorf("SameKeys(%v) = %v, want %v", c.b.spans, got, c.same)
		}
	}
	// Keys of every length class (the compare takes 4 to 16 bytes as two
	// words), differing in one byte anywhere.
	for _, k := range []string{"a", "ab", "abc", "abcd", "abcdefg", "abcdefgh", "abcdefghijkl", "abcdefghijklmnop", "abcdefghijklmnopq", "abcdefghijklmnopqrstuvwxyz0123"} {
		a := rec("tide", "1", k, "v")
		if !a.SameKeys(rec("tide", "2", k, "w")) {
			t.Errorf("%q: not the same as itself", k)
		}
		for i := range k {
			other := []byte(k)
			other[i] ^= 1
			if a.SameKeys(rec("tide", "1", string(other), "v")) {
				t.Errorf("%q: the same as %q", k, other)
			}
		}
	}
}
