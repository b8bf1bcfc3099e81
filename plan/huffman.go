package plan

import (
	"container/heap"
	"math"
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
	h := make(weights, 0, len(counts))
	var total int64
	for _, c := range counts {
		if c > 0 {
			h = append(h, c)
			total += c
		}
	}
	if len(h) <= 1 {
		return 0
	}
	heap.Init(&h)
	var internal int64
	for h.Len() > 1 {
		a := heap.Pop(&h).(int64)
		b := heap.Pop(&h).(int64)
		internal += a + b
		heap.Push(&h, a+b)
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

// weights is a min-heap of node weights.
type weights []int64

func (w weights) Len() int           { return len(w) }
func (w weights) Less(i, j int) bool { return w[i] < w[j] }
func (w weights) Swap(i, j int)      { w[i], w[j] = w[j], w[i] }
func (w *weights) Push(x any)        { *w = append(*w, x.(int64)) }
func (w *weights) Pop() any {
	old := *w
	x := old[len(old)-1]
	*w = old[:len(old)-1]
	return x
}
