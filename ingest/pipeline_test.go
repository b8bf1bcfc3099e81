package ingest

import (
	"bytes"
	"context"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"runtime"
	"strings"
	"testing"
	"time"

	"bitsift/companion"
	"bitsift/demo"
	"bitsift/model"
	"bitsift/parse"
	"bitsift/testdata/labelled"
)

// seqSource hides a FileSource's type, so that ReadSource reads it line by
// line: the reference for the pipeline.
type seqSource struct{ parse.Source }

// readThrough reads paths with an Ingester made from cfg (its clock a
// millisecond a call, its source named like the tests'), through the
// pipeline when parallel, else line by line: the reference.
func readThrough(t *testing.T, cfg Config, source string, paths []string, maxLine int, parallel bool) *Ingester {
	t.Helper()
	clock := time.Unix(1e9, 0)
	cfg.Clock = func() time.Time { clock = clock.Add(time.Millisecond); return clock }
	in, err := New(cfg)
	if err != nil {
		t.Fatal(err)
	}
	in.AddSource(source)
	var src parse.Source = parse.NewFileSource(paths, maxLine)
	if !parallel {
		src = seqSource{src}
	} else if !parallelOK(src) {
		t.Fatal("the pipeline would not run")
	}
	if err := in.ReadSource(context.Background(), src); err != nil {
		t.Fatal(err)
	}
	return in
}

// TestPipelineEqualsSequential: files parsed by the parallel pipeline give
// the same snapshot, figure for figure, and the same accounting (lines,
// rejections and their examples, line numbers, sources) as reading them
// line by line.
func TestPipelineEqualsSequential(t *testing.T) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(4))
	dir := t.TempDir()
	g := demo.New(7, 6000)
	var a, b bytes.Buffer
	for i := 0; i < 6000; i++ {
		w := &a
		if i >= 4000 {
			w = &b
		}
		w.Write(g.Append(nil))
		w.WriteByte('\n')
		switch i % 997 {
		case 5:
			w.WriteString("not json at all\n")
		case 6:
			w.WriteString("   \n")
		case 7:
			w.WriteString(`{"host":"` + strings.Repeat("x", 700) + "\"}\n")
		case 8:
			w.WriteString(`{"host":"broken` + "\n")
		}
	}
	b.WriteString(`{"last":"line without newline"}`)
	pa, pb := filepath.Join(dir, "a.jsonl"), filepath.Join(dir, "b.jsonl")
	os.WriteFile(pa, a.Bytes(), 0o644)
	os.WriteFile(pb, b.Bytes(), 0o644)
	paths := []string{pa, pb}

	for _, w := range []model.Window{{Kind: model.WindowAll}, {Kind: model.WindowRecords, Records: 1500}} {
		t.Run(w.String(), func(t *testing.T) {
			run := func(parallel, headless bool) *model.Snapshot {
				cfg := Config{MaxLine: 600, Model: model.Options{Window: w, Headless: headless}}
				return readThrough(t, cfg, "files", paths, 600, parallel).Snapshot(model.SnapshotOptions{})
			}
			want := run(false, false)
			want.Taken = time.Time{}
			if want.Input.Rejected < 20 || want.Input.Lines != 6000+want.Input.Rejected+1 {
				t.Errorf("reference read %d lines, %d rejected: the test input is not what it should be", want.Input.Lines, want.Input.Rejected)
			}
			// A report's model (headless: identifiers listed, a ring in
			// a window) gives the same figures as well.
			for _, headless := range []bool{false, true} {
				got := run(true, headless)
				got.Taken = time.Time{}
				sameFigures(t, got, want)
			}
		})
	}
}

