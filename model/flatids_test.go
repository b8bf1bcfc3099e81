package model

import (
	"math"
	"math/rand/v2"
	"reflect"
	"slices"
	"strconv"
	"testing"
	"time"

	"bitsift/parse"
)

// TestSortHashes checks the radix sort against the standard library's
// sort on random, repeated and narrow keys of many lengths.
func TestSortHashes(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 4))
	for _, n := range []int{0, 1, 2, 255, 256, 257, 1000, 70000, 300000} {
		for _, mask := range []uint64{^uint64(0), 0xff, 0xffff0000, 1 << 63} {
			hs := make([]uint64, n)
			for i := range hs {
				hs[i] = r.Uint64() & mask
			}
			want := slices.Clone(hs)
			slices.Sort(want)
			sortHashes(hs)
			if !slices.Equal(hs, want) {
				t.Fatalf("n=%d mask=%x: not sorted as slices.Sort sorts", n, mask)
			}
		}
	}
}

// TestSettleSlices: a flat identifier of 600,000 records (settled in
// slices of its hash space) has the figures of the same identifier kept
// in a table, on values that repeat (a value every 450,000 records); so
// does one where a few values take a third of the records (buckets of
// thousands of equal hashes).
func TestSettleSlices(t *testing.T) {
	all := Window{Kind: WindowAll}
	flat, table := New(Options{Window: all, Headless: true}), New(Options{Window: all})
	var rec parse.Record
	for i := range 600_000 {
		rec.Reset()
		rec.AddString("id", "v"+strconv.Itoa(i%450_000))
		rec.AddString("level", []string{"info", "warn"}[i%2])
		if i%3 == 0 {
			rec.AddString("ticket", "t"+strconv.Itoa(i%5))
		} else {
			rec.AddString("ticket", "t"+strconv.Itoa(i))
		}
		flat.Add(&rec, int64(i), int64(i))
		table.Add(&rec, int64(i), int64(i))
	}
	if flat.fields[0].flat == nil || flat.fields[2].flat == nil {
		t.Fatal("the identifiers were not listed")
	}
	got, want := flat.Snapshot(SnapshotOptions{}), table.Snapshot(SnapshotOptions{})
	got.Taken, want.Taken = time.Time{}, time.Time{}
	if err := sameSnapshot(got, want); err != "" {
		t.Fatal(err)
	}
}

// TestBigCountsCrossChunk: values whose counts pass chunkSize and fall
// back under it (a window of 70,000 records, a value that fills it and
// then fades) keep the field's entropy equal to a plain count's
// (EntropyOfCounts) and to Add's one by one.
func TestBigCountsCrossChunk(t *testing.T) {
	w := Window{Kind: WindowRecords, Records: 70_000}
	batched, single := New(Options{Window: w}), New(Options{Window: w})
	var recs []*parse.Record
	var lines []int64
	check := func(at int) {
		got, want := batched.Snapshot(SnapshotOptions{}), single.Snapshot(SnapshotOptions{})
		got.Taken, want.Taken = time.Time{}, time.Time{}
		if err := sameSnapshot(got, want); err != "" {
			t.Fatalf("at %d: %s", at, err)
		}
		f := batched.fields[batched.byName["tide"]]
		counts := []int{int(int64(batched.st.n) - f.present)}
		for _, c := range f.counts[1:] {
			counts = append(counts, int(c))
		}
		if h := EntropyOfCounts(counts); math.Abs(h-got.Fields[batched.byName["tide"]].Entropy) > 1e-9 {
			t.Fatalf("at %d: H(tide) = %v, counted %v", at, got.Fields[batched.byName["tide"]].Entropy, h)
		}
	}
	for i := range 200_000 {
		rec := &parse.Record{}
		v := "high"
		if i > 90_000 && i%3 != 0 { // fades from the window after record 90,000
			v = "low" + strconv.Itoa(i%2)
		}
		rec.AddString("tide", v)
		rec.AddString("port", "north")
		recs, lines = append(recs, rec), append(lines, int64(i))
		single.Add(rec, int64(i), int64(i))
		if len(recs) == 1000 {
			batched.AddBatch(recs, lines, lines)
			recs, lines = recs[:0], lines[:0]
			if i%20_000 == 19_999 {
				check(i)
			}
		}
	}
}

