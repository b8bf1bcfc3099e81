package model

import (
	"container/heap"
	"math"
	"sort"
)

// Surprisal. A record's surprisal is Σ over its non-identifier fields of
// −log2 p(value | the value of the field's best predictor), in bits.
//
// Against the window (no baseline) p is read off the window's own tables,
// under a model shaped as a forest: c(g,f)/c(g) for a field F whose parent
// in the forest is G, c(f)/N for a root. The forest is Chow and Liu's
// ("Approximating discrete probability distributions with dependence
// trees", IEEE Trans. Inf. Theory 14(3), 1968): the spanning forest of
// greatest total mutual information, over the pairs where one field is a
// reliable predictor of the other (BestGiven's rule: derived, or RFI at
// least PredictorMinRFI), each tree rooted at its field of least entropy
// (ties by name). The sum is then −log2 of a probability of the record,
// the same wherever a tree is rooted. Pricing each field by its own best
// predictor, as before, made a cycle of any two fields that predict each
// other (a level and its message's template): each priced the other at
// nothing, and an ERROR record among INFO ones was not surprising at all.
//
// Against a baseline: where the baseline has a rule G → F (see Rule; the
// one with F's baseline best predictor as Given if there is one) and the
// record's G value is in its mapping, a value that follows the rule costs
// −log2((n_g+1)/(n_g+2)) (Laplace's rule of succession over the n_g
// baseline records with that G value) and one that breaks it costs
// log2(N_b+2) + log2(K_F+1): the rule held over all N_b baseline records,
// so by the rule of succession a break has probability 1/(N_b+2), spread
// over the field's K_F baseline values and one new one. Otherwise the
// baseline's distribution of F, smoothed additively with the
// Krichevsky–Trofimov pseudo-count 1/2 per value (K_F baseline values plus
// one for all unseen ones): p = (c + ½)/(N_b + ½(K_F+1)); a value past the
// baseline's listed ones gets the mean count of the unlisted values.
//
// So a break costs more than any value seen in the baseline, however rare
// (at most log2(2N_b/3) bits), and outranks a merely rare record.
//
// The scan covers the newest DeepMaxRecords records of the window (see
// deep.go): O(records·fields) table lookups per snapshot that asks for it
// (Deep). The prices still come from the whole window's tables.
const (
	surprisePseudo  = 0.5
	surpriseBecause = 3
	// surpriseExcess: a field is named in "because" when it cost at least
	// this many bits more than its mean over the scanned records.
	surpriseExcess = 1.0
)

// SurprisingRecord is one of the most surprising records of the window.
type SurprisingRecord struct {
	Line int64
	// Time is the record's time (Unix ns: its own, else arrival) and Age
	// how many window records are newer (see Found).
	Time int64
	Age  int
	Bits float64
	// IDs holds the values of its identifier fields whose text the model
	// keeps (a request id), to find the record elsewhere.
	IDs map[string]string
	// Record holds the values of the record's non-identifier fields.
	Record map[string]string
	// Because lists the fields that made it surprising, most first.
	Because []Contribution
}

// Contribution is one field's share of a record's surprisal.
type Contribution struct {
	Field string
	Bits  float64 // the field's surprisal in this record
	// Excess is Bits minus the field's mean surprisal over the window.
	Excess float64
	// Broke names the Given of the baseline rule this value broke ("" if
	// none).
	Broke string
}

// fieldCost prices the values of one field.
type fieldCost struct {
	idx  int
	marg []float64 // by current value id; [0] is absent

	// A baseline rule given → this field.
	given   int
	expect  []int64   // by given id: target id; noRule: use marg; anyBreaks: no target matches
	match   []float64 // by given id
	violate float64

	// The window's best-predictor table.
	pair     *cellMap
	givenIsA bool
	gCount   []float64 // by given id: records with it
}

const (
	noRule    = -1
	anyBreaks = -2
)

// cost is the surprisal of the field in row, and whether it broke the rule.
func (c *fieldCost) cost(row []uint32) (float64, bool) {
	gid := uint32(absent)
	if c.given >= 0 {
		gid = idAt(row, c.given)
	}
	return c.costOf(idAt(row, c.idx), gid)
}

