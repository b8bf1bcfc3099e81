package cli

import (
	"bytes"
	"compress/gzip"
	"encoding/json"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"sort"
	"strings"
	"testing"

	"bitsift/internal/datasets"
)

// planJSON is the part of bitsift.plan/1 the tests read; the names are the
// issue's schema.
type planJSON struct {
	Schema  string   `json:"schema"`
	Records int      `json:"records"`
	MaxLoss *float64 `json:"max_loss_bits"`
	Drop    []string `json:"drop"`
	Derive  []struct {
		Field        string   `json:"field"`
		From         []string `json:"from"`
		TableEntries *int     `json:"table_entries"`
	} `json:"derive"`
	BitsLost       *float64 `json:"bits_lost_per_record"`
	Mismatches     *int     `json:"verified_mismatches"`
	BytesPerRecord struct {
		Before, After struct{ Raw, Compressed *float64 }
	} `json:"bytes_per_record"`
	SavedPerDay  *struct{ Raw, Compressed *float64 } `json:"bytes_saved_per_day"`
	EntropyBound *float64                            `json:"entropy_bound_bits_per_record"`
	Fields       []struct {
		Name    string   `json:"name"`
		Entropy *float64 `json:"entropy_bits"`
		Huffman *float64 `json:"huffman_bits"`
		Action  string   `json:"action"`
	} `json:"fields"`
	Measured   int    `json:"measured_records"`
	Caution    string `json:"caution"`
	Reductions []struct {
		Class        string   `json:"class"`
		Action       string   `json:"action"`
		KeepOneIn    *float64 `json:"keep_one_in"`
		ShareRecords *float64 `json:"share_records"`
		ShareBytes   *float64 `json:"share_bytes"`
		SavedPerDay  struct {
			Raw, Compressed *float64
		} `json:"bytes_saved_per_day"`
		BitsLost *float64 `json:"bits_lost_per_record"`
		Findings *int     `json:"findings_in_class"`
	} `json:"record_reductions"`
}

func runPlan(t *testing.T, args ...string) planJSON {
	t.Helper()
	code, out, errs := run(t, "", append([]string{"plan", "-o", "json"}, args...)...)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var p planJSON
	if err := json.Unmarshal([]byte(out), &p); err != nil {
		t.Fatalf("%v in %s", err, out)
	}
	if p.Schema != "bitsift.plan/1" || p.MaxLoss == nil || p.BitsLost == nil || p.Mismatches == nil ||
		p.BytesPerRecord.Before.Raw == nil || p.BytesPerRecord.After.Compressed == nil || p.SavedPerDay == nil ||
		p.EntropyBound == nil || len(p.Fields) == 0 || p.Fields[0].Entropy == nil || p.Fields[0].Huffman == nil ||
		p.Fields[0].Action == "" || !strings.Contains(p.Caution, "retention obligations") {
		t.Fatalf("plan lacks keys of bitsift.plan/1:\n%s", out)
	}
	for _, d := range p.Derive {
		if d.TableEntries == nil || len(d.From) == 0 {
			t.Fatalf("derive entry lacks from/table_entries: %s", out)
		}
	}
	return p
}

// zstdSize is the size of data compressed by the zstd tool at level 3.
func zstdSize(t *testing.T, data []byte) float64 {
	t.Helper()
	cmd := exec.Command("zstd", "-3", "-c", "-q")
	cmd.Stdin = bytes.NewReader(data)
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("zstd: %v", err)
	}
	return float64(len(out))
}

// applyJQ runs the plan's jq program on the input.
func applyJQ(t *testing.T, path string, input []byte) []byte {
	t.Helper()
	code, prog, errs := run(t, "", "plan", "--emit", "jq", path)
	if code != 0 {
		t.Fatalf("--emit jq: exit %d: %s", code, errs)
	}
	f := write(t, "drop.jq", []byte(prog))
	cmd := exec.Command("jq", "-c", "-f", f)
	cmd.Stdin = bytes.NewReader(input)
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("jq -f %s: %v\n%s", f, err, prog)
	}
	return out
}

// flatKeys lists a JSON object's keys flattened with dots, as bitsift's
// JSON parser names them.
func flatKeys(t *testing.T, line []byte) []string {
	var m map[string]any
	if err := json.Unmarshal(line, &m); err != nil {
		t.Fatalf("%v: %s", err, line)
	}
	var out []string
	var walk func(prefix string, m map[string]any)
	walk = func(prefix string, m map[string]any) {
		for k, v := range m {
			if sub, ok := v.(map[string]any); ok && len(sub) > 0 {
				walk(prefix+k+".", sub)
			} else {
				out = append(out, prefix+k)
			}
		}
	}
	walk("", m)
	sort.Strings(out)
	return out
}