// TestPipelineEqualsSequentialCompanions: with companions that the
// pipeline's workers label (a latency's buckets, a message's template,
// made in input order from the masked text the workers give), and with a
// --where on each, the pipeline gives the snapshot and accounting of the
// line-by-line read, template texts included.
func TestPipelineEqualsSequentialCompanions(t *testing.T) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(4))
	var data bytes.Buffer
	events := []string{
		"crane %d lifted box %d onto berth %d",
		"crane %d stopped: wind %d knots at mast %d",
		"gate %d opened for truck %d lane %d",
		"reefer %d power lost on row %d tier %d",
		"pilot %d boarded vessel %d at buoy %d",
	}
	for i := 0; i < 8000; i++ {
		e := events[(i*7+i/13)%len(events)]
		fmt.Fprintf(&data, `{"msg":"`+e+`","latency":%d.%d,"berth":"b%d"}`+"\n", i%17, i%1000, i%9, i%31, i%10, i%5)
		if i%1500 == 3 {
			data.WriteString("not json\n")
		}
	}
	path := filepath.Join(t.TempDir(), "yard.jsonl")
	os.WriteFile(path, data.Bytes(), 0o644)
	// Conditions made by hand: ParseCond reads the "~" of a companion's
	// name as its regexp operator.
	for _, where := range []*model.Cond{nil, {Field: "msg~template", Value: "#2", Not: true}, {Field: "latency~log", Value: "[18,32)"}} {
		name := "all"
		if where != nil {
			name = where.Field
		}
		t.Run(name, func(t *testing.T) {
			run := func(parallel bool) (*model.Snapshot, *Ingester) {
				cfg := Config{Model: model.Options{Window: model.Window{Kind: model.WindowRecords, Records: 3000}}}
				if where != nil {
					cfg.Filter = &Filter{Where: []model.Cond{*where}}
				}
				in := readThrough(t, cfg, "yard", []string{path}, 0, parallel)
				return in.Snapshot(model.SnapshotOptions{}), in
			}
			got, gotIn := run(true)
			want, wantIn := run(false)
			got.Taken, want.Taken = time.Time{}, time.Time{}
			if n := len(wantIn.Companions()); n != 2 {
				t.Fatalf("%d companions: the test wants a template and buckets", n)
			}
			if where != nil && (want.Input.Filtered == 0 || want.Records == 0) {
				t.Errorf("--where %v kept %d, left out %d: the test input is not what it should be", where, want.Records, want.Input.Filtered)
			}
			sameFigures(t, got, want)
			for id := 1; ; id++ {
				a, okA := gotIn.TemplateText("msg~template", companion.FormatID(id))
				b, okB := wantIn.TemplateText("msg~template", companion.FormatID(id))
				if a != b || okA != okB {
					t.Errorf("template #%d: %q, want %q", id, a, b)
				}
				if !okB {
					break
				}
			}
		})
	}
}

// sameFigures fails t where got, a snapshot of one way of reading, differs
// from want, the line-by-line read's: the input accounting, every field's
// figures, the records and their times, every pair's joint entropy.
func sameFigures(t *testing.T, got, want *model.Snapshot) {
	t.Helper()
	if !reflect.DeepEqual(got.Input, want.Input) {
		t.Errorf("input accounting differs:\n got %+v\nwant %+v", got.Input, want.Input)
	}
	if !reflect.DeepEqual(got.Fields, want.Fields) || got.Records != want.Records || got.Seen != want.Seen ||
		got.Oldest != want.Oldest || got.Newest != want.Newest {
		for i := range want.Fields {
			if i < len(got.Fields) && !reflect.DeepEqual(got.Fields[i], want.Fields[i]) {
				t.Errorf("field %d:\n got %+v\nwant %+v", i, got.Fields[i], want.Fields[i])
			}
		}
		t.Errorf("figures differ: %d/%d records, %d/%d fields", got.Records, want.Records, len(got.Fields), len(want.Fields))
	}
	for i := range want.Fields {
		for j := range want.Fields {
			x, y := got.Joint(i, j), want.Joint(i, j)
			if x != y && !(math.IsNaN(x) && math.IsNaN(y)) {
				t.Errorf("H(%s,%s) = %v, want %v", want.Fields[i].Name, want.Fields[j].Name, x, y)
			}
		}
	}
}