// TestWordKeyTellsShortValues: two values of the same length up to 16
// bytes have the same wordKey only if they are equal (every byte is in
// one of the two words), so probeText may compare words for them; values
// differing in any one byte, at every position, get different keys.
func TestWordKeyTellsShortValues(t *testing.T) {
	r := rand.New(rand.NewPCG(5, 6))
	for n := 0; n <= 16; n++ {
		for range 200 {
			v := make([]byte, n)
			for i := range v {
				v[i] = byte(r.IntN(256))
			}
			_, k := textHash(v)
			for i := range v {
				w := slices.Clone(v)
				w[i] ^= byte(1 + r.IntN(255))
				if _, k2 := textHash(w); k2 == k {
					t.Fatalf("%q and %q (length %d) share a word key", v, w, n)
				}
			}
		}
	}
}

// TestHeadlessTimelineSeesIdentifierGaps: the timeline finds where a
// field goes missing from the store's columns; a flat identifier's are
// empty, its presence in its list. A unique id missing from records
// 5,000 to 7,999 must be reported gone there, as the table model does.
func TestHeadlessTimelineSeesIdentifierGaps(t *testing.T) {
	all := Window{Kind: WindowAll}
	flat, table := New(Options{Window: all, Headless: true}), New(Options{Window: all})
	var rec parse.Record
	for i := range 12_000 {
		rec.Reset()
		if i < 5000 || i >= 8000 {
			rec.AddString("trace", "t"+strconv.Itoa(i))
		}
		rec.AddString("dock", []string{"east", "west"}[i%2])
		flat.Add(&rec, int64(i+1), int64(i))
		table.Add(&rec, int64(i+1), int64(i))
	}
	if flat.fields[0].flat == nil {
		t.Fatal("the identifier was not listed")
	}
	sf, st := flat.Snapshot(SnapshotOptions{}), table.Snapshot(SnapshotOptions{})
	got, want := flat.Timeline(sf, []string{"a.log"}), table.Timeline(st, []string{"a.log"})
	if !reflect.DeepEqual(got, want) {
		t.Fatalf("timeline:\n got %+v\nwant %+v", got, want)
	}
	gone := false
	for _, e := range want {
		gone = gone || e.Kind == TimelineGone && e.Field == "trace"
	}
	if !gone {
		t.Fatalf("the table model reports no gap for trace: %+v", want)
	}
}

// BenchmarkSortHashes: one settle slice's worth of random hashes (2^18).
func BenchmarkSortHashes(b *testing.B) {
	r := rand.New(rand.NewPCG(5, 6))
	src := make([]uint64, 1<<18)
	for i := range src {
		src[i] = r.Uint64()
	}
	hs := make([]uint64, len(src))
	for b.Loop() {
		copy(hs, src)
		sortHashes(hs)
	}
}

// BenchmarkSettle: settling a listed identifier of 1M unique values (what
// a report's final snapshot does for each; four slices of its hashes).
func BenchmarkSettle(b *testing.B) {
	m := New(Options{Window: Window{Kind: WindowAll}, Headless: true})
	recs := make([]parse.Record, 2048)
	ptrs := make([]*parse.Record, len(recs))
	lines := make([]int64, len(recs))
	for i := 0; i < 1_000_000; i += len(recs) {
		for j := range recs {
			recs[j].Reset()
			recs[j].AddString("req", strconv.Itoa(i+j))
			ptrs[j], lines[j] = &recs[j], int64(i+j)
		}
		m.AddBatch(ptrs, lines, lines)
	}
	f := m.fields[0]
	if f.flat == nil {
		b.Fatal("not listed")
	}
	for b.Loop() {
		f.flat.settled = 0
		m.settle(f)
	}
}
