package model

import "sync/atomic"

// cellMap counts records per cell of a joint table, keyed by two 32-bit
// value ids (a<<32 | b).
//
// While both ids stay small it is a dense matrix: an update is one indexed
// add, no hashing. Once the matrix would pass denseMaxCells, or
// denseFillCells with less than a quarter of its cells in use, it turns,
// for good, into an open-addressing hash map with
// linear probing and backward-shift deletion, so that cells emptied by
// records leaving the window free their slot. Written by hand because Go's
// map costs several times as much per update on this, the hottest loop of
// the model, and never shrinks.
//
// Invariant: len == the number of cells with a count > 0; s == Σ clogc(count)
// over all cells. In hash mode a slot is empty iff its count is 0.
type cellMap struct {
	// dense mode: dense[a*dw+b] for a < dh, b < dw; nil in hash mode,
	// where dw == dh == 0 so that the test a < dh && b < dw alone tells
	// a dense hit (see incDense).
	dense  []int32
	dw, dh uint64

	keys   []uint64
	counts []int32
	mask   uint64
	shift  uint
	len    int
	s      int64
	// stale: counts changed without s (batch updates); see sum.
	stale bool
	// budget, when not nil, lends a sparse matrix room past the fill rule
	// (see denseSpare); borrowed is what this one holds of it.
	budget   *atomic.Int64
	borrowed int64
	// touched keeps countHashed's first loop from being optimised away.
	touched int32
}

// denseSpare is the memory, over a whole model, that matrices filled under a
// quarter may hold past denseFillCells. The fill rule judges a matrix when
// it has to grow, which for a field whose values are still arriving (5,000
// accounts against a dozen hosts) is early and pessimistic: such a pair
// would go to the hash map for good, at several times the cost per update,
// though filled later it would be cheaper as a matrix. The spare lets a few
// such pairs stay matrices while bounding what sparse ones can cost when
// every field has hundreds of values; a matrix borrows only up to
// denseBorrowCells (1 MB) and only with a 32nd of it in use, so that a pair
// of two large or unique fields (as all fields are tracked over the first
// records, before the identifier rule first runs) is not built as a matrix
// to be dropped for a hash map later: that cost every run about 30 ms.
const (
	denseSpare       = 16 << 20
	denseBorrowCells = 1 << 18
)

// The matrix is limited by its cells only, not by a side: a field of
// thousands of values against one of a few (latency_ms × level) is a long
// thin matrix, cheaper and faster than a hash map of the same cells. A hash
// slot costs 12 bytes and there are at least 4/3 slots a cell, so about 16
// bytes a cell in use against 4 a matrix cell: past denseFillCells (256 KB)
// the matrix grows only while at least a quarter of it is in use, when it
// costs no more than the hash map would; past denseMaxCells (16 MB), never.
const (
	denseFillCells = 1 << 16
	denseMaxCells  = 1 << 22
)

func newCellMap() *cellMap {
	return &cellMap{dense: make([]int32, 16), dw: 4, dh: 4}
}

// denseAt returns the dense slot of k, growing the matrix if k is near, or
// -1 after switching to hash mode.
func (m *cellMap) denseAt(k uint64) int {
	a, b := k>>32, k&0xffffffff
	if a < m.dh && b < m.dw {
		return int(a*m.dw + b)
	}
	nw, nh := m.dw, m.dh
	for b >= nw {
		nw *= 2
	}
	for a >= nh {
		nh *= 2
	}
	if c := nw * nh; c > denseMaxCells || c > denseFillCells && uint64(m.len)*4 < c && (c > denseBorrowCells || uint64(m.len)*32 < c || !m.borrow(int64(c-m.dw*m.dh)*4)) {
		m.toHash()
		return -1
	}
	d := make([]int32, nw*nh)
	for i := uint64(0); i < m.dh; i++ {
		copy(d[i*nw:], m.dense[i*m.dw:(i+1)*m.dw])
	}
	m.dense, m.dw, m.dh = d, nw, nh
	return int(a*m.dw + b)
}

// borrow takes n bytes from the budget, if it has them.
func (m *cellMap) borrow(n int64) bool {
	if m.budget == nil {
		return false
	}
	if m.budget.Add(-n) < 0 {
		m.budget.Add(n)
		return false
	}
	m.borrowed += n
	return true
}

// release gives back what the matrix borrowed (its pair is dropped).
func (m *cellMap) release() {
	if m.budget != nil {
		m.budget.Add(m.borrowed)
		m.borrowed = 0
	}
}

func (m *cellMap) toHash() {
	m.release()
	d, dw := m.dense, m.dw
	m.dense, m.dw, m.dh = nil, 0, 0
	size := 16
	for size*3 < m.len*4+4 {
		size *= 2
	}
	m.alloc(size)
	n := m.len
	m.len = 0
	for i, c := range d {
		if c != 0 {
			k := uint64(i)/dw<<32 | uint64(i)%dw
			j := m.slot(k)
			for m.counts[j] != 0 {
				j = (j + 1) & m.mask
			}
			m.keys[j], m.counts[j] = k, c
			m.len++
		}
	}
	if m.len != n {
		panic("model: cellMap lost cells turning into a hash map")
	}
}

