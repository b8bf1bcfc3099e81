package model

import (
	"fmt"
	"math/rand/v2"
	"testing"
	"time"

	"bitsift/parse"
)

// sameFigures compares two snapshots field by field and pair by pair, by
// name. Exact equality is expected: S is kept in fixed point.
func sameFigures(t *testing.T, got, want *Snapshot) {
	t.Helper()
	if got.Records != want.Records {
		t.Fatalf("records %d, want %d", got.Records, want.Records)
	}
	for _, wf := range want.Fields {
		i := got.Index(wf.Name)
		if i < 0 {
			if wf.Present == 0 {
				continue
			}
			t.Fatalf("field %s missing", wf.Name)
		}
		gf := got.Fields[i]
		if gf.Entropy != wf.Entropy || gf.Distinct != wf.Distinct || gf.Present != wf.Present {
			t.Errorf("%s: H %.15f distinct %d present %d; recount H %.15f distinct %d present %d",
				wf.Name, gf.Entropy, gf.Distinct, gf.Present, wf.Entropy, wf.Distinct, wf.Present)
		}
		hashed := len(gf.Top) > 0 && gf.Top[len(gf.Top)-1].Sample
		if !hashed && gf.BytesPerRecord != wf.BytesPerRecord {
			t.Errorf("%s: bytes/record %g, recount %g", wf.Name, gf.BytesPerRecord, wf.BytesPerRecord)
		}
	}
	for i := range want.Fields {
		for j := range want.Fields {
			if !want.HasPair(i, j) {
				continue
			}
			gi, gj := got.Index(want.Fields[i].Name), got.Index(want.Fields[j].Name)
			if gi < 0 || gj < 0 || !got.HasPair(gi, gj) {
				continue
			}
			if g, w := got.Joint(gi, gj), want.Joint(i, j); g != w {
				t.Errorf("H(%s,%s) = %.15f, recount %.15f", want.Fields[i].Name, want.Fields[j].Name, g, w)
			}
		}
	}
}

// TestIncrementalEqualsRecount: after random records enter and leave
// windows of each kind, the incremental figures equal a from-scratch
// recount of the window's records, bit for bit.
func TestIncrementalEqualsRecount(t *testing.T) {
	windows := []Window{
		{Kind: WindowRecords, Records: 1},
		{Kind: WindowRecords, Records: 7},
		{Kind: WindowRecords, Records: 500},
		{Kind: WindowDuration, Duration: 300 * time.Millisecond},
		{Kind: WindowAll},
	}
	for _, w := range windows {
		t.Run(w.Kind.String()+"/"+w.String(), func(t *testing.T) {
			r := rand.New(rand.NewPCG(11, uint64(w.Records)))
			m := New(Options{Window: w})
			var rec parse.Record
			tm := int64(0)
			for i := 0; i < 5000; i++ {
				rec.Reset()
				// A shifting mix: some fields come and go, values skew.
				for f := 0; f < 6; f++ {
					if r.IntN(10) < f { // field f is absent f/10 of the time
						continue
					}
					v := r.IntN(1 + f*f + i/1000)
					rec.AddString(fmt.Sprint("f", f), fmt.Sprint(v))
				}
				if i > 2000 {
					rec.AddString("late", fmt.Sprint(r.IntN(3)))
				}
				rec.AddString("id", fmt.Sprint(i)) // an identifier
				tm += int64(r.IntN(3)) * int64(time.Millisecond)
				m.Add(&rec, int64(i+1), tm)
				if i%997 == 0 || i == 4999 {
					m.Flush()
					sameFigures(t, m.Snapshot(SnapshotOptions{}), m.Rebuild().Snapshot(SnapshotOptions{}))
				}
			}
			if w.Kind == WindowRecords && m.Len() != min(w.Records, 5000) {
				t.Errorf("window holds %d records, want %d", m.Len(), w.Records)
			}
		})
	}
}

// TestIdsReleased: values that left the window free their ids, so a stream
// of unique values in a bounded window keeps the tables bounded.
func TestIdsReleased(t *testing.T) {
	m := New(Options{Window: Window{Kind: WindowRecords, Records: 100}})
	var rec parse.Record
	for i := 0; i < 100000; i++ {
		rec.Reset()
		rec.AddString("req", fmt.Sprint(i))
		rec.AddString("code", fmt.Sprint(i%5))
		m.Add(&rec, int64(i), int64(i))
	}
	f := m.fields[m.byName["req"]]
	if f.byHash == nil || f.distinct != 100 || len(f.counts) > 201 || f.byHash.len() != 100 {
		t.Errorf("req (hashed %v) keeps %d values, %d hashes in %d slots for a window of 100",
			f.byHash != nil, f.distinct, f.byHash.len(), len(f.counts))
	}
	g := m.fields[m.byName["code"]]
	if g.values.len() != 5 || g.byHash != nil {
		t.Errorf("code interns %d values (hashed %v), want 5 as text", g.values.len(), g.byHash != nil)
	}
}

func TestParseWindow(t *testing.T) {
	for _, c := range []struct {
		in   string
		want Window
	}{
		{"all", Window{Kind: WindowAll}},
		{"", Window{Kind: WindowAll}},
		{"50000", Window{Kind: WindowRecords, Records: 50000}},
		{"50k", Window{Kind: WindowRecords, Records: 50000}},
		{"5m", Window{Kind: WindowDuration, Duration: 5 * time.Minute}},
		{"90s", Window{Kind: WindowDuration, Duration: 90 * time.Second}},
	} {
		got, err := ParseWindow(c.in)
		if err != nil || got != c.want {
			t.Errorf("ParseWindow(%q) = %+v, %v; want %+v", c.in, got, err, c.want)
		}
	}
	for _, bad := range []string{"0", "-5", "soon", "-1m"} {
		if _, err := ParseWindow(bad); err == nil {
			t.Errorf("ParseWindow(%q) accepted", bad)
		}
	}
}
