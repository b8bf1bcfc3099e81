package parse

import (
	"bytes"
	"os"
	"testing"
)

// BenchmarkParse reads each format's detection file line after line into
// one reused Record; lines/s = 1e9 / (ns/op) × lines per op.
func BenchmarkParse(b *testing.B) {
	for _, name := range Names() {
		data, err := os.ReadFile("testdata/detect/" + name + ".log")
		if err != nil {
			b.Fatal(err)
		}
		lines := bytes.Split(bytes.TrimRight(data, "\n"), []byte("\n"))
		b.Run(name, func(b *testing.B) {
			f, _ := ByName(name)
			if l, ok := f.(Learner); ok {
				l.Learn(lines)
			}
			var rec Record
			b.ReportAllocs()
			b.SetBytes(int64(len(data)) / int64(len(lines)))
			for i := 0; b.Loop(); i++ {
				rec.Reset()
				f.Parse(lines[i%len(lines)], &rec)
			}
		})
	}
}
