package ingest

import (
	"bytes"
	"context"
	"sync"
	"testing"

	"bitsift/companion"
	"bitsift/demo"
	"bitsift/model"
	"bitsift/parse"
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

// BenchmarkParseBatch is one pipeline worker's work on a batch of demo
// lines: parse, find the time, append the companions (the demo's latency
// buckets). Reported per line.
func BenchmarkParseBatch(b *testing.B) {
	g := demo.New(1, batchLines)
	bt := &batch{}
	for len(bt.lines) < batchLines {
		bt.add(parse.Line{Text: g.Append(nil), Num: int64(len(bt.lines) + 1), Source: "demo"}, nil)
	}
	var f parse.JSON
	sample := make([]*parse.Record, 256)
	for i := range sample {
		sample[i] = &parse.Record{}
		if err := f.Parse(bt.line(i).Text, sample[i]); err != nil {
			b.Fatal(err)
		}
	}
	comp := companion.Choose(sample, companion.Options{})
	lab := comp.Labeller()
	if lab == nil {
		b.Fatal("the demo has no companions")
	}
	var times parse.TimeFinder
	for b.Loop() {
		parseBatch(bt, &f, &times, lab)
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*len(bt.lines)), "ns/line")
}

// BenchmarkLabeller is a pipeline worker's companion labelling alone, on
// copies of parsed demo records (the demo's latency buckets).
func BenchmarkLabeller(b *testing.B) {
	g := demo.New(1, batchLines)
	var f parse.JSON
	recs := make([]*parse.Record, batchLines)
	for i := range recs {
		recs[i] = &parse.Record{}
		if err := f.Parse(g.Append(nil), recs[i]); err != nil {
			b.Fatal(err)
		}
	}
	lab := companion.Choose(recs[:256], companion.Options{}).Labeller()
	if lab == nil {
		b.Fatal("the demo has no companions")
	}
	var r parse.Record
	for i := 0; b.Loop(); i++ {
		r.CopyFrom(recs[i%len(recs)]) // the same in every run: a baseline
		lab.Apply(&r)
	}
}
