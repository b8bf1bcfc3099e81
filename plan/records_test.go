package plan

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"math"
	"os/exec"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"go.yaml.in/yaml/v3"

	"bitsift/demo"
	"bitsift/ingest"
	"bitsift/internal/datasets"
	"bitsift/model"
)

// demoLines returns n lines of the demo stream (package demo: its routes,
// hosts and incident are the reference for what is routine and what
// breaks a rule).
func demoLines(n int) [][]byte {
	g := demo.New(1, int64(n))
	out := make([][]byte, n)
	for i := range out {
		out[i] = g.Append(nil)
	}
	return out
}

// TestDemoReductions: on the demo the health checks (route "/healthz",
// package demo: a twentieth of the calls, answered locally in about a
// millisecond) are a routine class, and every class offered that holds
// some of the incident's rule-breaking records (package demo: during the
// incident, calls of hosts qs-api-07 and qs-api-08 meant for harbormaster
// go to ledger) carries its warning and is left out of the exports. The
// compressed size each reduction leaves agrees with the zstd tool's at
// level 3 within 10%.
func TestDemoReductions(t *testing.T) {
	ls := demoLines(20_000)
	kept := map[string][]byte{}
	var before []byte
	measuredReduction = func(class string, k []byte) { kept[class] = bytes.Clone(k) }
	measuredText = func(b, _ []byte) { before = bytes.Clone(b) }
	defer func() { measuredReduction, measuredText = nil, nil }()
	p := planLines(t, ls)
	if len(p.Reductions) == 0 {
		t.Fatal("no record reductions")
	}
	type rec struct {
		Route, Upstream, Host string
	}
	recs := make([]rec, len(ls))
	for i, l := range ls {
		json.Unmarshal(l, &recs[i])
	}
	breaker := func(r rec) bool {
		return r.Upstream == "ledger" && (r.Route == "/v1/berths" || r.Route == "/v1/manifests/:id") &&
			(r.Host == demo.BadHosts[0] || r.Host == demo.BadHosts[1])
	}
	health := 0
	for _, r := range recs {
		if r.Route == "/healthz" {
			health++
		}
	}
	found := false
	for _, red := range p.Reductions {
		t.Logf("%s %s %s: %.1f%% records, saved %.2f/%.2f B, lost %.3g bits, ratio %.3f, findings %d %v",
			red.ID, red.Action, red.Class, 100*red.ShareRecords, red.Saved.Raw, red.Saved.Compressed,
			red.BitsLostPerRecord, red.Ratio, red.Findings, red.FindingExamples)
		var members, breakers, healthIn int
		for i, l := range ls {
			if red.Action == SampleRecords && matches(t, l, red.Terms) {
				members++
				if breaker(recs[i]) {
					breakers++
				}
				if recs[i].Route == "/healthz" {
					healthIn++
				}
			}
		}
		if red.Action == SampleRecords && members == health && healthIn == health {
			found = true
			if red.Findings != 0 || !red.Applied() {
				t.Errorf("the health checks hold %d findings (%v)", red.Findings, red.FindingExamples)
			}
		}
		if breakers > 0 && (red.Findings == 0 || red.Warning() == "" || red.Applied()) {
			t.Errorf("%s holds %d rule breakers but %d findings, warning %q, applied %v", red.Class, breakers, red.Findings, red.Warning(), red.Applied())
		}
	}
	if !found {
		t.Errorf("the %d health checks are not a class of their own", health)
	}
	if _, err := exec.LookPath("zstd"); err != nil {
		t.Skip("zstd not installed (CI installs it): sizes not checked against it")
	}
	zstd := func(b []byte) float64 {
		cmd := exec.Command("zstd", "-3", "-c", "-q")
		cmd.Stdin = bytes.NewReader(b)
		out, err := cmd.Output()
		if err != nil {
			t.Fatal(err)
		}
		return float64(len(out))
	}
	n := float64(p.Measured.Records)
	whole := zstd(before)
	for _, red := range p.Reductions {
		k, ok := kept[red.Class]
		if !ok {
			t.Fatalf("%s: text not seen", red.Class)
		}
		tool := zstd(k)
		ours := p.Measured.Before.Compressed*n - red.Saved.Compressed*n
		if r := ours / tool; r < 0.9 || r > 1.1 {
			t.Errorf("%s: %v bytes left by our measure, zstd -3 %v (ratio %.3f)", red.Class, ours, tool, r)
		}
		t.Logf("%s: left %v bytes (zstd -3: %v); saved %.0f (zstd -3: %.0f)", red.Class, ours, tool, red.Saved.Compressed*n, whole-tool)
	}
}

