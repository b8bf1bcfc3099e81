package model

import (
	"fmt"
	"math"
	"math/rand/v2"
	"reflect"
	"slices"
	"strconv"
	"strings"
	"testing"
	"time"

	"bitsift/parse"
)

// plainRec is one record of a random stream, kept for a plain recount.
type plainRec struct {
	kv   map[string]string
	time int64
	// reversed: the record lists its keys in the reverse order; dup: it
	// names level a second time with this value (the first one counts).
	reversed bool
	dup      string
}

// randomStream makes n records over eight fields that appear, vanish, turn
// constant and back, and an identifier that stops being one (unique values,
// then a handful); now and then a record lists its keys in another order,
// or names a field twice.
func randomStream(r *rand.Rand, n int) []plainRec {
	out := make([]plainRec, n)
	t := int64(0)
	phase := func(i, every int) int { return i / every % 4 }
	for i := range out {
		kv := map[string]string{}
		kv["level"] = []string{"info", "warn", "error"}[r.IntN(3)]
		if phase(i, 700) != 1 { // vanishes for a while
			kv["berth"] = "b" + strconv.Itoa(r.IntN(9))
		}
		if phase(i, 900) == 2 { // constant for a while
			kv["crane"] = "c0"
		} else {
			kv["crane"] = "c" + strconv.Itoa(r.IntN(4))
		}
		if i > 300 { // appears late
			kv["tide"] = strconv.Itoa(r.IntN(40))
		}
		if phase(i, 1500) < 2 { // an identifier, then not
			kv["manifest"] = "m" + strconv.Itoa(i)
		} else {
			kv["manifest"] = "m" + strconv.Itoa(r.IntN(5))
		}
		if r.IntN(3) > 0 {
			kv["weight"] = strconv.Itoa(r.IntN(700))
		}
		kv["derived"] = kv["level"] + "/" + kv["crane"]
		if r.IntN(50) == 0 {
			kv["rare_"+strconv.Itoa(r.IntN(4))] = "x"
		}
		t += int64(r.IntN(3)) * int64(time.Millisecond)
		out[i] = plainRec{kv: kv, time: t, reversed: r.IntN(30) == 0}
		if r.IntN(40) == 0 {
			out[i].dup = "dup" + strconv.Itoa(r.IntN(3))
		}
	}
	return out
}

func toRecord(p plainRec, rec *parse.Record, keys []string) {
	rec.Reset()
	if p.reversed {
		keys = slices.Clone(keys)
		slices.Reverse(keys)
	}
	for _, k := range keys {
		if v, ok := p.kv[k]; ok {
			rec.AddString(k, v)
		}
	}
	// Keys the fixed order does not list (the rare ones), in a stable order.
	var extra []string
	for k := range p.kv {
		if len(k) > 5 && k[:5] == "rare_" {
			extra = append(extra, k)
		}
	}
	for i := 1; i < len(extra); i++ {
		for j := i; j > 0 && extra[j] < extra[j-1]; j-- {
			extra[j], extra[j-1] = extra[j-1], extra[j]
		}
	}
	for _, k := range extra {
		rec.AddString(k, p.kv[k])
	}
	if p.dup != "" {
		rec.AddString("level", p.dup)
	}
}

// plainEntropy is H over the given records of the value (or pair of
// values) of the named fields, absent a value of its own: a recount with
// Go maps and float logs, nothing shared with the model.
func plainEntropy(recs []plainRec, a, b string) float64 {
	counts := map[[2]string]int{}
	for _, p := range recs {
		va, oka := p.kv[a]
		vb, okb := p.kv[b]
		if !oka {
			va = "\x00absent"
		}
		if !okb {
			vb = "\x00absent"
		}
		if b == "" {
			vb = ""
		}
		counts[[2]string{va, vb}]++
	}
	n := float64(len(recs))
	h := 0.0
	for _, c := range counts {
		p := float64(c) / n
		h -= p * math.Log2(p)
	}
	return h
}

// windowOf is what a window holds after the records up to i, evicting as
// the model's rules say, by plain slicing.
func windowOf(all []plainRec, i int, w Window) []plainRec {
	recs := all[:i+1]
	switch w.Kind {
	case WindowRecords:
		return recs[max(0, len(recs)-w.Records):]
	case WindowDuration:
		// Evicted while older than the newest time so far by more than d,
		// keeping at least the newest record; once evicted, gone.
		lo, maxT := 0, int64(math.MinInt64)
		for j, p := range recs {
			maxT = max(maxT, p.time)
			for lo < j && maxT-recs[lo].time > w.Duration.Nanoseconds() {
				lo++
			}
		}
		return recs[lo:]
	}
	return recs
}

