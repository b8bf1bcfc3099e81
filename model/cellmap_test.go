package model

import (
	"math/rand/v2"
	"testing"
)

// TestCellMapAgainstGoMap drives a cellMap and a Go map with the same
// random increments and decrements, through the dense-to-hash switch, and
// compares every count, the cell count and S.
func TestCellMapAgainstGoMap(t *testing.T) {
	for _, spread := range []int{4, 100, 5000} {
		r := rand.New(rand.NewPCG(3, uint64(spread)))
		m := newCellMap()
		ref := map[uint64]int32{}
		var keys []uint64
		for i := 0; i < 50000; i++ {
			if len(keys) > 0 && r.IntN(3) == 0 {
				j := r.IntN(len(keys))
				k := keys[j]
				keys[j] = keys[len(keys)-1]
				keys = keys[:len(keys)-1]
				m.dec(k)
				if ref[k]--; ref[k] == 0 {
					delete(ref, k)
				}
				continue
			}
			k := uint64(r.IntN(spread))<<32 | uint64(r.IntN(spread/2+1))
			m.inc(k)
			ref[k]++
			keys = append(keys, k)
		}
		var s int64
		for k, c := range ref {
			if got := m.get(k); got != c {
				t.Fatalf("spread %d: count of %x is %d, want %d", spread, k, got, c)
			}
			s += clogc(int64(c))
		}
		n := 0
		m.each(func(k uint64, c int32) { n++ })
		if m.len != len(ref) || n != len(ref) || m.s != s {
			t.Errorf("spread %d: len %d each %d s %d; want %d cells, s %d", spread, m.len, n, m.s, len(ref), s)
		}
	}
}
