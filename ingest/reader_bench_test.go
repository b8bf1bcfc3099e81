package ingest

import (
	"context"
	"errors"
	"io"
	"os"
	"path/filepath"
	"testing"

	"bitsift/demo"
	"bitsift/parse"
)

// BenchmarkReadBatches is the pipeline's reader (batchReader) over a file
// of 200k demo lines, batch after batch; reported per line.
func BenchmarkReadBatches(b *testing.B) {
	const n = 200_000
	g := demo.New(1, n)
	var data []byte
	for i := 0; i < n; i++ {
		data = append(g.Append(data), '\n')
	}
	path := filepath.Join(b.TempDir(), "demo.jsonl")
	if err := os.WriteFile(path, data, 0o644); err != nil {
		b.Fatal(err)
	}
	b.SetBytes(int64(len(data)))
	ctx := context.Background()
	bt := &batch{}
	for b.Loop() {
		r := batchReader{fs: parse.NewFileSource([]string{path}, 0)}
		lines := 0
		for {
			err := r.fill(ctx, bt)
			lines += len(bt.lines)
			bt.reset()
			if errors.Is(err, io.EOF) {
				break
			}
			if err != nil {
				b.Fatal(err)
			}
		}
		r.fs.Close()
		if lines != n {
			b.Fatal(lines)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*n), "ns/line")
}