// matches says whether a JSON line meets every term (flat keys).
func matches(t *testing.T, line []byte, terms []ClassTerm) bool {
	var m map[string]json.RawMessage
	if err := json.Unmarshal(line, &m); err != nil {
		t.Fatal(err)
	}
	for _, term := range terms {
		v, ok := m[term.Field]
		if term.Value.Absent != !ok || ok && string(v) != term.Value.Text {
			return false
		}
	}
	return true
}

// ottlCondition is the part of OTTL's documented grammar the conditions
// use, from opentelemetry-collector-contrib pkg/ottl/LANGUAGE.md (read at
// commit 087ed98cf7b2, sections Paths, Literals, Boolean Expressions,
// Booleans): a Path of a lowercase identifier with ["key"] string keys,
// the operator ==, and a Literal (a string in double quotes, an int, a
// float of digits with a dot, true, false, nil), or a Converter returning
// a boolean (IsMatch, whose name and arguments are from memory of the
// ottlfuncs documentation), Booleans joined by "and".
// That a string literal may hold any character but a double quote and a
// backslash without escapes is from memory.
var (
	ottlPathRE = `[a-z][a-z_]*(\["[^"\\]*"\])+`
	ottlLitRE  = `("[^"\\]*"|[+-]?[0-9]+|[+-]?[0-9]*\.[0-9]+|true|false|nil)`
	ottlCompRE = `(` + ottlPathRE + ` == ` + ottlLitRE + `|IsMatch\(` + ottlPathRE + `, "[^"\\]*"\))`
	ottlCondRE = regexp.MustCompile(`^` + ottlCompRE + `( and ` + ottlCompRE + `)*$`)
)

// TestOTelRecordsConfig: the collector configuration parses as YAML
// (go.yaml.in/yaml/v3, a YAML 1.2 parser), routes each applied class by
// an OTTL condition in the documented grammar to a pipeline with a
// probabilistic sampler, and a collapse through the log deduplication
// processor. The component names (routing connector, probabilistic_sampler,
// logdedup) and their keys are from memory of the collector-contrib
// documentation.
func TestOTelRecordsConfig(t *testing.T) {
	// A stream with a routine class (polls), duplicates, and a value with
	// a quote that OTTL must not be handed.
	ls := lines(6000, func(i int) string {
		ts := fmt.Sprintf("2026-03-14T06:%02d:%02d.%03dZ", i/1000, (i/20)%60, i%1000)
		switch {
		case i%4 == 0:
			return `{"ts":"` + ts + `","kind":"poll","path":"/status","ok":true,"n":1}`
		case i%4 == 1:
			return `{"ts":"` + ts + `","kind":"note","path":"/x\"y","ok":false,"n":2}`
		}
		return fmt.Sprintf(`{"ts":%q,"kind":"call","path":"/b/%d","ok":%t,"n":%d,"who":"u%d"}`, ts, i%97, i%3 == 0, i%89, i%53)
	})
	p := planLines(t, ls)
	var b bytes.Buffer
	if err := WriteOTelRecords(&b, p); err != nil {
		t.Fatal(err)
	}
	var cfg struct {
		Connectors map[string]struct {
			Table []struct {
				Context   string
				Condition string
				Pipelines []string
			}
			DefaultPipelines []string `yaml:"default_pipelines"`
		}
		Processors map[string]map[string]any
		Service    struct {
			Pipelines map[string]struct {
				Receivers, Processors, Exporters []string
			}
		}
	}
	if err := yaml.Unmarshal(b.Bytes(), &cfg); err != nil {
		t.Fatalf("not YAML: %v\n%s", err, b.String())
	}
	conds := 0
	for _, c := range cfg.Connectors {
		for _, row := range c.Table {
			conds++
			if !ottlCondRE.MatchString(row.Condition) {
				t.Errorf("condition outside the documented grammar: %s", row.Condition)
			}
			if row.Context != "log" || len(row.Pipelines) != 1 {
				t.Errorf("route %+v", row)
			}
			pl, ok := cfg.Service.Pipelines[row.Pipelines[0]]
			if !ok || len(pl.Processors) != 1 || cfg.Processors[pl.Processors[0]]["sampling_percentage"] == nil {
				t.Errorf("pipeline %s: %+v", row.Pipelines[0], pl)
			}
		}
	}
	applied := 0
	for _, r := range p.Reductions {
		t.Logf("%s %s %q findings %d applied %v", r.ID, r.Action, r.Condition(), r.Findings, r.Applied())
		if r.Applied() && r.Action == SampleRecords && r.Condition() != "" {
			applied++
		}
	}
	if conds != applied || conds == 0 {
		t.Errorf("%d routes for %d applied classes:\n%s", conds, applied, b.String())
	}
	if !strings.Contains(b.String(), "# Sampling and collapsing delete whole records") {
		t.Error("the configuration lacks the sampling caution")
	}
	for _, c := range []string{`attributes["kind"] == "poll"`, `attributes["path"] == "/status"`, `attributes["ok"] == true`, `attributes["n"] == 1`, `attributes["x"] == nil`, `attributes["a"]["b"] == -2.5`} {
		if !ottlCondRE.MatchString(c) {
			t.Errorf("the grammar check refuses %s", c)
		}
	}
	for _, c := range []string{`attributes["p"] == "a"b"`, `attributes["p"] = "a"`, `attributes["n"] == 1e3`, `Attributes["p"] == "a"`} {
		if ottlCondRE.MatchString(c) {
			t.Errorf("the grammar check takes %s", c)
		}
	}
}

