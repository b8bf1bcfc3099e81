package model

import (
	"math"
	"math/bits"
)

// Identifiers as a list of hashes. A headless run (Options.Headless: a
// report or a plan, which take one snapshot at the end) over the whole
// stream (WindowAll, nothing ever leaves) or a window of the last N records
// keeps a hashed identifier's values as one 64-bit hash per record, in
// record order, instead of a hash table of its distinct values: appending
// costs nothing like a probe into a table of a million entries (a cache
// miss each, and the table's doublings), a record leaving a window nothing
// like taking its value out of the table, and the list costs 9 bytes a
// record against about 36. The exact figures (distinct values, Σ c·log c)
// come from sorting a copy of the window's part of the list when a
// snapshot asks (settle). Records are placed by their sequence number
// (store.gone + their store index): over the whole stream the list holds
// them all; in a window it is a ring of a little more than the window,
// where a record's slot is taken by one that many records later.
//
// The identifier rule still sees exact counts. It needs them to decide that
// a field stops being an identifier (its share of distinct values falls
// below identLeave). f.distinct is kept a lower bound between settles: new
// records never lower the number of distinct values, and a record leaving
// a window lowers it by one at most, so each one that had the field takes
// one off. Only when that bound no longer proves the share above
// identLeave is the list settled again, exactly. A field whose exact share
// is then under flatLeave goes back to the table (unflatten), as does one
// that could reach MaxDistinct (past which values overflow, a decision
// made value by value), and every field before anything reads ids from the
// store: a flat field's store column is empty, its ids being made by
// unflatten. A settle that keeps a field listed finds a share of at least
// flatLeave, so over the whole stream the list grows by a factor of
// flatLeave/identLeave (1.43) or more before the next: the sorts of a
// whole run cost a few times the last. In a window of N records of unique
// values the bound reaches identLeave after about (1 − identLeave)·N
// records: a settle of the window every 0.65 N records.
//
// Entropy history notes (noteEntropies) taken while a field is flat are
// placeholders, filled by unflatten over the whole stream, which replays
// the list in order, and left as they are in a window (the records before
// it are gone). Neither is read: a field's history is read only for its
// shift against a baseline, which no hashed field has (fieldShift).

// flatEnter and flatLeave bound the share of distinct values of a flat
// identifier: it becomes flat at a reclassification with at least
// flatEnter, and leaves the list for the table when a settle finds less
// than flatLeave.
const (
	flatEnter = 0.6
	flatLeave = 0.5
)

const (
	flatChunkBits = 16
	flatChunkMask = 1<<flatChunkBits - 1
)

// flatIDs is a flat identifier's list: the hash and length of the value of
// the record of sequence number q, or 0 when the record lacks the field,
// at slot q (over the whole stream) or q mod ring (in a window). Chunks
// never move, so the list grows without copying. A length takes a byte;
// those of 255 and more are in long, by slot (a stand-in made by unflatten
// for a replay keeps its value's length, see replayValue).
type flatIDs struct {
	h    [][]uint64
	l    [][]uint8
	long map[int]uint32
	n    int // one past the last record listed (later ones lack the field)
	// ring is the number of slots of a window's list (0: the whole
	// stream's).
	ring int
	// settled: f.distinct and f.s were made exact when settled records
	// had been pushed (store.pushed).
	settled int
	// notes are the store sizes at which noteEntropies left a NaN in the
	// field's history, oldest first (at most historyLen).
	notes []int
}

// flatHash is the list's hash of a value: maphash, with 0 (absent in the
// list) moved to 1. Two values then share a hash with probability about
// n²/2^65, as in the table.
func flatHash(h uint64) uint64 {
	if h == 0 {
		return 1
	}
	return h
}

// slot is where record q is listed.
func (fl *flatIDs) slot(q int) int {
	if fl.ring > 0 {
		return q % fl.ring
	}
	return q
}

// put sets record q's hash and length; records between the last listed and
// q lack the field (in a ring, their slots are cleared of older records).
func (fl *flatIDs) put(q int, h uint64, l int) {
	if fl.ring > 0 {
		for p := max(fl.n, q-fl.ring); p < q; p++ {
			fl.set(fl.slot(p), 0, 0)
		}
	}
	fl.set(fl.slot(q), h, l)
	fl.n = max(fl.n, q+1)
}

func (fl *flatIDs) set(s int, h uint64, l int) {
	for s>>flatChunkBits >= len(fl.h) {
		fl.h = append(fl.h, make([]uint64, 1<<flatChunkBits))
		fl.l = append(fl.l, make([]uint8, 1<<flatChunkBits))
	}
	fl.h[s>>flatChunkBits][s&flatChunkMask] = h
	if l >= 255 {
		if fl.long == nil {
			fl.long = map[int]uint32{}
		}
		fl.long[s] = uint32(l)
		l = 255
	}
	fl.l[s>>flatChunkBits][s&flatChunkMask] = uint8(l)
}

