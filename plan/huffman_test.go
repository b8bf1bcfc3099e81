package plan

import (
	"math"
	"math/rand/v2"
	"testing"
)

func TestHuffmanLength(t *testing.T) {
	for _, c := range []struct {
		name   string
		counts []int64
		wantL  float64
		wantH  float64
	}{
		// Cover & Thomas, Elements of Information Theory, 2nd ed., Example
		// 5.6.1 (from memory): p = (0.25, 0.25, 0.2, 0.15, 0.15) has code
		// lengths (2, 2, 2, 3, 3), L = 2.3 bits, H = 2.2855 bits. Confirmed
		// by computing here: L = 2·0.25·2 + 0.2·2 + 2·0.15·3 = 2.3 and
		// H = 1 + 0.2·log2(5) + 0.3·log2(1/0.15) = 2.28548 bits.
		{"cover-thomas-5.6.1", []int64{25, 25, 20, 15, 15}, 2.3, 2.2855},
		// A dyadic distribution (1/2, 1/4, 1/8, 1/8): the Huffman code
		// meets the entropy exactly, L = H = 1.75 bits (Cover & Thomas,
		// 2nd ed., Section 5.3: L = H iff every p_i is a power of 1/2).
		{"dyadic", []int64{4, 2, 1, 1}, 1.75, 1.75},
		// One symbol: nothing to tell apart (our convention: length 0).
		{"single", []int64{9}, 0, 0},
		// Two equally likely symbols: one bit each (common practice).
		{"coin", []int64{3, 3, 0}, 1, 1},
	} {
		t.Run(c.name, func(t *testing.T) {
			if l := HuffmanLength(c.counts); math.Abs(l-c.wantL) > 1e-12 {
				t.Errorf("L = %.6f, want %.6f", l, c.wantL)
			}
			if h := Entropy(c.counts); math.Abs(h-c.wantH) > 5e-5 {
				t.Errorf("H = %.6f, want %.4f", h, c.wantH)
			}
		})
	}
}

// TestHuffmanBounds: H ≤ L < H+1 for every distribution (Cover & Thomas,
// 2nd ed., Theorem 5.4.1 with the optimality of Huffman codes, 5.8).
func TestHuffmanBounds(t *testing.T) {
	r := rand.New(rand.NewPCG(7, 11))
	for i := 0; i < 2000; i++ {
		counts := make([]int64, 1+r.IntN(40))
		for j := range counts {
			switch r.IntN(3) {
			case 0:
				counts[j] = 1 + r.Int64N(3)
			case 1:
				counts[j] = 1 + r.Int64N(1000)
			default:
				counts[j] = 1 << r.IntN(20)
			}
		}
		h, l := Entropy(counts), HuffmanLength(counts)
		if l < h-1e-9 || l >= h+1 {
			t.Fatalf("counts %v: H = %v, L = %v; want H ≤ L < H+1", counts, h, l)
		}
	}
}

func BenchmarkHuffman100k(b *testing.B) {
	counts := make([]int64, 100_000)
	for i := range counts {
		counts[i] = int64(1 + i%7)
	}
	for b.Loop() {
		HuffmanLength(counts)
	}
}