// TestBatchMatchesRecount: random streams with fields that appear, vanish,
// turn constant and back, and an identifier that stops being one, under
// every kind of window (so records leave mid-batch), fed through AddBatch
// in batches of random sizes. At random points every field's entropy and
// every measured pair's joint entropy must equal a plain recount of the
// window's records (Go maps and float logs), and the whole snapshot must
// equal that of a model fed the same records one by one with Add.
func TestBatchMatchesRecount(t *testing.T) {
	keys := []string{"level", "berth", "crane", "tide", "manifest", "weight", "derived"}
	windows := []Window{
		{Kind: WindowAll},
		{Kind: WindowRecords, Records: 1000},
		{Kind: WindowRecords, Records: 3000},
		{Kind: WindowDuration, Duration: 700 * time.Millisecond},
	}
	for seed := uint64(1); seed <= 3; seed++ {
		for _, w := range windows {
			r := rand.New(rand.NewPCG(seed, 77))
			stream := randomStream(r, 8000)
			batched, single := New(Options{Window: w}), New(Options{Window: w})
			var recs []*parse.Record
			var lines, times []int64
			var one parse.Record
			for i := 0; i < len(stream); {
				k := min(len(stream)-i, 1+r.IntN(3000))
				if r.IntN(4) == 0 {
					k = min(len(stream)-i, 1+r.IntN(5))
				}
				recs, lines, times = recs[:0], lines[:0], times[:0]
				for j := i; j < i+k; j++ {
					rec := &parse.Record{}
					toRecord(stream[j], rec, keys)
					recs = append(recs, rec)
					lines, times = append(lines, int64(j+1)), append(times, stream[j].time)
					toRecord(stream[j], &one, keys)
					single.Add(&one, int64(j+1), stream[j].time)
				}
				batched.AddBatch(recs, lines, times)
				i += k
				if r.IntN(5) > 0 && i < len(stream) {
					continue
				}
				name := w.String() + "/seed " + strconv.Itoa(int(seed)) + "/at " + strconv.Itoa(i)
				got, want := batched.Snapshot(SnapshotOptions{}), single.Snapshot(SnapshotOptions{})
				got.Taken, want.Taken = time.Time{}, time.Time{}
				if err := sameSnapshot(got, want); err != "" {
					t.Fatalf("%s: the batched snapshot differs from Add's: %s", name, err)
				}
				win := windowOf(stream, i-1, w)
				if got.Records != len(win) {
					t.Fatalf("%s: %d records in the window, the recount has %d", name, got.Records, len(win))
				}
				for a := range got.Fields {
					fa := got.Fields[a].Name
					if h := plainEntropy(win, fa, ""); math.Abs(h-got.Fields[a].Entropy) > 1e-9 {
						t.Fatalf("%s: H(%s) = %.12f, recount %.12f", name, fa, got.Fields[a].Entropy, h)
					}
					for b := a + 1; b < len(got.Fields); b++ {
						if !got.HasPair(a, b) {
							continue
						}
						fb := got.Fields[b].Name
						if h := plainEntropy(win, fa, fb); math.Abs(h-got.Joint(a, b)) > 1e-9 {
							t.Fatalf("%s: H(%s,%s) = %.12f, recount %.12f", name, fa, fb, got.Joint(a, b), h)
						}
					}
				}
			}
		}
	}
}

// sameSnapshot compares two snapshots' figures exactly (NaN equal to NaN)
// and says where they differ first.
func sameSnapshot(got, want *Snapshot) string {
	same := func(g, w float64) bool { return g == w || math.IsNaN(g) && math.IsNaN(w) }
	if got.Records != want.Records || got.Seen != want.Seen || got.Oldest != want.Oldest || got.Newest != want.Newest ||
		got.LeftOutFields != want.LeftOutFields || len(got.Fields) != len(want.Fields) {
		return fmt.Sprintf("records %d/%d seen %d/%d fields %d/%d", got.Records, want.Records, got.Seen, want.Seen, len(got.Fields), len(want.Fields))
	}
	for a := range want.Fields {
		if !reflect.DeepEqual(got.Fields[a], want.Fields[a]) {
			return fmt.Sprintf("field %d:\n got %+v\nwant %+v", a, got.Fields[a], want.Fields[a])
		}
		for b := range want.Fields {
			if !same(got.Joint(a, b), want.Joint(a, b)) || !same(got.emi[a][b], want.emi[a][b]) {
				return fmt.Sprintf("pair %s,%s: H %v E[I] %v, want %v and %v", want.Fields[a].Name, want.Fields[b].Name,
					got.Joint(a, b), got.emi[a][b], want.Joint(a, b), want.emi[a][b])
			}
		}
	}
	if !reflect.DeepEqual(got.emiApprox, want.emiApprox) {
		return "E[I] approximations"
	}
	return ""
}

