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
