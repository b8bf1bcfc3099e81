package model

import (
	"encoding/binary"
	"sync/atomic"
)

// store keeps the value ids of the records in the window, oldest first, so
// that a record leaving the window can be taken off the counts, and so that
// tables can be rebuilt from the window (when a field starts or stops being
// tracked in pairs, or for questions about several fields at once).
//
// Rows live in blocks of blockRows records, kept in a queue: a record enters
// at the end of the last block, the oldest leaves from the front, and a
// block whose records have all left is recycled. Nothing is ever copied to
// grow, and a window of N records holds N/blockRows + 2 blocks however long
// the stream.
//
// A block stores each field's ids as a column of 1, 2 or 4 bytes per record,
// as narrow as the largest id it holds (most fields have under 256 values);
// a column is widened, within its block only, when a larger id comes. Line
// numbers and times are kept as 32-bit offsets from the block's first
// record, widened to 64 bits in a block where one does not fit. So a record
// of the demo stream (14 fields) costs about 30 bytes instead of 72.
//
// Invariant: the window's rows are rows head .. head+n−1 counted across the
// blocks in order; 0 ≤ head < blockRows.
type store struct {
	blocks []*block
	spare  *block
	head   int
	n      int
	gone   int      // rows popped, ever: row i is the (gone+i)-th pushed
	width  int      // the widest row pushed: row(i) has this many ids
	out    []uint32 // row's result, reused
	// decoded counts the ids read back (by row and column): the work
	// scans of the store actually do, for tests of their bounds. Atomic:
	// the Deep analyses read columns side by side.
	decoded atomic.Int64
}

const blockRows = 4096

// block holds up to blockRows consecutive records.
type block struct {
	width []uint8  // width[j]: bytes per id of field j; 0: all absent so far
	cols  [][]byte // cols[j]: blockRows·width[j] bytes, little-endian ids
	line0 int64
	time0 int64
	lines []int32 // line − line0, while every one fits
	times []int32 // time − time0, while every one fits
	wideL []int64 // every line, once one did not fit (then lines is nil)
	wideT []int64
}

// rowMeta is what the store keeps about a record besides its ids.
type rowMeta struct {
	line int64 // line number in its source
	time int64 // Unix nanoseconds: record time, or arrival time
}

func (s *store) at(i int) (*block, int) {
	g := s.head + i
	return s.blocks[g/blockRows], g % blockRows
}

// row returns the ids of the i-th oldest record, one per field index up to
// the widest row pushed (absent past the fields the record had). The slice
// is valid until the next call of row or push.
func (s *store) row(i int) []uint32 {
	b, r := s.at(i)
	out := s.out[:s.width]
	s.decoded.Add(int64(s.width))
	clear(out[len(b.width):])
	for j, w := range b.width {
		c := b.cols[j]
		switch w {
		case 0:
			out[j] = absent
		case 1:
			out[j] = uint32(c[r])
		case 2:
			out[j] = uint32(c[2*r]) | uint32(c[2*r+1])<<8
		default:
			out[j] = uint32(c[4*r]) | uint32(c[4*r+1])<<8 | uint32(c[4*r+2])<<16 | uint32(c[4*r+3])<<24
		}
	}
	return out
}

func (s *store) metaAt(i int) rowMeta {
	b, r := s.at(i)
	var m rowMeta
	if b.wideL != nil {
		m.line = b.wideL[r]
	} else {
		m.line = b.line0 + int64(b.lines[r])
	}
	if b.wideT != nil {
		m.time = b.wideT[r]
	} else {
		m.time = b.time0 + int64(b.times[r])
	}
	return m
}

// push appends a record; row may be shorter than the widest.
func (s *store) push(row []uint32, m rowMeta) {
	g := s.head + s.n
	if g == len(s.blocks)*blockRows {
		s.blocks = append(s.blocks, s.newBlock())
	}
	b, r := s.blocks[g/blockRows], g%blockRows
	if r == 0 {
		b.line0, b.time0 = m.line, m.time
	}
	b.setMeta(r, m)
	if len(row) > s.width {
		s.width = len(row)
		s.out = make([]uint32, s.width)
	}
	for len(b.width) < len(row) {
		b.width = append(b.width, 0)
		b.cols = append(b.cols, nil)
	}
	for j, id := range row {
		if id != absent { // columns start zeroed, and each row is written once
			b.put(j, r, id)
		}
	}
	s.n++
}

