package model

// cellMap counts records per cell of a joint table: an open-addressing hash
// map from a 64-bit cell key (two 32-bit value ids) to a count, with linear
// probing and backward-shift deletion so that cells emptied by records
// leaving the window free their slot. Written by hand because Go's map costs
// about three times as much per update on this, the hottest loop of the
// model, and cannot shrink.
//
// Invariant: a slot is empty iff its count is 0; len == the number of slots
// with a count > 0; s == Σ clogc(count) over all slots.
type cellMap struct {
	keys   []uint64
	counts []int32
	mask   uint64
	shift  uint
	len    int
	s      int64
}

func newCellMap() *cellMap {
	m := &cellMap{}
	m.alloc(16)
	return m
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

// inc adds one record to cell k.
func (m *cellMap) inc(k uint64) {
	i := m.slot(k)
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
			m.s += clogc(int64(c)+1) - clogc(int64(c))
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
	i := m.slot(k)
	for m.keys[i] != k || m.counts[i] == 0 {
		if m.counts[i] == 0 {
			panic("model: cellMap.dec of an empty cell")
		}
		i = (i + 1) & m.mask
	}
	c := m.counts[i]
	m.s += clogc(int64(c)-1) - clogc(int64(c))
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
	for i, c := range m.counts {
		if c != 0 {
			f(m.keys[i], c)
		}
	}
}

// bytes is the memory the map holds.
func (m *cellMap) bytes() int { return len(m.keys) * 12 }
