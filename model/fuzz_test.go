package model

import (
	"testing"

	"bitsift/parse"
)

// FuzzModelUpdate reads the input as a script of records (each byte picks a
// field and a value; 0xff ends a record) pushed through a small window, and
// checks after each record that the incremental figures equal a recount.
func FuzzModelUpdate(f *testing.F) {
	f.Add([]byte{1, 2, 3, 0xff, 1, 2, 0xff, 9, 9, 9, 0xff}, uint8(3))
	f.Add([]byte{0, 0, 0xff, 0, 1, 0xff, 0, 2, 0xff, 0, 3, 0xff}, uint8(1))
	f.Add([]byte{}, uint8(0))
	f.Fuzz(func(t *testing.T, script []byte, window uint8) {
		w := Window{Kind: WindowRecords, Records: int(window%16) + 1}
		if window >= 200 {
			w = Window{}
		}
		m := New(Options{Window: w, MaxFields: 6, MaxPairFields: 4})
		var rec parse.Record
		line := int64(0)
		flush := func() {
			line++
			m.Add(&rec, line, line)
			rec.Reset()
			if line%5 == 0 {
				m.Flush()
				sameFigures(t, m.Snapshot(SnapshotOptions{}), m.Rebuild().Snapshot(SnapshotOptions{}))
			}
		}
		for _, b := range script {
			if b == 0xff {
				flush()
				continue
			}
			rec.AddString(string(rune('a'+b%8)), string(rune('0'+b/8%5)))
		}
		flush()
	})
}