// TestPipelineKeysAfterLeftOut: a record whose keys repeat those of the
// line before it, when that line was left out by --where, is mapped to the
// model's fields by its own keys (the workers' KeysRepeat holds only when
// the line before went to the model too); keys in another order, or named
// twice, likewise. The pipeline gives the line-by-line read's figures.
func TestPipelineKeysAfterLeftOut(t *testing.T) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(4))
	var data bytes.Buffer
	for i := 0; i < 9000; i++ {
		switch i % 3 {
		case 0:
			fmt.Fprintf(&data, `{"dock":"d%d","crane":"c%d"}`+"\n", i%5, i%3)
		case 1: // left out by --where
			fmt.Fprintf(&data, `{"crane":"c%d","dock":"d9","tide":"%d"}`+"\n", i%4, i%6)
		default: // the keys of the line before, which the model never saw
			fmt.Fprintf(&data, `{"crane":"c%d","dock":"d%d","tide":"%d"}`+"\n", i%7, i%2, i%6)
		}
		if i%1000 == 999 {
			data.WriteString(`{"dock":"d1","crane":"c1","dock":"d2"}` + "\n")
		}
	}
	path := filepath.Join(t.TempDir(), "quay.jsonl")
	os.WriteFile(path, data.Bytes(), 0o644)
	run := func(parallel bool) *model.Snapshot {
		cfg := Config{Model: model.Options{Window: model.Window{Kind: model.WindowAll}},
			Filter: &Filter{Where: []model.Cond{{Field: "dock", Value: "d9", Not: true}}}}
		return readThrough(t, cfg, "quay", []string{path}, 0, parallel).Snapshot(model.SnapshotOptions{})
	}
	got, want := run(true), run(false)
	got.Taken, want.Taken = time.Time{}, time.Time{}
	if want.Input.Filtered != 3000 || want.Records != 6009 {
		t.Errorf("reference kept %d records, left out %d: the test input is not what it should be", want.Records, want.Input.Filtered)
	}
	sameFigures(t, got, want)
}

// TestPipelineRedetects: a file whose lines change shape part way (JSON,
// then logfmt) is detected again after a run of rejected lines, as the
// line-by-line read does: the same snapshot, accounting, formats and
// warning, the logfmt lines read as records.
func TestPipelineRedetects(t *testing.T) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(4))
	var data bytes.Buffer
	for i := 0; i < 12000; i++ {
		if i < 5000 {
			fmt.Fprintf(&data, `{"berth":"b%d","crane":"c%d","tide":"%d"}`+"\n", i%9, i%4, i%13)
		} else {
			fmt.Fprintf(&data, "berth=b%d crane=c%d tide=%d\n", i%9, i%4, i%13)
		}
	}
	path := filepath.Join(t.TempDir(), "quay.log")
	os.WriteFile(path, data.Bytes(), 0o644)
	run := func(parallel bool) (*model.Snapshot, []string) {
		in := readThrough(t, Config{Model: model.Options{Window: model.Window{Kind: model.WindowAll}}}, "quay", []string{path}, 0, parallel)
		return in.Snapshot(model.SnapshotOptions{}), in.Warnings()
	}
	got, gotWarn := run(true)
	want, wantWarn := run(false)
	got.Taken, want.Taken = time.Time{}, time.Time{}
	if want.Input.Format != "json+logfmt" || want.Records != 12000-redetectRun || len(wantWarn) != 1 {
		t.Errorf("reference: format %q, %d records, warnings %q: the test input is not what it should be", want.Input.Format, want.Records, wantWarn)
	}
	if !reflect.DeepEqual(gotWarn, wantWarn) {
		t.Errorf("warnings %q, want %q", gotWarn, wantWarn)
	}
	sameFigures(t, got, want)
}

// TestPipelineEqualsSequentialKlog: klog lines (plain and structured, some
// not klog) parsed by the pipeline give the snapshot and accounting of the
// line-by-line read.
func TestPipelineEqualsSequentialKlog(t *testing.T) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(4))
	var data bytes.Buffer
	levels := "IIIIIIWE"
	for i := 0; i < 6000; i++ {
		fmt.Fprintf(&data, "%c0314 02:%02d:%02d.%06d %7d berth_controller.go:%d] ", levels[i%len(levels)], i/60%60, i%60, i, 100+i%3, 80+i%5)
		if i%3 == 0 {
			fmt.Fprintf(&data, "\"Reconciled\" berth=\"%d\" took=\"%dms\"\n", i%13, i%40)
		} else {
			fmt.Fprintf(&data, "berth %d reconciled\n", i%13)
		}
		if i%997 == 5 {
			data.WriteString("\tat quay.Berth.run(Berth.java:12)\nnot klog at all\n")
		}
	}
	path := filepath.Join(t.TempDir(), "k.log")
	os.WriteFile(path, data.Bytes(), 0o644)
	run := func(parallel bool) *model.Snapshot {
		in := readThrough(t, Config{Model: model.Options{Headless: parallel}}, "files", []string{path}, 0, parallel)
		if in.Snapshot(model.SnapshotOptions{}).Input.Format != "klog" {
			t.Fatalf("format %s", in.Snapshot(model.SnapshotOptions{}).Input.Format)
		}
		s := in.Snapshot(model.SnapshotOptions{})
		s.Taken = time.Time{}
		return s
	}
	want := run(false)
	if want.Records != 6000 || want.Input.Rejected != 14 {
		t.Errorf("reference: %d records, %d rejected", want.Records, want.Input.Rejected)
	}
	sameFigures(t, run(true), want)
}