// TestHeadlessIdentifiersMatchTable: a headless model over a window that
// keeps everything lists an identifier's hashes instead of keeping a table
// (flatids.go). Fed the random streams, their identifier made unique for
// the first 3,000 records only (so that it goes back to a table near record
// 6,000 and leaves the rule near record 8,600), by AddBatch
// and by Add, its snapshots, its entropy history and its rebuild must equal
// those of the same model keeping tables, at random points.
func TestHeadlessIdentifiersMatchTable(t *testing.T) {
	keys := []string{"level", "berth", "crane", "tide", "manifest", "weight", "derived"}
	all := Window{Kind: WindowAll}
	for seed := uint64(1); seed <= 3; seed++ {
		r := rand.New(rand.NewPCG(seed, 78))
		stream := randomStream(r, 12000)
		for i := 3000; i < len(stream); i++ { // unique values only at first
			stream[i].kv["manifest"] = "m" + strconv.Itoa(r.IntN(5))
		}
		for i := 0; i < 3000; i += 7 { // some longer than a list's length byte holds
			stream[i].kv["manifest"] += strings.Repeat("x", 250+i%20)
		}
		wasFlat, left := false, false
		table, batched, single := feedHeadless(t, r, seed, stream, keys, all, func(batched *Model) {
			if f := batched.fields[batched.byName["manifest"]]; f.flat != nil {
				wasFlat = true
			} else if wasFlat && !f.ident {
				left = true
			}
		})
		if !wasFlat || !left {
			t.Fatalf("seed %d: the identifier was listed %v, left the rule %v: the test no longer covers both", seed, wasFlat, left)
		}
		for _, m := range []*Model{batched, single} {
			if !reflect.DeepEqual(m.base.hist, table.base.hist) {
				t.Fatalf("seed %d: entropy history differs:\n got %v\nwant %v", seed, m.base.hist, table.base.hist)
			}
			got, want := m.Rebuild().Snapshot(SnapshotOptions{}), table.Rebuild().Snapshot(SnapshotOptions{})
			got.Taken, want.Taken = time.Time{}, time.Time{}
			if err := sameSnapshot(got, want); err != "" {
				t.Fatalf("seed %d: rebuilt, the headless model differs: %s", seed, err)
			}
		}
	}
}

