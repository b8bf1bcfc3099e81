package parse_test

import (
	"bytes"
	"sync"
	"testing"

	"bitsift/demo"
	"bitsift/parse"
)

// Parser benchmarks on the demo stream (14 fields, about 270 bytes a line
// as JSON), the same records as logfmt. Formats written in other files
// (access logs, syslog) add their own BenchmarkParse* beside them; the
// issue asks for at least 500k lines/s from each.

var (
	benchOnce   sync.Once
	benchJSON   [][]byte
	benchLogfmt [][]byte
)

const benchN = 20_000

func benchLines() {
	benchOnce.Do(func() {
		g := demo.New(1, benchN)
		var j parse.JSON
		var rec parse.Record
		for i := 0; i < benchN; i++ {
			line := g.Append(nil)
			benchJSON = append(benchJSON, line)
			rec.Reset()
			if err := j.Parse(line, &rec); err != nil {
				panic(err)
			}
			benchLogfmt = append(benchLogfmt, appendLogfmt(nil, &rec))
		}
	})
}

// appendLogfmt writes rec as logfmt, quoting values with spaces, quotes or
// equals signs.
func appendLogfmt(dst []byte, rec *parse.Record) []byte {
	for i := 0; i < rec.Len(); i++ {
		if i > 0 {
			dst = append(dst, ' ')
		}
		dst = append(dst, rec.Key(i)...)
		dst = append(dst, '=')
		v := rec.Value(i)
		if bytes.ContainsAny(v, " \"=\\") || len(v) == 0 {
			dst = append(dst, '"')
			for _, c := range v {
				if c == '"' || c == '\\' {
					dst = append(dst, '\\')
				}
				dst = append(dst, c)
			}
			dst = append(dst, '"')
		} else {
			dst = append(dst, v...)
		}
	}
	return dst
}

func benchParse(b *testing.B, f parse.Format, lines [][]byte) {
	size := 0
	for _, l := range lines {
		size += len(l)
	}
	b.SetBytes(int64(size / len(lines)))
	b.ReportAllocs()
	var rec parse.Record
	for i := 0; b.Loop(); i++ {
		rec.Reset()
		if err := f.Parse(lines[i%len(lines)], &rec); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.N)/b.Elapsed().Seconds(), "lines/s")
}

// BenchmarkParseJSON parses demo lines as JSON.
func BenchmarkParseJSON(b *testing.B) {
	benchLines()
	benchParse(b, &parse.JSON{}, benchJSON)
}

// BenchmarkParseLogfmt parses the demo records written as logfmt.
func BenchmarkParseLogfmt(b *testing.B) {
	benchLines()
	benchParse(b, &parse.Logfmt{}, benchLogfmt)
}

// BenchmarkLines splits the demo stream into lines: the floor under every
// format.
func BenchmarkLines(b *testing.B) {
	benchLines()
	var buf []byte
	for _, l := range benchJSON {
		buf = append(append(buf, l...), '\n')
	}
	b.SetBytes(int64(len(buf)))
	b.ReportAllocs()
	for b.Loop() {
		l := parse.NewLines(bytes.NewReader(buf), 0)
		n := 0
		for {
			if _, _, err := l.Next(); err != nil {
				break
			}
			n++
		}
		if n != benchN {
			b.Fatal(n)
		}
	}
	b.ReportMetric(float64(b.N*benchN)/b.Elapsed().Seconds(), "lines/s")
}

// BenchmarkTimeFinder reads the demo records' times (RFC 3339, one field)
// with a settled TimeFinder.
func BenchmarkTimeFinder(b *testing.B) {
	benchLines()
	var j parse.JSON
	recs := make([]parse.Record, 1000)
	for i := range recs {
		if err := j.Parse(benchJSON[i], &recs[i]); err != nil {
			b.Fatal(err)
		}
	}
	var tf parse.TimeFinder
	if _, ok := tf.Find(&recs[0]); !ok {
		b.Fatal("no time")
	}
	for i := 0; b.Loop(); i++ {
		tf.Find(&recs[i%len(recs)])
	}
}
