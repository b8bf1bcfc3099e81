package model

import (
	"math"
	"sort"
)

// TimelineEntry is one finding along log time: a rule that broke, a field
// whose values shifted, a field that stopped (gone) or started (new) being
// logged, with the first and last record where it was seen.
//
// For "broken", First and Last are the first and last records breaking the
// rule within the changed stretch and Count how many broke it there; for
// "shift", the first and last records of the stretch and Count its records;
// for "gone", the first and last records lacking the field and Count their
// number; for "new", the first and last records having it and Count those.
type TimelineEntry struct {
	Kind  string // broken, shift, gone, new
	Field string
	Given string // broken rules only
	First Trace
	Last  Trace
	Count int
}

// Trace says where a record came from: its input, line within it, and
// time (Unix nanoseconds: the record's own time, else its arrival).
type Trace struct {
	File string
	Line int64
	Time int64
}

// Timeline kinds.
const (
	TimelineBroken = "broken"
	TimelineShift  = "shift"
	TimelineGone   = "gone"
	TimelineNew    = "new"
)

// TimelineMethod names the change-point method, for outputs to cite.
const TimelineMethod = "CUSUM (Page 1954), two-phase, robust in-control level"

// TimelineMax bounds the entries a timeline keeps.
const TimelineMax = 100

// Timeline bounds and thresholds: the window is cut into timelineChunks
// chunks of at least timelineMinChunk records. A rule is followed when its
// value mapping (each Given value's most frequent Target value) covers at
// least ruleMinCover of the records having Given; a stretch of a rule
// counts when its breaks exceed the usual rate by ruleMinExcess of records
// and number at least ruleMinBreaks. A field's distribution is followed
// when it has at most shiftMaxValues values. A run of records lacking a
// field counts as gone (or, at the start, as not yet new) when its length
// times the field's rate elsewhere is at least goneExpected: the chance of
// such a run by luck is then below e^−goneExpected (Poisson).
const (
	timelineChunks   = 400
	timelineMinChunk = 200
	ruleMinCover     = 0.98
	ruleMinExcess    = 0.001
	ruleMinBreaks    = 10
	shiftMaxValues   = 64
	goneExpected     = 20
)

// Timeline finds the window's findings along log time, with no baseline:
// change points (see changepoint.go) in every near-exact rule's share of
// breaking records and in every few-valued field's distribution, and runs
// of records lacking a field. sources names the inputs in the order they
// were read; a record whose line number is not above the previous one's
// starts the next input. s is a snapshot of the window.
//
// It scans every record of the window once: O(records·(fields + rules)).
func (m *Model) Timeline(s *Snapshot, sources []string) []TimelineEntry {
	m.realizePairs()
	n := m.st.n
	if n == 0 {
		return []TimelineEntry{}
	}
	size := max(timelineMinChunk, (n+timelineChunks-1)/timelineChunks)
	chunks := (n + size - 1) / size
	sc := &timelineScan{m: m, s: s, n: n, size: size, chunks: chunks}
	sc.rules = m.timelineRules(s, chunks)
	sc.dists = m.timelineDists(s, chunks)
	sc.gaps = make([]fieldGaps, len(m.fields))
	for i := range sc.gaps {
		sc.gaps[i].last = noRow
	}
	sc.scan(sources)
	var out []TimelineEntry
	gone := map[string]bool{}
	for i := range m.fields {
		for _, e := range sc.gapEntries(i) {
			gone[e.Field] = true
			out = append(out, e)
		}
	}
	for _, r := range sc.rules {
		out = append(out, sc.ruleEntries(r)...)
	}
	for _, d := range sc.dists {
		if !gone[m.fields[d.idx].name] {
			out = append(out, sc.distEntries(d)...)
		}
	}
	sort.SliceStable(out, func(i, j int) bool {
		a, b := out[i], out[j]
		if a.First.File != b.First.File {
			return sc.fileRank[a.First.File] < sc.fileRank[b.First.File]
		}
		return a.First.Line < b.First.Line
	})
	if len(out) > TimelineMax {
		out = out[:TimelineMax]
	}
	if out == nil {
		out = []TimelineEntry{}
	}
	return out
}

// timelineScan is one pass of Timeline over the window.
type timelineScan struct {
	m               *Model
	s               *Snapshot
	n, size, chunks int
	rules           []*ruleSeries
	dists           []*distSeries
	gaps            []fieldGaps
	tracer          func(age int) Trace
	fileRank        map[string]int
}