// at is record q's hash and length (0, 0: it lacks the field). In a ring,
// q must be one of the window's records.
func (fl *flatIDs) at(q int) (uint64, uint32) {
	if q >= fl.n {
		return 0, 0
	}
	s := fl.slot(q)
	l := uint32(fl.l[s>>flatChunkBits][s&flatChunkMask])
	if l == 255 {
		l = fl.long[s]
	}
	return fl.h[s>>flatChunkBits][s&flatChunkMask], l
}

// runs calls fn with the hashes of records lo to hi−1 in order, a run of
// consecutive slots at a time (q0 the first record of the run); records
// past the last listed are not given.
func (fl *flatIDs) runs(lo, hi int, fn func(hs []uint64, q0 int)) {
	hi = min(hi, fl.n)
	for q := lo; q < hi; {
		s := fl.slot(q)
		chunk := fl.h[s>>flatChunkBits]
		k := min(len(chunk)-s&flatChunkMask, hi-q)
		if fl.ring > 0 {
			k = min(k, fl.ring-s)
		}
		fn(chunk[s&flatChunkMask:s&flatChunkMask+k], q)
		q += k
	}
}

// flatOK says whether this model may keep identifiers as lists: a headless
// model over the whole stream or a window of records.
func (m *Model) flatOK() bool {
	k := m.opt.Window.Kind
	return m.opt.Headless && (k == WindowAll || k == WindowRecords) && m.base.mode != BaselineRolling
}

// flatRing is the number of slots of a window's list: the window and one
// more (a record is listed before the one it pushes out leaves), and a
// segment's worth of slack.
func (m *Model) flatRing() int {
	if m.opt.Window.Kind == WindowRecords {
		return m.opt.Window.Records + segmentMax + 1
	}
	return 0
}

// addFlat is add for a flat field: record q (its sequence number) has
// value v.
func (f *field) addFlat(v []byte, q int) uint32 {
	f.flat.put(q, flatHash(hashBytes(v)), len(v))
	if len(f.samples) < 3 {
		f.samples = append(f.samples, string(v))
	}
	f.present++
	f.valueBytes += int64(len(v))
	return absent
}

// evictFlat takes record q, leaving the window, off a flat field: one
// value fewer, and one distinct value fewer at most (see above).
func (f *field) evictFlat(q int) {
	h, l := f.flat.at(q)
	if h == 0 {
		return
	}
	f.present--
	f.valueBytes -= int64(l)
	f.distinct = max(f.distinct-1, 0)
}

// flatten turns hashed identifier idx into a flat one, its list made from
// the store's column, which is then emptied.
func (m *Model) flatten(idx int) {
	f := m.fields[idx]
	fl := &flatIDs{ring: m.flatRing()}
	col := m.st.column(idx, 0, m.st.n, nil)
	for r, id := range col {
		if id != absent {
			fl.put(m.st.gone+r, flatHash(f.ids.hash(id)), int(f.ids.length(id)))
		}
	}
	fl.settled = m.st.pushed()
	f.s, f.big = f.sum(), nil // the list keeps no counts: s is whole
	m.st.dropColumn(idx)
	f.flat = fl
	f.byHash, f.ids, f.counts, f.free = nil, idChunks{}, nil, nil
}

// settle makes f.distinct and f.s exact for the window (a flat field's).
// Equal values have equal hashes, so the list is taken a slice of the hash
// space at a time (by the top bits: a value's records all fall in one
// slice), each slice gathered into a copy of at most settleSlice hashes,
// not the list. Within a slice the hashes are placed by their next bits (a
// counting pass over the list, then a placing one): equal hashes land in
// one bucket of a few, where an insertion sort brings them together and
// their runs are counted.
func (m *Model) settle(f *field) {
	fl := f.flat
	if fl == nil || fl.settled == m.st.pushed() {
		return
	}
	// The window's records.
	f.distinct, f.s = fl.count(m.st.gone, m.st.pushed(), int(f.present))
	fl.settled = m.st.pushed()
}

// settleTail raises f.distinct, a lower bound, to the distinct values of
// the records listed since the last settle, when that is more: the
// reclassification's first try over the whole stream, as it costs those
// records only (a field of unique values grows from the last settle by a
// factor of 1/identLeave before its bound runs out, so the tail is most of
// the list, and the whole is counted only when the tail does not prove
// enough). Over 1M demo lines this counts 3.3M hashes in all instead of
// 4.6M. f.s is left as it was. In a window it settles: there the bound
// runs out as records leave, and tails then whole windows counted more
// than whole windows alone (3.3M against 3.1M).
func (m *Model) settleTail(f *field) {
	fl := f.flat
	lo, hi := fl.settled, m.st.pushed()
	if fl.ring > 0 || fl.settled == hi {
		m.settle(f)
		return
	}
	d, _ := fl.count(lo, hi, hi-lo)
	f.distinct = max(f.distinct, d)
}