// costOf is cost for a record whose field has value id and whose given
// field (if any) has gid.
func (c *fieldCost) costOf(id, gid uint32) (float64, bool) {
	if c.given >= 0 {
		if int(gid) < len(c.expect) {
			switch e := c.expect[gid]; {
			case e == int64(id):
				return c.match[gid], false
			case e != noRule:
				return c.violate, true
			}
		}
	}
	if c.pair != nil {
		k := uint64(gid)<<32 | uint64(id)
		if !c.givenIsA {
			k = uint64(id)<<32 | uint64(gid)
		}
		n := c.pair.get(k)
		if n > 0 && int(gid) < len(c.gCount) && c.gCount[gid] > 0 {
			return -math.Log2(float64(n) / c.gCount[gid]), false
		}
	}
	if int(id) < len(c.marg) {
		return c.marg[id], false
	}
	return 0, false
}

// surprising returns the k most surprising records of the window.
func (m *Model) surprising(s *Snapshot, base *Profile, k int) []SurprisingRecord {
	var costs []*fieldCost
	var parent []int
	if base == nil {
		parent = s.SurpriseForest(func(i int) bool { return m.fields[i].text != nil })
	}
	for i, f := range m.fields {
		if s.Fields[i].Kind == Identifier || f.text == nil || s.Fields[i].Kind == Constant && base == nil {
			continue
		}
		var c *fieldCost
		if base != nil {
			c = m.baselineCost(s, base, i)
		} else {
			c = m.windowCost(s, i, parent[i])
		}
		costs = append(costs, c)
	}
	if len(costs) == 0 || m.st.n == 0 || k <= 0 {
		return []SurprisingRecord{}
	}
	rows := m.deepRows()
	lo := m.st.n - rows
	// Field by field over the store's columns (never whole rows), adding
	// each field's cost to its records' totals in the same order a
	// record-by-record pass would.
	sum := make([]float64, len(costs))
	totals := make([]float64, rows)
	var col, gcol []uint32
	for j, c := range costs {
		if m.cancelled() {
			return []SurprisingRecord{}
		}
		col = m.st.column(c.idx, lo, m.st.n, col)
		if c.given >= 0 {
			gcol = m.st.column(c.given, lo, m.st.n, gcol)
		}
		for r, id := range col {
			gid := uint32(absent)
			if c.given >= 0 {
				gid = gcol[r]
			}
			v, _ := c.costOf(id, gid)
			sum[j] += v
			totals[r] += v
		}
	}
	h := &recHeap{}
	for r, total := range totals {
		line := m.st.metaAt(lo + r).line
		if h.Len() < k {
			heap.Push(h, scored{lo + r, line, total})
		} else if (*h)[0].less(scored{lo + r, line, total}) {
			(*h)[0] = scored{lo + r, line, total}
			heap.Fix(h, 0)
		}
	}
	top := []scored(*h)
	sort.Slice(top, func(i, j int) bool { return top[j].less(top[i]) })
	out := make([]SurprisingRecord, 0, len(top))
	for _, t := range top {
		row := m.st.row(t.row)
		sr := SurprisingRecord{Line: t.line, Time: m.st.metaAt(t.row).time, Age: m.st.n - 1 - t.row,
			Bits: round9(t.bits), Record: map[string]string{}, IDs: map[string]string{}}
		for i, f := range m.fields {
			if id := idAt(row, i); id != absent && f.text != nil && id != overflow && int(id) < len(f.text) {
				if s.Fields[i].Kind == Identifier {
					sr.IDs[f.name] = f.text[id]
				} else {
					sr.Record[f.name] = f.text[id]
				}
			}
		}
		for j, c := range costs {
			v, broke := c.cost(row)
			ex := v - sum[j]/float64(rows)
			if ex < surpriseExcess {
				continue
			}
			ct := Contribution{Field: m.fields[c.idx].name, Bits: round9(v), Excess: round9(ex)}
			if broke {
				ct.Broke = m.fields[c.given].name
			}
			sr.Because = append(sr.Because, ct)
		}
		sort.Slice(sr.Because, func(i, j int) bool { return sr.Because[i].Excess > sr.Because[j].Excess })
		if len(sr.Because) > surpriseBecause {
			sr.Because = sr.Because[:surpriseBecause]
		}
		out = append(out, sr)
	}
	return out
}