// checkPlan holds for any input: a lossless plan, zero mismatches, sizes
// within 10% of zstd -3 on the same text, and a jq program that leaves
// exactly the kept fields.
func checkPlan(t *testing.T, path string, input []byte, p planJSON) {
	if *p.BitsLost != 0 || *p.Mismatches != 0 {
		t.Errorf("bits lost %v, mismatches %d; want a lossless plan with none", *p.BitsLost, *p.Mismatches)
	}
	dropped := map[string]bool{}
	for _, d := range p.Drop {
		dropped[d] = true
	}
	for _, d := range p.Derive {
		dropped[d.Field] = true
	}
	n := float64(p.Measured)
	if p.Measured != p.Records {
		t.Fatalf("measured %d of %d records", p.Measured, p.Records)
	}
	if _, err := exec.LookPath("zstd"); err != nil {
		t.Log("zstd not installed (CI installs it): sizes not compared")
	} else if r := *p.BytesPerRecord.Before.Compressed * n / zstdSize(t, input); r < 0.9 || r > 1.1 {
		t.Errorf("compressed before: %.3f of zstd -3's size", r)
	}
	if _, err := exec.LookPath("jq"); err != nil {
		t.Log("jq not installed (CI installs it): program not applied")
		return
	}
	out := applyJQ(t, path, input)
	if _, err := exec.LookPath("zstd"); err == nil {
		if r := *p.BytesPerRecord.After.Compressed * n / zstdSize(t, out); r < 0.9 || r > 1.1 {
			t.Errorf("compressed after: %.3f of zstd -3's size on jq's output", r)
		}
	}
	in := bytes.Split(bytes.TrimSpace(input), []byte("\n"))
	got := bytes.Split(bytes.TrimSpace(out), []byte("\n"))
	if len(in) != len(got) {
		t.Fatalf("jq wrote %d lines for %d", len(got), len(in))
	}
	for i := range in {
		var want []string
		for _, k := range flatKeys(t, in[i]) {
			if !dropped[k] {
				want = append(want, k)
			}
		}
		if g := flatKeys(t, got[i]); !slices.Equal(g, want) {
			t.Fatalf("line %d: jq left %v, the plan keeps %v", i+1, g, want)
		}
	}
}

// TestPlanDemo: the demo's relations (package demo) are the reference:
// svc constant; zone and region follow host, method route, level status.
func TestPlanDemo(t *testing.T) {
	input := demoLines(20_000)
	path := write(t, "demo.jsonl", input)
	p := runPlan(t, path)
	if !slices.Equal(p.Drop, []string{"svc"}) {
		t.Errorf("drop %v, want [svc]", p.Drop)
	}
	from := map[string][]string{}
	for _, d := range p.Derive {
		from[d.Field] = d.From
	}
	for field, det := range map[string]string{"zone": "host", "region": "host", "method": "route", "level": "status"} {
		if !slices.Equal(from[field], []string{det}) {
			t.Errorf("%s derived from %v, want %s", field, from[field], det)
		}
	}
	if p.SavedPerDay.Raw == nil || *p.SavedPerDay.Raw <= 0 {
		t.Errorf("saving per day unknown or not positive: %v", p.SavedPerDay.Raw)
	}
	checkPlan(t, path, input, p)
}

func TestPlanRDP(t *testing.T) {
	gz := datasets.Path(t, "rdp.json.gz")
	f, err := os.Open(gz)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	zr, err := gzip.NewReader(f)
	if err != nil {
		t.Fatal(err)
	}
	input, err := io.ReadAll(zr)
	if err != nil {
		t.Fatal(err)
	}
	p := runPlan(t, gz)
	// EXPECTED.json: _path has one value over the file's records.
	if !slices.Contains(p.Drop, "_path") {
		t.Errorf("drop %v lacks the constant _path", p.Drop)
	}
	checkPlan(t, gz, input, p)
}

