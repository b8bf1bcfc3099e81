package ingest

import (
	"bytes"
	"context"
	"sync"
	"testing"

	"bitsift/demo"
	"bitsift/model"
	"bitsift/report"
)

var (
	benchOnce  sync.Once
	benchInput []byte
)

const benchLines = 1_000_000

func benchDemo() []byte {
	benchOnce.Do(func() {
		g := demo.New(1, benchLines)
		b := make([]byte, 0, benchLines*300)
		for i := 0; i < benchLines; i++ {
			b = append(g.Append(b), '\n')
		}
		benchInput = b
	})
	return benchInput
}

// BenchmarkReport is `bitsift report` on 1M demo lines (14 fields, every
// field and pair), read from memory: parse, model, snapshot, report.
func BenchmarkReport(b *testing.B) {
	data := benchDemo()
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		in, _ := New(Config{Stdin: bytes.NewReader(data)})
		if err := in.ReadFiles(context.Background(), []string{"-"}); err != nil {
			b.Fatal(err)
		}
		r := report.Build(in.Snapshot(model.SnapshotOptions{}))
		if r.Records != benchLines {
			b.Fatalf("%d records", r.Records)
		}
	}
	b.ReportMetric(float64(benchLines)*float64(b.N)/b.Elapsed().Seconds(), "lines/s")
}
