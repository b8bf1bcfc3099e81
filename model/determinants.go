package model

import (
	"math"
	"sort"
)

// Multi-field determinants. For each informative field F (no single field
// determines it), the search looks for sets X of two, then three, fields
// with H(F|X) ≤ DerivedMaxResidual, at most a tenth of H(F), and
// RFI(X→F) ≥ DerivedMinRFI: the derived rule, with X's combinations as the
// values of one field. H(F|X) is exact over the window's records: the
// records are grouped by their X values (a partition, as in TANE: Huhtala,
// Kärkkäinen, Porkka and Toivonen, "TANE: An Efficient Algorithm for
// Discovering Functional and Approximate Dependencies", The Computer
// Journal 42(2), 1999) and F's values counted per group.
//
// Pruning, after TANE:
//   - only minimal determinants: a set containing a determinant of F is not
//     tried for F;
//   - a set whose partition has fewer than detMinPerGroup records per group
//     on average is a near-key (it "determines" anything by chance; RFI
//     would reject it too) and is dropped with every superset. Its product
//     of cardinalities bounds its groups from above, so a set whose product
//     is at most N/detMinPerGroup is never a near-key;
//   - a set where one member determines another has the partition of the
//     smaller set, already tried.
//
// Candidates are the non-identifier, non-constant fields, at most
// detMaxCandidates (fewest values first); sets of three are tried only
// among at most detMaxTriple candidates. The work (record visits) is capped
// at detMaxWork; past it the search stops and Snapshot.DeterminantsCut says
// so. The search runs only for Deep snapshots.
//
// The records searched are the newest DeepMaxRecords of the window (see
// deep.go). H(F|X), H(F) and E[I] are then exact over those records; the
// pruning bounds read off the window's pair tables (pairBound, the triple
// bound) are then estimates of the bounds over those records, and the
// near-key test by pair cells, an upper bound over them, is left to the
// partitions.
const (
	detMinPerGroup   = 8
	detMaxCandidates = 16
	detMaxTriple     = 10
	detMaxWork       = 60_000_000
	detDenseCells    = 1 << 20
	detKeptColumns   = 64
)

// Determinant is a minimal set of fields that together determine Target.
type Determinant struct {
	Target    string
	Given     []string
	Bits      float64 // H(Target|Given)
	RFI       float64
	EMIApprox bool
}

// partition groups the window's records: group[r] is record r's group.
type partition struct {
	group  []int32
	sizes  []int32
	order  []int32 // records sorted by group
	starts []int32 // order[starts[g]:starts[g+1]] are group g's records
}

type detSearch struct {
	m      *Model
	s      *Snapshot
	work   int
	cut    bool
	found  map[int][][]int // target → its determinants
	out    []Determinant
	scrat  []int32
	touch  []int32
	dense  []int32
	lookup []int32
	cols   map[int][]uint32 // the candidates' columns
	isCand map[int]bool
	tcol   []uint32 // scratch column of a target
	fHists map[int]countHist
	// lo is the window position of the first record searched and n the
	// number searched (see DeepMaxRecords); hs caches H(F) over them when
	// they are not the whole window.
	lo, n int
	hs    map[int]float64
}

