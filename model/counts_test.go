package model

import (
	"fmt"
	"math"
	"math/rand/v2"
	"reflect"
	"testing"

	"bitsift/parse"
)

// countsModel fills a model with records whose fields depend on each other
// (a derived field, a noisy one, an identifier, a rare field).
func countsModel(n int, keepText bool) *Model {
	m := New(Options{Window: Window{Kind: WindowAll}, KeepText: keepText})
	r := rand.New(rand.NewPCG(7, 9))
	var rec parse.Record
	for i := 0; i < n; i++ {
		rec.Reset()
		host := r.IntN(12)
		rec.AddString("host", fmt.Sprintf("h%02d", host))
		rec.AddString("zone", fmt.Sprintf("z%d", host%3))
		st := []string{"200", "200", "200", "404", "500"}[r.IntN(5)]
		rec.AddString("status", st)
		if st == "500" || r.IntN(50) == 0 {
			rec.AddString("level", "error")
		} else {
			rec.AddString("level", "info")
		}
		rec.AddString("req", fmt.Sprintf("%016x", r.Uint64()))
		rec.AddString("latency", fmt.Sprintf("%.1f", r.ExpFloat64()*20))
		if r.IntN(20) == 0 {
			rec.AddString("reason", []string{"late", "full", "storm"}[r.IntN(3)])
		}
		m.Add(&rec, int64(i+1), int64(i)*1e6)
	}
	m.Flush()
	return m
}

// TestSnapshotFromCountsMatchesModel: the snapshot built from a model's
// count tables has the model's own figures, kinds, best predictors,
// details and baseline profile (the model's incremental tables over
// records are the reference).
func TestSnapshotFromCountsMatchesModel(t *testing.T) {
	m := countsModel(6000, true)
	opt := SnapshotOptions{Profile: true, Detail: "level", DetailGiven: "status"}
	want := m.Snapshot(opt)
	got := SnapshotFromCounts(m.Counts(CountOptions{}), opt)
	if len(got.Fields) != len(want.Fields) || got.Records != want.Records {
		t.Fatalf("%d fields, %d records; model %d, %d", len(got.Fields), got.Records, len(want.Fields), want.Records)
	}
	for i := range want.Fields {
		w, g := want.Fields[i], got.Fields[i]
		w.Shift, g.Shift = nil, nil
		if w.Kind == Identifier && len(w.Top) == len(g.Top) {
			// Values tied at the cut: Model.top keeps the first seen,
			// the counts the smallest text. Only their counts compare.
			for x := range w.Top {
				if w.Top[x].Count == g.Top[x].Count {
					g.Top[x].Value = w.Top[x].Value
				}
			}
		}
		if !reflect.DeepEqual(w, g) {
			t.Errorf("field %s:\ncounts %+v\nmodel  %+v", w.Name, g, w)
		}
		for j := range want.Fields {
			wj, gj := want.Joint(i, j), got.Joint(i, j)
			if math.IsNaN(wj) != math.IsNaN(gj) || (!math.IsNaN(wj) && wj != gj) {
				t.Errorf("H(%s,%s): counts %v, model %v", w.Name, want.Fields[j].Name, gj, wj)
			}
			we, _ := want.ExpectedMutual(i, j)
			ge, _ := got.ExpectedMutual(i, j)
			if math.IsNaN(we) != math.IsNaN(ge) || (!math.IsNaN(we) && math.Abs(we-ge) > 1e-12) {
				t.Errorf("E[I(%s;%s)]: counts %v, model %v", w.Name, want.Fields[j].Name, ge, we)
			}
		}
	}
	if !reflect.DeepEqual(got.Detail, want.Detail) {
		t.Errorf("detail:\ncounts %+v\nmodel  %+v", got.Detail, want.Detail)
	}
	want.Profile.through = 0
	if !reflect.DeepEqual(got.Profile, want.Profile) {
		t.Errorf("profile:\ncounts %+v\nmodel  %+v", got.Profile, want.Profile)
	}
}

// TestCountsSummary: an identifier's summary holds the K smallest hashes
// with their counts, is complete while K covers every value, and its
// Σ c·log2 c is the field's.
func TestCountsSummary(t *testing.T) {
	m := countsModel(3000, true)
	for _, k := range []int{100, 1 << 16} {
		ct := m.Counts(CountOptions{SketchK: k})
		var req *FieldCounts
		for i := range ct.Fields {
			if ct.Fields[i].Name == "req" {
				req = &ct.Fields[i]
			}
		}
		if req == nil || req.Summary == nil {
			t.Fatalf("k=%d: req has no summary: %+v", k, req)
		}
		s := req.Summary
		if s.Complete != (k >= 3000) || len(s.Hashes) != min(k, 3000) || s.Distinct != 3000 || s.Present != 3000 {
			t.Errorf("k=%d: complete %v, %d hashes, distinct %d, present %d", k, s.Complete, len(s.Hashes), s.Distinct, s.Present)
		}
		for i := 1; i < len(s.Hashes); i++ {
			if s.Hashes[i-1] >= s.Hashes[i] {
				t.Fatalf("k=%d: hashes not ascending at %d", k, i)
			}
		}
		if s.CLogC != 0 { // 3,000 random 64-bit ids: every count is 1
			t.Errorf("k=%d: Σ c·log2 c = %v, want 0", k, s.CLogC)
		}
	}
}

// TestSketchHash: the first 8 bytes of MD5, big-endian. The digest of
// "abc" is RFC 1321's test vector 900150983cd24fb0d6963f7d28e17f72.
func TestSketchHash(t *testing.T) {
	if got := SketchHash("abc"); got != 0x900150983cd24fb0 {
		t.Errorf("SketchHash(abc) = %x", got)
	}
}
