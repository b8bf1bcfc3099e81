package cli

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/gonum/stat"

	"bitsift/profile"
)

// reportFigures is the part of a JSON report a merge must reproduce.
type reportFigures struct {
	Records int `json:"records"`
	Fields  []struct {
		Name      string  `json:"name"`
		Kind      string  `json:"kind"`
		Entropy   float64 `json:"entropy_bits"`
		Distinct  int     `json:"distinct"`
		BestGiven string  `json:"best_given"`
		Residual  float64 `json:"residual_bits"`
	} `json:"fields"`
	Pairs []map[string]any `json:"pairs"`
}

func figures(t *testing.T, js string) reportFigures {
	t.Helper()
	var r reportFigures
	if err := json.Unmarshal([]byte(js), &r); err != nil {
		t.Fatalf("%v in %.300s", err, js)
	}
	return r
}

// sliceProfiles writes the lines in n slices and a profile of each.
func sliceProfiles(t *testing.T, data []byte, n int, extra ...string) (dir string) {
	t.Helper()
	dir = t.TempDir()
	lines := bytes.SplitAfter(data, []byte("\n"))
	if len(lines[len(lines)-1]) == 0 {
		lines = lines[:len(lines)-1]
	}
	per := (len(lines) + n - 1) / n
	for i := 0; i < n; i++ {
		part := bytes.Join(lines[min(i*per, len(lines)):min((i+1)*per, len(lines))], nil)
		log := filepath.Join(dir, fmt.Sprintf("slice%02d.jsonl", i))
		if err := os.WriteFile(log, part, 0o644); err != nil {
			t.Fatal(err)
		}
		args := append([]string{"report", "-o", "json", "--profile-out", filepath.Join(dir, fmt.Sprintf("slice%02d.bsp", i))}, extra...)
		if code, _, errs := run(t, "", append(args, log)...); code != 0 {
			t.Fatalf("slice %d: exit %d: %s", i, code, errs)
		}
		os.Remove(log)
	}
	return dir
}

// TestMergeTenSlicesEqualsWhole: the profiles of ten slices of a file,
// added, give every field's and pair's figures, distinct counts and kinds
// of one report over the whole file. The reference is the model reading
// the file (another code path: incremental tables over records), and the
// entropy of one field is checked against gonum's stat.Entropy over counts
// made here from the JSON lines.
func TestMergeTenSlicesEqualsWhole(t *testing.T) {
	data := demoLines(30000)
	whole := write(t, "whole.jsonl", data)
	code, wantJS, errs := run(t, "", "report", "-o", "json", whole)
	if code != 0 {
		t.Fatal(errs)
	}
	dir := sliceProfiles(t, data, 10)
	code, gotJS, errs := run(t, "", "merge", "-o", "json", dir)
	if code != 0 {
		t.Fatalf("merge: exit %d: %s", code, errs)
	}
	want, got := figures(t, wantJS), figures(t, gotJS)
	if got.Records != want.Records || len(got.Fields) != len(want.Fields) {
		t.Fatalf("merged %d records, %d fields; whole file %d, %d", got.Records, len(got.Fields), want.Records, len(want.Fields))
	}
	for i, w := range want.Fields {
		g := got.Fields[i]
		if g.Name != w.Name || g.Kind != w.Kind || g.Distinct != w.Distinct || g.BestGiven != w.BestGiven ||
			math.Abs(g.Entropy-w.Entropy) > 1e-9 || math.Abs(g.Residual-w.Residual) > 1e-9 {
			t.Errorf("field %d: merged %+v, whole %+v", i, g, w)
		}
	}
	if len(got.Pairs) != len(want.Pairs) {
		t.Fatalf("merged %d pairs, whole %d", len(got.Pairs), len(want.Pairs))
	}
	for i := range want.Pairs {
		for k, wv := range want.Pairs[i] {
			gv := got.Pairs[i][k]
			if wf, ok := wv.(float64); ok {
				if gf, _ := gv.(float64); math.Abs(gf-wf) > 1e-9 {
					t.Errorf("pair %d %s: merged %v, whole %v", i, k, gv, wv)
				}
			} else if fmt.Sprint(gv) != fmt.Sprint(wv) {
				t.Errorf("pair %d %s: merged %v, whole %v", i, k, gv, wv)
			}
		}
	}
	// Outside check: H(route) from counts made here, by gonum.
	counts := map[string]float64{}
	for _, l := range bytes.Split(bytes.TrimSpace(data), []byte("\n")) {
		var r map[string]any
		json.Unmarshal(l, &r)
		counts[fmt.Sprint(r["route"])]++
	}
	var p []float64
	for _, c := range counts {
		p = append(p, c/30000)
	}
	href := stat.Entropy(p) / math.Ln2 // gonum gives nats
	for _, f := range got.Fields {
		if f.Name == "route" && math.Abs(f.Entropy-href) > 1e-9 {
			t.Errorf("H(route) = %.12f merged, gonum %.12f", f.Entropy, href)
		}
	}
}

