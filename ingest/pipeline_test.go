package ingest

import (
	"bytes"
	"context"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"runtime"
	"strings"
	"testing"
	"time"

	"bitsift/demo"
	"bitsift/model"
	"bitsift/parse"
)

// seqSource hides a FileSource's type, so that ReadSource reads it line by
// line: the reference for the pipeline.
type seqSource struct{ parse.Source }

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
			run := func(parallel bool) *model.Snapshot {
				clock := time.Unix(1e9, 0)
				in, err := New(Config{MaxLine: 600, Model: model.Options{Window: w},
					Clock: func() time.Time { clock = clock.Add(time.Millisecond); return clock }})
				if err != nil {
					t.Fatal(err)
				}
				in.AddSource("files")
				var src parse.Source = parse.NewFileSource(paths, 600)
				if !parallel {
					src = seqSource{src}
				} else if !parallelOK(src) {
					t.Fatal("the pipeline would not run")
				}
				if err := in.ReadSource(context.Background(), src); err != nil {
					t.Fatal(err)
				}
				return in.Snapshot(model.SnapshotOptions{})
			}
			got, want := run(true), run(false)
			got.Taken, want.Taken = time.Time{}, time.Time{}
			if !reflect.DeepEqual(got.Input, want.Input) {
				t.Errorf("input accounting differs:\n got %+v\nwant %+v", got.Input, want.Input)
			}
			if want.Input.Rejected < 20 || want.Input.Lines != 6000+want.Input.Rejected+1 {
				t.Errorf("reference read %d lines, %d rejected: the test input is not what it should be", want.Input.Lines, want.Input.Rejected)
			}
			if !reflect.DeepEqual(got.Fields, want.Fields) || got.Records != want.Records || got.Oldest != want.Oldest || got.Newest != want.Newest {
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
		})
	}
}