// TestHeadlessWindowIdentifiersMatchTable: in a window of the last 2,500
// records, a headless model lists identifiers in a ring (flatids.go).
// Fed the random streams with a ticket number on most records (unique
// throughout: the list is settled again each time the bound from the last
// settle runs out) and the manifest unique for its first 6,000 records
// (then repeating, so that it goes back to a table and leaves the rule),
// by AddBatch and by Add, its snapshots and its rebuild must equal those of
// the same model keeping tables, at random points; so must the entropy
// history of every field that was never hashed (the only ones read).
func TestHeadlessWindowIdentifiersMatchTable(t *testing.T) {
	keys := []string{"level", "berth", "crane", "tide", "manifest", "weight", "derived", "ticket"}
	w := Window{Kind: WindowRecords, Records: 2500}
	for seed := uint64(1); seed <= 3; seed++ {
		r := rand.New(rand.NewPCG(seed, 79))
		stream := randomStream(r, 15000)
		for i := range stream {
			stream[i].kv["manifest"] = "m" + strconv.Itoa(i)
			if i >= 6000 {
				stream[i].kv["manifest"] = "m" + strconv.Itoa(r.IntN(5))
			}
			if i%9 != 4 && (i < 13000 || i >= 13800) { // and a stretch without
				stream[i].kv["ticket"] = "t" + strconv.Itoa(i)
			}
			if v, ok := stream[i].kv["ticket"]; ok && i%11 == 0 { // some longer than a list's length byte holds
				stream[i].kv["ticket"] = v + strings.Repeat("x", 250+i%20)
			}
		}
		listed := map[string]bool{}
		left := false
		table, batched, single := feedHeadless(t, r, seed, stream, keys, w, func(batched *Model) {
			for _, name := range []string{"manifest", "ticket"} {
				if f := batched.fields[batched.byName[name]]; f.flat != nil {
					listed[name] = true
				} else if name == "manifest" && listed[name] && !f.ident {
					left = true
				}
			}
		})
		if !listed["manifest"] || !listed["ticket"] || !left {
			t.Fatalf("seed %d: listed %v, the manifest left the rule %v: the test no longer covers both", seed, listed, left)
		}
		if f := batched.fields[batched.byName["ticket"]]; f.flat == nil {
			t.Fatalf("seed %d: the ticket went back to a table", seed)
		}
		// The timeline finds where the ticket is missing from its ring.
		tw := table.Timeline(table.Snapshot(SnapshotOptions{}), []string{"a.log"})
		if tg := batched.Timeline(batched.Snapshot(SnapshotOptions{}), []string{"a.log"}); !reflect.DeepEqual(tg, tw) {
			t.Fatalf("seed %d: timeline:\n got %+v\nwant %+v", seed, tg, tw)
		}
		if !slices.ContainsFunc(tw, func(e TimelineEntry) bool { return e.Field == "ticket" && e.Kind == TimelineGone }) {
			t.Fatalf("seed %d: the timeline %+v has no stretch without the ticket: the test no longer covers it", seed, tw)
		}
		for _, m := range []*Model{batched, single} {
			for name, h := range table.base.hist {
				if f := table.fields[table.byName[name]]; !f.hashed() && !reflect.DeepEqual(m.base.hist[name], h) {
					t.Fatalf("seed %d: entropy history of %s differs:\n got %v\nwant %v", seed, name, m.base.hist[name], h)
				}
			}
			// A rebuild replays a hashed field's values as stand-ins made
			// from their ids (replayValue), which in a window depend on
			// the records before it: the ring's ids are made from the
			// window alone. Their top values and lengths are left out.
			got, want := m.Rebuild().Snapshot(SnapshotOptions{}), table.Rebuild().Snapshot(SnapshotOptions{})
			got.Taken, want.Taken = time.Time{}, time.Time{}
			for i := range want.Fields {
				if table.fields[table.byName[want.Fields[i].Name]].hashed() {
					got.Fields[i].Top, want.Fields[i].Top = nil, nil
					got.Fields[i].BytesPerRecord, want.Fields[i].BytesPerRecord = 0, 0
				}
			}
			if err := sameSnapshot(got, want); err != "" {
				t.Fatalf("seed %d: rebuilt, the headless model differs: %s", seed, err)
			}
		}
	}
}

// feedHeadless feeds stream to a table-keeping model and to two headless
// ones over window w, one by AddBatch in segments of random sizes and one
// by Add, calling after with the batched one after each segment; at random
// points (and at the end) both headless snapshots must equal the table's.
func feedHeadless(t *testing.T, r *rand.Rand, seed uint64, stream []plainRec, keys []string, w Window, after func(batched *Model)) (table, batched, single *Model) {
	t.Helper()
	table = New(Options{Window: w})
	batched = New(Options{Window: w, Headless: true})
	single = New(Options{Window: w, Headless: true})
	for i := 0; i < len(stream); {
		k := min(len(stream)-i, 1+r.IntN(3000))
		if r.IntN(4) == 0 {
			k = min(len(stream)-i, 1+r.IntN(5))
		}
		recs, lines, times := segmentOf(stream, keys, i, i+k, single)
		table.AddBatch(recs, lines, times)
		batched.AddBatch(recs, lines, times)
		i += k
		after(batched)
		if r.IntN(5) > 0 && i < len(stream) {
			continue
		}
		name := "seed " + strconv.Itoa(int(seed)) + "/at " + strconv.Itoa(i)
		want := table.Snapshot(SnapshotOptions{})
		for _, m := range []*Model{batched, single} {
			got := m.Snapshot(SnapshotOptions{})
			got.Taken, want.Taken = time.Time{}, time.Time{}
			if err := sameSnapshot(got, want); err != "" {
				t.Fatalf("%s: the headless snapshot differs from the table's: %s", name, err)
			}
		}
	}
	return table, batched, single
}

// segmentOf is stream[i:j] as AddBatch takes it (records, line numbers
// j+1, times), each record also added one by one to each of one.
func segmentOf(stream []plainRec, keys []string, i, j int, one ...*Model) (recs []*parse.Record, lines, times []int64) {
	for x := i; x < j; x++ {
		rec := &parse.Record{}
		toRecord(stream[x], rec, keys)
		recs = append(recs, rec)
		lines, times = append(lines, int64(x+1)), append(times, stream[x].time)
		for _, m := range one {
			m.Add(rec, int64(x+1), stream[x].time)
		}
	}
	return recs, lines, times
}