// SurpriseForest returns each field's parent in the forest that prices
// records against the window (see Surprisal), -1 for a root or a field
// left out: identifiers, constants, and those priced(i) refuses.
func (s *Snapshot) SurpriseForest(priced func(i int) bool) []int {
	n := len(s.Fields)
	parent := make([]int, n)
	for i := range parent {
		parent[i] = -1
	}
	in := func(i int) bool {
		k := s.Fields[i].Kind
		return k != Identifier && k != Constant && priced(i)
	}
	type edge struct {
		a, b int
		mi   float64
	}
	var edges []edge
	for a := 0; a < n; a++ {
		for b := a + 1; b < n; b++ {
			if in(a) && in(b) && s.HasPair(a, b) && (s.predicts(b, a) || s.predicts(a, b)) {
				edges = append(edges, edge{a, b, s.Mutual(a, b)})
			}
		}
	}
	// Kruskal's algorithm, most information first; ties by the fields'
	// places, so that the forest is the same on every run.
	sort.Slice(edges, func(i, j int) bool {
		if edges[i].mi != edges[j].mi {
			return edges[i].mi > edges[j].mi
		}
		if edges[i].a != edges[j].a {
			return edges[i].a < edges[j].a
		}
		return edges[i].b < edges[j].b
	})
	set := make([]int, n) // union-find: set[i] leads to i's tree's mark
	for i := range set {
		set[i] = i
	}
	find := func(i int) int {
		for set[i] != i {
			set[i] = set[set[i]]
			i = set[i]
		}
		return i
	}
	adj := make([][]int, n)
	for _, e := range edges {
		if ra, rb := find(e.a), find(e.b); ra != rb {
			set[ra] = rb
			adj[e.a] = append(adj[e.a], e.b)
			adj[e.b] = append(adj[e.b], e.a)
		}
	}
	// Each tree hangs from its field of least entropy.
	var order []int
	for i := 0; i < n; i++ {
		if in(i) {
			order = append(order, i)
		}
	}
	sort.SliceStable(order, func(x, y int) bool {
		fx, fy := &s.Fields[order[x]], &s.Fields[order[y]]
		if fx.Entropy != fy.Entropy {
			return fx.Entropy < fy.Entropy
		}
		return fx.Name < fy.Name
	})
	seen := make([]bool, n)
	for _, root := range order {
		if seen[root] {
			continue
		}
		seen[root] = true
		for queue := []int{root}; len(queue) > 0; queue = queue[1:] {
			for _, g := range adj[queue[0]] {
				if !seen[g] {
					seen[g], parent[g] = true, queue[0]
					queue = append(queue, g)
				}
			}
		}
	}
	return parent
}

// windowCost prices field i by the window's own counts, given field g (its
// parent in SurpriseForest; none when g < 0).
func (m *Model) windowCost(s *Snapshot, i, g int) *fieldCost {
	f := m.fields[i]
	c := &fieldCost{idx: i, given: -1, marg: make([]float64, len(f.counts))}
	n := float64(m.st.n)
	if a := m.st.n - int(f.present); a > 0 {
		c.marg[0] = -math.Log2(float64(a) / n)
	}
	for id := 1; id < len(f.counts); id++ {
		if f.counts[id] > 0 {
			c.marg[id] = -math.Log2(float64(f.counts[id]) / n)
		}
	}
	if g >= 0 && s.HasPair(i, g) {
		c.given = g
		c.pair = m.pairs[m.pairAt[[2]int{min(i, g), max(i, g)}]].m
		c.givenIsA = g < i
		gf := m.fields[g]
		c.gCount = make([]float64, len(gf.counts))
		c.gCount[0] = float64(m.st.n - int(gf.present))
		for id := 1; id < len(gf.counts); id++ {
			c.gCount[id] = float64(gf.counts[id])
		}
	}
	return c
}

