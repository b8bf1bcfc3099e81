package model

import (
	"context"
	"math"
	"sync/atomic"
	"time"

	"bitsift/parse"
)

// Options tune a Model. The zero value of a field means its default.
type Options struct {
	Window Window
	// MaxFields caps how many field names are tracked at all; names past
	// it are counted as left out (default 1024).
	MaxFields int
	// MaxPairFields caps how many fields are tracked in pairs (default 64):
	// pair tables cost O(k²) per record.
	MaxPairFields int
	// MaxDistinct caps the values interned per identifier field; past it
	// the field's distinct count and entropy are estimates (default 1<<20).
	MaxDistinct int
	// KeepText keeps the text of every value, identifiers' too, instead
	// of a hash past their first thousands (Counts needs the text to
	// sketch an identifier with a hash that is the same in every run).
	KeepText bool
	// NoIdentifiers keeps every field out of the identifier rule: its
	// values and its pair tables are kept whatever its share of distinct
	// values. For the profile of a shard (a worker's partition and time
	// bucket), where a field may look like an identifier over the shard's
	// few records and not over the whole: merging decides on the totals
	// (SnapshotFromCounts), which needs every pair's cells from every
	// shard. Memory then grows with the shard's records, not its window.
	NoIdentifiers bool
	// Headless says the model's owner takes few snapshots (a report or a
	// plan, one at the end): over a window that keeps everything or the
	// last N records, an identifier may then be kept as a list of hashes
	// sorted when a snapshot asks, instead of a table kept exact as it
	// goes (flatids.go). A screen, snapshotting several times a second, leaves
	// it unset.
	Headless bool
}

func (o Options) withDefaults() Options {
	if o.MaxFields <= 0 {
		o.MaxFields = 1024
	}
	if o.MaxPairFields <= 0 {
		o.MaxPairFields = 64
	}
	if o.MaxDistinct <= 0 {
		o.MaxDistinct = 1 << 20
	}
	return o
}

// Identifier rule. A field is an identifier when, over at least
// identMinPresent records that have it, it has at least identEnter distinct
// values per record (at most two records per value on average); it stops
// being one below identLeave. A field like that cannot reliably determine
// anything (every field looks derived from a unique id), and its pair tables
// would cost as much as the window itself, so it is left out of pairs.
const (
	identMinPresent = 32
	identEnter      = 0.5
	identLeave      = 0.35
	reclassEvery    = 1024
	hashMinDistinct = 4096
	hashMinRounds   = 4
)

// pair is the joint table of fields a < b (indices into Model.fields).
// Cell keys are id(a)<<32 | id(b).
type pair struct {
	a, b int
	m    *cellMap
	// virt: field c (a or b) is constant, and m is nil: see constpairs.go.
	virt bool
	c    int
}

// Model holds the window's records and every table over them. It is not
// safe for concurrent use: one goroutine owns it and hands out Snapshots.
type Model struct {
	opt    Options
	fields []*field
	byName map[string]int
	pairs  []pair
	pairAt map[[2]int]int // (a,b) → index in pairs

	st      store
	seen    int64 // records ever added
	maxTime int64

	leftOut      map[string]struct{} // names past MaxFields (up to a cap)
	leftOutCount int64               // records that had a left-out field

	cur  []uint32
	mark []uint32 // mark[i] == gen: field i was set in the current record
	hint []int    // hint[i]: the field the i-th key of the last record named
	gen  uint32

	sinceReclass int
	batch        batchState
	// denseSpare is the room left for sparse pair matrices (cellmap.go).
	denseSpare atomic.Int64
	// lastDetWork is the work the last determinant search did (tests).
	lastDetWork int

	// synthetic names the fields bitsift makes itself (see DeclareSynthetic).
	synthetic map[string]Synthetic
	base      baselines

	// ctx is the context of the snapshot being taken (SnapshotContext);
	// nil otherwise.
	ctx context.Context
}

// New returns an empty model.
func New(opt Options) *Model {
	m := &Model{
		opt:     opt.withDefaults(),
		byName:  make(map[string]int),
		pairAt:  make(map[[2]int]int),
		leftOut: make(map[string]struct{}),
	}
	m.denseSpare.Store(denseSpare)
	return m
}

// Window is the window the model covers.
func (m *Model) Window() Window { return m.opt.Window }

// Len is the number of records in the window.
func (m *Model) Len() int { return m.st.n }

// Seen is the number of records ever added.
func (m *Model) Seen() int64 { return m.seen }