// TestPipelineEqualsSequentialFormats: each format the pipeline now parses
// in parallel (by name, or by a clone of what it learned: header, pattern)
// gives, through the pipeline, the snapshot and accounting of the
// line-by-line read, on lines of its shape with a few that are not.
func TestPipelineEqualsSequentialFormats(t *testing.T) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(4))
	const n = 5000
	methods, paths := []string{"GET", "GET", "POST"}, []string{"/v1/berths", "/v1/tides", "/v1/berths/12"}
	gen := map[string]func(i int) string{
		"access": func(i int) string {
			return fmt.Sprintf(`10.0.%d.%d - - [14/Mar/2026:02:%02d:%02d +0000] "%s %s HTTP/1.1" %d %d "-" "probe/%d"`,
				i%3, i%200, i/60%60, i%60, methods[i%3], paths[i%3], []int{200, 200, 404, 503}[i%4], 100+i%900, i%5)
		},
		"rfc3164": func(i int) string {
			return fmt.Sprintf("<%d>Mar 14 02:%02d:%02d quay-%d berthd[%d]: berth %d assigned", 13+i%3, i/60%60, i%60, i%4, 100+i%7, i%13)
		},
		"rfc5424": func(i int) string {
			return fmt.Sprintf(`<%d>1 2026-03-14T02:%02d:%02d.%03dZ quay-%d berthd %d ASSIGN [quay@32473 berth="%d"] assigned`, 133+i%3, i/60%60, i%60, i%1000, i%4, 100+i%7, i%13)
		},
		"docker": func(i int) string {
			return fmt.Sprintf(`{"log":"level=%s berth=%d\n","stream":"stdout","time":"2026-03-14T02:%02d:%02d.%09dZ"}`, []string{"info", "warn"}[i%2], i%13, i/60%60, i%60, i)
		},
		"prefixed": func(i int) string {
			return fmt.Sprintf("2026-03-14T02:%02d:%02d.%06d+00:00 router[web.%d]: at=info path=%s status=%d", i/60%60, i%60, i, i%3, paths[i%3], []int{200, 200, 503}[i%3])
		},
	}
	gen["envoy"] = func(i int) string {
		return fmt.Sprintf(`[2026-03-14T02:%02d:%02d.%03dZ] "%s %s HTTP/1.1" %d - 0 %d %d %d "-" "probe/%d" "req-%06d" "quay.example" "10.0.1.%d:8080"`,
			i/60%60, i%60, i%1000, methods[i%3], paths[i%3], []int{200, 200, 503}[i%3], 100+i%900, i%90, i%80, i%5, i, i%4)
	}
	hdfs, _ := labelled.Generate("hdfs", n, 3)
	gen["header"] = func(i int) string { return hdfs[i] }
	gen["pattern"] = func(i int) string { return fmt.Sprintf("%s %s %d", methods[i%3], paths[i%3], i%7) }
	for name, line := range gen {
		t.Run(name, func(t *testing.T) {
			var data bytes.Buffer
			for i := 0; i < n; i++ {
				data.WriteString(line(i) + "\n")
				if i%997 == 5 {
					data.WriteString("\x01 not a line of this shape\n")
				}
			}
			path := filepath.Join(t.TempDir(), name+".log")
			os.WriteFile(path, data.Bytes(), 0o644)
			cfg := Config{}
			if name == "pattern" {
				cfg.Pattern = `^(?P<method>\S+) (?P<path>\S+) (?P<n>\d+)$`
			}
			run := func(parallel bool) *model.Snapshot {
				c := cfg
				c.Model.Headless = parallel
				in := readThrough(t, c, "files", []string{path}, 0, parallel)
				if parallel && !in.settled() {
					t.Fatal("the pipeline did not take this format")
				}
				s := in.Snapshot(model.SnapshotOptions{})
				s.Taken = time.Time{}
				return s
			}
			want := run(false)
			if want.Input.Format != name || want.Records != n {
				t.Fatalf("reference: format %s, %d records, %d rejected", want.Input.Format, want.Records, want.Input.Rejected)
			}
			sameFigures(t, run(true), want)
		})
	}
}
