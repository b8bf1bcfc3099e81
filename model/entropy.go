// Package model keeps exact, incrementally updated information measures of
// a window of log records: per field the Shannon entropy H(F), per pair of
// fields the joint entropy H(F,G), and from them, by the chain rule
// H(F|G) = H(F,G) − H(G), conditional entropy and mutual information
// I(F;G) = H(F) + H(G) − H(F,G). Units are bits (log base 2) throughout.
//
// # The estimator
//
// All figures are plug-in (maximum-likelihood) estimates over the records in
// the window: for a table of counts c_i summing to N,
//
//	H = −Σ (c_i/N) log2(c_i/N) = log2 N − S/N,   S = Σ c_i log2 c_i.
//
// Each table keeps S, so a record entering or leaving the window changes H
// in O(1): only the terms of the cells it touches change. S is kept in fixed
// point (2^-30 bits per unit), so adding and removing the same records
// returns exactly the same integer, with no floating-point drift however long
// the stream: the incremental figures equal a recount bit for bit. The
// rounding of each term is below 5e-10 bits, so H is within 5e-10·K/N of the
// exact value for a table of K cells. Exactness holds while N·log2(N) stays
// below 2^33 (windows of up to about 250 million records).
//
// The Miller–Madow value H + (K−1)/(2N ln 2) is given beside the plug-in
// value: it removes the first-order bias that makes plug-in entropy too low
// when there are few records per value.
//
// A record that lacks a field has, for that field, the value "absent", a
// value of its own.
package model

import (
	"math"
	"sync/atomic"
)

// fixScale is the fixed-point scale of S: one unit is 2^-30 bit·records.
const fixScale = 1 << 30

// The values c·log2(c) are looked up, not computed, for counts below
// 1<<22: a log2 costs more than the rest of a table update. The table is
// filled a chunk at a time as counts reach it, so memory follows the largest
// count seen (8 bytes per count). Chunks are published atomically, so models
// in different goroutines can share them.
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

// clogc is c·log2(c) in fixed point (0 for c ≤ 1).
func clogc(c int64) int64 {
	if uint64(c) < chunkSize {
		return clogc0[c]
	}
	return clogcBig(c)
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