// Add takes one record into the window, evicting what the window no longer
// covers. line is the record's line number in its source and t its time
// (record time, else arrival time), in Unix nanoseconds.
func (m *Model) Add(rec *parse.Record, line int64, t int64) {
	m.capFlat(1)
	m.gen++
	if m.gen == 0 { // wrapped: old marks could collide
		clear(m.mark)
		m.gen = 1
	}
	clear(m.cur)
	width := 0
	for i := 0; i < rec.Len(); i++ {
		key := rec.Key(i)
		// Records of one stream mostly list their keys in the same order:
		// try the field the i-th key was last time before hashing it.
		var idx int
		if i < len(m.hint) && m.hint[i] < len(m.fields) && m.fields[m.hint[i]].name == string(key) {
			idx = m.hint[i]
		} else {
			var ok bool
			idx, ok = m.byName[string(key)]
			if !ok {
				idx = m.newField(string(key))
				if idx < 0 {
					continue
				}
			}
			if i < len(m.hint) {
				m.hint[i] = idx
			} else if i < 256 {
				m.hint = append(m.hint, idx)
			}
		}
		if m.mark[idx] == m.gen {
			continue // a repeated key: the first one counts
		}
		m.mark[idx] = m.gen
		m.cur[idx] = m.fields[idx].addAt(rec.Value(i), m.opt.MaxDistinct, m.st.pushed())
		if idx >= width {
			width = idx + 1
		}
	}
	m.st.push(m.cur[:width], rowMeta{line: line, time: t})
	// The pair loop is the hottest of the model: the dense update is
	// written out here (cellMap.incDense, inlined by hand) with the
	// c·log c delta read straight from the first table chunk.
	cur, tab := m.cur, clogc0
	for i := range m.pairs {
		p := &m.pairs[i]
		if p.virt {
			continue
		}
		cm := p.m
		a, b := uint64(cur[p.a]), uint64(cur[p.b])
		if a < cm.dh && b < cm.dw {
			j := a*cm.dw + b
			c := cm.dense[j]
			if uint32(c) < chunkSize-1 {
				cm.s += tab[c+1] - tab[c]
			} else {
				cm.s += up(int64(c))
			}
			if c == 0 {
				cm.len++
			}
			cm.dense[j] = c + 1
			continue
		}
		cm.inc(a<<32 | b)
	}
	m.seen++
	if t > m.maxTime {
		m.maxTime = t
	}
	m.evict()
	m.checkVirtual()
	m.sinceReclass++
	if m.sinceReclass >= reclassEvery {
		m.sinceReclass = 0
		m.reclassify()
	}
	m.afterAdd()
}

func (m *Model) evict() {
	switch m.opt.Window.Kind {
	case WindowRecords:
		for m.st.n > m.opt.Window.Records {
			m.popOldest()
		}
	case WindowDuration:
		d := m.opt.Window.Duration.Nanoseconds()
		for m.st.n > 1 && m.maxTime-m.st.metaAt(0).time > d {
			m.popOldest()
		}
		m.st.shrink()
	}
}

// popOldest takes the oldest record off every table.
func (m *Model) popOldest() {
	row := m.st.row(0)
	for i, id := range row {
		if id != absent && i < len(m.fields) {
			m.fields[i].remove(id)
		}
	}
	for _, f := range m.fields {
		if f.flat != nil {
			f.evictFlat(m.st.gone)
		}
	}
	for i := range m.pairs {
		if p := &m.pairs[i]; !p.virt {
			p.m.dec(uint64(idAt(row, p.a))<<32 | uint64(idAt(row, p.b)))
		}
	}
	m.st.pop()
}

func idAt(row []uint32, i int) uint32 {
	if i < len(row) {
		return row[i]
	}
	return absent
}

// newField creates a field; every record already in the window lacks it.
// It returns -1 when the field cap is reached.
func (m *Model) newField(name string) int {
	if len(m.fields) >= m.opt.MaxFields {
		if len(m.leftOut) < 100000 {
			m.leftOut[name] = struct{}{}
		}
		m.leftOutCount++
		return -1
	}
	idx := len(m.fields)
	f := newField(name, idx)
	if s, ok := m.synthetic[name]; ok {
		f.synth = &s
	}
	m.fields = append(m.fields, f)
	m.byName[f.name] = idx
	m.cur = append(m.cur, 0)
	m.mark = append(m.mark, 0)
	if m.trackedCount() < m.opt.MaxPairFields {
		m.track(idx)
	}
	return idx
}

func (m *Model) trackedCount() int {
	n := 0
	for _, f := range m.fields {
		if f.tracked {
			n++
		}
	}
	return n
}

