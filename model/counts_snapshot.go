package model

import (
	"math"
	"sort"
)

// countsView is a CountTables read for a snapshot: per field its count
// vector (absent first) and whether its pairs may be used.
type countsView struct {
	ct      *CountTables
	n       int64
	vectors [][]int        // per field, absent first, for E[I]
	tracked []bool         // field i takes part in pairs
	pairOf  map[[2]int]int // (i, j), i < j → index in ct.Pairs
	byName  map[string]int
}

// SnapshotFromCounts builds the snapshot of the records ct counts: the same
// figures, kinds and best predictors a Model holding those records gives
// (see CountTables), without what needs the records themselves: Deep is
// ignored (no determinants, no surprising records), and there is no
// baseline comparison. Which fields are identifiers is decided from the
// counts by the identifier rule: a field the tables mark as one stays one
// down to identLeave, as a model's hysteresis keeps it.
func SnapshotFromCounts(ct *CountTables, opt SnapshotOptions) *Snapshot {
	if opt.TopValues == 0 {
		opt.TopValues = 10
	}
	n := ct.Records
	v := &countsView{ct: ct, n: n, pairOf: map[[2]int]int{}, byName: map[string]int{}}
	s := &Snapshot{Taken: now(), Window: Window{Kind: WindowAll}, Records: int(n), Seen: n,
		Oldest: ct.Oldest, Newest: ct.Newest}
	s.Fields = make([]FieldStats, len(ct.Fields))
	v.vectors = make([][]int, len(ct.Fields))
	v.tracked = make([]bool, len(ct.Fields))
	for i := range ct.Fields {
		fc := &ct.Fields[i]
		v.byName[fc.Name] = i
		fs := &s.Fields[i]
		v.fieldStats(fc, fs, opt.TopValues)
		v.tracked[i] = fs.Tracked
		if fc.Summary == nil || fc.Summary.Complete {
			v.vectors[i] = countVector(fc)
		}
	}
	k := len(s.Fields)
	s.joint, s.emi = nanMatrix(k), nanMatrix(k)
	s.emiApprox = make([]bool, k*k)
	for pi, p := range ct.Pairs {
		a, okA := v.byName[p.A]
		b, okB := v.byName[p.B]
		if !okA || !okB || a == b || !v.tracked[a] || !v.tracked[b] {
			continue
		}
		var cl int64
		for _, c := range p.N {
			cl += clogc(c)
		}
		h := entropyFromS(n, cl)
		s.joint[a][b], s.joint[b][a] = h, h
		e, approx := expectedMI(histOf(v.vectors[a]), histOf(v.vectors[b]))
		s.emi[a][b], s.emi[b][a] = e, e
		s.emiApprox[a*k+b], s.emiApprox[b*k+a] = approx, approx
		v.pairOf[[2]int{min(a, b), max(a, b)}] = pi
	}
	s.classify()
	if opt.Detail != "" {
		s.Detail = v.detail(s, opt)
	}
	if opt.Profile {
		s.Profile = v.profile(s)
	}
	return s
}

func nanMatrix(k int) [][]float64 {
	m := make([][]float64, k)
	flat := make([]float64, k*k)
	for i := range flat {
		flat[i] = math.NaN()
	}
	for i := range m {
		m[i] = flat[i*k : (i+1)*k]
	}
	return m
}

// countVector is a field's counts, absent first (when any).
func countVector(fc *FieldCounts) []int {
	var out []int
	if fc.Absent > 0 {
		out = append(out, int(fc.Absent))
	}
	src := fc.Counts
	if fc.Summary != nil {
		src = fc.Summary.Counts
	}
	for _, c := range src {
		if c > 0 {
			out = append(out, int(c))
		}
	}
	return out
}

