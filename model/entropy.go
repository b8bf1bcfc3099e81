package model

import (
	"math"
	"sync/atomic"
)

// fixScale is the fixed-point scale of S: one unit is 2^-30 bit·records.
const fixScale = 1 << 30

// The values c·log2(c) are looked up, not computed, where a loop steps
// counts one at a time (up, for counts below 1<<22: a log2 costs more than
// the rest of a table update). The table is filled a chunk at a time as
// counts reach it, so memory follows the largest count stepped (8 bytes per
// count). Chunks are published atomically, so models in different
// goroutines can share them. A field's values leave its running sum at
// the first chunk's end (field.up, field.big), and sums taken once (clogc)
// compute past it: a report over a million records of one value then
// holds the first chunk only.
const (
	chunkBits  = 16
	chunkSize  = 1 << chunkBits
	tableLimit = 1 << 22
)

var clogcChunks [tableLimit / chunkSize]atomic.Pointer[[chunkSize]int64]

// clogc0 is the first chunk, filled in init and never changed: the hot
// loops read it with no atomic load and no call.
var clogc0 *[chunkSize]int64

func init() { clogc0 = clogcChunk(0) }

func clogcChunk(i int64) *[chunkSize]int64 {
	if p := clogcChunks[i].Load(); p != nil {
		return p
	}
	t := new([chunkSize]int64)
	for j := range t {
		t[j] = clogcSlow(i<<chunkBits + int64(j))
	}
	clogcChunks[i].CompareAndSwap(nil, t)
	return clogcChunks[i].Load()
}

func clogcSlow(c int64) int64 {
	if c <= 1 {
		return 0
	}
	x := float64(c)
	return int64(math.Round(x * math.Log2(x) * fixScale))
}

// clogc is c·log2(c) in fixed point (0 for c ≤ 1): looked up in the first
// chunk, computed past it. Loops that step a count by one use up, which
// looks up every chunk.
func clogc(c int64) int64 {
	if uint64(c) < chunkSize {
		return clogc0[c]
	}
	return clogcSlow(c)
}

func clogcBig(c int64) int64 {
	if c < 0 {
		return 0
	}
	if c < tableLimit {
		return clogcChunk(c >> chunkBits)[c&(chunkSize-1)]
	}
	return clogcSlow(c)
}

// up is clogc(c+1) − clogc(c), the change of S when a cell of count c gains
// a record; small enough to be inlined into the update loops.
func up(c int64) int64 {
	if uint64(c) < chunkSize-1 {
		return clogc0[c+1] - clogc0[c]
	}
	return clogcBig(c+1) - clogcBig(c)
}

// Entropy is the plug-in entropy in bits of a table of n records whose
// Σ c·log2(c) is s (in fixed point).
func entropyFromS(n int64, s int64) float64 {
	if n <= 1 {
		return 0
	}
	h := math.Log2(float64(n)) - float64(s)/fixScale/float64(n)
	if h < 0 { // rounding on a constant table
		return 0
	}
	return h
}

// MillerMadow is the Miller–Madow corrected entropy in bits of a plug-in
// estimate h over n records in k non-empty cells.
func MillerMadow(h float64, k, n int) float64 {
	if n == 0 {
		return 0
	}
	return h + float64(k-1)/(2*float64(n)*math.Ln2)
}

// EntropyOfCounts is the plug-in entropy in bits of a count vector, computed
// directly: a reference for tests and for small tables built on the side.
func EntropyOfCounts(counts []int) float64 {
	var n, s int64
	for _, c := range counts {
		if c > 0 {
			n += int64(c)
			s += clogc(int64(c))
		}
	}
	return entropyFromS(n, s)
}