// track starts pair tables between field idx and every tracked field,
// filled from the window's records.
func (m *Model) track(idx int) {
	f := m.fields[idx]
	if f.tracked || f.timestamp {
		return
	}
	m.unflatten(idx)
	f.tracked = true
	var added []int
	for j, g := range m.fields {
		if j == idx || !g.tracked {
			continue
		}
		a, b := min(idx, j), max(idx, j)
		m.pairAt[[2]int{a, b}] = len(m.pairs)
		m.pairs = append(m.pairs, pair{a: a, b: b, m: m.newPairTable()})
		added = append(added, len(m.pairs)-1)
	}
	if len(added) == 0 || m.st.n == 0 {
		return
	}
	// Column by column: the new field's column once, then each partner's.
	own := m.st.column(idx, 0, m.st.n, nil)
	var other []uint32
	for _, pi := range added {
		p := &m.pairs[pi]
		j := p.a + p.b - idx
		other = m.st.column(j, 0, m.st.n, other)
		for r, id := range own {
			a, b := id, other[r]
			if p.a != idx {
				a, b = b, a
			}
			p.m.inc(uint64(a)<<32 | uint64(b))
		}
	}
}

// untrack drops the pair tables of field idx.
func (m *Model) untrack(idx int) {
	f := m.fields[idx]
	if !f.tracked {
		return
	}
	f.tracked = false
	kept := m.pairs[:0]
	for _, p := range m.pairs {
		if p.a != idx && p.b != idx {
			kept = append(kept, p)
		} else if !p.virt {
			p.m.release()
		}
	}
	clear(m.pairs[len(kept):])
	m.pairs = kept
	clear(m.pairAt)
	for i, p := range m.pairs {
		m.pairAt[[2]int{p.a, p.b}] = i
	}
}

// reclassify applies the identifier rule with hysteresis, moving fields in
// and out of pair tracking.
func (m *Model) reclassify() {
	m.reclassifyFlat()
	for i, f := range m.fields {
		ratio := float64(f.distinct+f.overflowed) / math.Max(1, float64(f.present))
		switch {
		case !f.ident && !m.opt.NoIdentifiers && f.present >= identMinPresent && ratio >= identEnter:
			f.ident = true
			m.untrack(i)
		case f.ident && f.overflowed == 0 && (ratio < identLeave || f.present == 0):
			f.ident = false
		}
		// Values are hashed only once an identifier holds hashMinDistinct
		// of them or stayed one over hashMinRounds reclassifications: a field that looks like one over its first records
		// (a numeric field such as a latency) keeps its text, which the
		// baseline profile, shifts and surprising records need, and stops
		// being an identifier as the values repeat.
		if f.ident {
			f.identRounds++
		} else {
			f.identRounds = 0
		}
		if f.ident && !f.hashed() && !m.opt.KeepText && (f.distinct >= hashMinDistinct || f.identRounds >= hashMinRounds) {
			f.hashValues()
		}
		if f.ident && f.byHash != nil && f.overflowed == 0 && m.flatOK() &&
			float64(f.distinct) >= flatEnter*float64(f.present) && int(f.present) <= m.opt.MaxDistinct/2 {
			m.flatten(i)
		}
	}
	for i, f := range m.fields {
		if !f.ident && !f.tracked && !f.timestamp && m.trackedCount() < m.opt.MaxPairFields {
			m.track(i)
		}
	}
	m.virtualizePairs()
}

// Flush reclassifies fields now rather than at the next multiple of
// reclassEvery records; call it before a final snapshot.
func (m *Model) Flush() {
	m.sinceReclass = 0
	m.reclassify()
}

// Rebuild recomputes every table from the window's records: a reference
// for tests of the incremental updates.
func (m *Model) Rebuild() *Model {
	m.unflattenAll()
	r := New(m.opt)
	r.opt.Window = Window{Kind: WindowAll}
	for n, s := range m.synthetic {
		r.DeclareSynthetic(n, s)
	}
	names := make([]string, len(m.fields))
	for i, f := range m.fields {
		names[i] = f.name
	}
	var rec parse.Record
	for i := 0; i < m.st.n; i++ {
		rec.Reset()
		for j, id := range m.st.row(i) {
			if id != absent && id != overflow && j < len(m.fields) {
				rec.AddString(names[j], m.fields[j].replayValue(id))
			}
		}
		meta := m.st.metaAt(i)
		r.Add(&rec, meta.line, meta.time)
	}
	// Fields that the window no longer holds, in the same order.
	for _, n := range names {
		if _, ok := r.byName[n]; !ok {
			r.newField(n)
		}
	}
	r.Flush()
	return r
}

// now is a seam for tests.
var now = time.Now
