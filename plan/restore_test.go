package plan

import (
	"bytes"
	"compress/gzip"
	"encoding/csv"
	"encoding/json"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"bitsift/demo"
	"bitsift/ingest"
	"bitsift/internal/datasets"
	"bitsift/model"
	"bitsift/sanitize"
)

// jqTool is the jq the round trips run with: the real program, not a
// reimplementation of it.
func jqTool(t *testing.T) string {
	t.Helper()
	p, err := exec.LookPath("jq")
	if err != nil {
		t.Skip("jq not installed (CI installs it): cannot run the emitted programs")
	}
	return p
}

// runJQ runs jq -c with the program on the input.
func runJQ(t *testing.T, jq, prog string, in []byte, args ...string) []byte {
	t.Helper()
	f := filepath.Join(t.TempDir(), "prog.jq")
	if err := os.WriteFile(f, []byte(prog), 0o644); err != nil {
		t.Fatal(err)
	}
	cmd := exec.Command(jq, append(append([]string{"-c"}, args...), "-f", f)...)
	cmd.Stdin = bytes.NewReader(in)
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("jq: %v: %s\nprogram:\n%.3000s", err, stderr.String(), prog)
	}
	return out
}

// planLines reads JSON lines into a model and a sample and makes a
// lossless plan, as bitsift plan does.
func planLines(t *testing.T, ls [][]byte) *Plan {
	t.Helper()
	in, err := ingest.New(ingest.Config{Model: model.Options{Window: model.Window{Kind: model.WindowAll}}})
	if err != nil {
		t.Fatal(err)
	}
	smp := NewSample(0)
	for i, l := range ls {
		in.Line(l, int64(i+1), "test")
		smp.Add(l)
	}
	in.Flush()
	p, err := Make(in.Snapshot(model.SnapshotOptions{}), smp, Options{RecordTimes: in.TimeKey() != ""})
	if err != nil {
		t.Fatal(err)
	}
	return p
}

func gunzipLines(t *testing.T, path string) [][]byte {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	z, err := gzip.NewReader(f)
	if err != nil {
		t.Fatal(err)
	}
	b, err := io.ReadAll(z)
	if err != nil {
		t.Fatal(err)
	}
	return bytes.Split(bytes.TrimSpace(b), []byte("\n"))
}

// TestJQRoundTrip: for every line x, jq's restore program on jq's drop
// program's output gives x back, compared two ways: as JSON objects (jq's
// own ==, by a third jq run over the pairs) and as the compact text jq
// writes (so key order and emptied objects are checked too). The
// datasets are Zeek logs from brimdata/zed-sample-data (CC BY-SA 4.0, see
// ../shared/datasets/README.md): rdp has flat keys with dots, smtp arrays
// and booleans; the demo has nested nothing but numbers and strings; the
// "nested" case has an object every member of which the plan drops, next
// to one that was empty in the log.
func TestJQRoundTrip(t *testing.T) {
	jq := jqTool(t)
	cases := []struct {
		name  string
		lines func(t *testing.T) [][]byte
	}{
		{"demo", func(*testing.T) [][]byte {
			g := demo.New(1, 10_000)
			out := make([][]byte, 10_000)
			for i := range out {
				out[i] = g.Append(nil)
			}
			return out
		}},
		{"rdp", func(t *testing.T) [][]byte { return gunzipLines(t, datasets.Path(t, "rdp.json.gz")) }},
		{"smtp", func(t *testing.T) [][]byte { return gunzipLines(t, datasets.Path(t, "smtp.json.gz")) }},
		{"nested", func(*testing.T) [][]byte {
			return lines(600, func(i int) string {
				code := []string{"A", "B", "C"}[i%3]
				name := []string{"anchor", "buoy", "cleat"}[i%3]
				empty := ""
				if i%5 == 0 {
					empty = `,"spare":{}`
				}
				return `{"n":` + strings.Repeat("7", 1+i%6) + `,"tag":{"site":"quay-4","kind":` +
					`{"v":1}},"code":"` + code + `","name":"` + name + `"` + empty + `,"seq":` + strings.Repeat("3", 1+i%4) + `}`
			})
		}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			ls := c.lines(t)
			p := planLines(t, ls)
			if !p.Lossless || p.Measured.Mismatches != 0 {
				t.Fatalf("plan not lossless: %v, %d mismatches; notes %v", p.Lossless, p.Measured.Mismatches, p.Notes)
			}
			var drop, restore strings.Builder
			if err := WriteJQ(&drop, p); err != nil {
				t.Fatal(err)
			}
			if err := WriteJQRestore(&restore, p); err != nil {
				t.Fatal(err)
			}
			in := append(bytes.Join(ls, []byte("\n")), '\n')
			orig := runJQ(t, jq, ".", in)
			dropped := runJQ(t, jq, drop.String(), in)
			back := runJQ(t, jq, restore.String(), dropped, "-n")
			if bytes.Equal(dropped, orig) {
				t.Fatal("the drop program deleted nothing")
			}
			if bytes.Contains(dropped, []byte(`:{}`)) && c.name == "nested" {
				// Only "spare", empty in the log, may be {} after the drop.
				for _, l := range bytes.Split(dropped, []byte("\n")) {
					if bytes.Count(l, []byte(`:{}`)) > bytes.Count(l, []byte(`"spare":{}`)) {
						t.Fatalf("an emptied object was left behind: %s", l)
					}
				}
			}
			// As JSON objects, by jq's ==: pair each line with its restored
			// twin and count the pairs that differ.
			ol := bytes.Split(bytes.TrimSpace(orig), []byte("\n"))
			bl := bytes.Split(bytes.TrimSpace(back), []byte("\n"))
			if len(ol) != len(bl) {
				t.Fatalf("%d lines in, %d restored", len(ol), len(bl))
			}
			var pairs bytes.Buffer
			for i := range ol {
				pairs.WriteString("[")
				pairs.Write(ol[i])
				pairs.WriteString(",")
				pairs.Write(bl[i])
				pairs.WriteString("]\n")
			}
			diff := runJQ(t, jq, "[inputs | select(.[0] != .[1])] | length", pairs.Bytes(), "-n")
			if strings.TrimSpace(string(diff)) != "0" {
				t.Errorf("%s lines differ as JSON objects after the round trip", bytes.TrimSpace(diff))
			}
			for i := range ol {
				if !bytes.Equal(ol[i], bl[i]) {
					t.Fatalf("line %d, as jq writes it:\n in  %s\n out %s", i+1, ol[i], bl[i])
				}
			}
			t.Logf("%d lines, %d bytes → %d dropped → restored exactly; drop %v", len(ol), len(orig), len(dropped), p.DroppedNames())
		})
	}
}

