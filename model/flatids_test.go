package model

import (
	"math/rand/v2"
	"slices"
	"testing"
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