// determinants runs the search (see above).
func (m *Model) determinants(s *Snapshot) ([]Determinant, bool) {
	n := m.deepRows()
	if n < 2*detMinPerGroup {
		return []Determinant{}, false
	}
	var cands, targets []int
	for i := range s.Fields {
		f := &s.Fields[i]
		if f.Kind == Identifier || f.Kind == Constant {
			continue
		}
		cands = append(cands, i)
		if f.Kind == Informative && f.Distinct*detMinPerGroup <= n {
			targets = append(targets, i)
		}
	}
	sort.SliceStable(cands, func(a, b int) bool { return s.Fields[cands[a]].Distinct < s.Fields[cands[b]].Distinct })
	if len(cands) > detMaxCandidates {
		cands = cands[:detMaxCandidates]
	}
	d := &detSearch{m: m, s: s, found: map[int][][]int{}, fHists: map[int]countHist{}, cols: map[int][]uint32{},
		isCand: map[int]bool{}, lo: m.st.n - n, n: n, hs: map[int]float64{}}
	for _, c := range cands {
		d.isCand[c] = true
	}
	if len(targets) == 0 || len(cands) < 2 {
		return []Determinant{}, false
	}
	nearKey := map[[2]int]bool{}
	type sub struct {
		p *partition
		h map[int]float64 // target → H(target|pair)
	}
	pairs := map[[2]int]sub{}
	triples := len(cands) <= detMaxTriple
	for x := 0; x < len(cands) && !d.cut; x++ {
		for y := x + 1; y < len(cands) && !d.cut; y++ {
			a, b := cands[x], cands[y]
			if d.redundant(a, b) {
				continue
			}
			if g := d.pairCells(a, b); g*detMinPerGroup > n && d.whole() {
				nearKey[[2]int{a, b}] = true
				continue
			}
			var open []int
			for _, t := range targets {
				if t != a && t != b && d.pairBound(t, a, b) <= DerivedMaxResidual {
					open = append(open, t)
				}
			}
			if len(open) == 0 && !triples {
				continue
			}
			p := d.refine(nil, a, b)
			if p == nil {
				continue
			}
			if len(p.sizes)*detMinPerGroup > n {
				nearKey[[2]int{a, b}] = true
				continue
			}
			h := d.tryTargets(p, []int{a, b}, open)
			if triples {
				// Targets not tried are bounded away from a determinant
				// by more than H(c|a) can close for most c; try them
				// at the triple level with the exact figure.
				for _, t := range targets {
					if _, ok := h[t]; !ok && t != a && t != b {
						h[t] = math.NaN()
					}
				}
				// The pair's partition is not kept (it costs 4 bytes a
				// record): the triples rebuild it, one pair at a time.
				pairs[[2]int{a, b}] = sub{h: h}
			}
		}
	}
	if triples {
		for x := 0; x < len(cands) && !d.cut; x++ {
			for y := x + 1; y < len(cands) && !d.cut; y++ {
				p2, ok := pairs[[2]int{cands[x], cands[y]}]
				if !ok {
					continue
				}
				for z := y + 1; z < len(cands) && !d.cut; z++ {
					a, b, c := cands[x], cands[y], cands[z]
					if nearKey[[2]int{a, c}] || nearKey[[2]int{b, c}] || d.redundant(a, c) || d.redundant(b, c) {
						continue
					}
					set := []int{a, b, c}
					var open []int
					for t, h2 := range p2.h {
						if t == c || d.coveredFor(t, set) {
							continue
						}
						// H(t|a,b,c) ≥ H(t|a,b) − H(c|a,b) ≥ H(t|a,b) − min(H(c|a), H(c|b)).
						lb := h2 - math.Min(d.cond(c, a), d.cond(c, b))
						if math.IsNaN(h2) {
							lb = d.pairBound(t, a, c)
						}
						if lb <= DerivedMaxResidual {
							open = append(open, t)
						}
					}
					if len(open) == 0 {
						continue
					}
					sort.Ints(open)
					if p2.p == nil {
						// Its work was counted when it was first built.
						p2.p = d.partitionBy(nil, cands[x], cands[y])
					}
					p := d.refine(p2.p, c, -1)
					if p == nil || len(p.sizes)*detMinPerGroup > n {
						continue
					}
					d.tryTargets(p, set, open)
				}
			}
		}
	}
	sort.Slice(d.out, func(i, j int) bool {
		if d.out[i].Target != d.out[j].Target {
			return d.out[i].Target < d.out[j].Target
		}
		if len(d.out[i].Given) != len(d.out[j].Given) {
			return len(d.out[i].Given) < len(d.out[j].Given)
		}
		return d.out[i].Bits < d.out[j].Bits
	})
	if d.out == nil {
		d.out = []Determinant{}
	}
	m.lastDetWork = d.work
	return d.out, d.cut
}

// cond is H(Fi|Fj) from the pair tables, +Inf when not measured.
func (d *detSearch) cond(i, j int) float64 {
	if !d.s.HasPair(i, j) {
		return math.Inf(1)
	}
	return d.s.Cond(i, j)
}

// pairBound is a lower bound of H(t|a,b) from the pair tables:
// H(t|a,b) ≥ H(t|a) − H(b|a), and the same with a and b swapped. It is 0
// (no bound) when the tables are missing.
func (d *detSearch) pairBound(t, a, b int) float64 {
	lb := 0.0
	if d.s.HasPair(t, a) {
		lb = math.Max(lb, d.cond(t, a)-d.cond(b, a))
	}
	if d.s.HasPair(t, b) {
		lb = math.Max(lb, d.cond(t, b)-d.cond(a, b))
	}
	return lb
}

// pairCells is the number of value combinations of a and b in the window
// (the cells of their pair table), 0 when they are not paired.
func (d *detSearch) pairCells(a, b int) int {
	i, ok := d.m.pairAt[[2]int{min(a, b), max(a, b)}]
	if !ok {
		return 0
	}
	return d.m.pairs[i].m.len
}

// redundant: one of a, b determines the other exactly, so {a,b} groups the
// records as one of them alone.
func (d *detSearch) redundant(a, b int) bool {
	s := d.s
	return s.HasPair(a, b) && (s.Cond(a, b) < 1e-12 || s.Cond(b, a) < 1e-12)
}

// coveredFor: a determinant of t already found lies within set.
func (d *detSearch) coveredFor(t int, set []int) bool {
	for _, det := range d.found[t] {
		all := true
		for _, g := range det {
			in := false
			for _, x := range set {
				in = in || x == g
			}
			all = all && in
		}
		if all {
			return true
		}
	}
	return false
}
