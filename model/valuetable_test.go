package model

import (
	"math/rand/v2"
	"testing"
)

// TestHashTableAgainstGoMap drives a hashTable and a Go map with the same
// random inserts and removals, through growth and backward shifts, and
// compares every lookup.
func TestHashTableAgainstGoMap(t *testing.T) {
	r := rand.New(rand.NewPCG(5, 8))
	tab := newHashTable(0)
	hashes := []uint64{0}
	ref := map[uint64]uint32{}
	var live []uint32
	for i := 0; i < 200000; i++ {
		if len(live) > 0 && r.IntN(5) < 2 {
			j := r.IntN(len(live))
			id := live[j]
			live[j] = live[len(live)-1]
			live = live[:len(live)-1]
			tab.remove(hashes[id], id)
			delete(ref, hashes[id])
			continue
		}
		// Few distinct top bits, so that probe runs are long and tags
		// collide: the hard case for deletion.
		h := uint64(r.IntN(64))<<58 | r.Uint64()>>6
		if _, dup := ref[h]; dup {
			continue
		}
		id := uint32(len(hashes))
		hashes = append(hashes, h)
		tab.insert(h, id)
		ref[h] = id
		live = append(live, id)
	}
	if tab.len() != len(ref) {
		t.Fatalf("table holds %d values, want %d", tab.len(), len(ref))
	}
	for h, id := range ref {
		if got := tab.find(h, hashes); got != id {
			t.Fatalf("find(%x) = %d, want %d", h, got, id)
		}
	}
	for id := 1; id < len(hashes); id++ {
		if _, ok := ref[hashes[id]]; !ok && tab.find(hashes[id], hashes) != 0 {
			t.Fatalf("removed hash %x still found", hashes[id])
		}
	}
}

// TestHashedIdReuse: a value that left the window, whose id was then given
// to another value, is a new value when it comes back, not the other one.
func TestHashedIdReuse(t *testing.T) {
	f := newField("id", 0)
	f.ident = true
	f.hashValues()
	a := f.add([]byte("A"), 0)
	b := f.add([]byte("B"), 0)
	f.remove(a)
	c := f.add([]byte("C"), 0) // takes A's freed id
	f.remove(b)
	a2 := f.add([]byte("A"), 0)
	if c != a || a2 == c || f.distinct != 2 || f.counts[c] != 1 || f.counts[a2] != 1 {
		t.Errorf("ids A=%d C=%d A again=%d, distinct %d: A came back as C", a, c, a2, f.distinct)
	}
}