func idWidth(id uint32) uint8 {
	switch {
	case id <= 0xff:
		return 1
	case id <= 0xffff:
		return 2
	}
	return 4
}

// widen makes column j w bytes per id, keeping its ids.
func (b *block) widen(j int, w uint8) {
	old, ow := b.cols[j], b.width[j]
	c := b.cols[j]
	if cap(c) >= blockRows*int(w) && ow == 0 {
		c = c[:blockRows*int(w)]
		clear(c)
	} else {
		c = make([]byte, blockRows*int(w))
	}
	if ow > 0 {
		for r := 0; r < blockRows; r++ {
			var id uint32
			for k := 0; k < int(ow); k++ {
				id |= uint32(old[r*int(ow)+k]) << (8 * k)
			}
			for k := 0; k < int(w); k++ {
				c[r*int(w)+k] = byte(id >> (8 * k))
			}
		}
	}
	b.cols[j], b.width[j] = c, w
}

func (b *block) setMeta(r int, m rowMeta) {
	if b.wideL == nil {
		if d := m.line - b.line0; int64(int32(d)) == d {
			b.lines[r] = int32(d)
		} else {
			b.wideL = make([]int64, blockRows)
			for k := 0; k < r; k++ {
				b.wideL[k] = b.line0 + int64(b.lines[k])
			}
			b.lines = nil
		}
	}
	if b.wideL != nil {
		b.wideL[r] = m.line
	}
	if b.wideT == nil {
		if d := m.time - b.time0; int64(int32(d)) == d {
			b.times[r] = int32(d)
		} else {
			b.wideT = make([]int64, blockRows)
			for k := 0; k < r; k++ {
				b.wideT[k] = b.time0 + int64(b.times[k])
			}
			b.times = nil
		}
	}
	if b.wideT != nil {
		b.wideT[r] = m.time
	}
}

// newBlock returns an empty block, the spare one if there is one. A spare
// keeps its column buffers, reused (cleared) as columns are needed.
func (s *store) newBlock() *block {
	b := s.spare
	s.spare = nil
	if b == nil {
		return &block{lines: make([]int32, blockRows), times: make([]int32, blockRows)}
	}
	clear(b.width)
	if b.lines == nil {
		b.lines, b.wideL = make([]int32, blockRows), nil
	}
	if b.times == nil {
		b.times, b.wideT = make([]int32, blockRows), nil
	}
	return b
}

// pop drops the oldest record.
func (s *store) pop() {
	s.head++
	s.n--
	s.gone++
	if s.head == blockRows {
		s.spare = s.blocks[0]
		s.blocks[0] = nil
		s.blocks = s.blocks[1:]
		s.head = 0
	}
}

// shrink gives back the spare block (after a burst in a duration window).
func (s *store) shrink() {
	if s.n*4 < len(s.blocks)*blockRows {
		s.spare = nil
	}
}

func (s *store) bytes() int {
	n := 0
	for _, b := range s.blocks {
		for _, c := range b.cols {
			n += cap(c)
		}
		n += 4*(len(b.lines)+len(b.times)) + 8*(len(b.wideL)+len(b.wideT))
	}
	return n
}

// reserve makes rows for the next len(lines) records after the window's
// last (their line numbers and times set, every id absent), with columns
// for w fields in the blocks they fall in, so that putColumn can write
// several fields' columns side by side; commit then takes them into the
// window.
func (s *store) reserve(w int, lines, times []int64) {
	if w > s.width {
		s.width = w
		s.out = make([]uint32, w)
	}
	for r := range lines {
		g := s.head + s.n + r
		if g == len(s.blocks)*blockRows {
			s.blocks = append(s.blocks, s.newBlock())
		}
		b, i := s.blocks[g/blockRows], g%blockRows
		if i == 0 {
			b.line0, b.time0 = lines[r], times[r]
		}
		b.setMeta(i, rowMeta{line: lines[r], time: times[r]})
		if i == 0 || r == 0 {
			for len(b.width) < w {
				b.width = append(b.width, 0)
				b.cols = append(b.cols, nil)
			}
		}
	}
}

