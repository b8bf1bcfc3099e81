package model

import (
	"strings"
	"testing"
)

// TestDeepNewest: with the Deep analyses bounded to the newest records, a
// window of all records gives the determinants of a window of just those
// records, with the same figures, and surprising records only from them.
func TestDeepNewest(t *testing.T) {
	if testing.Short() {
		t.Skip("reads 200,000 demo lines")
	}
	const total, newest = 100_000, 30_000
	defer func(v int) { deepMax = v }(deepMax)
	deepMax = newest
	all := demoModel(t, total, Window{}).Snapshot(SnapshotOptions{Deep: true})
	deepMax = DeepMaxRecords
	want := demoModel(t, total, Window{Kind: WindowRecords, Records: newest}).Snapshot(SnapshotOptions{Deep: true})

	if all.Records != total || all.DeepRecords != newest || want.DeepRecords != newest {
		t.Fatalf("records %d, deep records %d and %d, want %d, %d and %d", all.Records, all.DeepRecords, want.DeepRecords, total, newest, newest)
	}
	key := func(d Determinant) string { return d.Target + "←" + strings.Join(d.Given, "+") }
	byKey := map[string]Determinant{}
	for _, d := range want.Determinants {
		byKey[key(d)] = d
	}
	t.Run("determinants", func(t *testing.T) {
		found := false
		for _, d := range all.Determinants {
			w, ok := byKey[key(d)]
			if !ok {
				continue
			}
			found = found || key(d) == "upstream←route+host"
			if d.Bits != w.Bits || d.RFI != w.RFI {
				t.Errorf("%s: bits %v rfi %v over the newest records, %v and %v in their own window", key(d), d.Bits, d.RFI, w.Bits, w.RFI)
			}
		}
		if !found {
			t.Errorf("determinants %+v, want upstream←route+host as in a window of the newest records (%+v)", all.Determinants, want.Determinants)
		}
	})
	t.Run("surprising", func(t *testing.T) {
		if len(all.Changes.Surprising) == 0 {
			t.Fatal("no surprising records")
		}
		for _, r := range all.Changes.Surprising {
			if r.Line <= total-newest {
				t.Errorf("surprising record at line %d, before the newest %d records", r.Line, newest)
			}
		}
	})
}