// ruleSeries follows Given → Target through the chunks.
type ruleSeries struct {
	t, g   int
	expect []uint32 // by Given id: the usual Target id
	has    []int    // by chunk: records with a Given value in expect
	broke  []int    // by chunk: of those, records with another Target
	first  []int    // by chunk: row of the first break (−1: none)
	last   []int    // by chunk: row of the last break
}

const noExpect = ^uint32(0) - 1

// distSeries follows one field's distribution through the chunks.
type distSeries struct {
	idx    int
	bucket []int // by value id: bucket (0: absent)
	counts [][]float64
}

// fieldGaps keeps a field's runs of records without it.
type fieldGaps struct {
	last    int // row of the last record with the field (noRow: none yet)
	present int
	firstAt int
	runs    []segment // rows [start, end) lacking the field, longest kept
}

const maxRuns = 8

func (m *Model) timelineRules(s *Snapshot, chunks int) []*ruleSeries {
	// Each pair, both ways, is judged on its own (spread over the cores),
	// into its own slot: the rules come out in pair order.
	found := make([]*ruleSeries, 2*len(m.pairs))
	spread(parallelMin*len(found), len(found), func(i int) {
		pr := &m.pairs[i/2]
		t, g := pr.a, pr.b
		if i%2 == 1 {
			t, g = pr.b, pr.a
		}
		found[i] = m.timelineRule(s, chunks, pr, t, g)
	})
	var out []*ruleSeries
	for _, r := range found {
		if r != nil {
			out = append(out, r)
		}
	}
	return out
}

// timelineRule is the rule g → t of pair pr, nil when there is none to
// follow.
func (m *Model) timelineRule(s *Snapshot, chunks int, pr *pair, t, g int) *ruleSeries {
	ft, fg := &s.Fields[t], &s.Fields[g]
	if ft.Kind == Constant || fg.Kind == Constant || ft.Kind == Identifier || fg.Kind == Identifier ||
		fg.Distinct*20 > m.st.n || (ft.Synthetic != nil && ft.Synthetic.Source == fg.Name) ||
		(fg.Synthetic != nil && fg.Synthetic.Source == ft.Name) {
		return nil
	}
	// By Given id: its most frequent Target id, that one's count, and the
	// records with the Given value (a slice: ids are dense).
	type best struct {
		id   uint32
		c, n int32
	}
	by := make([]best, len(m.fields[g].counts))
	pr.m.each(func(k uint64, c int32) {
		gi, ti := uint32(k>>32), uint32(k)
		if g == pr.b {
			gi, ti = ti, gi
		}
		if gi == absent || gi == overflow || int(gi) >= len(by) {
			return
		}
		b := &by[gi]
		b.n += c
		if c > b.c {
			b.id, b.c = ti, c
		}
	})
	cover, total := 0, 0
	expect := make([]uint32, len(m.fields[g].counts))
	for gi := range by {
		b := &by[gi]
		expect[gi] = noExpect
		if b.n == 0 || b.id == absent {
			// "Mostly absent" is no rule about values (a rare field):
			// its stretches show as shifts instead.
			continue
		}
		cover += int(b.c)
		total += int(b.n)
		expect[gi] = b.id
	}
	if total == 0 || cover == total || float64(cover) < ruleMinCover*float64(total) {
		return nil
	}
	r := &ruleSeries{t: t, g: g, expect: expect, has: make([]int, chunks), broke: make([]int, chunks),
		first: make([]int, chunks), last: make([]int, chunks)}
	for i := range r.first {
		r.first[i] = -1
	}
	return r
}

func (m *Model) timelineDists(s *Snapshot, chunks int) []*distSeries {
	var out []*distSeries
	for i, f := range m.fields {
		fs := &s.Fields[i]
		if fs.Kind == Constant || fs.Kind == Identifier || fs.Timestamp || fs.Distinct > shiftMaxValues || f.hashed() {
			continue
		}
		d := &distSeries{idx: i, bucket: make([]int, len(f.counts)), counts: make([][]float64, chunks)}
		k := 1
		for id := 1; id < len(f.counts); id++ {
			if f.counts[id] > 0 {
				d.bucket[id] = k
				k++
			}
		}
		for c := range d.counts {
			d.counts[c] = make([]float64, k)
		}
		out = append(out, d)
	}
	return out
}

// trace says where row r came from.
func (sc *timelineScan) trace(r int) Trace { return sc.tracer(sc.n - 1 - r) }