// TestTablesInJSON: every derived field carries its whole mapping table,
// values as the log wrote them (status stays a number), and constants
// keep their value. The demo's relations (package demo) are the
// reference: status 503 → level "error", route "/healthz" → method "GET".
func TestTablesInJSON(t *testing.T) {
	p := demoPlan(t, 20_000, Options{})
	var b bytes.Buffer
	if err := WriteJSON(&b, p); err != nil {
		t.Fatal(err)
	}
	var e struct {
		Derive []struct {
			Field string
			From  []string
			Table []struct {
				From  []json.RawMessage
				Value json.RawMessage
			}
		}
		Constants []struct {
			Field string
			Value json.RawMessage
		}
	}
	if err := json.Unmarshal(b.Bytes(), &e); err != nil {
		t.Fatal(err)
	}
	want := map[string][2]string{"level": {"503", `"error"`}, "method": {`"/healthz"`, `"GET"`}, "zone": {`"qs-api-07"`, `"pier-south"`}}
	for _, d := range e.Derive {
		w, ok := want[d.Field]
		if !ok {
			continue
		}
		delete(want, d.Field)
		found := false
		for _, r := range d.Table {
			if len(r.From) == 1 && string(r.From[0]) == w[0] {
				found = true
				if string(r.Value) != w[1] {
					t.Errorf("%s: %s → %s, want %s", d.Field, w[0], r.Value, w[1])
				}
			}
		}
		if !found {
			t.Errorf("%s: no row for %s in %d rows", d.Field, w[0], len(d.Table))
		}
	}
	if len(want) > 0 {
		t.Errorf("not derived: %v", want)
	}
	if len(e.Constants) != 1 || e.Constants[0].Field != "svc" || string(e.Constants[0].Value) != `"quayside"` {
		t.Errorf("constants %+v", e.Constants)
	}
}

// TestTablesCSV: the tables read back with encoding/csv, one row per
// table row, and a value that a spreadsheet would run as a formula (the
// OWASP CSV injection cases, from memory: = + - @) is neutralised, while
// a plain negative number is not.
func TestTablesCSV(t *testing.T) {
	ls := lines(400, func(i int) string {
		code := []string{"A", "B", "C", "D"}[i%4]
		label := []string{"=HYPERLINK(\"x\")", "+1+2", "-7", "@sum"}[i%4]
		return `{"code":"` + code + `","label":"` + strings.ReplaceAll(label, `"`, `\"`) + `","n":` + strings.Repeat("5", 1+i%7) + `}`
	})
	p := planLines(t, ls)
	var b bytes.Buffer
	if err := WriteTablesCSV(&b, p); err != nil {
		t.Fatal(err)
	}
	rows, err := csv.NewReader(&b).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	got := map[string]string{}
	for _, r := range rows[1:] {
		got[r[2]] = r[3]
	}
	want := map[string]string{"A": `'=HYPERLINK("x")`, "B": "'+1+2", "C": "-7", "D": "'@sum"}
	if f := p.Field("label"); f == nil || f.Action != Derive {
		t.Fatalf("label not derived: %+v", p.Fields)
	}
	for k, v := range want {
		if got[k] != v {
			t.Errorf("%s → %q, want %q (rows %q)", k, got[k], v, rows)
		}
	}
}

// TestTextWidth: the text plan fits 80 columns on the demo, the datasets
// and a stream of long field names.
func TestTextWidth(t *testing.T) {
	long := lines(300, func(i int) string {
		return `{"a_very_long_field_name_that_goes_on_and_on":"` + []string{"x", "y"}[i%2] +
			`","another_quite_long_field_name_for_the_from_column":"` + []string{"p", "q"}[i%2] + `","n":` + strings.Repeat("3", 1+i%9) + `}`
	})
	for name, ls := range map[string][][]byte{"demo": demoLines(5_000), "long": long,
		"rdp": gunzipLines(t, datasets.Path(t, "rdp.json.gz"))} {
		p := planLines(t, ls)
		var b strings.Builder
		if err := WriteText(&b, p); err != nil {
			t.Fatal(err)
		}
		for i, l := range strings.Split(b.String(), "\n") {
			if w := sanitize.Width(l); w > TextWidth {
				t.Errorf("%s line %d is %d wide: %s", name, i+1, w, l)
			}
		}
		if !strings.Contains(b.String(), "Caution: dropping fields") {
			t.Errorf("%s: no caution", name)
		}
		if len(p.Reductions) > 0 && !strings.Contains(b.String(), "Sampling and collapsing delete whole records") {
			t.Errorf("%s: record reductions without the sampling caution", name)
		}
	}
}