// count returns the number of distinct hashes of records lo to hi−1 and
// their Σ c·log c; n bounds how many of them have the field.
func (fl *flatIDs) count(lo, hi, n int) (distinct, s int64) {
	parts := 1
	for parts < 256 && n/parts > settleSlice {
		parts *= 2
	}
	pbits := bits.Len(uint(parts - 1))
	// The digit: the bits below the slice's, enough for about four hashes
	// a bucket, at most settleDigitBits.
	digit := min(max(bits.Len(uint(n/parts))-2, 8), settleDigitBits)
	dshift := 64 - pbits - digit
	// next[d]: where digit d's next hash goes; the buckets end where
	// the next begins.
	next := make([]int32, 1<<digit+1)
	var buf []uint64
	inPart := func(h uint64, part int) bool {
		return h != 0 && (pbits == 0 || int(h>>(64-pbits)) == part)
	}
	for part := range parts {
		clear(next)
		fl.runs(lo, hi, func(hs []uint64, _ int) {
			for _, h := range hs {
				if inPart(h, part) {
					next[h>>dshift&(1<<digit-1)+1]++
				}
			}
		})
		for d := 1; d < len(next); d++ {
			next[d] += next[d-1]
		}
		total := int(next[len(next)-1])
		if cap(buf) < total {
			buf = make([]uint64, total+total/16)
		}
		buf = buf[:total]
		fl.runs(lo, hi, func(hs []uint64, _ int) {
			for _, h := range hs {
				if inPart(h, part) {
					d := h >> dshift & (1<<digit - 1)
					buf[next[d]] = h
					next[d]++
				}
			}
		})
		// next[d] is now where bucket d ends.
		lo := 0
		for _, end := range next[:1<<digit] {
			b := buf[lo:end]
			lo = int(end)
			if len(b) > 64 {
				sortHashes(b) // a value of many records, or a rare crowd
			} else if len(b) > 1 {
				insertionSort(b)
			}
			for i := 0; i < len(b); {
				j := i + 1
				for j < len(b) && b[j] == b[i] {
					j++
				}
				distinct++
				s += clogc(int64(j - i))
				i = j
			}
		}
	}
	return distinct, s
}

// settleDigitBits is the widest digit settle places hashes by (1 MB of
// counts); settleSlice the most hashes a slice holds (8 MB): a million
// records are one slice, taken in two passes over the list. Slices of 2^18
// (2 MB) took 8 passes for a million and about twice as long
// (BenchmarkSettle: 33 → 21 ms).
const (
	settleDigitBits = 18
	settleSlice     = 1 << 20
)

// settleAll settles every flat field, side by side: before a snapshot or
// an export reads their figures.
func (m *Model) settleAll() {
	var flat []*field
	for _, f := range m.fields {
		if f.flat != nil && f.flat.settled != m.st.pushed() {
			flat = append(flat, f)
		}
	}
	spread(parallelMin*len(flat), len(flat), func(i int) { m.settle(flat[i]) })
}

// unflatten turns flat field idx back into a hashed identifier with a
// table: its ids are made by replaying the list in record order, written
// to the store's column, and its history placeholders filled.
func (m *Model) unflatten(idx int) {
	f := m.fields[idx]
	fl := f.flat
	if fl == nil {
		return
	}
	f.flat = nil
	f.byHash = newHashTable(int(f.distinct))
	f.counts = []int32{0}
	// Counted again as the list is replayed (to the same totals).
	f.distinct, f.s, f.present, f.valueBytes = 0, 0, 0, 0
	notes := fl.notes
	if fl.ring > 0 {
		notes = nil // the records before the window are gone (see above)
	}
	var noted []float64
	ids := make([]uint32, m.st.n)
	for r := range ids {
		if h, l := fl.at(m.st.gone + r); h != 0 {
			// No cap: a listed field stays under MaxDistinct (capFlat).
			ids[r], _ = f.addHash(h, int32(l), 0)
		}
		for len(notes) > 0 && notes[0] == r+1 {
			noted = append(noted, entropyFromS(int64(r+1), f.sum()+clogc(int64(r+1)-f.present)))
			notes = notes[1:]
		}
	}
	m.st.setColumn(idx, 0, ids)
	// The placeholders are the last NaNs of the history, in order.
	if h := m.base.hist[f.name]; len(noted) > 0 {
		for i, j := len(h)-1, len(noted)-1; i >= 0 && j >= 0; i-- {
			if math.IsNaN(h[i]) {
				h[i] = noted[j]
				j--
			}
		}
	}
}

