package ingest

import (
	"bytes"
	"compress/gzip"
	"context"
	"encoding/json"
	"os"
	"path/filepath"
	"testing"

	"github.com/klauspost/compress/zstd"

	"bitsift/demo"
	"bitsift/model"
	"bitsift/parse"
	"bitsift/report"
)

// demoText is n lines of the demo stream.
func demoText(n int64) []byte {
	var b bytes.Buffer
	g := demo.New(7, n)
	line := make([]byte, 0, 512)
	for i := int64(0); i < n; i++ {
		line = append(g.Append(line[:0]), '\n')
		b.Write(line)
	}
	return b.Bytes()
}

// reportOf replays paths and returns the JSON report, sources left out
// (their names differ by design).
func reportOf(t *testing.T, paths ...string) []byte {
	t.Helper()
	in, err := New(Config{Model: model.Options{Window: model.Window{Kind: model.WindowAll}}})
	if err != nil {
		t.Fatal(err)
	}
	r, err := parse.NewReplayer(paths, parse.ReplayOptions{})
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close()
	if err := in.ReadSource(context.Background(), r); err != nil {
		t.Fatal(err)
	}
	rep := report.Build(in.Snapshot(model.SnapshotOptions{}))
	rep.Input.Sources = nil
	var b bytes.Buffer
	if err := report.WriteJSON(&b, rep); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

func TestReplayCompressedCopiesGiveIdenticalReports(t *testing.T) {
	dir := t.TempDir()
	plain := demoText(8000)
	var gz bytes.Buffer
	zw := gzip.NewWriter(&gz)
	zw.Write(plain)
	zw.Close()
	enc, err := zstd.NewWriter(nil) // the reference zstd encoder, from the module proxy
	if err != nil {
		t.Fatal(err)
	}
	zst := enc.EncodeAll(plain, nil)
	enc.Close()
	files := map[string][]byte{"a.jsonl": plain, "a.jsonl.gz": gz.Bytes(), "a.jsonl.zst": zst}
	for name, b := range files {
		if err := os.WriteFile(filepath.Join(dir, name), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	want := reportOf(t, filepath.Join(dir, "a.jsonl"))
	var rep report.Report
	if err := json.Unmarshal(want, &rep); err != nil {
		t.Fatal(err)
	}
	if rep.Lines != 8000 || rep.Records != 8000 || rep.Rejected != 0 {
		t.Fatalf("plain replay: %d lines, %d records, %d rejected; want 8000 records", rep.Lines, rep.Records, rep.Rejected)
	}
	for _, name := range []string{"a.jsonl.gz", "a.jsonl.zst"} {
		t.Run(name, func(t *testing.T) {
			if got := reportOf(t, filepath.Join(dir, name)); !bytes.Equal(got, want) {
				t.Errorf("report of %s differs from the plain file's", name)
			}
		})
	}
}

func TestTimestampFieldMarkedAndLeftOutOfPairs(t *testing.T) {
	text := demoText(5000)
	for _, analyse := range []bool{false, true} {
		in, _ := New(Config{AnalyseTime: analyse})
		for i, l := range bytes.Split(bytes.TrimSuffix(text, []byte("\n")), []byte("\n")) {
			in.Line(l, int64(i+1), "demo")
		}
		in.Flush()
		rep := report.Build(in.Snapshot(model.SnapshotOptions{}))
		if rep.Input.TimeField != "ts" || rep.Input.TimeFormat != "rfc3339" {
			t.Errorf("time field %q format %q, want ts rfc3339", rep.Input.TimeField, rep.Input.TimeFormat)
		}
		var marked bool
		for _, f := range rep.Fields {
			if f.Name == "ts" {
				marked = f.Timestamp
			}
			if !analyse && f.BestGiven == "ts" {
				t.Errorf("%s: best predictor is the timestamp", f.Name)
			}
		}
		inPairs := false
		for _, p := range rep.Pairs {
			if p.Target == "ts" || p.Given == "ts" {
				inPairs = true
			}
		}
		if marked == analyse || (!analyse && inPairs) {
			t.Errorf("analyse-time %v: ts marked %v, in pairs %v", analyse, marked, inPairs)
		}
	}
}
