package model

import (
	"math"
	"strconv"
	"testing"

	"bitsift/parse"
)

// coverThomas221 is the joint distribution of Example 2.2.1 in Cover &
// Thomas, Elements of Information Theory (2nd ed., 2006), scaled to 32
// records: counts[y-1][x-1] = 32·p(x, y). Stated from memory; the
// marginals (1/2, 1/4, 1/8, 1/8) for X and uniform for Y check it.
var coverThomas221 = [4][4]int{
	{4, 2, 1, 1}, // y=1
	{2, 4, 1, 1}, // y=2
	{2, 2, 2, 2}, // y=3
	{8, 0, 0, 0}, // y=4
}

// coverThomasModel holds one record {x, y} per unit of count.
func coverThomasModel(t *testing.T) *Model {
	t.Helper()
	m := New(Options{})
	var rec parse.Record
	line := int64(0)
	for y, row := range coverThomas221 {
		for x, c := range row {
			for range c {
				rec.Reset()
				rec.AddString("x", strconv.Itoa(x+1))
				rec.AddString("y", strconv.Itoa(y+1))
				line++
				m.Add(&rec, line, line)
			}
		}
	}
	m.Flush()
	return m
}

func TestCoverThomasMeasures(t *testing.T) {
	s := coverThomasModel(t).Snapshot(SnapshotOptions{})
	x, y := s.Index("x"), s.Index("y")
	// Cover & Thomas Example 2.2.1 (from memory): H(X) = 7/4, H(Y) = 2,
	// H(X|Y) = 11/8, H(Y|X) = 13/8, H(X,Y) = 27/8, and I(X;Y) = 3/8.
	for _, c := range []struct {
		name      string
		got, want float64
	}{
		{"H(X)", s.Fields[x].Entropy, 7.0 / 4},
		{"H(Y)", s.Fields[y].Entropy, 2},
		{"H(X|Y)", s.Cond(x, y), 11.0 / 8},
		{"H(Y|X)", s.Cond(y, x), 13.0 / 8},
		{"H(X,Y)", s.Joint(x, y), 27.0 / 8},
		{"I(X;Y)", s.Mutual(x, y), 3.0 / 8},
	} {
		t.Run(c.name, func(t *testing.T) {
			if math.Abs(c.got-c.want) > 1e-9 {
				t.Errorf("%s = %.12f bits, want %.12f", c.name, c.got, c.want)
			}
		})
	}
}

func TestDetailCoverThomas(t *testing.T) {
	m := coverThomasModel(t)
	s := m.Snapshot(SnapshotOptions{Detail: "x", DetailGiven: "y", DetailTop: 4})
	d := s.Detail
	if d == nil {
		t.Fatal("Detail is nil for a tracked pair")
	}
	if d.Field != "x" || d.Given != "y" {
		t.Fatalf("Detail is of %s given %s, want x given y", d.Field, d.Given)
	}
	// Cover & Thomas Example 2.2.1 (from memory): the conditional
	// distributions of X given Y = 1..4 are (1/2, 1/4, 1/8, 1/8),
	// (1/4, 1/2, 1/8, 1/8), uniform and (1, 0, 0, 0), with entropies 7/4,
	// 7/4, 2 and 0 bits; p(y) = 1/4 each.
	want := map[string]struct {
		entropy float64
		top     map[string]int
	}{
		"1": {7.0 / 4, map[string]int{"1": 4, "2": 2, "3": 1, "4": 1}},
		"2": {7.0 / 4, map[string]int{"1": 2, "2": 4, "3": 1, "4": 1}},
		"3": {2, map[string]int{"1": 2, "2": 2, "3": 2, "4": 2}},
		"4": {0, map[string]int{"1": 8}},
	}
	if len(d.Rows) != 4 || d.OtherRecords != 0 {
		t.Fatalf("got %d rows and %d other records, want 4 and 0", len(d.Rows), d.OtherRecords)
	}
	hxy := 0.0
	for _, r := range d.Rows {
		t.Run("y="+r.Given.Value, func(t *testing.T) {
			w, ok := want[r.Given.Value]
			if !ok {
				t.Fatalf("unexpected value %q of y", r.Given.Value)
			}
			if r.Given.Count != 8 {
				t.Errorf("count of y=%s is %d, want 8", r.Given.Value, r.Given.Count)
			}
			if math.Abs(r.Entropy-w.entropy) > 1e-9 {
				t.Errorf("H(X|Y=%s) = %.12f bits, want %.12f", r.Given.Value, r.Entropy, w.entropy)
			}
			if len(r.Top) != len(w.top) {
				t.Errorf("row has %d values of x, want %d", len(r.Top), len(w.top))
			}
			for i, v := range r.Top {
				if v.Count != w.top[v.Value] {
					t.Errorf("count of x=%s given y=%s is %d, want %d", v.Value, r.Given.Value, v.Count, w.top[v.Value])
				}
				if i > 0 && v.Count > r.Top[i-1].Count {
					t.Errorf("values not most frequent first: %v", r.Top)
				}
			}
			if r.Rest() != 0 {
				t.Errorf("Rest() = %d, want 0", r.Rest())
			}
		})
		hxy += float64(r.Given.Count) / 32 * r.Entropy
	}
	// The rows' entropies average to H(X|Y) = 11/8 (from memory, as above).
	if math.Abs(hxy-11.0/8) > 1e-9 {
		t.Errorf("Σ p(y)·H(X|Y=y) = %.12f bits, want 11/8", hxy)
	}
}

func TestDetailDefaultsAndLimits(t *testing.T) {
	m := coverThomasModel(t)
	t.Run("best given", func(t *testing.T) {
		s := m.Snapshot(SnapshotOptions{Detail: "y"})
		if s.Detail == nil || s.Detail.Given != "x" {
			t.Fatalf("Detail of y without DetailGiven = %+v, want given x (its only predictor)", s.Detail)
		}
	})
	t.Run("cut rows and top", func(t *testing.T) {
		s := m.Snapshot(SnapshotOptions{Detail: "x", DetailGiven: "y", DetailRows: 2, DetailTop: 1})
		d := s.Detail
		if len(d.Rows) != 2 || d.OtherRecords != 16 {
			t.Fatalf("got %d rows, %d other records; want 2 and 16", len(d.Rows), d.OtherRecords)
		}
		for _, r := range d.Rows {
			if len(r.Top) != 1 || r.Rest() != r.Given.Count-r.Top[0].Count {
				t.Errorf("row %s: top %v rest %d", r.Given.Value, r.Top, r.Rest())
			}
		}
	})
	t.Run("unknown field", func(t *testing.T) {
		if s := m.Snapshot(SnapshotOptions{Detail: "nope"}); s.Detail != nil {
			t.Errorf("Detail of an unknown field = %+v, want nil", s.Detail)
		}
	})
	t.Run("absent is a value", func(t *testing.T) {
		m := New(Options{})
		var rec parse.Record
		for i := range 40 {
			rec.Reset()
			rec.AddString("f", strconv.Itoa(i%2))
			if i%4 != 0 {
				rec.AddString("g", strconv.Itoa(i%2))
			}
			m.Add(&rec, int64(i+1), int64(i+1))
		}
		s := m.Snapshot(SnapshotOptions{Detail: "f", DetailGiven: "g"})
		total := 0
		sawAbsent := false
		for _, r := range s.Detail.Rows {
			total += r.Given.Count
			sawAbsent = sawAbsent || r.Given.Absent
		}
		if total != 40 || !sawAbsent {
			t.Errorf("rows cover %d records (absent seen: %v), want 40 with an absent row", total, sawAbsent)
		}
	})
}
