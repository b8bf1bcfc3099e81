package cli

import (
	"encoding/json"
	"strings"
	"testing"
)

// TestRedactKeepsFigures: entropy depends only on which values are equal,
// so a keyed hash of every value leaves every figure as it was, while no
// raw value reaches the output.
func TestRedactKeepsFigures(t *testing.T) {
	p := write(t, "demo.jsonl", demoLines(5000))
	type rep struct {
		Fields []map[string]any `json:"fields"`
		Pairs  []map[string]any `json:"pairs"`
	}
	get := func(args ...string) (rep, string) {
		code, out, errs := run(t, "", append([]string{"report", "-o", "json"}, append(args, p)...)...)
		if code != 0 {
			t.Fatalf("exit %d: %s", code, errs)
		}
		var r rep
		if err := json.Unmarshal([]byte(out), &r); err != nil {
			t.Fatal(err)
		}
		return r, out
	}
	plain, _ := get()
	for _, args := range [][]string{{"--redact"}, {"--redact-fields", "host,req_id"}} {
		red, out := get(args...)
		if len(red.Fields) != len(plain.Fields) || len(red.Pairs) != len(plain.Pairs) {
			t.Fatalf("%v: %d fields %d pairs, want %d and %d", args, len(red.Fields), len(red.Pairs), len(plain.Fields), len(plain.Pairs))
		}
		for i, f := range plain.Fields {
			for _, k := range []string{"name", "kind", "distinct", "entropy_bits", "best_given", "residual_bits"} {
				if red.Fields[i][k] != f[k] {
					t.Errorf("%v: %s.%s = %v, plain %v", args, f["name"], k, red.Fields[i][k], f[k])
				}
			}
		}
		for i, pr := range plain.Pairs {
			if red.Pairs[i]["joint_bits"] != pr["joint_bits"] {
				t.Errorf("%v: H(%s,%s) differs", args, pr["target"], pr["given"])
			}
		}
		if strings.Contains(out, "qs-api-0") {
			t.Errorf("%v: a raw host name reached the output", args)
		}
	}
}
