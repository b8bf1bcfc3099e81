package model

import (
	"math"
	"strconv"
	"testing"

	"bitsift/parse"
)

func feed(m *Model, from, to int) {
	var rec parse.Record
	for i := from; i < to; i++ {
		rec.Reset()
		rec.AddString("a", strconv.Itoa(i%7))
		rec.AddString("b", strconv.Itoa(i%7/2))
		rec.AddString("id", strconv.Itoa(i))
		if i%5 == 0 {
			rec.AddString("rare", "x")
		}
		m.Add(&rec, int64(i+1), int64(i)*1e6)
	}
}

func TestWithWindow(t *testing.T) {
	full := New(Options{})
	feed(full, 0, 5000)
	for _, c := range []struct {
		name   string
		window Window
		from   int // the records the new model should cover: [from, 5000)
	}{
		{"smaller record window", Window{Kind: WindowRecords, Records: 1200}, 3800},
		{"all", Window{Kind: WindowAll}, 0},
		{"duration", Window{Kind: WindowDuration, Duration: 2 * 1e9}, 2999},
	} {
		t.Run(c.name, func(t *testing.T) {
			got := full.WithWindow(c.window)
			// The reference: a model fed only the records the window
			// covers (the figures depend on nothing else).
			ref := New(Options{Window: c.window})
			feed(ref, c.from, 5000)
			ref.Flush()
			gs, rs := got.Snapshot(SnapshotOptions{}), ref.Snapshot(SnapshotOptions{})
			if gs.Records != rs.Records {
				t.Fatalf("records = %d, want %d", gs.Records, rs.Records)
			}
			if gs.Seen != 5000 {
				t.Errorf("Seen = %d, want 5000 (carried over)", gs.Seen)
			}
			for _, rf := range rs.Fields {
				i := gs.Index(rf.Name)
				if i < 0 {
					t.Fatalf("field %s missing", rf.Name)
				}
				gf := gs.Fields[i]
				if math.Abs(gf.Entropy-rf.Entropy) > 1e-12 || gf.Distinct != rf.Distinct || gf.Kind != rf.Kind {
					t.Errorf("%s: H=%v distinct=%d kind=%s, want H=%v distinct=%d kind=%s",
						rf.Name, gf.Entropy, gf.Distinct, gf.Kind, rf.Entropy, rf.Distinct, rf.Kind)
				}
			}
			a, b := gs.Index("a"), gs.Index("b")
			ra, rb := rs.Index("a"), rs.Index("b")
			if math.Abs(gs.Cond(b, a)-rs.Cond(rb, ra)) > 1e-12 {
				t.Errorf("H(b|a) = %v, want %v", gs.Cond(b, a), rs.Cond(rb, ra))
			}
		})
	}
	t.Run("larger window then grows", func(t *testing.T) {
		small := New(Options{Window: Window{Kind: WindowRecords, Records: 1000}})
		feed(small, 0, 5000)
		big := small.WithWindow(Window{Kind: WindowRecords, Records: 3000})
		if big.Len() != 1000 {
			t.Fatalf("after widening, Len = %d, want the 1000 records held", big.Len())
		}
		feed(big, 5000, 7500)
		if big.Len() != 3000 {
			t.Errorf("after 2500 more records, Len = %d, want 3000", big.Len())
		}
	})
}

// TestWithWindowKeepsSynthetic: a field bitsift made stays marked as made
// by it when the window changes (issue 15: cycling the window turned a
// companion into a field of the log).
func TestWithWindowKeepsSynthetic(t *testing.T) {
	m := New(Options{Window: Window{Kind: WindowRecords, Records: 100}})
	m.DeclareSynthetic("wait~log", Synthetic{Source: "wait", Method: "log10 buckets"})
	var rec parse.Record
	for i := range 50 {
		rec.Reset()
		rec.AddString("wait", strconv.Itoa(i%9))
		rec.AddString("wait~log", strconv.Itoa(i%9/3))
		m.Add(&rec, int64(i+1), int64(i))
	}
	for _, w := range []Window{{Kind: WindowAll}, {Kind: WindowRecords, Records: 10}} {
		s := m.WithWindow(w).Snapshot(SnapshotOptions{})
		i := s.Index("wait~log")
		if i < 0 || s.Fields[i].Synthetic == nil || s.Fields[i].Synthetic.Source != "wait" {
			t.Errorf("window %v: wait~log not marked as made by bitsift", w)
		}
	}
}
