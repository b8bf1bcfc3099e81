package kafka

import (
	"context"
	"io"
	"os"
	"path/filepath"
	"testing"

	"github.com/twmb/franz-go/pkg/kgo"

	"bitsift/demo"
	"bitsift/internal/kafkafake"
	"bitsift/parse"
)

// BenchmarkSourceNext reads demo records from a topic of 6 partitions on
// kfake (in this process, so the broker's work is in the figures too):
// ns per record through Source.Next, including the fetches.
func BenchmarkSourceNext(b *testing.B) {
	c, topic := kafkafake.Start(b, 6)
	cl := c.Client(b, kgo.RecordPartitioner(kgo.ManualPartitioner()), kgo.ProducerBatchMaxBytes(1<<20))
	g := demo.New(1, 0)
	const n = 60_000
	recs := make([]*kgo.Record, n)
	var bytes int64
	for i := range recs {
		v := g.Append(nil)
		bytes += int64(len(v))
		recs[i] = &kgo.Record{Topic: topic, Partition: int32(i % 6), Value: v}
	}
	if err := cl.ProduceSync(context.Background(), recs...).FirstErr(); err != nil {
		b.Fatal(err)
	}
	b.ResetTimer()
	read := 0
	for read < b.N {
		src, err := Open(context.Background(), Options{Conn: Conn{Brokers: c.Brokers}, Topic: topic, Start: Start{Kind: "oldest"}, Bounded: true})
		if err != nil {
			b.Fatal(err)
		}
		for read < b.N {
			if _, err := src.Next(context.Background()); err == io.EOF {
				break
			} else if err != nil {
				b.Fatal(err)
			}
			read++
		}
		src.Close()
	}
	b.SetBytes(bytes / n)
}

// BenchmarkFileSourceNext is the baseline: the same demo lines from a
// file through parse.FileSource.
func BenchmarkFileSourceNext(b *testing.B) {
	g := demo.New(1, 0)
	const n = 60_000
	var data []byte
	for range n {
		data = append(g.Append(data), '\n')
	}
	path := filepath.Join(b.TempDir(), "demo.jsonl")
	if err := os.WriteFile(path, data, 0o644); err != nil {
		b.Fatal(err)
	}
	b.ResetTimer()
	read := 0
	for read < b.N {
		src := parse.NewFileSource([]string{path}, 0)
		for read < b.N {
			if _, err := src.Next(context.Background()); err == io.EOF {
				break
			} else if err != nil {
				b.Fatal(err)
			}
			read++
		}
		src.Close()
	}
	b.SetBytes(int64(len(data)) / n)
}
