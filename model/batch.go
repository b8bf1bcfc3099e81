package model

import (
	"runtime"
	"slices"
	"sync"
	"sync/atomic"

	"bitsift/parse"
)

// Batches. AddBatch takes many records at once and leaves the model
// exactly as Add called on each in turn would (the same counts, the same
// figures; value ids may differ, as ids are reused in another order), but
// does the work in passes that run over all the records of a segment:
//
//  1. keys → fields, record by record (new fields start here, and their
//     pair tables are filled from the records already counted): a run of
//     records with the same keys in the same order (parse.Record.SameKeys)
//     shares one shape, where each field's value is in them;
//  2. the records' rows are made in the store (times, line numbers);
//  3. values → ids, field by field, the fields spread over the cores (each
//     field's table is its own, and its values go in input order, so the
//     overflow and hashing decisions are those of Add), each field then
//     writing its column of the new rows;
//  4. pair-major counting: each pair table is updated in one tight loop
//     over two columns, the pairs spread over the cores, with no Σ c·log c
//     kept per increment (cellMap.sum computes it when a snapshot asks);
//  5. the window evicts what it no longer covers, pair-major too.
//
// A segment ends where Add would do more than count: at a reclassification
// (every reclassEvery records), an entropy-history note, and a rolling
// baseline's roll (after the record that ends its period: a window's
// length of records, or of time). Evicting at the end of a segment rather
// than after each record evicts the same records: a records window keeps
// the newest N, and a duration window's newest time only grows.

// segmentMax is the most records of one segment.
const segmentMax = 2048

// parallelMin is the least work (values, or pair updates) a pass spreads
// over the cores: below it, starting goroutines costs more than it saves.
const parallelMin = 4096

// batchState is AddBatch's scratch, kept between calls.
type batchState struct {
	// shape[r] is record r's shape: its field f's value is its key
	// pos[shape[r]*w+f], none when -1 (w fields, those after step 1).
	shape []int32
	pos   []int32
	byKey [][]int32 // per shape, the field of each key (-1: none), made in step 1
	cols  []uint32  // cols[f*k+r]: record r's id of field f
	evict []uint32  // ids of evicted rows, column-major
	after []int     // see evictions
}

// AddBatch takes recs[i] (line lines[i], time times[i]) into the window in
// order, as Add does for each.
func (m *Model) AddBatch(recs []*parse.Record, lines, times []int64) {
	for len(recs) > 0 {
		k := m.segmentLen(times)
		if k == 1 {
			m.Add(recs[0], lines[0], times[0])
		} else {
			m.addSegment(recs[:k], lines[:k], times[:k])
		}
		recs, lines, times = recs[k:], lines[k:], times[k:]
	}
}

// segmentLen is how many of the next records (times) one segment may take
// (see above).
func (m *Model) segmentLen(times []int64) int {
	k := min(len(times), segmentMax, reclassEvery-m.sinceReclass, m.historyEvery()-m.base.sinceH)
	if m.base.mode == BaselineRolling {
		k = min(k, m.untilRoll(times))
	}
	return max(k, 1)
}

func (m *Model) historyEvery() int {
	every := historyEvery
	if m.opt.Window.Kind == WindowRecords {
		every = max(every, m.opt.Window.Records/historyLen)
	}
	return every
}

