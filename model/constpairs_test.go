package model

import (
	"math"
	"math/rand/v2"
	"reflect"
	"strconv"
	"testing"
	"time"
)

// TestConstantPairsMatchRecount: a field that is constant for long
// stretches (longer than the window), then takes other values, then is
// missing, then constant again; its pairs are left uncounted while it is
// constant (constpairs.go). Fed by AddBatch and by Add, under three
// windows, every snapshot must equal the other's and a plain recount of
// the window (Go maps and float logs), and the pairs must have been left
// uncounted at some point.
func TestConstantPairsMatchRecount(t *testing.T) {
	keys := []string{"port", "level", "berth", "crane"}
	stream := func(r *rand.Rand, n int) []plainRec {
		out := make([]plainRec, n)
		for i := range out {
			kv := map[string]string{
				"level": []string{"info", "warn", "error"}[r.IntN(3)],
				"berth": "b" + strconv.Itoa(r.IntN(7)),
			}
			switch phase := i / 2500 % 4; phase {
			case 0, 2:
				kv["port"] = "north"
			case 1:
				kv["port"] = "p" + strconv.Itoa(r.IntN(3))
			case 3:
				if r.IntN(10) > 0 {
					kv["port"] = "north"
				}
			}
			if i%3000 < 2000 {
				kv["crane"] = "c1"
			} else {
				kv["crane"] = "c" + strconv.Itoa(r.IntN(4))
			}
			out[i] = plainRec{kv: kv, time: int64(i) * int64(time.Millisecond)}
		}
		return out
	}
	windows := []Window{{Kind: WindowAll}, {Kind: WindowRecords, Records: 1500}, {Kind: WindowDuration, Duration: 800 * time.Millisecond}}
	for _, w := range windows {
		r := rand.New(rand.NewPCG(9, 10))
		recs := stream(r, 12000)
		batched, single := New(Options{Window: w}), New(Options{Window: w})
		sawVirt := false
		for i := 0; i < len(recs); {
			k := min(len(recs)-i, 1+r.IntN(1200))
			batched.AddBatch(segmentOf(recs, keys, i, i+k, single))
			i += k
			for _, p := range batched.pairs {
				sawVirt = sawVirt || p.virt
			}
			if r.IntN(3) > 0 {
				continue
			}
			got, want := batched.Snapshot(SnapshotOptions{}), single.Snapshot(SnapshotOptions{})
			got.Taken, want.Taken = time.Time{}, time.Time{}
			if err := sameSnapshot(got, want); err != "" {
				t.Fatalf("%s at %d: batched and one by one differ: %s", w, i, err)
			}
			win := windowOf(recs, i-1, w)
			for a := range got.Fields {
				for b := a + 1; b < len(got.Fields); b++ {
					if !got.HasPair(a, b) {
						continue
					}
					fa, fb := got.Fields[a].Name, got.Fields[b].Name
					if h := plainEntropy(win, fa, fb); math.Abs(h-got.Joint(a, b)) > 1e-9 {
						t.Fatalf("%s at %d: H(%s,%s) = %.12f, recount %.12f", w, i, fa, fb, got.Joint(a, b), h)
					}
				}
			}
		}
		if !sawVirt {
			t.Fatalf("%s: no pair was left uncounted: the test no longer covers constant fields", w)
		}
	}
}

// TestRollingBaselineBatchMatchesAdd: with a rolling baseline, AddBatch
// ends its segments where Add rolls the baseline (it used to take such
// records one by one), so the rolled profiles, and every snapshot against
// them, are Add's, under a window of records and one of time.
func TestRollingBaselineBatchMatchesAdd(t *testing.T) {
	keys := []string{"level", "berth", "crane", "tide", "manifest", "weight", "derived"}
	for _, w := range []Window{{Kind: WindowRecords, Records: 900}, {Kind: WindowDuration, Duration: 600 * time.Millisecond}} {
		r := rand.New(rand.NewPCG(11, 12))
		recs := randomStream(r, 7000)
		batched, single := New(Options{Window: w}), New(Options{Window: w})
		batched.UseRollingBaseline()
		single.UseRollingBaseline()
		for i := 0; i < len(recs); {
			k := min(len(recs)-i, 1+r.IntN(2500))
			batched.AddBatch(segmentOf(recs, keys, i, i+k, single))
			i += k
			if !reflect.DeepEqual(batched.base.rolling, single.base.rolling) {
				t.Fatalf("%s at %d: rolled profiles differ", w, i)
			}
			got, want := batched.Snapshot(SnapshotOptions{}), single.Snapshot(SnapshotOptions{})
			got.Taken, want.Taken = time.Time{}, time.Time{}
			if err := sameSnapshot(got, want); err != "" {
				t.Fatalf("%s at %d: %s", w, i, err)
			}
			if !reflect.DeepEqual(got.Changes, want.Changes) {
				t.Fatalf("%s at %d: changes against the baseline differ", w, i)
			}
		}
		if len(batched.base.rolling) == 0 {
			t.Fatalf("%s: the baseline never rolled", w)
		}
	}
}
