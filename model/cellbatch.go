package model

// Batch updates of a cellMap (see batch.go): counts change with no
// Σ c·log c kept per increment; stale marks s out of date, and sum brings
// it back from the counts when a snapshot asks. The fixed-point terms are
// integers, so the sum is exactly what the incremental updates would have
// kept.

// count adds one record to cell (as[r], bs[r]) for each r: two columns
// read in order, the matrix's fields kept in locals (reloaded after inc,
// which may grow the matrix or leave it for a hash map).
func (m *cellMap) count(as, bs []uint32) {
	m.stale = true
	bs = bs[:len(as)]
	if m.dense == nil {
		m.countHashed(as, bs)
		return
	}
	dense, dw, dh, n := m.dense, m.dw, m.dh, m.len
	for r, x := range as {
		a, b := uint64(x), uint64(bs[r])
		if a < dh && b < dw {
			j := a*dw + b
			c := dense[j]
			if c == 0 {
				n++
			}
			dense[j] = c + 1
			continue
		}
		m.len = n
		m.inc(a<<32 | b)
		dense, dw, dh, n = m.dense, m.dw, m.dh, m.len
	}
	m.len = n
}

// countHashed is count in hash mode, a block of records at a time: first
// each record's home slot is found and loaded, then the records are
// counted. The first loop's loads do not wait on one another, so their
// cache misses (a table of a million cells is tens of MB) overlap, where
// counting record by record waited out each in turn.
func (m *cellMap) countHashed(as, bs []uint32) {
	var home [countBlock]uint64
	for lo := 0; lo < len(as); lo += countBlock {
		hi := min(lo+countBlock, len(as))
		var touch int32
		for i := lo; i < hi; i++ {
			j := m.slot(uint64(as[i])<<32 | uint64(bs[i]))
			home[i-lo] = j
			touch += m.counts[j] + int32(m.keys[j])
		}
		m.touched += touch
		mask := m.mask
		for i := lo; i < hi; i++ {
			k := uint64(as[i])<<32 | uint64(bs[i])
			if m.mask != mask {
				m.inc(k) // the table grew: the homes found are stale
				continue
			}
			m.incFrom(k, home[i-lo])
		}
	}
}

// countBlock is how many records countHashed takes a block
// (BenchmarkCountHashed, 1M records into about 1M cells: 62–71 ms record by
// record, 43–45 with blocks of 16, 47–50 with 64 or 256).
const countBlock = 16

// uncount takes one record off cell (as[r], bs[r]) for each r.
func (m *cellMap) uncount(as, bs []uint32) {
	m.stale = true
	bs = bs[:len(as)]
	// The matrix's fields in locals, as in count (dec never grows it, but
	// may leave it for a hash map: they are reloaded after it).
	dense, dw, dh, n := m.dense, m.dw, m.dh, m.len
	for r, x := range as {
		a, b := uint64(x), uint64(bs[r])
		if a < dh && b < dw {
			j := a*dw + b
			c := dense[j]
			if c == 0 {
				panic("model: cellMap.uncount of an empty cell")
			}
			if c == 1 {
				n--
			}
			dense[j] = c - 1
			continue
		}
		m.len = n
		m.dec(a<<32 | b)
		dense, dw, dh, n = m.dense, m.dw, m.dh, m.len
	}
	m.len = n
}

// sum is S = Σ clogc(count) over the cells, recomputed if stale.
func (m *cellMap) sum() int64 {
	if !m.stale {
		return m.s
	}
	var s int64
	tab := clogc0
	add := func(c int32) {
		if uint32(c) < chunkSize {
			s += tab[c]
		} else {
			s += clogc(int64(c))
		}
	}
	if m.dense != nil {
		for _, c := range m.dense {
			if c > 1 {
				add(c)
			}
		}
	} else {
		for _, c := range m.counts {
			if c > 1 {
				add(c)
			}
		}
	}
	m.s, m.stale = s, false
	return s
}