// putColumn writes ids as field j's ids of the records from window index
// lo on, in rows reserve made (each field's goroutine its own column).
// It goes a block at a time: the column is widened once for the run's
// largest id, then written in one loop of its width (id by id, through
// put, this was 7% of a report's CPU). Writing absent (0) over a slot that
// holds absent changes nothing.
func (s *store) putColumn(j, lo int, ids []uint32) {
	for len(ids) > 0 {
		b, i := s.at(lo)
		run := ids[:min(len(ids), blockRows-i)]
		ids, lo = ids[len(run):], lo+len(run)
		var top uint32
		for _, id := range run {
			top = max(top, id)
		}
		if top == absent {
			continue
		}
		for len(b.width) <= j {
			b.width = append(b.width, 0)
			b.cols = append(b.cols, nil)
		}
		if need := idWidth(top); need > b.width[j] {
			b.widen(j, need)
		}
		c := b.cols[j]
		switch b.width[j] {
		case 1:
			c = c[i : i+len(run)]
			for r, id := range run {
				c[r] = byte(id)
			}
		case 2:
			c = c[2*i : 2*(i+len(run))]
			for r, id := range run {
				binary.LittleEndian.PutUint16(c[2*r:], uint16(id))
			}
		default:
			c = c[4*i : 4*(i+len(run))]
			for r, id := range run {
				binary.LittleEndian.PutUint32(c[4*r:], id)
			}
		}
	}
}

// pushed is the number of rows ever pushed (or committed).
func (s *store) pushed() int { return s.gone + s.n }

// commit takes the k rows reserve made into the window.
func (s *store) commit(k int) { s.n += k }

// put writes id as record r's id of field j, widening the column as
// needed; the slot must still hold absent (each row is written once).
func (b *block) put(j, r int, id uint32) {
	for len(b.width) <= j {
		b.width = append(b.width, 0)
		b.cols = append(b.cols, nil)
	}
	w := b.width[j]
	if need := idWidth(id); need > w {
		b.widen(j, need)
		w = need
	}
	c := b.cols[j]
	switch w {
	case 1:
		c[r] = byte(id)
	case 2:
		c[2*r], c[2*r+1] = byte(id), byte(id>>8)
	default:
		c[4*r], c[4*r+1], c[4*r+2], c[4*r+3] = byte(id), byte(id>>8), byte(id>>16), byte(id>>24)
	}
}

// dropColumn empties field j's column in every block: its ids are kept
// elsewhere (a flat identifier's list) until setColumn writes them back.
func (s *store) dropColumn(j int) {
	for _, b := range s.blocks {
		if j < len(b.width) {
			b.width[j], b.cols[j] = 0, nil
		}
	}
	if s.spare != nil && j < len(s.spare.width) {
		s.spare.width[j], s.spare.cols[j] = 0, nil
	}
}

// setColumn writes ids as field j's column of the window records lo ..
// lo+len(ids)−1, whose column dropColumn emptied.
func (s *store) setColumn(j, lo int, ids []uint32) {
	if len(ids) > 0 && j >= s.width {
		s.width = j + 1
		s.out = make([]uint32, s.width)
	}
	s.putColumn(j, lo, ids)
}

// column returns field j's ids for the window records lo .. hi−1, oldest
// first, in dst (grown as needed). It decodes that one column only, so its
// cost is hi−lo whatever the number of fields: scans that need one or two
// fields (determinants, surprisal, pair tables started late) read columns,
// never whole rows.
func (s *store) column(j, lo, hi int, dst []uint32) []uint32 {
	n := hi - lo
	if cap(dst) < n {
		dst = make([]uint32, n)
	}
	dst = dst[:n]
	s.decoded.Add(int64(n))
	for i := 0; i < n; {
		b, r := s.at(lo + i)
		k := min(blockRows-r, n-i)
		out := dst[i : i+k]
		i += k
		if j >= len(b.width) {
			clear(out)
			continue
		}
		c := b.cols[j]
		switch b.width[j] {
		case 0:
			clear(out)
		case 1:
			for x := range out {
				out[x] = uint32(c[r+x])
			}
		case 2:
			c = c[2*r : 2*(r+k)]
			for x := range out {
				out[x] = uint32(c[2*x]) | uint32(c[2*x+1])<<8
			}
		default:
			c = c[4*r : 4*(r+k)]
			for x := range out {
				out[x] = uint32(c[4*x]) | uint32(c[4*x+1])<<8 | uint32(c[4*x+2])<<16 | uint32(c[4*x+3])<<24
			}
		}
	}
	return dst
}