// TestMergeSketchEstimates: past its sketch size an identifier's distinct
// count is a KMV estimate, within a few standard errors (about 1/√k, Beyer
// et al. 2007) of the truth, and marked as one.
func TestMergeSketchEstimates(t *testing.T) {
	data := demoLines(20000)
	dir := sliceProfiles(t, data, 4, "--sketch-size", "2048")
	code, js, errs := run(t, "", "merge", "-o", "json", dir)
	if code != 0 {
		t.Fatal(errs)
	}
	for _, f := range figures(t, js).Fields {
		if f.Name == "req_id" {
			if rel := math.Abs(float64(f.Distinct)-20000) / 20000; rel > 4/math.Sqrt(2048) {
				t.Errorf("req_id distinct %d, want about 20000 (error %.3f)", f.Distinct, rel)
			}
		}
	}
	if code, text, _ := run(t, "", "merge", dir); code != 0 || !strings.Contains(text, "~") {
		t.Errorf("an estimated distinct count is not marked ~:\n%s", text)
	}
}

// TestMergeRefuses: overlapping coverage and unshared redaction keys.
func TestMergeRefuses(t *testing.T) {
	data := demoLines(2000)
	log := write(t, "a.jsonl", data)
	dir := t.TempDir()
	a, b := filepath.Join(dir, "a.bsp"), filepath.Join(dir, "b.bsp")
	for _, p := range []string{a, b} {
		if code, _, errs := run(t, "", "report", "--profile-out", p, log); code != 0 {
			t.Fatal(errs)
		}
	}
	if code, _, errs := run(t, "", "merge", a, b); code != ExitUsage || !strings.Contains(errs, "twice") {
		t.Errorf("the same file twice: exit %d, %q", code, errs)
	}
	// Redacted with per-run keys: never added.
	other := write(t, "b.jsonl", demoLines(1000))
	run(t, "", "report", "--redact", "--profile-out", a, log)
	run(t, "", "report", "--redact", "--profile-out", b, other)
	if code, _, errs := run(t, "", "merge", a, b); code != ExitUsage || !strings.Contains(errs, "keys") {
		t.Errorf("per-run keys: exit %d, %q", code, errs)
	}
	// With a shared key they add, and no raw value reaches the output.
	key := write(t, "key", []byte("0123456789abcdef0123456789abcdef"))
	run(t, "", "report", "--redact-key", key, "--profile-out", a, log)
	run(t, "", "report", "--redact-key", key, "--profile-out", b, other)
	code, out, errs := run(t, "", "merge", "-o", "json", a, b)
	if code != 0 {
		t.Fatalf("shared key: exit %d, %s", code, errs)
	}
	if strings.Contains(out, "/v1/") || strings.Contains(out, "qs-api") {
		t.Errorf("a raw value in a redacted merge:\n%.400s", out)
	}
	p, err := profile.ReadFile(a)
	if err != nil || p.Redaction == nil || p.Redaction.KeyID == "" {
		t.Errorf("redaction not recorded: %v %+v", err, p)
	}
}

// TestMergeWithin: --since/--until add only the profiles wholly inside,
// and say which were left out across a bound.
func TestMergeWithin(t *testing.T) {
	dir := sliceProfiles(t, demoLines(4000), 4) // the demo's lines are 0.5 ms apart from 2026-03-14T06:00:00Z
	// Slices of 1,000 lines: 06:00:00.0–00.4995, 00.5–00.9995, 01.0–…
	code, js, errs := run(t, "", "merge", "-o", "json", "--since", "2026-03-14T06:00:00.5Z", dir)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if r := figures(t, js); r.Records != 3000 {
		t.Errorf("merged %d records, want the 3,000 of the last three slices", r.Records)
	}
	code, js, errs = run(t, "", "merge", "-o", "json", "--until", "2026-03-14T06:00:00.7Z", dir)
	if code != 0 || figures(t, js).Records != 1000 || !strings.Contains(errs, "across the bounds") {
		t.Errorf("--until: exit %d, %.200s, %q", code, js, errs)
	}
}
