package parse

import (
	"encoding/json"
	"fmt"
	"sort"
	"testing"
)

// flatten names a decoded JSON object's members as the parser does: nested
// objects with dots, anything else as its compact JSON (strings unquoted).
func flatten(prefix string, m map[string]any, out map[string]string) {
	for k, v := range m {
		switch v := v.(type) {
		case map[string]any:
			if len(v) == 0 {
				out[prefix+k] = "{}"
				continue
			}
			flatten(prefix+k+".", v, out)
		case string:
			out[prefix+k] = v
		default:
			b, _ := json.Marshal(v)
			out[prefix+k] = string(b)
		}
	}
}

// TestJSONDuplicateKeysKeepLast: a key given twice at one level keeps its
// last value, a later object replacing an earlier one whole, as Go's
// encoding/json does (its documentation: "the last one wins" for
// duplicates when unmarshalling into a map) and as jq and Python do; the
// record says so.
func TestJSONDuplicateKeysKeepLast(t *testing.T) {
	for _, line := range []string{
		`{"berth":"4","berth":"9"}`,
		`{"a":1,"b":2,"a":3,"a":4}`,
		`{"ship":{"name":"Tern","flag":"NO"},"ship":{"imo":"9074729"}}`,
		`{"ship":{"name":"Tern","name":"Skua"},"tide":"high"}`,
		`{"x":1,"ship":{"a":1},"y":2,"ship":"none","z":{"ship":3,"ship":4}}`,
		`{"q":{"r":{"s":1}},"q":{"r":{"t":2}},"q":{"r":{"s":5,"s":6}}}`,
		`{"a\u0062":1,"ab":2}`,
		`{"n":1,"m":{"n":2},"n":3}`,
	} {
		var m map[string]any
		if err := json.Unmarshal([]byte(line), &m); err != nil {
			t.Fatal(err)
		}
		want := map[string]string{}
		flatten("", m, want)
		var j JSON
		var rec Record
		if err := j.Parse([]byte(line), &rec); err != nil {
			t.Fatalf("%s: %v", line, err)
		}
		got := map[string]string{}
		for i := 0; i < rec.Len(); i++ {
			k := string(rec.Key(i))
			if _, twice := got[k]; twice {
				t.Errorf("%s: %s kept twice", line, k)
			}
			got[k] = string(rec.Value(i))
		}
		if fmt.Sprint(sorted(got)) != fmt.Sprint(sorted(want)) {
			t.Errorf("%s:\n got  %v\n want %v (encoding/json)", line, sorted(got), sorted(want))
		}
		if !rec.DupKeys {
			t.Errorf("%s: not marked as having duplicate keys", line)
		}
	}
	var j JSON
	var rec Record
	j.Parse([]byte(`{"a":{"b":1},"c":{"b":2},"b":3}`), &rec)
	if rec.DupKeys || rec.Len() != 3 {
		t.Errorf("equal keys at different levels are no duplicates: %d fields, dup %v", rec.Len(), rec.DupKeys)
	}
}

func sorted(m map[string]string) []string {
	var out []string
	for k, v := range m {
		out = append(out, k+"="+v)
	}
	sort.Strings(out)
	return out
}