func (m *cellMap) alloc(size int) {
	m.keys = make([]uint64, size)
	m.counts = make([]int32, size)
	m.mask = uint64(size - 1)
	m.shift = 64
	for s := size; s > 1; s >>= 1 {
		m.shift--
	}
}

func (m *cellMap) slot(k uint64) uint64 {
	return (k * 0x9E3779B97F4A7C15) >> m.shift & m.mask
}

// incDense adds one record to cell (a, b) when it is inside the dense
// matrix, and says whether it was. It is the inlined fast path of inc.
func (m *cellMap) incDense(a, b uint64) bool {
	if a >= m.dh || b >= m.dw {
		return false
	}
	j := a*m.dw + b
	c := m.dense[j]
	if c == 0 {
		m.len++
	}
	m.s += up(int64(c))
	m.dense[j] = c + 1
	return true
}

// inc adds one record to cell k.
func (m *cellMap) inc(k uint64) {
	if m.dense != nil {
		if j := m.denseAt(k); j >= 0 {
			c := m.dense[j]
			if c == 0 {
				m.len++
			}
			m.s += up(int64(c))
			m.dense[j] = c + 1
			return
		}
	}
	m.incFrom(k, m.slot(k))
}

// incFrom is inc in hash mode, with k's home slot i.
func (m *cellMap) incFrom(k uint64, i uint64) {
	for {
		c := m.counts[i]
		if c == 0 {
			m.keys[i] = k
			m.counts[i] = 1
			m.len++
			if m.len*4 > len(m.keys)*3 {
				m.grow()
			}
			return
		}
		if m.keys[i] == k {
			m.s += up(int64(c))
			m.counts[i] = c + 1
			return
		}
		i = (i + 1) & m.mask
	}
}

// add adds n records to cell k.
func (m *cellMap) add(k uint64, n int32) {
	if n <= 0 {
		return
	}
	if m.dense != nil {
		if j := m.denseAt(k); j >= 0 {
			c := m.dense[j]
			if c == 0 {
				m.len++
			}
			m.s += clogc(int64(c)+int64(n)) - clogc(int64(c))
			m.dense[j] = c + n
			return
		}
	}
	i := m.slot(k)
	for {
		c := m.counts[i]
		if c == 0 {
			m.keys[i] = k
			m.counts[i] = n
			m.s += clogc(int64(n))
			m.len++
			if m.len*4 > len(m.keys)*3 {
				m.grow()
			}
			return
		}
		if m.keys[i] == k {
			m.s += clogc(int64(c)+int64(n)) - clogc(int64(c))
			m.counts[i] = c + n
			return
		}
		i = (i + 1) & m.mask
	}
}

// dec removes one record from cell k, which must hold one.
func (m *cellMap) dec(k uint64) {
	if m.dense != nil {
		j := m.denseAt(k)
		if j >= 0 {
			c := m.dense[j]
			if c == 0 {
				panic("model: cellMap.dec of an empty cell")
			}
			m.s -= up(int64(c) - 1)
			m.dense[j] = c - 1
			if c == 1 {
				m.len--
			}
			return
		}
	}
	i := m.slot(k)
	for m.keys[i] != k || m.counts[i] == 0 {
		if m.counts[i] == 0 {
			panic("model: cellMap.dec of an empty cell")
		}
		i = (i + 1) & m.mask
	}
	c := m.counts[i]
	m.s -= up(int64(c) - 1)
	if c > 1 {
		m.counts[i] = c - 1
		return
	}
	m.counts[i] = 0
	m.len--
	// Backward-shift: move later entries of the probe run into the hole.
	j := i
	for {
		j = (j + 1) & m.mask
		if m.counts[j] == 0 {
			return
		}
		home := m.slot(m.keys[j])
		// Move j to i if home is not cyclically in (i, j].
		if (j > i && (home <= i || home > j)) || (j < i && (home <= i && home > j)) {
			m.keys[i], m.counts[i] = m.keys[j], m.counts[j]
			m.counts[j] = 0
			i = j
		}
	}
}

// get returns the count of cell k.
func (m *cellMap) get(k uint64) int32 {
	if m.dense != nil {
		a, b := k>>32, k&0xffffffff
		if a < m.dh && b < m.dw {
			return m.dense[a*m.dw+b]
		}
		return 0
	}
	i := m.slot(k)
	for {
		c := m.counts[i]
		if c == 0 {
			return 0
		}
		if m.keys[i] == k {
			return c
		}
		i = (i + 1) & m.mask
	}
}

func (m *cellMap) grow() {
	keys, counts := m.keys, m.counts
	m.alloc(len(keys) * 2)
	for i, c := range counts {
		if c != 0 {
			j := m.slot(keys[i])
			for m.counts[j] != 0 {
				j = (j + 1) & m.mask
			}
			m.keys[j], m.counts[j] = keys[i], c
		}
	}
}

// each calls f for every non-empty cell.
func (m *cellMap) each(f func(k uint64, c int32)) {
	if m.dense != nil {
		for i, c := range m.dense {
			if c != 0 {
				f(uint64(i)/m.dw<<32|uint64(i)%m.dw, c)
			}
		}
		return
	}
	for i, c := range m.counts {
		if c != 0 {
			f(m.keys[i], c)
		}
	}
}

// bytes is the memory the map holds.
func (m *cellMap) bytes() int { return len(m.keys)*12 + len(m.dense)*4 }