// fieldStats fills fs from fc.
func (v *countsView) fieldStats(fc *FieldCounts, fs *FieldStats, top int) {
	n := v.n
	fs.Name = fc.Name
	fs.Present = int(n - fc.Absent)
	fs.Timestamp = fc.Timestamp
	if fc.Synthetic != nil {
		sy := *fc.Synthetic
		fs.Synthetic = &sy
	}
	var distinct, cl int64
	switch sm := fc.Summary; {
	case sm == nil || sm.Complete:
		for _, c := range countVector(fc) {
			cl += clogc(int64(c))
			distinct++
		}
		if fc.Absent > 0 {
			distinct--
		}
		if sm != nil {
			fs.Estimate = sm.Estimate
		}
	default:
		distinct = sm.Distinct
		cl = int64(math.Round(sm.CLogC*fixScale)) + clogc(fc.Absent)
		fs.Estimate = sm.Estimate
	}
	cells := distinct
	if fc.Absent > 0 {
		cells++
	}
	fs.Distinct = int(cells)
	fs.Entropy = entropyFromS(n, cl)
	fs.EntropyMM = MillerMadow(fs.Entropy, int(cells), int(n))
	if n > 0 {
		fs.BytesPerRecord = float64(int64(fs.Present)*int64(len(fc.Name))+fc.Bytes) / float64(n)
	}
	ratio := float64(distinct) / math.Max(1, float64(fs.Present))
	ident := (fs.Present >= identMinPresent && ratio >= identEnter) || (fc.Ident && ratio >= identLeave) ||
		(fc.Ident && fs.Estimate)
	switch {
	case cells <= 1:
		fs.Kind = Constant
	case ident:
		fs.Kind = Identifier
	default:
		fs.Kind = Informative
	}
	fs.Tracked = fc.Tracked && !ident && !fc.Timestamp && fc.Summary == nil
	if top > 0 {
		fs.Top = topOfCounts(fc, n, top)
	}
}

// topOfCounts is the field's most frequent values, absent included, as
// Model.top gives them.
func topOfCounts(fc *FieldCounts, n int64, k int) []ValueCount {
	out := make([]ValueCount, 0, len(fc.Values)+1)
	if fc.Absent > 0 {
		out = append(out, ValueCount{Count: int(fc.Absent), Absent: true})
	}
	for i, val := range fc.Values {
		if fc.Counts[i] > 0 {
			out = append(out, ValueCount{Value: val, Count: int(fc.Counts[i])})
		}
	}
	sortValues(out)
	if len(out) > k {
		out = out[:k]
	}
	return out
}

// cells calls f for each cell of the pair of fields i and j with the
// value indices (+1, 0 absent) of i and of j.
func (v *countsView) cells(i, j int, f func(vi, vj uint32, c int64)) bool {
	pi, ok := v.pairOf[[2]int{min(i, j), max(i, j)}]
	if !ok {
		return false
	}
	p := &v.ct.Pairs[pi]
	swap := v.byName[p.A] != i
	for x := range p.N {
		a, b := p.I[x], p.J[x]
		if swap {
			a, b = b, a
		}
		f(a, b, p.N[x])
	}
	return true
}

func (v *countsView) text(i int, id uint32) ValueCount {
	if id == 0 {
		return ValueCount{Absent: true}
	}
	fc := &v.ct.Fields[i]
	if int(id) > len(fc.Values) {
		return ValueCount{Value: "(not kept)"}
	}
	return ValueCount{Value: fc.Values[id-1]}
}

// detail is Model.detail from the pair's cells.
func (v *countsView) detail(s *Snapshot, opt SnapshotOptions) *Detail {
	fi, ok := v.byName[opt.Detail]
	if !ok {
		return nil
	}
	given := opt.DetailGiven
	if given == "" {
		given = s.Fields[fi].BestGiven
	}
	gi, ok := v.byName[given]
	if !ok || gi == fi {
		return nil
	}
	rows, top := opt.DetailRows, opt.DetailTop
	if rows <= 0 {
		rows = defaultDetailRows
	}
	if top <= 0 {
		top = defaultDetailTop
	}
	type cell struct {
		id uint32
		c  int
	}
	byG := map[uint32][]cell{}
	gCount := map[uint32]int{}
	if !v.cells(fi, gi, func(a, b uint32, c int64) {
		byG[b] = append(byG[b], cell{a, int(c)})
		gCount[b] += int(c)
	}) {
		return nil
	}
	var gs []ValueCount
	ids := map[string]uint32{}
	for id, c := range gCount {
		t := v.text(gi, id)
		t.Count = c
		gs = append(gs, t)
		ids[key(t)] = id
	}
	sortValues(gs)
	if len(gs) > rows {
		gs = gs[:rows]
	}
	d := &Detail{Field: v.ct.Fields[fi].Name, Given: v.ct.Fields[gi].Name}
	covered := 0
	for _, g := range gs {
		cs := byG[ids[key(g)]]
		counts := make([]int, len(cs))
		vals := make([]ValueCount, len(cs))
		for x, c := range cs {
			counts[x] = c.c
			vals[x] = v.text(fi, c.id)
			vals[x].Count = c.c
		}
		sortValues(vals)
		if len(vals) > top {
			vals = vals[:top]
		}
		d.Rows = append(d.Rows, DetailRow{Given: g, Top: vals, Entropy: EntropyOfCounts(counts)})
		covered += g.Count
	}
	d.OtherRecords = int(v.n) - covered
	return d
}

