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
const (
	detMinPerGroup   = 8
	detMaxCandidates = 16
	detMaxTriple     = 10
	detMaxWork       = 60_000_000
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
	fHists map[int]countHist
}

// determinants runs the search (see above).
func (m *Model) determinants(s *Snapshot) ([]Determinant, bool) {
	n := m.st.n
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
	d := &detSearch{m: m, s: s, found: map[int][][]int{}, fHists: map[int]countHist{}}
	if len(targets) == 0 || len(cands) < 2 {
		return []Determinant{}, false
	}
	nearKey := map[[2]int]bool{}
	pairs := map[[2]int]*partition{}
	for x := 0; x < len(cands) && !d.cut; x++ {
		for y := x + 1; y < len(cands) && !d.cut; y++ {
			a, b := cands[x], cands[y]
			if d.redundant(a, b) {
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
			d.tryTargets(p, []int{a, b}, targets)
			if len(cands) <= detMaxTriple {
				pairs[[2]int{a, b}] = p
			}
		}
	}
	if len(cands) <= detMaxTriple {
		for x := 0; x < len(cands) && !d.cut; x++ {
			for y := x + 1; y < len(cands) && !d.cut; y++ {
				p2 := pairs[[2]int{cands[x], cands[y]}]
				if p2 == nil {
					continue
				}
				for z := y + 1; z < len(cands) && !d.cut; z++ {
					a, b, c := cands[x], cands[y], cands[z]
					if nearKey[[2]int{a, c}] || nearKey[[2]int{b, c}] || d.redundant(a, c) || d.redundant(b, c) {
						continue
					}
					set := []int{a, b, c}
					var open []int
					for _, t := range targets {
						if !d.coveredFor(t, set) {
							open = append(open, t)
						}
					}
					if len(open) == 0 {
						continue
					}
					p := d.refine(p2, c, -1)
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
	return d.out, d.cut
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

// refine returns the partition of base (nil: all records in one group) by
// field a, then by field b (b < 0: none). nil when over the work cap.
func (d *detSearch) refine(base *partition, a, b int) *partition {
	m := d.m
	n := m.st.n
	if d.spend(n) {
		return nil
	}
	type key = uint64
	ids := make(map[key]int32)
	group := make([]int32, n)
	var sizes []int32
	for r := 0; r < n; r++ {
		row := m.st.row(r)
		var k key
		if base != nil {
			k = uint64(base.group[r])<<32 | uint64(idAt(row, a))
		} else {
			k = uint64(idAt(row, a))<<32 | uint64(idAt(row, b))
		}
		g, ok := ids[k]
		if !ok {
			g = int32(len(sizes))
			ids[k] = g
			sizes = append(sizes, 0)
		}
		sizes[g]++
		group[r] = g
	}
	p := &partition{group: group, sizes: sizes}
	p.starts = make([]int32, len(sizes)+1)
	for g, c := range sizes {
		p.starts[g+1] = p.starts[g] + c
	}
	next := append([]int32(nil), p.starts[:len(sizes)]...)
	p.order = make([]int32, n)
	for r, g := range group {
		p.order[next[g]] = int32(r)
		next[g]++
	}
	return p
}

func (d *detSearch) spend(w int) bool {
	d.work += w
	if d.work > detMaxWork {
		d.cut = true
	}
	return d.cut
}

// tryTargets measures H(t|set) for each target outside set and keeps the
// determinants.
func (d *detSearch) tryTargets(p *partition, set []int, targets []int) {
	m, s := d.m, d.s
	n := float64(m.st.n)
	sx := 0.0
	for _, c := range p.sizes {
		sx += clogf(c)
	}
	var xh *countHist
	for _, t := range targets {
		if d.cut {
			return
		}
		skip := false
		for _, g := range set {
			skip = skip || g == t
		}
		if skip || d.coveredFor(t, set) || d.spend(m.st.n) {
			continue
		}
		f := m.fields[t]
		if len(d.scrat) < len(f.counts) {
			d.scrat = make([]int32, len(f.counts)+1)
		}
		sxf := 0.0
		for g := range p.sizes {
			for _, r := range p.order[p.starts[g]:p.starts[g+1]] {
				id := idAt(m.st.row(int(r)), t)
				if id == overflow {
					continue
				}
				if d.scrat[id] == 0 {
					d.touch = append(d.touch, int32(id))
				}
				d.scrat[id]++
			}
			for _, id := range d.touch {
				sxf += clogf(d.scrat[id])
				d.scrat[id] = 0
			}
			d.touch = d.touch[:0]
		}
		h := nonNeg((sx - sxf) / n)
		ft := &s.Fields[t]
		if h > DerivedMaxResidual || h > 0.1*ft.Entropy || ft.Entropy <= 0 {
			continue
		}
		if xh == nil {
			v := histOf(int32s(p.sizes))
			xh = &v
		}
		fh, ok := d.fHists[t]
		if !ok {
			fh = histOf(m.fieldCounts(f))
			d.fHists[t] = fh
		}
		emi, approx := expectedMI(fh, *xh)
		rfi := (ft.Entropy - h - emi) / ft.Entropy
		if rfi < DerivedMinRFI {
			continue
		}
		names := make([]string, len(set))
		for i, g := range set {
			names[i] = m.fields[g].name
		}
		d.found[t] = append(d.found[t], append([]int(nil), set...))
		d.out = append(d.out, Determinant{Target: f.name, Given: names, Bits: round9(h), RFI: round9(rfi), EMIApprox: approx})
	}
}

func clogf(c int32) float64 {
	if c <= 1 {
		return 0
	}
	x := float64(c)
	return x * math.Log2(x)
}

func int32s(v []int32) []int {
	out := make([]int, len(v))
	for i, x := range v {
		out[i] = int(x)
	}
	return out
}