// findingStream: polls are routine (a fixed path, a tiny payload), calls
// are not; host determines zone, except in 30 polls where the rule
// breaks. The class of polls must carry the warning and stay out of the
// exports until pinned.
func findingStream() [][]byte {
	return lines(6000, func(i int) string {
		host := fmt.Sprintf("h%d", i%4)
		zone := map[string]string{"h0": "z1", "h1": "z1", "h2": "z2", "h3": "z2"}[host]
		ts := fmt.Sprintf("2026-03-14T06:%02d:%02d.%03dZ", i/2000, (i/40)%60, i%1000)
		if i%3 == 0 {
			if i%120 == 0 && host == "h0" {
				zone = "z2"
			}
			return fmt.Sprintf(`{"ts":%q,"kind":"poll","host":%q,"zone":%q,"path":"/status","id":"p%d"}`, ts, host, zone, i)
		}
		return fmt.Sprintf(`{"ts":%q,"kind":"call","host":%q,"zone":%q,"path":"/b/%d","size":%d,"id":"c%d"}`, ts, host, zone, i%41, (i*7919)%1013, i)
	})
}

func TestFindingsWarn(t *testing.T) {
	ls := findingStream()
	p := planLines(t, ls)
	var poll *Reduction
	for i := range p.Reductions {
		r := &p.Reductions[i]
		t.Logf("%s %s ratio %.3f findings %d %v", r.ID, r.Class, r.Ratio, r.Findings, r.FindingExamples)
		if strings.Contains(r.Class, `"poll"`) || strings.Contains(r.Class, `"/status"`) {
			poll = r
		}
	}
	if poll == nil {
		t.Fatal("the polls are not a routine class")
	}
	if poll.Findings == 0 || poll.Warning() == "" || poll.Applied() {
		t.Fatalf("polls: %d findings, warning %q, applied %v", poll.Findings, poll.Warning(), poll.Applied())
	}
	var b bytes.Buffer
	WriteOTelRecords(&b, p)
	if strings.Contains(b.String(), "condition: "+yamlQuote(poll.Condition())) {
		t.Errorf("a class with findings is in the collector configuration:\n%s", b.String())
	}
	// Pinned, it goes in.
	pinned := Make2(t, ls, map[string]Pin{poll.Class: PinDrop})
	for _, r := range pinned.Reductions {
		if r.Class == poll.Class && !r.Applied() {
			t.Errorf("pinned %s is not applied", r.Class)
		}
	}
}

