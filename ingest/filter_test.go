package ingest

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"testing"

	"bitsift/model"
)

// TestFilterBothPaths: a --where filter leaves out the same records, and
// counts them, whether lines come one by one (Line) or through the
// parallel file path; the kept count is the generator's own (every third
// line has berth=b0).
func TestFilterBothPaths(t *testing.T) {
	var data []byte
	for i := range 9000 {
		data = fmt.Appendf(data, `{"berth":"b%d","tide":"ebb","n":%d}`+"\n", i%3, i)
	}
	path := filepath.Join(t.TempDir(), "quay.jsonl")
	if err := os.WriteFile(path, data, 0o644); err != nil {
		t.Fatal(err)
	}
	c, err := model.ParseCond("berth=b0")
	if err != nil {
		t.Fatal(err)
	}
	cfg := Config{Model: model.Options{Window: model.Window{Kind: model.WindowAll}}, Filter: &Filter{Where: []model.Cond{c}}}
	files, _ := New(cfg)
	if err := files.ReadFiles(context.Background(), []string{path}); err != nil {
		t.Fatal(err)
	}
	lines, _ := New(cfg)
	for i := range 9000 {
		lines.Line(fmt.Appendf(nil, `{"berth":"b%d","tide":"ebb","n":%d}`, i%3, i), int64(i+1), "quay.jsonl")
	}
	lines.Flush()
	for name, in := range map[string]*Ingester{"files": files, "lines": lines} {
		s := in.Snapshot(model.SnapshotOptions{})
		if s.Records != 3000 || s.Input.Filtered != 6000 {
			t.Errorf("%s: %d records, %d filtered; want 3000 and 6000", name, s.Records, s.Input.Filtered)
		}
	}
}