// baselineCost prices field i by the baseline (see Surprisal).
func (m *Model) baselineCost(s *Snapshot, base *Profile, i int) *fieldCost {
	f := m.fields[i]
	bp := base.Field(f.name)
	if bp == nil {
		bp = &FieldProfile{Name: f.name, Absent: base.Records, Top: []ProfileValue{}}
	}
	nb := float64(base.Records)
	kb := float64(bp.Distinct)
	denom := nb + surprisePseudo*(kb+1)
	listed := map[string]int{}
	for _, v := range bp.Top {
		listed[v.Value] = v.Count
	}
	unlisted := 0.0
	if bp.Other > 0 {
		k := bp.Distinct - len(bp.Top)
		if bp.Absent > 0 {
			k--
		}
		unlisted = float64(bp.Other) / float64(max(k, 1))
	}
	c := &fieldCost{idx: i, given: -1, marg: make([]float64, len(f.counts))}
	c.marg[0] = -math.Log2((float64(bp.Absent) + surprisePseudo) / denom)
	for id := 1; id < len(f.counts); id++ {
		if f.counts[id] == 0 {
			continue
		}
		n, ok := listed[f.text[id]]
		cnt := float64(n)
		if !ok {
			cnt = unlisted
		}
		c.marg[id] = -math.Log2((cnt + surprisePseudo) / denom)
	}
	r := pickRule(base, bp)
	if r == nil {
		return c
	}
	g := s.Index(r.Given)
	if g < 0 || m.fields[g].text == nil {
		return c
	}
	gf := m.fields[g]
	want := make(map[string]RuleValue, len(r.Map))
	for _, v := range r.Map {
		want[v.Given] = v
	}
	c.given = g
	c.violate = math.Log2(nb+2) + math.Log2(kb+1)
	c.expect = make([]int64, len(gf.counts))
	c.match = make([]float64, len(gf.counts))
	c.expect[0] = noRule
	for id := 1; id < len(gf.counts); id++ {
		c.expect[id] = noRule
		if gf.counts[id] == 0 {
			continue
		}
		w, ok := want[gf.text[id]]
		if !ok {
			continue
		}
		switch tid, found := f.idOf(w.Target); {
		case w.Absent:
			c.expect[id] = absent
		case found:
			c.expect[id] = int64(tid)
		default:
			c.expect[id] = anyBreaks
		}
		ng := float64(w.Count)
		c.match[id] = -math.Log2((ng + 1) / (ng + 2))
	}
	return c
}

// pickRule is the baseline rule that prices bp's field: the one given its
// baseline best predictor, else the one that held best.
func pickRule(base *Profile, bp *FieldProfile) *Rule {
	var best *Rule
	for i := range base.Rules {
		r := &base.Rules[i]
		if r.Target != bp.Name {
			continue
		}
		if r.Given == bp.BestGiven {
			return r
		}
		if best == nil || r.Bits < best.Bits || (r.Bits == best.Bits && r.RFI > best.RFI) {
			best = r
		}
	}
	return best
}

type scored struct {
	row  int
	line int64
	bits float64
}

// less orders by surprisal, then later lines first (a tie goes to the
// newer record).
func (a scored) less(b scored) bool {
	if a.bits != b.bits {
		return a.bits < b.bits
	}
	return a.line < b.line
}

// recHeap is a min-heap of the kept records: the least surprising on top.
type recHeap []scored

func (h recHeap) Len() int           { return len(h) }
func (h recHeap) Less(i, j int) bool { return h[i].less(h[j]) }
func (h recHeap) Swap(i, j int)      { h[i], h[j] = h[j], h[i] }
func (h *recHeap) Push(x any)        { *h = append(*h, x.(scored)) }
func (h *recHeap) Pop() any {
	old := *h
	x := old[len(old)-1]
	*h = old[:len(old)-1]
	return x
}