func TestPlanFlags(t *testing.T) {
	path := write(t, "demo.jsonl", demoLines(3000))
	for _, c := range []struct {
		name string
		args []string
		code int
		want string
	}{
		{"unknown field", []string{"--keep", "harbour"}, ExitUsage, `"harbour" is not a field`},
		{"keep and drop", []string{"--keep", "zone", "--drop", "zone"}, ExitUsage, "both --keep and --drop"},
		{"negative loss", []string{"--max-loss", "-1"}, ExitUsage, "--max-loss"},
		{"bad emit", []string{"--emit", "sed"}, ExitUsage, "--emit"},
		{"text caution", nil, ExitOK, "Check your retention obligations"},
		{"pins", []string{"--keep", "zone", "--drop", "host"}, ExitOK, "drop*"},
		{"otel", []string{"--emit", "otel"}, ExitOK, `delete_key(attributes, "svc")`},
	} {
		t.Run(c.name, func(t *testing.T) {
			code, out, errs := run(t, "", append(append([]string{"plan"}, c.args...), path)...)
			if code != c.code || !strings.Contains(out+errs, c.want) {
				t.Errorf("exit %d (want %d), output lacks %q:\n%s%s", code, c.code, c.want, out, errs)
			}
		})
	}
}

func TestPlanOut(t *testing.T) {
	path := write(t, "demo.jsonl", demoLines(3000))
	dir := t.TempDir()
	dst := filepath.Join(dir, "drop.jq")
	if code, out, errs := run(t, "", "plan", "--emit", "jq", "--out", dst, path); code != 0 || out != "" {
		t.Fatalf("exit %d, stdout %q: %s", code, out, errs)
	}
	if b, _ := os.ReadFile(dst); !bytes.Contains(b, []byte("del(")) {
		t.Errorf("%s holds %q", dst, b)
	}
	if code, _, _ := run(t, "", "plan", "--out", filepath.Join(dir, "missing", "p.json"), path); code == 0 {
		t.Error("writing into a missing folder succeeded")
	}
	if es, _ := os.ReadDir(dir); len(es) != 1 {
		t.Errorf("files left behind: %v", es)
	}
}

// TestPlanEmitFits: an export is offered only for input it can process:
// jq reads JSON, so asked of an access log (lines of an invented quay
// gate, in the combined log format) it exits with the usage code naming
// the exports that fit.
func TestPlanEmitFits(t *testing.T) {
	var b bytes.Buffer
	for i := 0; i < 200; i++ {
		b.WriteString(`10.4.0.` + string(rune('1'+i%9)) + ` - - [14/Mar/2026:06:00:0` + string(rune('0'+i%10)) +
			` +0000] "GET /v1/berths/` + string(rune('a'+i%5)) + ` HTTP/1.1" 200 512 "-" "gate-probe/1.0"` + "\n")
	}
	path := write(t, "gate.log", b.Bytes())
	for _, emit := range []string{"jq", "jq-restore", "jq-records"} {
		code, out, errs := run(t, "", "plan", "--emit", emit, path)
		if code != ExitUsage || out != "" || !strings.Contains(errs, "otel") || !strings.Contains(errs, emit) {
			t.Errorf("--emit %s: exit %d, stdout %q, stderr %q", emit, code, out, errs)
		}
	}
	if code, out, errs := run(t, "", "plan", "--emit", "otel", path); code != ExitOK || !strings.Contains(out, "delete_key") && !strings.Contains(out, "[]") {
		t.Errorf("--emit otel: exit %d: %s%s", code, out, errs)
	}
}

// TestPlanRecordReductions: plan -o json on the demo lists the health
// checks (package demo: route /healthz) among its record reductions, with
// measured bytes saved per day (the demo's records carry timestamps) and
// no findings in that class.
func TestPlanRecordReductions(t *testing.T) {
	path := write(t, "demo.jsonl", demoLines(20_000))
	p := runPlan(t, path)
	found := false
	for _, r := range p.Reductions {
		if r.KeepOneIn == nil || r.ShareRecords == nil || r.ShareBytes == nil || r.BitsLost == nil || r.Findings == nil ||
			r.SavedPerDay.Raw == nil || r.SavedPerDay.Compressed == nil {
			t.Fatalf("reduction lacks keys: %+v", r)
		}
		if r.Class == `route="/healthz"` && r.Action == "sample" {
			found = true
			if *r.SavedPerDay.Compressed <= 0 || *r.SavedPerDay.Raw <= *r.SavedPerDay.Compressed || *r.Findings != 0 {
				t.Errorf("health checks: %+v", r)
			}
		}
	}
	if !found {
		t.Errorf("no health-check class among %+v", p.Reductions)
	}
}