func (sc *timelineScan) gapEntries(i int) []TimelineEntry {
	g := &sc.gaps[i]
	f := &sc.s.Fields[i]
	if g.present == 0 || f.Timestamp {
		return nil
	}
	var out []TimelineEntry
	for _, run := range g.runs {
		l := run.end - run.start
		rate := float64(g.present) / float64(sc.n-l)
		if rate*float64(l) < goneExpected {
			continue
		}
		if run.start == 0 {
			out = append(out, TimelineEntry{Kind: TimelineNew, Field: f.Name, First: sc.trace(g.firstAt),
				Last: sc.trace(g.last), Count: g.present})
			continue
		}
		out = append(out, TimelineEntry{Kind: TimelineGone, Field: f.Name, First: sc.trace(run.start),
			Last: sc.trace(run.end - 1), Count: l})
	}
	return out
}

func (sc *timelineScan) ruleEntries(rs *ruleSeries) []TimelineEntry {
	x := make([]float64, sc.chunks)
	total := 0
	for k := range x {
		if rs.has[k] > 0 {
			x[k] = float64(rs.broke[k]) / float64(rs.has[k])
		}
		total += rs.has[k]
	}
	if len(x) < 4 {
		return nil
	}
	mu0 := quantile(x, 0.25)
	per := float64(total) / float64(sc.chunks) // records with Given per chunk
	sigma := math.Max(math.Sqrt(mu0*(1-mu0)/per), 1/per)
	segs := cusumAt(x, mu0, sigma)
	var out []TimelineEntry
	for _, sg := range segs {
		has, n, first, last := 0, 0, -1, -1
		for k := sg.start; k < sg.end; k++ {
			has += rs.has[k]
			n += rs.broke[k]
			if rs.first[k] >= 0 && first < 0 {
				first = rs.first[k]
			}
			if rs.broke[k] > 0 {
				last = rs.last[k]
			}
		}
		if n < ruleMinBreaks || float64(n)/float64(max(has, 1))-mu0 < ruleMinExcess || first < 0 {
			continue
		}
		out = append(out, TimelineEntry{Kind: TimelineBroken, Field: sc.s.Fields[rs.t].Name, Given: sc.s.Fields[rs.g].Name,
			First: sc.trace(first), Last: sc.trace(last), Count: n})
	}
	return out
}

func (sc *timelineScan) distEntries(d *distSeries) []TimelineEntry {
	b := len(d.counts[0])
	all := make([]float64, b)
	for _, c := range d.counts {
		for j, v := range c {
			all[j] += v
		}
	}
	x := make([]float64, sc.chunks)
	for k, c := range d.counts {
		x[k] = gTestZ(c, all)
	}
	segs, _, _ := cusumSegments(x, 1)
	var out []TimelineEntry
	for _, sg := range segs {
		in, rest := make([]float64, b), append([]float64(nil), all...)
		nIn := 0.0
		for k := sg.start; k < sg.end; k++ {
			for j, v := range d.counts[k] {
				in[j] += v
				rest[j] -= v
				nIn += v
			}
		}
		nRest := float64(sc.n) - nIn
		if nRest <= 0 {
			continue
		}
		// The shift rule of Shift, the stretch against the rest of the
		// window.
		used := 0
		for j := range all {
			if all[j] > 0 {
				used++
			}
		}
		chance := float64(used-1) / (8 * math.Ln2) * (1/nIn + 1/nRest)
		if jsd := JensenShannon(in, rest); jsd < ShiftMinJSD || jsd < ShiftChanceFactor*chance {
			continue
		}
		lastRow := min(sg.end*sc.size, sc.n) - 1
		out = append(out, TimelineEntry{Kind: TimelineShift, Field: sc.s.Fields[d.idx].Name,
			First: sc.trace(sg.start * sc.size), Last: sc.trace(lastRow), Count: lastRow + 1 - sg.start*sc.size})
	}
	return out
}

// gTestZ is the G statistic of counts c against the proportions of all,
// G = 2·Σ O·ln(O/E), which is χ² with ν = B−1 degrees of freedom when c
// is a sample of all's distribution (Wilks 1938), turned into a standard
// normal z by the Wilson–Hilferty cube root (Wilson and Hilferty 1931):
// z = ((G/ν)^(1/3) − (1 − 2/(9ν))) / √(2/(9ν)).
func gTestZ(c, all []float64) float64 {
	n, total := 0.0, 0.0
	nu := -1
	for j := range c {
		n += c[j]
		total += all[j]
		if all[j] > 0 {
			nu++
		}
	}
	if n == 0 || total == 0 || nu < 1 {
		return 0
	}
	g := 0.0
	for j, o := range c {
		if o > 0 {
			g += 2 * o * math.Log(o/(n*all[j]/total))
		}
	}
	v := float64(nu)
	a := 2 / (9 * v)
	return (math.Cbrt(math.Max(g, 0)/v) - (1 - a)) / math.Sqrt(a)
}