// unflattenAll unflattens every flat field: before the store's columns are
// read whole (Rebuild, WithWindow).
func (m *Model) unflattenAll() {
	for i, f := range m.fields {
		if f.flat != nil {
			m.unflatten(i)
		}
	}
}

// capFlat unflattens the flat fields that k more records could take to
// MaxDistinct values, past which a new value overflows: a decision made
// value by value, which needs the table.
func (m *Model) capFlat(k int) {
	for i, f := range m.fields {
		if f.flat != nil && int(f.present)+k > m.opt.MaxDistinct {
			m.unflatten(i)
		}
	}
}

// reclassifyFlat applies the identifier rule's exit test to the flat
// fields with counts exact enough to decide it, unflattening those that
// may leave (see above): for the fields whose lower bound no longer proves
// their share above identLeave, first the records since the last settle
// are counted (settleTail), and those whose bound that does not restore
// are settled; side by side. It runs before reclassify reads the counts.
func (m *Model) reclassifyFlat() {
	unsure := func(f *field) bool {
		return f.flat != nil && float64(f.distinct) < identLeave*float64(f.present)
	}
	var tail, whole []int
	for i, f := range m.fields {
		if unsure(f) {
			tail = append(tail, i)
		}
	}
	spread(parallelMin*len(tail), len(tail), func(k int) { m.settleTail(m.fields[tail[k]]) })
	for _, i := range tail {
		if unsure(m.fields[i]) {
			whole = append(whole, i)
		}
	}
	spread(parallelMin*len(whole), len(whole), func(k int) { m.settle(m.fields[whole[k]]) })
	for _, i := range whole {
		if f := m.fields[i]; float64(f.distinct) < flatLeave*float64(f.present) {
			m.unflatten(i)
		}
	}
}

// sortHashes sorts hs. It is a radix sort, written here because a
// comparison sort (slices.Sort) of a million hashes took 5–10 times as
// long, and settling sorts every flat identifier's list. One pass in place
// on the top 8 bits (an American flag sort: each key swapped into its
// bucket), then each bucket sorted most-significant digit first (sortLow)
// through a scratch buffer the size of the largest bucket: about 1/256 of
// the keys, as hashes spread evenly, where a plain LSD sort would need a
// second array as large as the first.
func sortHashes(hs []uint64) {
	if len(hs) < 256 {
		insertionSort(hs)
		return
	}
	var count, next [256]int
	for _, h := range hs {
		count[h>>56]++
	}
	end := [256]int{}
	sum, widest := 0, 0
	for d, c := range count {
		next[d] = sum
		sum += c
		end[d] = sum
		widest = max(widest, c)
	}
	for d := range 256 {
		for next[d] < end[d] {
			h := hs[next[d]]
			for t := int(h >> 56); t != d; t = int(h >> 56) {
				hs[next[t]], h = h, hs[next[t]]
				next[t]++
			}
			hs[next[d]] = h
			next[d]++
		}
	}
	scratch := make([]uint64, widest)
	lo := 0
	for d := range 256 {
		sortLow(hs[lo:end[d]], scratch, 48)
		lo = end[d]
	}
}

// sortLow sorts hs, whose keys agree above bit shift+8, most-significant
// digit first: a counting pass on the 8 bits at shift, the keys scattered
// through scratch (at least as long as hs) and copied back, then each
// digit's keys sorted alike on the next 8 bits. Random hashes leave a few
// keys a digit after a pass or two, which an insertion sort finishes. An
// LSD sort with wide digits (tried first) cleared and summed its count
// table on every pass of every bucket, which on buckets of a thousand keys
// cost more than the keys: 9% of a report's CPU.
func sortLow(hs, scratch []uint64, shift int) {
	for len(hs) > 32 && shift >= 0 {
		var count [256]int
		for _, h := range hs {
			count[h>>shift&0xff]++
		}
		if count[hs[0]>>shift&0xff] == len(hs) {
			shift -= 8 // every key has the same digit here
			continue
		}
		sum := 0
		for d, c := range count {
			count[d], sum = sum, sum+c
		}
		// count[d] is where digit d's keys start; after the scatter it is
		// where they end.
		dst := scratch[:len(hs)]
		for _, h := range hs {
			d := h >> shift & 0xff
			dst[count[d]] = h
			count[d]++
		}
		copy(hs, dst)
		lo := 0
		for _, end := range count {
			if end-lo > 1 {
				sortLow(hs[lo:end], scratch, shift-8)
			}
			lo = end
		}
		return
	}
	insertionSort(hs)
}

func insertionSort(hs []uint64) {
	for i := 1; i < len(hs); i++ {
		for j := i; j > 0 && hs[j] < hs[j-1]; j-- {
			hs[j], hs[j-1] = hs[j-1], hs[j]
		}
	}
}
