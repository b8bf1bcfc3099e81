package model

import (
	"math/rand/v2"
	"testing"
)

// BenchmarkCountHashed: a million records into the pair table of two fields
// of thousands of values each (5,000 × 3,000, most combinations seen once:
// a hash map of about a million cells, as for the demo's account and
// latency), in segments of 2048. One op is the million.
func BenchmarkCountHashed(b *testing.B) {
	r := rand.New(rand.NewPCG(7, 8))
	as, bs := make([]uint32, 1<<20), make([]uint32, 1<<20)
	for i := range as {
		as[i], bs[i] = 1+uint32(r.IntN(5000)), 1+uint32(r.IntN(3000))
	}
	for b.Loop() {
		m := newCellMap()
		for i := 0; i < len(as); i += 2048 {
			m.count(as[i:i+2048], bs[i:i+2048])
		}
		if m.dense != nil {
			b.Fatal("still a matrix")
		}
	}
}

// TestCountMatchesInc: count and uncount over segments leave the table
// inc and dec leave, in both modes (a matrix, then a hash map past its
// bounds).
func TestCountMatchesInc(t *testing.T) {
	r := rand.New(rand.NewPCG(9, 10))
	// Sides of a and b, and the longest segment: a matrix of many records
	// a cell; a matrix whose cells empty as segments leave; a hash map.
	for _, c := range [][3]int{{8, 64, 3000}, {30, 30, 500}, {3000, 3000 * 3000, 3000}} {
		side := c[0]
		batch, single := newCellMap(), newCellMap()
		var segs [][2][]uint32
		for seg := 0; seg < 40; seg++ {
			n := 1 + r.IntN(c[2])
			as, bs := make([]uint32, n), make([]uint32, n)
			for i := range as {
				as[i], bs[i] = uint32(r.IntN(side)), uint32(r.IntN(c[1]))
				single.inc(uint64(as[i])<<32 | uint64(bs[i]))
			}
			batch.count(as, bs)
			segs = append(segs, [2][]uint32{as, bs})
			if seg%3 == 2 { // the oldest segment leaves
				old := segs[0]
				segs = segs[1:]
				for i := range old[0] {
					single.dec(uint64(old[0][i])<<32 | uint64(old[1][i]))
				}
				batch.uncount(old[0], old[1])
			}
		}
		if batch.len != single.len || batch.sum() != single.sum() {
			t.Fatalf("side %d: count: %d cells, S %d; inc: %d cells, S %d", side, batch.len, batch.sum(), single.len, single.sum())
		}
		single.each(func(k uint64, c int32) {
			if got := batch.get(k); got != c {
				t.Fatalf("side %d: cell %x: count %d, inc %d", side, k, got, c)
			}
		})
	}
}