// Make2 plans the lines with record pins.
func Make2(t *testing.T, ls [][]byte, pins map[string]Pin) *Plan {
	t.Helper()
	s, smp := snapshotOf(t, ls)
	p, err := Make(s, smp, Options{RecordPins: pins, RecordTimes: true})
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// TestJQRecords runs the jq filter with jq: a sampled class keeps the
// first of every ten of its records, in order, and nothing else changes;
// duplicates within a minute come out once with their count, and the
// counts add up to the records read.
func TestJQRecords(t *testing.T) {
	jq := jqTool(t)
	ls := demoLines(10_000)
	p := planLines(t, ls)
	var prog strings.Builder
	if err := WriteJQRecords(&prog, p); err != nil {
		t.Fatal(err)
	}
	in := append(bytes.Join(ls, []byte("\n")), '\n')
	out := bytes.Split(bytes.TrimSpace(runJQ(t, jq, prog.String(), in, "-n")), []byte("\n"))
	health, others := 0, 0
	for _, l := range ls {
		if bytes.Contains(l, []byte(`"route":"/healthz"`)) {
			health++
		} else {
			others++
		}
	}
	var gotHealth, gotOthers int
	for _, l := range out {
		if bytes.Contains(l, []byte(`"route":"/healthz"`)) {
			gotHealth++
		} else {
			gotOthers++
		}
	}
	if gotOthers != others || gotHealth != (health+KeepOneIn-1)/KeepOneIn {
		t.Errorf("kept %d of %d health checks and %d of %d others", gotHealth, health, gotOthers, others)
	}
	// Duplicates: the polls of findingStream repeat within a minute but
	// for ts and id.
	dl := lines(6000, func(i int) string {
		return fmt.Sprintf(`{"ts":"2026-03-14T06:%02d:%02d.000Z","id":"x%d","host":"h%d","msg":"same"}`, i/3000, (i/50)%60, i, i%3)
	})
	dp := planLines(t, dl)
	var dup *Reduction
	for i := range dp.Reductions {
		if dp.Reductions[i].Action == CollapseRecords {
			dup = &dp.Reductions[i]
		}
	}
	if dup == nil {
		t.Fatalf("no collapse among %+v", dp.Reductions)
	}
	prog.Reset()
	WriteJQRecords(&prog, dp)
	dout := bytes.Split(bytes.TrimSpace(runJQ(t, jq, prog.String(), append(bytes.Join(dl, []byte("\n")), '\n'), "-n")), []byte("\n"))
	total := 0
	for _, l := range dout {
		var r struct {
			Count *int `json:"bitsift_count"`
		}
		json.Unmarshal(l, &r)
		if r.Count == nil {
			total++
		} else {
			total += *r.Count
		}
	}
	// 6,000 records, 2 minutes × 3 hosts: 6 kept, each with its count.
	if len(dout) != 6 || total != 6000 {
		t.Errorf("collapsed to %d records counting %d (want 6 counting 6000)", len(dout), total)
	}
	t.Logf("%s: keep 1 in %.3g, saved %.1f B raw per record", dup.Class, dup.KeepOneIn, dup.Saved.Raw)
}

// TestTemplateClasses: on auth.log (elastic/examples, Apache-2.0, see
// ../shared/datasets/README.md) routine classes are message templates of
// the template companion (package companion), and the pattern each is
// exported with picks, run by jq's own regular expressions, the records
// of that class: their count over the file is the class's share.
func TestTemplateClasses(t *testing.T) {
	jq := jqTool(t)
	path := datasets.Path(t, "auth.log.gz")
	in, err := ingest.New(ingest.Config{Model: model.Options{Window: model.Window{Kind: model.WindowAll}}})
	if err != nil {
		t.Fatal(err)
	}
	smp := in.KeepRaw(DefaultBatch)
	if err := in.ReadFiles(context.Background(), []string{path}); err != nil {
		t.Fatal(err)
	}
	snap := in.Snapshot(model.SnapshotOptions{})
	smp.Keep(snap.Records)
	p, err := Make(snap, smp, Options{RecordTimes: true})
	if err != nil {
		t.Fatal(err)
	}
	var msgs bytes.Buffer
	smp.Each(func(line []byte) {
		rec, _ := json.Marshal(map[string]string{"msg": msgOf(line)})
		msgs.Write(append(rec, '\n'))
	})
	n := 0
	for _, r := range p.Reductions {
		if len(r.Terms) != 1 || r.Terms[0].Template == "" {
			continue
		}
		n++
		cond := r.Condition()
		if !ottlCondRE.MatchString(cond) {
			t.Errorf("condition outside the grammar: %s", cond)
		}
		re, _ := templateRegexp(r.Terms[0].Template)
		out := runJQ(t, jq, `[inputs | select(.msg | test("`+re+`"))] | length`, msgs.Bytes(), "-n")
		got, _ := strconv.Atoi(strings.TrimSpace(string(out)))
		want := r.ShareRecords * float64(p.Measured.Records)
		if math.Abs(float64(got)-want) > 0.02*want+1 {
			t.Errorf("%s: jq's pattern picks %d records, the class holds %.0f", r.Class, got, want)
		}
		t.Logf("%s: %.1f%% of records; jq picks %d", r.Class, 100*r.ShareRecords, got)
	}
	if n == 0 {
		t.Errorf("no template class among %+v", p.Reductions)
	}
}

// msgOf is the message of an auth.log line: what follows "]: " or the
// program's ": " (RFC 3164's MSG part after the TAG, from memory).
func msgOf(line []byte) string {
	s := string(line)
	if i := strings.Index(s, "]: "); i >= 0 {
		return s[i+3:]
	}
	parts := strings.SplitN(s, ": ", 2)
	return strings.TrimSpace(parts[len(parts)-1])
}
