package plan

import (
	"math"
	"slices"
)

// HuffmanLength is the expected length, in bits per symbol, of a Huffman
// code for symbols with the given counts (zero counts are ignored).
//
// It does not build the code: the expected length Σ p_i·l_i equals the sum
// of the weights of the internal nodes the merges create, divided by the
// total weight, because each merge adds one bit to every symbol beneath it.
// A single symbol gets a code of length 0 (nothing needs telling apart), so
// H ≤ L < H+1 holds for every distribution. Counts are integers, so the sum
// is exact until the final division.
func HuffmanLength(counts []int64) float64 {
	leaves := make([]int64, 0, len(counts))
	var total int64
	for _, c := range counts {
		if c > 0 {
			leaves = append(leaves, c)
			total += c
		}
	}
	if len(leaves) <= 1 {
		return 0
	}
	// Two queues (van Leeuwen, 1976, from memory): the sorted leaves, and
	// the merged nodes, which are made in nondecreasing order, so the two
	// lightest nodes are always at the queues' heads.
	slices.Sort(leaves)
	merged := make([]int64, 0, len(leaves)-1)
	li, mi := 0, 0
	next := func() int64 {
		if mi >= len(merged) || (li < len(leaves) && leaves[li] <= merged[mi]) {
			li++
			return leaves[li-1]
		}
		mi++
		return merged[mi-1]
	}
	var internal int64
	for k := 1; k < len(leaves); k++ {
		w := next() + next()
		internal += w
		merged = append(merged, w)
	}
	return float64(internal) / float64(total)
}

// Entropy is the Shannon entropy in bits of the distribution the counts
// give (plug-in: p_i = c_i / Σc).
func Entropy(counts []int64) float64 {
	var total int64
	for _, c := range counts {
		total += c
	}
	if total == 0 {
		return 0
	}
	h := 0.0
	for _, c := range counts {
		if c > 0 {
			p := float64(c) / float64(total)
			h -= p * math.Log2(p)
		}
	}
	return max(h, 0)
}
