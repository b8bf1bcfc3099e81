package cli

import (
	"encoding/json"
	"fmt"
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
		// Companions of redacted fields are not made (nothing may be
		// derived from a hidden value); every other figure is the same.
		fields := map[string]map[string]any{}
		for _, f := range red.Fields {
			fields[f["name"].(string)] = f
		}
		kept := func(name string) bool {
			src, _, companion := strings.Cut(name, "~")
			return !companion || args[0] != "--redact" && src != "host" && src != "req_id"
		}
		for _, f := range plain.Fields {
			name := f["name"].(string)
			r, ok := fields[name]
			if ok != kept(name) {
				t.Errorf("%v: field %s there %v, want %v", args, name, ok, kept(name))
				continue
			}
			for _, k := range []string{"kind", "distinct", "entropy_bits", "best_given", "residual_bits"} {
				if ok && (k != "best_given" || kept(fmt.Sprint(f[k]))) && r[k] != f[k] {
					t.Errorf("%v: %s.%s = %v, plain %v", args, name, k, r[k], f[k])
				}
			}
		}
		pairs := map[string]any{}
		for _, pr := range red.Pairs {
			pairs[fmt.Sprint(pr["target"], "|", pr["given"])] = pr["joint_bits"]
		}
		for _, pr := range plain.Pairs {
			if !kept(pr["target"].(string)) || !kept(pr["given"].(string)) {
				continue
			}
			if pairs[fmt.Sprint(pr["target"], "|", pr["given"])] != pr["joint_bits"] {
				t.Errorf("%v: H(%s,%s) differs", args, pr["target"], pr["given"])
			}
		}
		if strings.Contains(out, "qs-api-0") {
			t.Errorf("%v: a raw host name reached the output", args)
		}
	}
}
