package model

import (
	"testing"

	"bitsift/demo"
	"bitsift/parse"
)

// demoModel feeds n demo lines into a model.
func demoModel(t testing.TB, n int64, w Window) *Model {
	t.Helper()
	m := New(Options{Window: w})
	g := demo.New(1, 0)
	f, err := parse.ByName("json")
	if err != nil {
		t.Fatal(err)
	}
	var rec parse.Record
	buf := make([]byte, 0, 512)
	for i := int64(1); i <= n; i++ {
		buf = g.Append(buf[:0])
		rec.Reset()
		if err := f.Parse(buf, &rec); err != nil {
			t.Fatal(err)
		}
		m.Add(&rec, i, i)
	}
	m.Flush()
	return m
}

// BenchmarkSnapshot measures a plain snapshot (with E[I]) and a deep one of
// 200,000 demo records.
func BenchmarkSnapshot(b *testing.B) {
	m := demoModel(b, 200_000, Window{})
	b.Run("plain", func(b *testing.B) {
		for range b.N {
			m.Snapshot(SnapshotOptions{})
		}
	})
	b.Run("deep", func(b *testing.B) {
		for range b.N {
			m.Snapshot(SnapshotOptions{Deep: true})
		}
	})
}
