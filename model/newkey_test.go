package model

import (
	"strconv"
	"testing"

	"bitsift/parse"
)

// TestNewKeyEveryLineIsFastDeep: a stream where every line brings a key
// never seen before (20,000 lines, so the model reaches its field cap) once
// cost minutes in a Deep snapshot, because each record visit of the scans
// decoded the record's whole row (a thousand fields) to read one of them.
// The scans now read single columns of the store, so the ids they decode
// are bounded by the records times the columns they read, and the
// determinant search's work count (which includes the decoding) stays
// within its cap. The bounds are counted, not timed.
func TestNewKeyEveryLineIsFastDeep(t *testing.T) {
	const lines = 20_000
	m := New(Options{})
	var rec parse.Record
	levels := []string{"info", "warn", "error"}
	for i := 0; i < lines; i++ {
		rec.Reset()
		rec.AddString("level", levels[i%3])
		rec.AddString("berth", "b"+strconv.Itoa(i%7))
		rec.AddString("key_"+strconv.Itoa(i), "x")
		m.Add(&rec, int64(i+1), int64(i))
	}
	m.Flush()
	fields := len(m.fields)
	if fields != m.opt.MaxFields {
		t.Fatalf("%d fields, want the cap %d", fields, m.opt.MaxFields)
	}
	before := m.st.decoded.Load()
	s := m.Snapshot(SnapshotOptions{Deep: true})
	decoded := m.st.decoded.Load() - before
	if s.DeepRecords != lines {
		t.Fatalf("deep records %d, want %d", s.DeepRecords, lines)
	}
	// Whole rows would decode fields × records per column read: over
	// 2·10^7 for each. Columns cost the records once per column: the
	// determinant search's share is inside its work count, surprisal reads
	// at most two columns per field, and the top records are read whole.
	bound := int64(detMaxWork) + 2*int64(fields)*lines + int64(10*fields)
	if decoded > bound {
		t.Errorf("a Deep snapshot decoded %d ids, want at most %d", decoded, bound)
	}
	if w := m.lastDetWork; w > detMaxWork+2*lines+detDenseCells {
		t.Errorf("the determinant search did %d work, past its cap %d by more than one step", w, detMaxWork)
	}
}