func (m *Model) addSegment(recs []*parse.Record, lines, times []int64) {
	b := &m.batch
	k := len(recs)
	m.capFlat(k)
	// 1. Keys to fields, once for each run of records with the same keys.
	b.shape = b.shape[:0]
	nShapes := 0
	values := 0
	shapeValues := 0 // the values a record of the last shape gives (its keys that name fields, once each)
	for r, rec := range recs {
		if r > 0 && (rec.KeysRepeat || rec.SameKeys(recs[r-1])) {
			b.shape = append(b.shape, b.shape[r-1])
			values += shapeValues
			continue
		}
		m.gen++
		if m.gen == 0 {
			clear(m.mark)
			m.gen = 1
		}
		if nShapes == len(b.byKey) {
			b.byKey = append(b.byKey, nil)
		}
		byKey := b.byKey[nShapes][:0]
		shapeValues = 0
		for i := 0; i < rec.Len(); i++ {
			idx := m.fieldOf(rec.Key(i), i)
			if idx >= 0 && m.mark[idx] != m.gen {
				m.mark[idx] = m.gen
				shapeValues++
			} else {
				idx = -1 // past the field cap, or a repeated key: the first one counts
			}
			byKey = append(byKey, int32(idx))
		}
		b.byKey[nShapes] = byKey
		b.shape = append(b.shape, int32(nShapes))
		nShapes++
		values += shapeValues
	}
	w := len(m.fields)
	b.pos = slices.Grow(b.pos[:0], nShapes*w)[:nShapes*w]
	for i := range b.pos {
		b.pos[i] = -1
	}
	for sh, byKey := range b.byKey[:nShapes] {
		for i, f := range byKey {
			if f >= 0 {
				b.pos[sh*w+int(f)] = int32(i)
			}
		}
	}
	// 2. Which records the window evicts after each record, as Add would.
	nOld := m.st.n
	e := m.evictions(times)
	// The segment's rows are made in the store (times and line numbers);
	// each field writes its own column of them below.
	m.st.reserve(w, lines, times)
	for _, t := range times {
		m.maxTime = max(m.maxTime, t)
	}
	// 3. Values to ids, field by field, each field's evictions interleaved
	// where Add does them, so that its ids and free list come out as Add's;
	// then the field's ids into the store.
	if cap(b.cols) < k*w {
		b.cols = make([]uint32, k*w)
	}
	cols := b.cols[:k*w] // cols[f*k+r]: record r's id of field f
	if cap(b.evict) < e*w {
		b.evict = make([]uint32, e*w)
	}
	ev := b.evict[:e*w]
	old := min(e, nOld) // evicted records from before the segment
	gone0 := m.st.gone  // the window's first record is the gone0-th pushed
	for f := 0; f < w; f++ {
		m.st.column(f, 0, old, ev[f*e:f*e+old])
	}
	maxD := m.opt.MaxDistinct
	spread(values+e, w, func(f int) {
		fl := m.fields[f]
		col := ev[f*e : (f+1)*e]
		ids := cols[f*k : (f+1)*k]
		clear(ids)
		gone := 0
		for r := 0; r < k; r++ {
			if i := b.pos[int(b.shape[r])*w+f]; i >= 0 {
				ids[r] = fl.addAt(recs[r].Value(int(i)), maxD, gone0+nOld+r)
			}
			for ; gone < b.after[r]; gone++ {
				if gone >= old {
					col[gone] = ids[gone-nOld]
				}
				if id := col[gone]; id != absent {
					fl.remove(id)
				} else if fl.flat != nil {
					fl.evictFlat(gone0 + gone)
				}
			}
		}
		m.st.putColumn(f, nOld, ids)
	})
	m.st.commit(k)
	m.seen += int64(k)
	// 4. Pairs, pair-major: the segment's records in, the evicted out, each
	// pair's loop reading two short columns in order.
	spread((k+e)*len(m.pairs), len(m.pairs), func(i int) {
		p := &m.pairs[i]
		if p.virt {
			return // constant field: made when read (constpairs.go)
		}
		p.m.count(cols[p.a*k:(p.a+1)*k], cols[p.b*k:(p.b+1)*k])
		p.m.uncount(ev[p.a*e:(p.a+1)*e], ev[p.b*e:(p.b+1)*e])
	})
	for range e {
		m.st.pop()
	}
	if m.opt.Window.Kind == WindowDuration {
		m.st.shrink()
	}
	m.checkVirtual()
	m.sinceReclass += k
	if m.sinceReclass >= reclassEvery {
		m.sinceReclass = 0
		m.reclassify()
	}
	m.base.sinceH += k
	if m.base.sinceH >= m.historyEvery() {
		m.base.sinceH = 0
		m.noteEntropies()
	}
	m.maybeRoll()
}

// evictions fills b.after[r] with how many records Add would have evicted
// by the end of adding the segment's record r (records of the window
// before the segment first, then the segment's own), and returns the
// total.
func (m *Model) evictions(times []int64) int {
	b := &m.batch
	k, nOld := len(times), m.st.n
	b.after = append(b.after[:0], make([]int, k)...)
	gone := 0
	maxTime := m.maxTime
	for r := 0; r < k; r++ {
		n := nOld + r + 1 - gone
		switch m.opt.Window.Kind {
		case WindowRecords:
			if d := n - m.opt.Window.Records; d > 0 {
				gone += d
			}
		case WindowDuration:
			maxTime = max(maxTime, times[r])
			d := m.opt.Window.Duration.Nanoseconds()
			for ; n > 1; n-- {
				var t int64
				if gone < nOld {
					t = m.st.metaAt(gone).time
				} else {
					t = times[gone-nOld]
				}
				if maxTime-t <= d {
					break
				}
				gone++
			}
		}
		b.after[r] = gone
	}
	return gone
}

// fieldOf is the field index of the i-th key of a record, creating the
// field if new (-1 past the field cap). Records of one stream mostly list
// their keys in the same order: the field the i-th key was last time is
// tried before hashing.
func (m *Model) fieldOf(key []byte, i int) int {
	if i < len(m.hint) && m.hint[i] < len(m.fields) && m.fields[m.hint[i]].isNamed(key) {
		return m.hint[i]
	}
	idx, ok := m.byName[string(key)]
	if !ok {
		idx = m.newField(string(key))
		if idx < 0 {
			return -1
		}
	}
	if i < len(m.hint) {
		m.hint[i] = idx
	} else if i < 256 {
		m.hint = append(m.hint, idx)
	}
	return idx
}

// spread calls fn(i) for i in [0, n), on several goroutines when the work
// is at least parallelMin; each i runs once, on one goroutine.
func spread(work, n int, fn func(i int)) {
	workers := min(runtime.GOMAXPROCS(0), n)
	if work < parallelMin || workers < 2 {
		for i := 0; i < n; i++ {
			fn(i)
		}
		return
	}
	var next atomic.Int64
	run := func() {
		for {
			i := int(next.Add(1) - 1)
			if i >= n {
				return
			}
			fn(i)
		}
	}
	// The caller works too: one goroutine fewer to start and to schedule
	// beside the parsing workers.
	var wg sync.WaitGroup
	for range workers - 1 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			run()
		}()
	}
	run()
	wg.Wait()
}
