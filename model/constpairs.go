package model

// Pairs with a constant field. While one field of a tracked pair has one
// value in every record of the window, the pair's table is the other
// field's value table against that one value: H(F,C) = H(F). Such a pair
// is marked virt and not counted record by record (a log's service name,
// environment or version costs one pair table per other field otherwise);
// its table is made from the other field's counts when something reads it
// (realizePairs, O(values of the other field)), and it is counted as usual
// from then on, until the next reclassification marks it again.
//
// When the constant field takes a second value, or a record lacks it, the
// pair is built again from the window's columns after the records that
// broke it are in (checkVirtual, as a pair whose tracking starts late is):
// a window's worth of work, at most once per window length for a field
// that keeps turning constant and back.

// constant says whether field i has one value, in every window record.
func (m *Model) constant(i int) bool {
	f := m.fields[i]
	return m.st.n > 0 && f.present == int64(m.st.n) && f.distinct == 1 && f.overflowed == 0 && !f.hashed()
}

// virtualizePairs marks the pairs with a constant field (at a
// reclassification).
func (m *Model) virtualizePairs() {
	for i := range m.pairs {
		p := &m.pairs[i]
		if p.virt {
			continue
		}
		c := -1
		switch {
		case m.constant(p.a):
			c = p.a
		case m.constant(p.b):
			c = p.b
		}
		if c < 0 {
			continue
		}
		p.m.release()
		p.m, p.virt, p.c = nil, true, c
	}
}

// checkVirtual builds again, from the window's columns, the virt pairs
// whose field is no longer constant (after records were added and
// evicted).
func (m *Model) checkVirtual() {
	for i := range m.pairs {
		if p := &m.pairs[i]; p.virt && !m.constant(p.c) {
			p.virt = false
			p.m = m.newPairTable()
			m.fillPair(p)
		}
	}
}

// realizePairs makes the tables of the virt pairs from their other
// field's counts, for a reader.
func (m *Model) realizePairs() {
	for i := range m.pairs {
		p := &m.pairs[i]
		if !p.virt {
			continue
		}
		c, o := p.c, p.a+p.b-p.c
		fc, fo := m.fields[c], m.fields[o]
		var cid uint32 // the constant's one value
		for id, n := range fc.counts {
			if id != absent && n > 0 {
				cid = uint32(id)
				break
			}
		}
		key := func(oid uint32) uint64 {
			if o == p.a {
				return uint64(oid)<<32 | uint64(cid)
			}
			return uint64(cid)<<32 | uint64(oid)
		}
		cm := m.newPairTable()
		if ab := int64(m.st.n) - fo.present; ab > 0 {
			cm.add(key(absent), int32(ab))
		}
		for id := 1; id < len(fo.counts); id++ {
			if n := fo.counts[id]; n > 0 {
				cm.add(key(uint32(id)), n)
			}
		}
		if fo.overflowed > 0 {
			cm.add(key(overflow), int32(fo.overflowed))
		}
		p.m, p.virt = cm, false
	}
}

func (m *Model) newPairTable() *cellMap {
	cm := newCellMap()
	cm.budget = &m.denseSpare
	return cm
}

// fillPair counts the window's records into p's table, column by column.
func (m *Model) fillPair(p *pair) {
	as := m.st.column(p.a, 0, m.st.n, nil)
	bs := m.st.column(p.b, 0, m.st.n, nil)
	for r, a := range as {
		p.m.inc(uint64(a)<<32 | uint64(bs[r]))
	}
}
