package model

// store keeps the value ids of the records in the window, oldest first, so
// that a record leaving the window can be taken off the counts, and so that
// tables can be rebuilt from the window (when a field starts or stops being
// tracked in pairs, or for questions about several fields at once).
//
// It is a ring of fixed-stride rows: row i holds one id per field index, and
// ids past the fields a record had are absent (0). When a new field makes the
// rows too narrow, the ring is copied once at a wider stride (growing by at
// least a quarter, so the copies cost O(1) amortised per record).
//
// Invariant: ids has len(meta)*stride elements; the rows in the window are
// the n slots starting at head, cyclically.
type store struct {
	stride int
	ids    []uint32
	meta   []rowMeta
	head   int
	n      int
}

// rowMeta is what the store keeps about a record besides its ids.
type rowMeta struct {
	line int64 // line number in its source
	time int64 // Unix nanoseconds: record time, or arrival time
}

func (s *store) slot(i int) int { return (s.head + i) % len(s.meta) }

// row returns the ids of the i-th oldest record; valid until the next push.
func (s *store) row(i int) []uint32 {
	j := s.slot(i) * s.stride
	return s.ids[j : j+s.stride]
}

func (s *store) metaAt(i int) rowMeta { return s.meta[s.slot(i)] }

// push appends a record; row may be shorter than the stride.
func (s *store) push(row []uint32, m rowMeta) {
	if len(row) > s.stride {
		w := s.stride + s.stride/4 + 1
		if w < len(row) {
			w = len(row)
		}
		s.relayout(max(len(s.meta), 16), w)
	}
	if s.n == len(s.meta) {
		s.relayout(max(2*len(s.meta), 16), s.stride)
	}
	j := s.slot(s.n)
	dst := s.ids[j*s.stride : (j+1)*s.stride]
	copy(dst, row)
	clear(dst[len(row):])
	s.meta[j] = m
	s.n++
}

// pop drops the oldest record.
func (s *store) pop() {
	s.head = (s.head + 1) % len(s.meta)
	s.n--
}

// relayout copies the window into a ring of capacity rows of stride ids.
func (s *store) relayout(capacity, stride int) {
	ids := make([]uint32, capacity*stride)
	meta := make([]rowMeta, capacity)
	for i := 0; i < s.n; i++ {
		copy(ids[i*stride:], s.row(i))
		meta[i] = s.metaAt(i)
	}
	s.ids, s.meta, s.stride, s.head = ids, meta, stride, 0
}

// shrink gives memory back when the window holds far fewer rows than the
// ring has room for (after a burst in a duration window).
func (s *store) shrink() {
	if len(s.meta) > 1024 && s.n*4 < len(s.meta) {
		s.relayout(max(2*s.n, 16), s.stride)
	}
}

func (s *store) bytes() int { return len(s.ids)*4 + len(s.meta)*16 }