func key(v ValueCount) string {
	if v.Absent {
		return "\x00absent"
	}
	return v.Value
}

// profile is Model.buildProfile from the count tables.
func (v *countsView) profile(s *Snapshot) *Profile {
	p := &Profile{Source: "window", Records: int(v.n), Rules: []Rule{}}
	for i := range v.ct.Fields {
		fc, fs := &v.ct.Fields[i], &s.Fields[i]
		fp := FieldProfile{Name: fc.Name, Kind: fs.Kind, Entropy: round9(fs.Entropy), Distinct: fs.Distinct,
			BestGiven: fs.BestGiven, Absent: int(fc.Absent), Top: []ProfileValue{}}
		listed := 0
		for _, tv := range topOfCounts(fc, v.n, ProfileTopValues+1) {
			if tv.Absent || len(fp.Top) >= ProfileTopValues {
				continue
			}
			fp.Top = append(fp.Top, ProfileValue{tv.Value, tv.Count})
			listed += tv.Count
		}
		if fc.Summary == nil && fs.Distinct > ProfileTopValues {
			fp.Bins = numericBinsOf(fc.Values, fc.Counts)
		}
		fp.Other = fs.Present - listed
		p.Fields = append(p.Fields, fp)
	}
	for _, pi := range v.pairOf {
		pr := &v.ct.Pairs[pi]
		a, b := v.byName[pr.A], v.byName[pr.B]
		for _, dir := range [][2]int{{a, b}, {b, a}} {
			t, g := dir[0], dir[1]
			if s.Determines(g, t) {
				p.Rules = append(p.Rules, v.rule(s, t, g))
			}
		}
	}
	sort.Slice(p.Rules, func(i, j int) bool {
		a, b := p.Rules[i], p.Rules[j]
		if a.Target != b.Target {
			return a.Target < b.Target
		}
		return a.Given < b.Given
	})
	return p
}

// rule is Model.ruleOf from the pair's cells.
func (v *countsView) rule(s *Snapshot, t, g int) Rule {
	type best struct {
		t    uint32
		c, n int64
	}
	by := map[uint32]*best{}
	v.cells(g, t, func(gi, ti uint32, c int64) {
		if gi == 0 {
			return // records lacking Given are not part of the rule
		}
		b := by[gi]
		if b == nil {
			b = &best{}
			by[gi] = b
		}
		b.n += c
		if c > b.c {
			b.t, b.c = ti, c
		}
	})
	r := Rule{Target: v.ct.Fields[t].Name, Given: v.ct.Fields[g].Name, Bits: round9(s.Cond(t, g)), RFI: round9(s.RFI(t, g))}
	for gi, b := range by {
		r.Map = append(r.Map, RuleValue{Given: v.text(g, gi).Value, Target: v.text(t, b.t).Value,
			Absent: b.t == 0, Count: int(b.n)})
	}
	sort.Slice(r.Map, func(i, j int) bool {
		if r.Map[i].Count != r.Map[j].Count {
			return r.Map[i].Count > r.Map[j].Count
		}
		return r.Map[i].Given < r.Map[j].Given
	})
	if len(r.Map) > ProfileRuleValues {
		r.Map, r.Truncated = r.Map[:ProfileRuleValues], true
	}
	return r
}
