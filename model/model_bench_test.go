package model

import (
	"fmt"
	"sync"
	"testing"

	"bitsift/demo"
	"bitsift/parse"
)

var (
	benchRecsOnce sync.Once
	benchRecs     []parse.Record
)

// demoRecords parses n demo lines once, so that the model benchmarks
// measure the model alone.
func demoRecords(n int) []parse.Record {
	benchRecsOnce.Do(func() {
		g := demo.New(1, int64(n))
		j, _ := parse.ByName("json")
		var line []byte
		benchRecs = make([]parse.Record, n)
		for i := range benchRecs {
			line = g.Append(line[:0])
			if err := j.Parse(line, &benchRecs[i]); err != nil {
				panic(err)
			}
		}
	})
	return benchRecs[:n]
}

// BenchmarkAdd is the per-record model update on demo records (14 fields,
// 66 tracked pairs once req_id and ts are found to be identifiers), in an
// all-records window and in a window of 100k records.
func BenchmarkAdd(b *testing.B) {
	recs := demoRecords(200_000)
	for _, w := range []Window{{Kind: WindowAll}, {Kind: WindowRecords, Records: 100_000}} {
		b.Run(w.String(), func(b *testing.B) {
			b.ReportAllocs()
			m := New(Options{Window: w})
			for i := 0; b.Loop(); i++ {
				if i == len(recs) && w.Kind == WindowAll {
					b.StopTimer()
					m = New(Options{Window: w})
					i = 0
					b.StartTimer()
				}
				r := &recs[i%len(recs)]
				m.Add(r, int64(i), int64(i))
			}
			b.ReportMetric(float64(b.N)/b.Elapsed().Seconds(), "records/s")
		})
	}
}

// BenchmarkSnapshot20 is a snapshot of 20 fields (190 pairs) over 100k
// records, values of 4 to 5,000 distinct per field.
func BenchmarkSnapshot20(b *testing.B) {
	m := New(Options{Window: Window{Kind: WindowRecords, Records: 100_000}})
	var rec parse.Record
	keys := make([]string, 20)
	for j := range keys {
		keys[j] = fmt.Sprintf("f%02d", j)
	}
	var v []byte
	for i := 0; i < 100_000; i++ {
		rec.Reset()
		for j, k := range keys {
			spread := []int{4, 16, 100, 5000}[j%4]
			v = fmt.Appendf(v[:0], "v%d", (i*(j+7)+i/(j+1))%spread)
			rec.Add([]byte(k), v)
		}
		m.Add(&rec, int64(i), int64(i))
	}
	m.Flush()
	b.ReportAllocs()
	for b.Loop() {
		s := m.Snapshot(SnapshotOptions{})
		if len(s.Fields) != 20 {
			b.Fatal(len(s.Fields))
		}
	}
}

// BenchmarkAddBatch is AddBatch on 200k demo records in batches of 512
// (what the report's pipeline hands over), from an empty model: in a
// headless all-records window (a report) and in a window of 100k records.
// One op is the whole 200k records.
func BenchmarkAddBatch(b *testing.B) {
	recs := demoRecords(200_000)
	ptrs := make([]*parse.Record, len(recs))
	lines := make([]int64, len(recs))
	for i := range recs {
		ptrs[i], lines[i] = &recs[i], int64(i)
	}
	for _, w := range []Window{{Kind: WindowAll}, {Kind: WindowRecords, Records: 100_000}} {
		b.Run(w.String(), func(b *testing.B) {
			for b.Loop() {
				m := New(Options{Window: w, Headless: true})
				for i := 0; i < len(ptrs); i += 512 {
					j := min(i+512, len(ptrs))
					m.AddBatch(ptrs[i:j], lines[i:j], lines[i:j])
				}
			}
			b.ReportMetric(float64(len(recs))*float64(b.N)/b.Elapsed().Seconds(), "records/s")
		})
	}
}
